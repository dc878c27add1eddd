"""Certified roots and exact factors of the rational polynomials the inversion meets.

Root enclosures come from ball arithmetic (python-flint), so every pole the
inversion reports is known to lie in its ball; roots that the enclosures show
on the imaginary axis are put exactly on it.  Both the roots and the exact
factorisation are cached: every quantity of one network shares its
characteristic polynomial.
"""

from __future__ import annotations

import functools

from flint import acb, ctx, fmpq_poly, fmpz_poly


@functools.lru_cache(maxsize=64)
def _certified_roots(coefficients: tuple[int, ...], bits: int) -> tuple:
    """Root balls of an integer polynomial, kept for the other responses of a network.

    Every quantity of one network shares its characteristic polynomial, so
    the roots are isolated once and reused (the cache is keyed on the exact
    coefficients and the working precision).
    """
    saved = ctx.prec
    try:
        ctx.prec = bits
        return tuple(r for r, _ in fmpz_poly(list(coefficients)).complex_roots())
    finally:
        ctx.prec = saved


@functools.lru_cache(maxsize=64)
def _factor_cached(coefficients: tuple) -> tuple:
    """Irreducible factors of a rational polynomial, kept for the network's other responses."""
    _, factors = fmpq_poly(list(coefficients)).factor()
    return tuple(factors)


def _onto_axis(coefficients: tuple[int, ...], upper: list) -> list:
    """The upper-half-plane roots, those certified on the imaginary axis made exactly so.

    An irreducible polynomial with a root jw also has the root -jw, so it
    equals ±p(-s): it is even, p(s) = q(s^2), and its roots on the axis are
    ±j sqrt(-u) for the negative real roots u of q (real roots of an integer
    polynomial are isolated exactly).  When the enclosures that touch the axis
    are exactly as many as those roots, each holds one of them: its real part
    is zero, not a rounding residue that would print as exp(1e-39 t).
    """
    touching = [i for i, r in enumerate(upper) if r.real.contains(0)]
    if not touching or all(upper[i].real.is_zero() for i in touching):
        return upper
    if any(c != 0 for c in coefficients[1::2]):
        return upper  # not even: no root on the axis
    even = fmpz_poly(list(coefficients[0::2]))
    negative = sum(1 for u, _ in even.complex_roots() if u.imag.is_zero() and u.real < 0)
    if negative != len(touching):
        return upper
    certified = list(upper)
    for i in touching:
        certified[i] = acb(0, upper[i].imag)
    return certified

