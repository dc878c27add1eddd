"""Transfer functions: ``H(s)`` from one source to one quantity, and what it says.

Poles and zeros (exact for factors of degree <= 2 over the rationals, certified
floating point otherwise, from :mod:`lumped.algebra.roots`), the DC gain, the
second-order factors as natural frequency, damping ratio and quality factor,
and stability: decided exactly from the roots with numeric coefficients, by
Routh-Hurwitz with the parameters' assumptions otherwise (the Hurwitz
determinants from a fraction-free Routh array, not from symbolic matrices).

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

from collections.abc import Sequence
from dataclasses import dataclass

import sympy
from sympy.polys.constructor import construct_domain
from sympy.polys.domains.domain import Domain
from sympy.polys.matrices import DomainMatrix

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


def hurwitz_determinants(coefficients: Sequence[sympy.Expr]) -> tuple[sympy.Expr, ...]:
    """The Hurwitz determinants of ``a0 s^n + a1 s^(n-1) + ... + an``, by Routh's recurrence.

    ``coefficients`` run from the highest power down.  The k-th determinant is
    the leading k-by-k minor of the Hurwitz matrix (entry ``(i, j)`` is
    ``a_(2j-i+1)``, counting from 1); with ``a0 > 0`` every root lies in the
    open left half-plane exactly when all of them are positive.  They come from
    a fraction-free Routh array, a few products and exact divisions per entry,
    rather than from determinants of growing symbolic matrices.

    Parameters
    ----------
    coefficients : sequence of sympy.Expr
        Numbers or polynomials (or ratios of them) in parameters.

    Returns
    -------
    tuple of sympy.Expr
        ``n`` determinants, expanded.

    Examples
    --------
    >>> a0, a1, a2, a3 = sympy.symbols("a0:4", positive=True)
    >>> hurwitz_determinants([a0, a1, a2, a3])
    (a1, -a0*a3 + a1*a2, -a0*a3**2 + a1*a2*a3)
    """
    domain, elements = construct_domain(list(coefficients))
    return tuple(domain.to_sympy(d) for d in _hurwitz_elements(elements, domain))


def _hurwitz_elements(coefficients: list, domain: Domain) -> list:
    """The Hurwitz determinants as elements of ``domain`` (highest power first)."""
    pivots = _routh_pivots(coefficients, domain)
    if pivots is not None:
        return pivots
    # A determinant vanished identically, so the recurrence cannot divide by it:
    # fraction-free elimination of each leading minor (rare, and small then).
    degree = len(coefficients) - 1

    def entry(i: int, j: int) -> object:
        index = 2 * j - i + 1
        return coefficients[index] if 0 <= index <= degree else domain.zero

    return [
        DomainMatrix([[entry(i, j) for j in range(k)] for i in range(k)], (k, k), domain).det()
        for k in range(1, degree + 1)
    ]


def _routh_pivots(coefficients: list, domain: Domain) -> list | None:
    """First entries of the fraction-free Routh rows: the Hurwitz determinants, or None.

    Rows ``F0 = (a0, a2, ...)``, ``F1 = (a1, a3, ...)`` and
    ``F(k+1)[j] = (Fk[0] F(k-1)[j+1] - F(k-1)[0] Fk[j+1]) / F(k-2)[0]``, the
    divisor being 1 for ``k < 3``.  Row ``k`` is the classical Routh row times
    the determinant ``k - 1``, so its first entry is determinant ``k``; the
    division is exact because every entry is a minor of the Hurwitz matrix.
    None when a divisor is zero (a determinant that vanishes identically).
    """
    degree = len(coefficients) - 1
    width = degree // 2 + 2  # one spare zero, so that entry j + 1 always exists

    def padded(values: list) -> list:
        return values + [domain.zero] * (width - len(values))

    rows = [padded(coefficients[0::2]), padded(coefficients[1::2])]
    for k in range(1, degree):
        earlier, current = rows[k - 1], rows[k]
        divisor = rows[k - 2][0] if k >= 3 else domain.one
        if not divisor:
            return None
        following = [
            domain.exquo(current[0] * earlier[j + 1] - earlier[0] * current[j + 1], divisor)
            for j in range(width - 1)
        ]
        rows.append(padded(following))
    return [row[0] for row in rows[1:]]


def _quick_sign(value: object, domain: Domain) -> int | None:
    """+1 or -1 when every term of a polynomial in positive parameters has that sign."""
    if not value:
        return None
    if domain.is_PolynomialRing:
        parts = [value]
    elif domain.is_FractionField:
        parts = [value.numer, value.denom]
    else:
        return None
    if not all(getattr(g, "is_positive", False) for g in domain.symbols):
        return None
    sign = 1
    for part in parts:
        terms = part.coeffs()
        if all(c > 0 for c in terms):
            continue
        if all(c < 0 for c in terms):
            sign = -sign
            continue
        return None
    return sign


def _general_sign(value: sympy.Expr) -> int | None:
    """+1, -1 or None from sympy's assumptions on the factored value (for what is left)."""
    factored = sympy.factor(value)
    if factored.is_positive:
        return 1
    if factored.is_negative:
        return -1
    return None


def _sign(value: object, domain: Domain) -> int | None:
    """+1, -1 or None for a domain element: term signs first, sympy's assumptions after."""
    quick = _quick_sign(value, domain)
    return quick if quick is not None else _general_sign(domain.to_sympy(value))


def _symbolic_stability(den: sympy.Poly, zero_order: int) -> tuple[str, tuple[sympy.Expr, ...]]:
    """Routh-Hurwitz on ``den / s**zero_order`` with the parameters' assumptions.

    With the leading coefficient made positive: stable (marginal with one pole
    at 0) when every coefficient and every Hurwitz determinant is positive for
    all positive parameter values; unstable when one of them is negative for
    all (a root then lies right of the axis); undetermined otherwise.  When the
    leading coefficient's sign is open, only coefficients of both signs, or an
    even-numbered determinant (unchanged by a change of sign) below zero,
    settle it: unstable.
    """
    domain = den.domain
    coeffs = den.rep.to_list()[: den.degree() + 1 - zero_order]
    offending = tuple([sympy.Integer(0)] * zero_order)
    if zero_order > 1:
        return "unstable", offending
    leading = _sign(coeffs[0], domain)
    if leading == -1:
        coeffs = [-c for c in coeffs]
    determinants = _hurwitz_elements(coeffs, domain)
    if leading is None:
        signs = {_sign(c, domain) for c in coeffs}
        if {1, -1} <= signs or any(_sign(d, domain) == -1 for d in determinants[1::2]):
            return "unstable", offending
        return "undetermined", offending
    values = coeffs[1:] + determinants
    # Cheap term signs first: one negative value settles the verdict.
    signs = [_quick_sign(v, domain) for v in values]
    if -1 in signs:
        return "unstable", offending
    for index, value in enumerate(values):
        if signs[index] is None:
            signs[index] = _general_sign(domain.to_sympy(value))
            if signs[index] == -1:
                return "unstable", offending
    if all(sign == 1 for sign in signs):
        return ("marginal" if zero_order else "stable"), offending
    return "undetermined", offending
