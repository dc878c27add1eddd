"""Transfer functions: ``H(s)`` from one source to one quantity, and what it says.

Poles and zeros (exact for factors of degree <= 2 over the rationals, certified
floating point otherwise, from :mod:`lumped.algebra.roots`), the DC gain, the
second-order factors as natural frequency, damping ratio and quality factor,
and stability: decided exactly from the roots with numeric coefficients, by
Routh-Hurwitz with the parameters' assumptions otherwise.

Examples
--------
>>> import sympy
>>> from lumped import model as m
>>> from lumped.constants import s
>>> out = m.Quantity(m.QuantityKind.VOLTAGE, "out", "at")
>>> tf = describe("V1", out, sympy.Poly(1, s), sympy.Poly(s**2 + s + 1, s))
>>> tf.stability, tf.second_order_factors[0].damping_ratio
('stable', 1/2)
"""

from __future__ import annotations

from dataclasses import dataclass

import sympy

from lumped.algebra.roots import (
    irreducible_factors,
    polynomial_roots,
    real_part_sign,
    to_fmpq_poly,
    to_rational,
)
from lumped.constants import s
from lumped.model import Quantity


@dataclass(frozen=True)
class SecondOrderFactor:
    """A quadratic factor ``a s^2 + b s + c`` of a denominator, as figures.

    ``natural_frequency = sqrt(c/a)`` (rad/s), ``damping_ratio = b / (2 sqrt(a c))``,
    ``quality_factor = sqrt(a c) / b`` (``oo`` when undamped).  Exact where the
    factor is exact, floating point where it comes from numeric roots.
    """

    natural_frequency: sympy.Expr
    damping_ratio: sympy.Expr
    quality_factor: sympy.Expr
    factor: sympy.Expr | None = None


@dataclass(frozen=True)
class TransferFunction:
    """``H(s) = quantity / source waveform`` with every other excitation off.

    Attributes
    ----------
    numerator, denominator : sympy.Poly
        In ``s``, without common factors; the denominator is monic when the
        coefficients are numbers.
    poles, zeros : tuple of sympy.Expr
        Exact where the factors over the rationals are of degree <= 2,
        otherwise floating-point complex numbers (certified enclosures'
        midpoints).  With symbolic coefficients: exact for degree <= 2, else
        empty.
    dc_gain : sympy.Expr or None
        ``H(0)``; ``None`` when ``H`` has a pole at ``s = 0`` (``dc_gain_note`` says so).
    second_order_factors : tuple of SecondOrderFactor
    stability : str
        ``'stable'``, ``'marginal'``, ``'unstable'``, or ``'undetermined'``
        (symbolic coefficients that do not settle the question).
    offending_poles : tuple of sympy.Expr
        Poles on or right of the imaginary axis.
    """

    source: str
    quantity: Quantity
    numerator: sympy.Poly
    denominator: sympy.Poly
    poles: tuple[sympy.Expr, ...]
    zeros: tuple[sympy.Expr, ...]
    dc_gain: sympy.Expr | None
    dc_gain_note: str
    second_order_factors: tuple[SecondOrderFactor, ...]
    stability: str
    offending_poles: tuple[sympy.Expr, ...]

    @property
    def expr(self) -> sympy.Expr:
        """``numerator / denominator`` as one expression."""
        return self.numerator.as_expr() / self.denominator.as_expr()


def _numeric_poly(p: sympy.Poly) -> bool:
    return p.domain.is_ZZ or p.domain.is_QQ


