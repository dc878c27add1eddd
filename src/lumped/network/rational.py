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

import functools
from collections.abc import Callable

import sympy
from sympy.core.add import Add, _addsort
from sympy.core.mul import Mul
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
    return poly_expr(num) / poly_expr(den)


def poly_expr(p: sympy.Poly) -> sympy.Expr:
    """``p.as_expr()``: the same expression, built directly for rational coefficients.

    A polynomial of high degree with long rational coefficients spends most of
    ``as_expr`` in sympy's general flattening of each term; the terms of a
    polynomial in ``s`` need none, so they are put in sympy's canonical order
    (the number first, then the sorted terms) as sympy would.

    Examples
    --------
    >>> poly_expr(poly(3 * s**2 - s / 2 + 1)) == (3 * s**2 - s / 2 + 1)
    True
    """
    if p.gens != (s,) or not (p.domain.is_ZZ or p.domain.is_QQ):
        return p.as_expr()
    to_sympy = p.domain.to_sympy
    return sum_of_powers([(k, to_sympy(c)) for (k,), c in p.terms()])


def sum_of_powers(items: list[tuple[int, sympy.Rational]]) -> sympy.Expr:
    """``sum c * s**k`` over ``(k, c)`` with rational ``c``, as sympy builds it.

    Examples
    --------
    >>> sum_of_powers([(2, sympy.Integer(-1)), (0, sympy.Rational(1, 2))])
    1/2 - s**2
    """
    constant = None
    terms = []
    keys = []
    order = _term_order()
    for power, coefficient in items:
        if coefficient == 0:
            continue
        if power == 0:
            constant = coefficient
            continue
        base = s if power == 1 else sympy.Pow(s, sympy.Integer(power))
        terms.append(base if coefficient == 1 else Mul._from_args((coefficient, base)))
        if order is not None:
            keys.append(order(power, coefficient))
    if order is None:
        _addsort(terms)
    else:
        terms = [term for _, term in sorted(zip(keys, terms, strict=True), key=_first)]
    if constant is not None:
        terms.insert(0, constant)
    if not terms:
        return sympy.Integer(0)
    if len(terms) == 1:
        return terms[0]
    return Add._from_args(terms)


def rational(numerator: int, denominator: int) -> sympy.Rational:
    """The sympy rational ``numerator / denominator`` of two coprime integers, ``denominator > 0``.

    Examples
    --------
    >>> rational(3, 4), rational(6, 1)
    (3/4, 6)
    """
    return _FROM_COPRIME(numerator, denominator)


_FROM_COPRIME = getattr(sympy.Rational, "from_coprime_ints", None) or sympy.Rational


def _first(pair: tuple) -> object:
    return pair[0]


@functools.cache
def _term_order() -> Callable[[int, sympy.Rational], tuple] | None:
    """A sort key that puts terms ``c * s**k`` in sympy's canonical order, or None.

    Sympy orders the terms of a sum by comparing them (``Basic.compare``): by
    class (``ordering_of_classes``), then by their contents in turn.  For terms
    ``c * s**k`` that comes down to integers, which sort far faster than
    comparisons of expressions.  The key is checked against sympy's own sort on
    terms of every kind before it is used; without a match sympy sorts.
    """
    from sympy.core.basic import ordering_of_classes

    index = {name: i for i, name in enumerate(ordering_of_classes)}
    if not {"Symbol", "Pow", "Mul", "Half", "NegativeOne", "Integer", "Rational"} <= set(index):
        return None
    symbol, power_class, product = index["Symbol"], index["Pow"], index["Mul"]

    def key(power: int, coefficient: sympy.Rational) -> tuple:
        base = (symbol,) if power == 1 else (power_class, power)
        if coefficient == 1:
            return base
        return (product, (index[type(coefficient).__name__], int(coefficient.p),
                          int(coefficient.q)), base)

    sample = [sympy.Integer(c) for c in (-1, 1, 2, -3, 10**40, -(10**40))]
    sample += [sympy.Rational(p, q) for p, q in ((1, 2), (-1, 2), (5, 7), (-5, 7), (1, 3),
                                                  (10**30 + 1, 10**20))]
    items = [(k, c) for k in (1, 2, 3, 10) for c in sample]
    terms = [s**k if c == 1 else Mul._from_args((c, s**k if k > 1 else s)) for k, c in items]
    expected = list(terms)
    _addsort(expected)
    try:
        found = [term for _, term in sorted(zip((key(k, c) for k, c in items), terms,
                                                strict=True), key=_first)]
    except KeyError:
        return None
    return key if found == expected and all(
        a is b for a, b in zip(found, expected, strict=True)) else None



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
