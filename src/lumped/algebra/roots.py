"""Certified roots of polynomials with rational coefficients (python-flint).

One root finder for the two stages that need roots: the network stage (poles,
zeros and stability of transfer functions) and the inversion (the modes of
``X(s)``).  Both factor over the rationals first; factors of degree one and two
have exact roots, and the others get root enclosures (balls) from ball
arithmetic, in which a real root comes back with an imaginary part exactly zero.
A root on the imaginary axis is decided exactly: an irreducible polynomial
with a root ``j w`` is even, ``p(s) = q(s**2)``, and ``q`` has the negative
real root ``-w**2``.

Factorisations and enclosures are cached on the exact coefficients: every
quantity of one network shares its characteristic polynomial.

Examples
--------
>>> import sympy
>>> from lumped.constants import s
>>> [(r.value, r.multiplicity) for r in polynomial_roots(sympy.Poly(s**3 + 2 * s**2 + s, s))]
[(0, 1), (-1, 2)]
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import mpmath
import sympy
from flint import acb, arb, ctx, fmpq, fmpq_poly, fmpz, fmpz_poly

from lumped.constants import s

# The working precision of python-flint's default context: the enclosures whose
# midpoints are reported as floating-point poles and zeros.
DOUBLE_PRECISION_BITS = 53

# Factorisations and enclosures kept for the other responses of one network.
_CACHED = 64

# --------------------------------------------------------------------------- conversions


def to_fmpq_poly(poly: sympy.Poly) -> fmpq_poly:
    """A polynomial with rational coefficients as python-flint's ``fmpq_poly``.

    Examples
    --------
    >>> to_fmpq_poly(sympy.Poly(s**2 / 2 + 3, s))
    1/2*x^2 + 3
    """
    coeffs = [sympy.Rational(c) for c in reversed(poly.all_coeffs())]
    return fmpq_poly([fmpq(int(c.p), int(c.q)) for c in coeffs])


def to_rational(value: fmpq | fmpz) -> sympy.Rational:
    """A python-flint rational or integer as a sympy number.

    Examples
    --------
    >>> to_rational(fmpq(3, 4)), to_rational(fmpz(7))
    (3/4, 7)
    """
    if hasattr(value, "q"):
        return sympy.Rational(int(value.p), int(value.q))
    return sympy.Integer(int(value))


def to_mpf(value: fmpq) -> mpmath.mpf:
    """A python-flint rational as an mpmath number at the working precision.

    Examples
    --------
    >>> to_mpf(fmpq(1, 4))
    mpf('0.25')
    """
    return mpmath.mpf(int(value.p)) / int(value.q)


def midpoint_mpf(value: arb) -> mpmath.mpf:
    """The midpoint of a real ball, exactly, as an mpmath number.

    Examples
    --------
    >>> midpoint_mpf(arb(0.5, 1e-10))
    mpf('0.5')
    """
    man, exp = value.mid().man_exp()
    return mpmath.mpf((int(man), int(exp)))


def midpoint_mpc(value: acb) -> mpmath.mpc:
    """The midpoint of a complex ball, exactly, as an mpmath number.

    Examples
    --------
    >>> midpoint_mpc(acb(0.5, -2))
    mpc(real='0.5', imag='-2.0')
    """
    return mpmath.mpc(midpoint_mpf(value.real), midpoint_mpf(value.imag))


def integer_coefficients(poly: fmpq_poly) -> tuple[int, ...]:
    """The coefficients (low to high) of ``poly`` times its common denominator.

    Examples
    --------
    >>> integer_coefficients(fmpq_poly([fmpq(1, 2), 0, fmpq(1, 3)]))
    (3, 0, 2)
    """
    return tuple(int(c * poly.denom()) for c in poly.coeffs())


# --------------------------------------------------------------------------- factors and roots


def irreducible_factors(poly: fmpq_poly) -> tuple[tuple[fmpq_poly, int], ...]:
    """The irreducible factors of ``poly`` over the rationals, with multiplicities.

    The content (a constant) is left out.  Cached on the coefficients; the
    factors returned are shared, so treat them as read-only.

    Examples
    --------
    >>> irreducible_factors(fmpq_poly([2, 4, 2]))  # 2 (s + 1)^2
    ((x + 1, 2),)
    """
    return _factor(tuple(poly.coeffs()))


@functools.lru_cache(maxsize=_CACHED)
def _factor(coefficients: tuple[fmpq, ...]) -> tuple[tuple[fmpq_poly, int], ...]:
    _, factors = fmpq_poly(list(coefficients)).factor()
    return tuple(factors)


@functools.lru_cache(maxsize=_CACHED)
def certified_roots(coefficients: tuple[int, ...], bits: int) -> tuple[acb, ...]:
    """Root enclosures of a squarefree integer polynomial, at ``bits`` of working precision.

    ``coefficients`` run from the constant term up.  Each ball holds exactly one
    root; a real root has an imaginary part exactly zero.  Cached: every
    quantity of one network shares its characteristic polynomial, so its roots
    are isolated once.

    Examples
    --------
    >>> [r.imag.is_zero() for r in certified_roots((-2, 0, 1), 53)]  # s^2 - 2
    [True, True]
    """
    saved = ctx.prec
    try:
        ctx.prec = bits
        return tuple(r for r, _ in fmpz_poly(list(coefficients)).complex_roots())
    finally:
        ctx.prec = saved


@functools.lru_cache(maxsize=_CACHED)
def axis_root_count(coefficients: tuple[int, ...]) -> int:
    """How many roots an irreducible integer polynomial has on the positive imaginary axis.

    An irreducible polynomial with a root ``j w`` also has the root ``-j w``, so it
    equals ``+-p(-s)``: it is even, ``p(s) = q(s**2)``, and its roots on the axis
    are ``+-j sqrt(-u)`` for the negative real roots ``u`` of ``q`` (real roots
    of an integer polynomial are isolated exactly).  Not for reducible
    polynomials: ``(s + 1)(s**2 + 1)`` is not even.

    Examples
    --------
    >>> axis_root_count((1, 0, 3, 0, 1))  # s^4 + 3 s^2 + 1: u^2 + 3u + 1 has two negative roots
    2
    >>> axis_root_count((1, 0, 0, 0, 1))  # s^4 + 1: u^2 + 1 has none
    0
    """
    if any(c != 0 for c in coefficients[1::2]):
        return 0  # not even: no root on the axis
    even = fmpz_poly(list(coefficients[0::2]))
    return sum(1 for u, _ in even.complex_roots() if u.imag.is_zero() and u.real < 0)


def onto_axis(coefficients: tuple[int, ...], upper: list[acb]) -> list[acb]:
    """Upper-half-plane roots of an irreducible polynomial, those on the imaginary axis made so.

    When the enclosures that touch the axis are exactly as many as the roots
    on the axis (:func:`axis_root_count`), each holds one of them: its real
    part is zero, not a rounding residue that would print as ``exp(1e-39 t)``.

    Examples
    --------
    >>> loose = [acb(arb(1e-35, 1e-30), r.imag) for r in certified_roots((1, 0, 3, 0, 1), 53)
    ...          if r.imag > 0]
    >>> [r.real.is_zero() for r in onto_axis((1, 0, 3, 0, 1), loose)]
    [True, True]
    """
    touching = [i for i, r in enumerate(upper) if r.real.contains(0)]
    if not touching or all(upper[i].real.is_zero() for i in touching):
        return upper
    if axis_root_count(coefficients) != len(touching):
        return upper
    certified = list(upper)
    for i in touching:
        certified[i] = acb(0, upper[i].imag)
    return certified


@dataclass(frozen=True)
class Root:
    """One root of a polynomial, with its multiplicity.

    Attributes
    ----------
    value : sympy.Expr
        Exact for a factor of degree one or two; otherwise a complex
        floating-point number, the midpoint of a certified enclosure.
    multiplicity : int
    factor : fmpq_poly or None
        The irreducible factor the root belongs to when ``value`` is a float;
        ``None`` when it is exact.
    """

    value: sympy.Expr
    multiplicity: int
    factor: fmpq_poly | None = None


def polynomial_roots(poly: sympy.Poly) -> tuple[Root, ...]:
    """The roots of a polynomial in ``s`` with rational coefficients, factor by factor.

    Exact for the factors over the rationals of degree <= 2; floating point
    (certified enclosures' midpoints) for the others.

    Examples
    --------
    >>> [r.value for r in polynomial_roots(sympy.Poly(s**2 + 2 * s + 5, s))]
    [-1 - 2*I, -1 + 2*I]
    >>> len(polynomial_roots(sympy.Poly(s**3 + 2 * s + 5, s)))
    3
    """
    if poly.degree() <= 0:
        return ()
    found: list[Root] = []
    for factor, multiplicity in irreducible_factors(to_fmpq_poly(poly)):
        if factor.degree() <= 2:
            coeffs = [to_rational(c) for c in factor.coeffs()]
            exact = sympy.Poly(sum(c * s**k for k, c in enumerate(coeffs)), s)
            found.extend(Root(r, multiplicity) for r in sympy.roots(exact, multiple=True))
            continue
        for ball in certified_roots(integer_coefficients(factor), DOUBLE_PRECISION_BITS):
            value = sympy.Float(float(ball.real.mid())) + sympy.I * sympy.Float(
                float(ball.imag.mid())
            )
            found.append(Root(value, multiplicity, factor))
    return tuple(found)


def real_part_sign(root: Root) -> int:
    """The sign of a root's real part: exact for exact roots, decided exactly on the axis.

    A floating-point root whose real part is within rounding of zero is on
    the axis when its factor has roots there (:func:`axis_root_count`).

    Examples
    --------
    >>> [real_part_sign(r) for r in polynomial_roots(sympy.Poly(s**4 + 3 * s**2 + 1, s))]
    [0, 0, 0, 0]
    >>> [real_part_sign(r) for r in polynomial_roots(sympy.Poly((s - 1) * (s + 2), s))]
    [1, -1]
    """
    real = sympy.re(root.value)
    if root.factor is None:
        return int(sympy.sign(real))
    if abs(float(real)) > 1e-9 * max(1.0, abs(complex(root.value))):
        return 1 if float(real) > 0 else -1
    on_axis = axis_root_count(integer_coefficients(root.factor)) > 0
    return 0 if on_axis else (1 if float(real) > 0 else -1)


__all__ = [
    "DOUBLE_PRECISION_BITS",
    "Root",
    "axis_root_count",
    "certified_roots",
    "integer_coefficients",
    "irreducible_factors",
    "midpoint_mpc",
    "midpoint_mpf",
    "onto_axis",
    "polynomial_roots",
    "real_part_sign",
    "to_fmpq_poly",
    "to_mpf",
    "to_rational",
]