def describe(source: str, quantity: Quantity, num: sympy.Poly, den: sympy.Poly) -> TransferFunction:
    """Poles, zeros, DC gain, second-order factors and stability of ``num / den``.

    Parameters
    ----------
    source : str
        The source element ``H`` is taken from.
    quantity : Quantity
    num, den : sympy.Poly
        In ``s``, already without common factors.

    Returns
    -------
    TransferFunction

    Examples
    --------
    >>> from lumped import model as m
    >>> out = m.Quantity(m.QuantityKind.VOLTAGE, "out", "at")
    >>> tf = describe("V1", out, sympy.Poly(2, s), sympy.Poly(s * (s + 1), s))
    >>> tf.dc_gain, tf.stability, tf.poles
    (None, 'marginal', (0, -1))
    """
    zero_order = 0
    coeffs = den.all_coeffs()
    while len(coeffs) > 1 and coeffs[-1] == 0:
        coeffs.pop()
        zero_order += 1
    if zero_order:
        dc_gain, note = None, f"H(s) has a pole of order {zero_order} at s = 0: no finite DC gain"
    else:
        dc_gain, note = sympy.simplify(num.eval(0) / den.eval(0)), ""  # Poly.eval: H(0)
    numeric = _numeric_poly(den) and _numeric_poly(num)
    factors: list[SecondOrderFactor] = []
    if numeric:
        pole_roots = polynomial_roots(den)
        zero_roots = polynomial_roots(num) if not num.is_zero else ()
        poles = tuple(r.value for r in pole_roots for _ in range(r.multiplicity))
        zeros = tuple(r.value for r in zero_roots for _ in range(r.multiplicity))
        offending: list[sympy.Expr] = []
        unstable = False
        for root in pole_roots:
            sign = real_part_sign(root)
            if sign > 0 or (sign == 0 and root.multiplicity > 1):
                unstable = True
            if sign >= 0:
                offending.extend([root.value] * root.multiplicity)
        stability = "unstable" if unstable else ("marginal" if offending else "stable")
        flint_factors = irreducible_factors(to_fmpq_poly(den)) if den.degree() > 0 else ()
        for f, _ in flint_factors:
            coeffs_f = [to_rational(c) for c in f.coeffs()]
            if f.degree() == 2:
                factors.append(_quadratic(coeffs_f[2], coeffs_f[1], coeffs_f[0]))
        for root in pole_roots:
            if root.factor is not None and float(sympy.im(root.value)) > 0:
                wn = abs(complex(root.value))
                zeta = -float(sympy.re(root.value)) / wn
                q = sympy.oo if zeta == 0 else sympy.Float(1 / (2 * zeta))
                factors.append(SecondOrderFactor(sympy.Float(wn), sympy.Float(zeta), q, None))
    else:
        poles = tuple(sympy.roots(den, multiple=True)) if den.degree() <= 2 else ()
        zeros = tuple(sympy.roots(num, multiple=True)) if 0 < num.degree() <= 2 else ()
        _, flist = sympy.factor_list(den.as_expr(), s)
        for f, _ in flist:
            fp = sympy.Poly(f, s)
            if fp.degree() == 2:
                a2, a1, a0 = fp.all_coeffs()
                factors.append(_quadratic(a2, a1, a0))
        stability, offending = _symbolic_stability(den, zero_order)
    return TransferFunction(
        source,
        quantity,
        num,
        den,
        poles,
        zeros,
        dc_gain,
        note,
        tuple(factors),
        stability,
        tuple(offending),
    )


def _quadratic(a: sympy.Expr, b: sympy.Expr, c: sympy.Expr) -> SecondOrderFactor:
    wn = sympy.sqrt(c / a)
    zeta = b / (2 * sympy.sqrt(a * c))
    q = sympy.oo if b == 0 else sympy.sqrt(a * c) / b
    return SecondOrderFactor(
        sympy.simplify(wn),
        sympy.simplify(zeta),
        sympy.simplify(q),
        sympy.expand(a * s**2 + b * s + c),
    )


def _symbolic_stability(den: sympy.Poly, zero_order: int) -> tuple[str, tuple[sympy.Expr, ...]]:
    """Routh-Hurwitz on ``den / s**zero_order`` with the parameters' assumptions."""
    coeffs = den.all_coeffs()[: len(den.all_coeffs()) - zero_order]
    if coeffs[0].could_extract_minus_sign():
        coeffs = [-c for c in coeffs]
    degree = len(coeffs) - 1
    offending = tuple([sympy.Integer(0)] * zero_order)
    if zero_order > 1:
        return "unstable", offending
    minors = []
    for k in range(1, degree + 1):
        mat = sympy.Matrix(
            k,
            k,
            lambda i, j: (
                coeffs[2 * j - i + 1] if 0 <= 2 * j - i + 1 <= degree else sympy.Integer(0)
            ),
        )
        minors.append(sympy.factor(mat.det()))
    signs = [sympy.simplify(c).is_positive for c in coeffs] + [m_.is_positive for m_ in minors]
    if all(signs):
        return ("marginal" if zero_order else "stable"), offending
    if any(sympy.simplify(x).is_negative for x in list(coeffs) + minors):
        return "unstable", offending
    return "undetermined", offending
