"""Partial fractions by residues: the modes of one delay group ``R(s)``.

The improper part of ``R`` (polynomial division) becomes impulses
``delta^(j)(t - T)``; the denominator is factored exactly over Q, and each
factor gives its modes:

* linear and quadratic factors give exact poles (with ``sqrt``) and exact
  coefficients (:func:`_exact_modes`);
* higher irreducible factors give certified root enclosures (ball
  arithmetic), refined until every residue is known to the requested number
  of digits (:func:`_ball_modes`);
* with free parameters the factorisation is over Q(parameters); linear and
  quadratic factors still give closed forms, a quadratic one as a
  ``Piecewise`` over its discriminant, and a factor of higher degree raises
  :class:`~lumped.errors.ParametersNeeded` (:func:`_symbolic_group`).
  Parameters are assumed generic: distinct factors have distinct roots.

A pole ``p`` of multiplicity ``m`` gives ``sum_k c_k t^k/k! e^{pt}``;
conjugate pairs are written as real damped sinusoids.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from typing import Any

import mpmath
import sympy
from flint import acb_poly, ctx, fmpq, fmpq_poly

from lumped.algebra.roots import (
    certified_roots,
    integer_coefficients,
    irreducible_factors,
    midpoint_mpc,
    midpoint_mpf,
    onto_axis,
    to_mpf,
    to_rational,
)
from lumped.errors import ParametersNeeded
from lumped.inversion.closed_form import Impulse, Mode, _Cases, _Group, _Piece
from lumped.inversion.evaluator import _NumericGroup

# ---------------------------------------------------------------------------
# exact arithmetic helpers
# ---------------------------------------------------------------------------


class _Quad:
    """Element ``x + y*sqrt(d)`` of a quadratic extension of a field K.

    Works over any K whose elements support + - * / (flint fmpq, sympy
    fraction-field elements).
    """

    __slots__ = ("d", "x", "y")

    def __init__(self, x: Any, y: Any, d: Any) -> None:
        self.x, self.y, self.d = x, y, d

    def _lift(self, other: Any) -> _Quad:
        if isinstance(other, _Quad):
            return other
        return _Quad(other, self.x - self.x, self.d)

    def __add__(self, other: Any) -> _Quad:
        o = self._lift(other)
        return _Quad(self.x + o.x, self.y + o.y, self.d)

    __radd__ = __add__

    def __sub__(self, other: Any) -> _Quad:
        o = self._lift(other)
        return _Quad(self.x - o.x, self.y - o.y, self.d)

    def __rsub__(self, other: Any) -> _Quad:
        return self._lift(other) - self

    def __neg__(self) -> _Quad:
        return _Quad(-self.x, -self.y, self.d)

    def __mul__(self, other: Any) -> _Quad:
        o = self._lift(other)
        return _Quad(self.x * o.x + self.y * o.y * self.d, self.x * o.y + self.y * o.x, self.d)

    __rmul__ = __mul__

    def __truediv__(self, other: Any) -> _Quad:
        o = self._lift(other)
        norm = o.x * o.x - o.y * o.y * self.d
        return self * _Quad(o.x / norm, -o.y / norm, self.d)

    def __rtruediv__(self, other: Any) -> _Quad:
        return self._lift(other) / self


def _taylor(coeffs: Sequence[Any], point: Any, count: int, zero: Any) -> list:
    """First ``count`` Taylor coefficients of a polynomial at ``point``.

    ``coeffs`` are low-to-high.  Repeated synthetic division by (s - point).
    """
    current = list(reversed(coeffs))
    out = []
    for _ in range(count):
        if not current:
            out.append(zero)
            continue
        acc = current[0]
        quotient = [acc]
        for c in current[1:]:
            acc = acc * point + c
            quotient.append(acc)
        out.append(quotient.pop())
        current = quotient
    return out


def _series_residues(num_taylor: Sequence[Any], den_taylor: Sequence[Any]) -> list:
    """Laurent coefficients ``c_0..c_{m-1}`` at a pole of multiplicity m.

    ``num_taylor`` holds N's Taylor coefficients n_0..n_{m-1}; ``den_taylor``
    holds D's coefficients d_m..d_{2m-1} (lower ones vanish).  With
    g = N/(D/eps^m) = sum g_i eps^i, c_k = g_{m-1-k}.
    """
    m = len(num_taylor)
    g: list = []
    for i in range(m):
        acc = num_taylor[i]
        for j in range(1, i + 1):
            acc = acc - den_taylor[j] * g[i - j]
        g.append(acc / den_taylor[0])
    return [g[m - 1 - k] for k in range(m)]


def _float(value: mpmath.mpf, digits: int) -> sympy.Float:
    return sympy.Float(value, digits)


# ---------------------------------------------------------------------------
# numeric-coefficient groups (exact rational coefficients, no parameters)
# ---------------------------------------------------------------------------


def _impulses_from_quotient(quotient: Sequence[sympy.Expr], delay: sympy.Expr) -> list[Impulse]:
    return [
        Impulse(order=j, weight=w, delay=delay) for j, w in enumerate(quotient) if w != 0
    ]


def _numeric_group(
    num: fmpq_poly, den: fmpq_poly, delay: sympy.Expr, digits: int
) -> tuple[_Group, _NumericGroup | None]:
    common = num.gcd(den)
    if common.degree() > 0:
        num, den = num // common, den // common
    quotient, num = divmod(num, den)
    impulses = _impulses_from_quotient([to_rational(c) for c in quotient.coeffs()], delay)
    delay_float = float(delay) if delay.is_number else math.nan

    factors = irreducible_factors(den)
    modes: list[Mode] = []
    pieces: list[_Piece] = []
    numeric_factors = []
    if not num.is_zero():
        for factor, mult in factors:
            degree = factor.degree()
            monic = factor / factor.coeffs()[-1]
            if degree == 1:
                root = -monic.coeffs()[0]
                _exact_modes(num, den, root, None, mult, delay, delay_float, digits, modes, pieces)
            elif degree == 2:
                c0, c1, _ = monic.coeffs()
                disc = c1 * c1 - 4 * c0
                root = _Quad(-c1 / 2, fmpq(1, 2), disc)
                _exact_modes(num, den, root, disc, mult, delay, delay_float, digits, modes, pieces)
            else:
                numeric_factors.append((factor, mult))
        if numeric_factors:
            _ball_modes(num, den, numeric_factors, delay, delay_float, digits, modes, pieces)

    group = _Group(delay, tuple(pieces), tuple(impulses), tuple(modes), False)
    numeric = _NumericGroup(
        delay=delay_float,
        poles=tuple(m.pole for m in modes),
        coeffs=tuple(
            tuple(2 * c for c in m.coefficients_precise) if m.is_pair else m.coefficients_precise
            for m in modes
        ),
        poles_precise=tuple(m.pole_precise for m in modes),
    )
    return group, numeric


def _exact_modes(
    num: fmpq_poly,
    den: fmpq_poly,
    root: Any,
    disc: fmpq | None,
    mult: int,
    delay: sympy.Expr,
    delay_float: float,
    digits: int,
    modes: list,
    pieces: list,
) -> None:
    """Modes of an exact rational root or exact root pair of a quadratic."""
    zero = fmpq(0)
    num_c, den_c = num.coeffs(), den.coeffs()
    if isinstance(root, _Quad):
        num_c = [_Quad(c, zero, disc) for c in num_c]
        den_c = [_Quad(c, zero, disc) for c in den_c]
        zero_el: Any = _Quad(zero, zero, disc)
    else:
        zero_el = zero
    n_t = _taylor(num_c, root, mult, zero_el)
    d_t = _taylor(den_c, root, 2 * mult, zero_el)[mult:]
    coeffs = _series_residues(n_t, d_t)

    with mpmath.workdps(digits + 10):
        if not isinstance(root, _Quad):
            exact = tuple(to_rational(c) for c in coeffs)
            precise = tuple(mpmath.mpc(to_mpf(c)) for c in coeffs)
            pole = to_mpf(root)
            modes.append(
                Mode(complex(pole), to_rational(root), mult, tuple(complex(c) for c in precise),
                     delay_float, delay, False, mpmath.mpc(pole), precise, exact)
            )
            pieces.append(_Piece("real", to_rational(root), sympy.Integer(0), exact, ()))
            return
        alpha, beta = to_rational(root.x), to_rational(root.y)
        root_d = sympy.sqrt(to_rational(abs(disc)))
        root_d_mp = mpmath.sqrt(to_mpf(abs(disc)))
        if disc > 0:
            for sign in (1, -1):
                pole_e = alpha + sign * beta * root_d
                exact = tuple(to_rational(c.x) + sign * to_rational(c.y) * root_d for c in coeffs)
                precise = tuple(
                    mpmath.mpc(to_mpf(c.x) + sign * to_mpf(c.y) * root_d_mp) for c in coeffs
                )
                pole = mpmath.mpc(to_mpf(root.x) + sign * to_mpf(root.y) * root_d_mp)
                modes.append(
                    Mode(complex(pole), pole_e, mult, tuple(complex(c) for c in precise),
                         delay_float, delay, False, pole, precise, exact)
                )
                pieces.append(_Piece("real", pole_e, sympy.Integer(0), exact, ()))
            return
        # complex pair, upper pole alpha + i*beta*sqrt(|d|) (beta = 1/2 > 0)
        omega = beta * root_d
        pole_e = alpha + sympy.I * omega
        re_parts = [to_rational(c.x) for c in coeffs]
        im_parts = [to_rational(c.y) * root_d for c in coeffs]
        exact = tuple(r + sympy.I * i for r, i in zip(re_parts, im_parts, strict=True))
        precise = tuple(
            mpmath.mpc(to_mpf(c.x), to_mpf(c.y) * root_d_mp) for c in coeffs
        )
        pole = mpmath.mpc(to_mpf(root.x), to_mpf(root.y) * root_d_mp)
        modes.append(
            Mode(complex(pole), pole_e, mult, tuple(complex(c) for c in precise),
                 delay_float, delay, True, pole, precise, exact)
        )
        pieces.append(
            _Piece("osc", alpha, omega, tuple(2 * r for r in re_parts),
                   tuple(-2 * i for i in im_parts))
        )

def _ball_modes(
    num: fmpq_poly,
    den: fmpq_poly,
    factors: list,
    delay: sympy.Expr,
    delay_float: float,
    digits: int,
    modes: list,
    pieces: list,
) -> None:
    """Modes of irreducible factors of degree >= 3, by certified root balls.

    Roots come from ball arithmetic; real roots are returned with an exactly
    zero imaginary part, which (with the count check below) certifies which
    poles are real.  The working precision is doubled until every residue is
    known to ``digits`` significant digits relative to its mode.
    """
    target_bits = int(digits * 3.33) + 8
    max_mult = max(m for _, m in factors)
    bits = target_bits + 40
    saved = ctx.prec
    try:
        for _attempt in range(8):
            ctx.prec = bits
            num_p = acb_poly(list(num.coeffs()))
            den_derivs = [acb_poly(list(den.coeffs()))]
            for _ in range(2 * max_mult - 1):
                den_derivs.append(den_derivs[-1].derivative())
            num_derivs = [num_p]
            for _ in range(max_mult - 1):
                num_derivs.append(num_derivs[-1].derivative())
            results = []
            accurate = True
            for factor, mult in factors:
                roots = certified_roots(
                    integer_coefficients(factor), bits
                )
                real = [r for r in roots if r.imag.is_zero()]
                upper = [r for r in roots if r.imag > 0]
                if len(real) + 2 * len(upper) != factor.degree():
                    accurate = False  # separation not certified yet: refine
                    break
                upper = onto_axis(
                    integer_coefficients(factor), upper
                )
                for root, is_pair in [(r, False) for r in real] + [(r, True) for r in upper]:
                    n_t = [num_derivs[j](root) / math.factorial(j) for j in range(mult)]
                    d_t = [
                        den_derivs[j](root) / math.factorial(j) for j in range(mult, 2 * mult)
                    ]
                    coeffs = _series_residues(n_t, d_t)
                    scale = max(c.abs_upper() for c in coeffs)
                    for c in coeffs:
                        if not c.is_finite() or (
                            scale > 0 and c.rad() > scale * (2.0 ** -target_bits)
                        ):
                            accurate = False
                    results.append((root, is_pair, mult, coeffs))
                if not accurate:
                    break
            if accurate:
                break
            bits *= 2
        else:
            raise ArithmeticError("residues could not be certified to the requested digits")
        with mpmath.workprec(bits):
            for root, is_pair, mult, coeffs in results:
                pole = midpoint_mpc(root)
                if not is_pair:
                    pole = mpmath.mpc(pole.real)
                precise = tuple(
                    midpoint_mpc(c) if is_pair else mpmath.mpc(midpoint_mpf(c.real)) for c in coeffs
                )
                sigma = _float(pole.real, digits)
                if is_pair:
                    omega = _float(pole.imag, digits)
                    a = tuple(_float(2 * c.real, digits) for c in precise)
                    b = tuple(_float(-2 * c.imag, digits) for c in precise)
                    pieces.append(_Piece("osc", sigma, omega, a, b))
                    pole_exact = None
                else:
                    a = tuple(_float(c.real, digits) for c in precise)
                    pieces.append(_Piece("real", sigma, sympy.Integer(0), a, ()))
                    pole_exact = None
                modes.append(
                    Mode(complex(pole), pole_exact, mult, tuple(complex(c) for c in precise),
                         delay_float, delay, is_pair, pole, precise, None)
                )
    finally:
        ctx.prec = saved


# ---------------------------------------------------------------------------
# groups with free parameters in R(s)
# ---------------------------------------------------------------------------


def _symbolic_group(
    numer: sympy.Expr, denom: sympy.Expr, s: sympy.Symbol, params: list, delay: sympy.Expr
) -> _Group:
    domain = sympy.QQ.frac_field(*params)
    num = sympy.Poly(numer, s, domain=domain)
    den = sympy.Poly(denom, s, domain=domain)
    common = num.gcd(den)
    if common.degree() > 0:
        num, den = num.exquo(common), den.exquo(common)
    quotient, num = num.div(den)
    impulses = _impulses_from_quotient(
        [sympy.factor(c) for c in quotient.all_coeffs()[::-1]], delay
    )
    items: list = []
    if num.is_zero:
        return _Group(delay, (), tuple(impulses), (), True)

    # Factor over Z[s, params]; by Gauss's lemma this is the factorisation over
    # Q(params)[s] once factors free of s are set aside.
    _, clear = den.clear_denoms(convert=True)
    _, raw = sympy.factor_list(clear.as_expr(), s, *params)
    factors = [(f, m) for f, m in raw if sympy.degree(f, s) > 0]
    too_high = [f for f, _ in factors if sympy.degree(f, s) > 2]
    if too_high:
        raise ParametersNeeded(
            (numer.free_symbols | denom.free_symbols) - {s},
            f"denominator factor of degree {sympy.degree(too_high[0], s)} in {s}",
        )

    to_sym = domain.to_sympy
    num_c = [domain.convert(c) for c in num.all_coeffs()[::-1]]
    den_c = [domain.convert(c) for c in den.all_coeffs()[::-1]]
    zero = domain.zero
    for fexpr, mult in factors:
        factor = sympy.Poly(fexpr, s, domain=domain).monic()
        fc = [domain.convert(c) for c in factor.all_coeffs()[::-1]]
        if len(fc) == 2:
            root = -fc[0]
            coeffs = _series_residues(
                _taylor(num_c, root, mult, zero), _taylor(den_c, root, 2 * mult, zero)[mult:]
            )
            items.append(
                _Piece("real", sympy.factor(to_sym(root)), sympy.Integer(0),
                       tuple(sympy.factor(to_sym(c)) for c in coeffs), ())
            )
            continue
        c0, c1 = fc[0], fc[1]
        disc = c1 * c1 - 4 * c0
        alpha = -c1 / 2
        disc_e = sympy.factor(to_sym(disc))
        alpha_e = sympy.factor(to_sym(alpha))
        # distinct roots alpha +/- sqrt(disc)/2: residues x_k +/- y_k sqrt(disc)
        qroot = _Quad(alpha, domain.one / 2, disc)
        lift = [_Quad(c, zero, disc) for c in num_c], [_Quad(c, zero, disc) for c in den_c]
        qzero = _Quad(zero, zero, disc)
        coeffs = _series_residues(
            _taylor(lift[0], qroot, mult, qzero), _taylor(lift[1], qroot, 2 * mult, qzero)[mult:]
        )
        xs = [sympy.factor(to_sym(c.x)) for c in coeffs]
        ys = [sympy.factor(to_sym(c.y)) for c in coeffs]
        root_pos = sympy.sqrt(disc_e)
        root_neg = sympy.sqrt(-disc_e)
        over = _Piece("hyp", alpha_e, root_pos / 2, tuple(2 * x for x in xs),
                      tuple(2 * y * root_pos for y in ys))
        under = _Piece("osc", alpha_e, root_neg / 2, tuple(2 * x for x in xs),
                       tuple(-2 * y * root_neg for y in ys))
        if disc_e.is_number:
            items.append(over if disc_e > 0 else under)
            continue
        # same sign as disc (it differs by the square of the leading
        # coefficient) but free of denominators, so the conditions read well
        cond_e = sympy.factor(sympy.discriminant(fexpr, s))
        branches = []
        if sympy.Gt(cond_e, 0) is not sympy.false:
            branches.append((sympy.Gt(cond_e, 0), (over,)))
        # repeated root alpha of multiplicity 2*mult when disc == 0:
        # D = lc * (s - alpha)^(2 mult) * E(s), E = D / factor^mult
        rest = den.exquo(factor**mult)
        rest_c = [domain.convert(c) for c in rest.all_coeffs()[::-1]]
        rest_t = _taylor(rest_c, alpha, 2 * mult, zero)
        # If E(alpha) vanishes identically, the double root meets a root of
        # another factor; that coincidence is outside the generic-parameter
        # contract, so no branch is given for it.
        if sympy.Eq(cond_e, 0) is not sympy.false and rest_t[0] != zero:
            crit_coeffs = _series_residues(_taylor(num_c, alpha, 2 * mult, zero), rest_t)
            critical = _Piece("real", alpha_e, sympy.Integer(0),
                              tuple(sympy.factor(to_sym(c)) for c in crit_coeffs), ())
            branches.append((sympy.Eq(cond_e, 0), (critical,)))
        if sympy.Lt(cond_e, 0) is not sympy.false:
            branches.append((sympy.Lt(cond_e, 0), (under,)))
        if len(branches) == 1:
            items.extend(branches[0][1])
        else:
            items.append(_Cases(tuple(branches)))
    return _Group(delay, tuple(items), tuple(impulses), (), True)
