"""Ratios of polynomials in ``s``: exact entries, cancelling, delays.

The small pieces of exact algebra the solve, the solution and the transfer
functions share.  Numbers enter as exact rationals (an irrational number
becomes its 40-digit rational by :func:`lumped.algebra.exact.rationalise`);
a ratio is kept as a pair of ``sympy.Poly`` in ``s`` and cancelled over the
integers, over the polynomial ring of the parameters, or left alone when its
coefficients hold irrational numbers.

Examples
--------
>>> num, den = ratio((2 * s + 2) / (4 * s**2 - 4))
>>> cancel(num, den)
(Poly(1/2, s, domain='QQ'), Poly(s - 1, s, domain='QQ'))
"""

from __future__ import annotations

import sympy
from sympy.polys.constructor import construct_domain

from lumped.algebra.exact import rationalise
from lumped.constants import s


def is_number(value: sympy.Expr) -> bool:
    """True for an exact rational number.

    Examples
    --------
    >>> is_number(sympy.Rational(1, 3)), is_number(sympy.sqrt(2))
    (True, False)
    """
    return bool(getattr(value, "is_Rational", False))


def exact_entry(value: sympy.Expr | int) -> sympy.Expr:
    """A number, or an expression in ``s`` alone, with its irrational numbers as rationals.

    Expressions in parameters stay as they are (the symbolic solve keeps them).

    Examples
    --------
    >>> exact_entry(sympy.pi / 1000)
    3141592653589793238462643383279502884197/1000000000000000000000000000000000000000000
    >>> exact_entry(sympy.Symbol("R") * sympy.pi)
    pi*R
    """
    if isinstance(value, int):
        return sympy.Integer(value)
    return rationalise(value) if value.free_symbols <= {s} else value


def poly(expr: sympy.Expr) -> sympy.Poly:
    """``expr`` as a polynomial in ``s``.

    Examples
    --------
    >>> poly(s + 1).degree()
    1
    """
    return sympy.Poly(expr, s)


def ratio(expr: sympy.Expr) -> tuple[sympy.Poly, sympy.Poly]:
    """Numerator and denominator of ``expr`` as polynomials in ``s``.

    Examples
    --------
    >>> ratio(1 / (s + 2))
    (Poly(1, s, domain='ZZ'), Poly(s + 2, s, domain='ZZ'))
    """
    num, den = sympy.fraction(sympy.together(expr))
    return poly(num), poly(den)


def cancel(num: sympy.Poly, den: sympy.Poly) -> tuple[sympy.Poly, sympy.Poly]:
    """Remove common factors; monic denominator for numbers, positive leading sign otherwise.

    Examples
    --------
    >>> cancel(poly(s**2 - 1), poly(2 * s + 2))
    (Poly(1/2*s - 1/2, s, domain='QQ'), Poly(1, s, domain='QQ'))
    """
    if num.is_zero:
        return num, poly(sympy.Integer(1))
    num, den = num.unify(den)
    if _numeric_irrational(den.domain):
        # Coefficients such as pi (a sine's 2 pi f) or sqrt(3): a gcd over an
        # expression domain costs seconds and changes nothing that matters, since
        # the inversion takes such numbers to exact rationals and cancels there.
        lc = den.LC()
        if lc.could_extract_minus_sign():
            num, den = -num, -den
        return num, den
    if den.domain.is_PolynomialRing:
        # A gcd over Z[s, params] is far cheaper than pseudo-remainders in s
        # over Z[params], which swell badly.
        others = list(den.domain.symbols)
        flat_num, flat_den = num.inject(), den.inject()
        c, flat_num, flat_den = flat_num.cancel(flat_den)
        flat_num = flat_num * c
        num = flat_num.reorder(s, *others).eject(*others)
        den = flat_den.reorder(s, *others).eject(*others)
    else:
        result = num.cancel(den)
        if len(result) == 3:
            c, num, den = result
            num = num * c
    if den.domain.is_ZZ or den.domain.is_QQ:
        num, den = num.to_field(), den.to_field()
        lc = den.LC()
        num, den = num.exquo_ground(lc), den.monic()
    else:
        lc = den.LC()
        if lc.could_extract_minus_sign():
            num, den = -num, -den
    return num, den


def _numeric_irrational(domain) -> bool:
    """True for a coefficient domain holding irrational numbers rather than parameters."""
    if domain.is_EX or domain.is_EXRAW:
        return True
    if domain.is_PolynomialRing or domain.is_FractionField:
        return not all(isinstance(g, sympy.Symbol) for g in domain.symbols)
    return False


def as_expr(num: sympy.Poly, den: sympy.Poly) -> sympy.Expr:
    """``num / den`` as one expression (``0`` for a zero numerator).

    Examples
    --------
    >>> as_expr(poly(sympy.Integer(3)), poly(s + 1))
    3/(s + 1)
    """
    if num.is_zero:
        return sympy.Integer(0)
    return num.as_expr() / den.as_expr()


def is_plain(weight: sympy.Expr | int) -> bool:
    """True when ``weight`` is a rational function of symbols with rational coefficients.

    Examples
    --------
    >>> is_plain(sympy.Symbol("k") / 3), is_plain(sympy.sqrt(2))
    (True, False)
    """
    weight = sympy.Integer(weight) if isinstance(weight, int) else weight
    if weight.is_Rational:
        return True
    domain, _ = construct_domain([weight])
    if domain.is_ZZ or domain.is_QQ:
        return True
    if domain.is_PolynomialRing or domain.is_FractionField:
        return all(isinstance(g, sympy.Symbol) for g in domain.symbols) and (
            domain.domain.is_ZZ or domain.domain.is_QQ
        )
    return False


def delay_factor(delay: sympy.Expr) -> sympy.Expr:
    """``exp(-s * delay)``, or ``1`` without a delay.

    Examples
    --------
    >>> delay_factor(sympy.Integer(2))
    exp(-2*s)
    """
    return sympy.Integer(1) if delay == 0 else sympy.exp(-s * delay)
