"""Certified roots (lumped.algebra.roots) against mpmath's polynomial roots at 50 digits.

mpmath.polyroots (Durand-Kerner at raised precision) is the reference; roots on the
imaginary axis are those whose real part it finds below 1e-30.
"""

from __future__ import annotations

import mpmath
import pytest
import sympy
from flint import acb, arb, fmpq_poly
from hypothesis import given, settings
from hypothesis import strategies as st

from lumped.algebra.roots import (
    axis_root_count,
    certified_roots,
    integer_coefficients,
    irreducible_factors,
    onto_axis,
    polynomial_roots,
    real_part_sign,
)
from lumped.constants import s


def reference_roots(coefficients_high_first: list[int]) -> list[mpmath.mpc]:
    with mpmath.workdps(50):
        return [mpmath.mpc(r) for r in mpmath.polyroots(coefficients_high_first, maxsteps=400,
                                                        extraprec=400)]


def squarefree(coefficients_low_first: list[int]) -> bool:
    poly = sympy.Poly(list(reversed(coefficients_low_first)), s)
    return sympy.gcd(poly, poly.diff(s)).degree() == 0


@settings(max_examples=60, deadline=None)
@given(st.lists(st.integers(-20, 20), min_size=2, max_size=7)
       .filter(lambda c: c[-1] != 0 and c[0] != 0 and squarefree(c)))
def test_every_root_is_found_once(coefficients):
    poly = sympy.Poly(list(reversed(coefficients)), s)
    ours = [complex(r.value) for r in polynomial_roots(poly) for _ in range(r.multiplicity)]
    expected = [complex(r) for r in reference_roots(list(reversed(coefficients)))]
    assert len(ours) == len(expected) == poly.degree()
    for root in expected:
        nearest = min(ours, key=lambda r: abs(r - root))
        assert abs(nearest - root) <= 1e-9 * max(1.0, abs(root))
        ours.remove(nearest)


@settings(max_examples=60, deadline=None)
@given(st.lists(st.integers(-9, 9), min_size=2, max_size=4).filter(lambda c: c[-1] != 0))
def test_roots_on_the_imaginary_axis_are_counted_exactly(q):
    # p(s) = q(s^2): even, so its roots come in +-pairs; the reference counts those with
    # a real part below 1e-30 and a positive imaginary part, factor by factor.
    even = [c for coefficient in q for c in (coefficient, 0)][:-1]
    for factor, _ in irreducible_factors(fmpq_poly(even)):
        if factor.degree() < 2:
            continue
        coefficients = integer_coefficients(factor)
        expected = sum(1 for r in reference_roots(list(reversed(coefficients)))
                       if abs(r.real) < 1e-30 and r.imag > 0)
        assert axis_root_count(coefficients) == expected


def test_stability_signs_on_and_off_the_axis():
    # s^4 + 3 s^2 + 1: u^2 + 3u + 1 has roots (-3 +- sqrt 5)/2 < 0 (quadratic formula,
    # from memory), so all four roots are on the axis; s^4 + 1 has none there.
    on_axis = polynomial_roots(sympy.Poly(s**4 + 3 * s**2 + 1, s))
    assert [real_part_sign(r) for r in on_axis] == [0, 0, 0, 0]
    off_axis = polynomial_roots(sympy.Poly(s**4 + 1, s))
    assert sorted(real_part_sign(r) for r in off_axis) == [-1, -1, 1, 1]


def test_exact_roots_of_low_degree_factors_with_multiplicity():
    # (s + 1)^2 (s^2 + 4): -1 twice and +-2j, exactly (hand factored).
    found = polynomial_roots(sympy.Poly((s + 1) ** 2 * (s**2 + 4), s))
    assert sorted((str(r.value), r.multiplicity) for r in found) == [
        ("-1", 2), ("-2*I", 1), ("2*I", 1)]
    assert all(r.factor is None for r in found)


def test_loose_enclosures_are_moved_onto_the_axis_only_when_certified():
    coefficients = (1, 0, 3, 0, 1)  # s^4 + 3 s^2 + 1, roots on the axis (see above)
    upper = [acb(arb(1e-35, 1e-30), r.imag) for r in certified_roots(coefficients, 80)
             if r.imag > 0]
    assert all(r.real.is_zero() for r in onto_axis(coefficients, upper))
    off = (1, 0, 0, 0, 1)  # s^4 + 1: no roots on the axis, nothing is moved
    loose = [acb(arb(1e-35, 1e-30), r.imag) for r in certified_roots(off, 80) if r.imag > 0]
    assert onto_axis(off, loose) == loose


@pytest.mark.parametrize("bits", [53, 200])
def test_real_roots_come_back_exactly_real(bits):
    # s^3 - 2: one real root 2^(1/3) and a complex pair (from memory).
    roots = certified_roots((-2, 0, 0, 1), bits)
    real = [r for r in roots if r.imag.is_zero()]
    assert len(real) == 1
    assert abs(float(real[0].real.mid()) - 2 ** (1 / 3)) < 1e-15
