"""Stability of transfer functions with free parameters, against the Routh-Hurwitz criterion.

Sources:
- the Routh-Hurwitz conditions written out for degree 2, 3 and 4 (control textbooks,
  from memory): for ``a0 s^n + ... + an`` with ``a0 > 0``, degree 2 is stable when every
  coefficient is positive; degree 3 also needs ``a1 a2 > a0 a3``; degree 4 also needs
  ``a1 a2 a3 > a0 a3^2 + a1^2 a4``;
- the Hurwitz matrix (entry ``(i, j)`` is ``a_(2j-i+1)``, from memory) and its leading
  minors computed by sympy's ``Matrix.det``;
- root locations from ``numpy.roots`` at random parameter values.
"""

from __future__ import annotations

import random

import numpy as np
import pytest
import sympy

from lumped import model as m
from lumped.api import loads
from lumped.constants import s
from lumped.network import assemble
from lumped.network.transfer import describe, hurwitz_determinants

A = sympy.symbols("a0:5", positive=True)
P, Q_, W = sympy.symbols("p q w", positive=True)
OUT = m.Quantity(m.QuantityKind.VOLTAGE, "out", "at")


def hurwitz_matrix_minors(coefficients: list[sympy.Expr]) -> list[sympy.Expr]:
    """Leading minors of the Hurwitz matrix, by sympy's determinant (the textbook route)."""
    degree = len(coefficients) - 1

    def entry(i: int, j: int) -> sympy.Expr:
        index = 2 * j - i + 1
        return coefficients[index] if 0 <= index <= degree else sympy.Integer(0)

    matrix = sympy.Matrix(degree, degree, entry)
    return [sympy.expand(matrix[:k, :k].det(method="berkowitz")) for k in range(1, degree + 1)]


def stable_by_hand(a: list[float]) -> bool:
    """The Routh-Hurwitz conditions for degree 2, 3 and 4, written out (from memory)."""
    if a[0] < 0:
        a = [-x for x in a]
    if not all(x > 0 for x in a):
        return False
    if len(a) == 3:
        return True
    if len(a) == 4:
        return a[1] * a[2] > a[0] * a[3]
    return a[1] * a[2] > a[0] * a[3] and a[1] * a[2] * a[3] > a[0] * a[3] ** 2 + a[1] ** 2 * a[4]


def roots_left(coefficients: list[float]) -> bool:
    return bool(np.max(np.roots(coefficients).real) < 0)


# -- the determinants ------------------------------------------------------------------------


def test_determinants_match_the_written_out_conditions_for_degree_2_3_4():
    a0, a1, a2, a3, a4 = A
    assert hurwitz_determinants([a0, a1, a2]) == (a1, sympy.expand(a1 * a2))
    d1, d2, d3 = hurwitz_determinants([a0, a1, a2, a3])
    assert (d1, d2) == (a1, sympy.expand(a1 * a2 - a0 * a3))
    assert sympy.expand(d3 - a3 * d2) == 0  # the last one is an * (the one before)
    d1, d2, d3, d4 = hurwitz_determinants([a0, a1, a2, a3, a4])
    assert sympy.expand(d2 - (a1 * a2 - a0 * a3)) == 0
    assert sympy.expand(d3 - (a1 * a2 * a3 - a0 * a3**2 - a1**2 * a4)) == 0
    assert sympy.expand(d4 - a4 * d3) == 0


@pytest.mark.parametrize("degree", [1, 2, 3, 4, 5, 6, 7])
def test_determinants_equal_the_hurwitz_matrix_minors(degree):
    coefficients = list(sympy.symbols(f"c0:{degree + 1}"))
    found = hurwitz_determinants(coefficients)
    assert len(found) == degree
    for ours, reference in zip(found, hurwitz_matrix_minors(coefficients), strict=True):
        assert sympy.expand(ours - reference) == 0


@pytest.mark.parametrize("coefficients", [
    [1, 0, 3, 0, 2],                # a1 = 0: the recurrence would divide by zero
    [P, 0, Q_, 0, W],
    [1, P, P, P**2, 1],             # a1 a2 = a0 a3: the second determinant vanishes
    [1, 1, 1, 1, 1, 1, 1],
    [2 * P, sympy.sqrt(2) * Q_, sympy.pi, 1],
    [1, 1 / P, Q_, 1 / W],
])
def test_determinants_equal_the_minors_when_some_vanish_or_values_are_irrational(coefficients):
    coefficients = [sympy.sympify(c) for c in coefficients]
    for ours, reference in zip(hurwitz_determinants(coefficients),
                               hurwitz_matrix_minors(coefficients), strict=True):
        assert sympy.simplify(ours - reference) == 0


def test_numeric_determinants_decide_like_the_roots_and_the_written_out_conditions():
    rng = random.Random(20261204)
    agreed = {True: 0, False: 0}
    for _ in range(600):
        degree = rng.choice([2, 3, 4])
        coefficients = [rng.randint(1, 9)] + [rng.randint(-2, 9) for _ in range(degree)]
        left = roots_left([float(c) for c in coefficients])
        if min(abs(r.real) for r in np.roots(coefficients)) < 1e-9:
            continue  # a root on the axis: numpy cannot say which side
        determinants = hurwitz_determinants([sympy.Integer(c) for c in coefficients])
        ours = all(c > 0 for c in coefficients) and all(d > 0 for d in determinants)
        assert ours == left == stable_by_hand([float(c) for c in coefficients]), coefficients
        agreed[left] += 1
    assert min(agreed.values()) > 50  # both answers were exercised


# -- verdicts with free parameters ---------------------------------------------------------


def random_parameter_polynomial(rng: random.Random, degree: int, signed: bool) -> sympy.Expr:
    monomials = [P, Q_, W, P * Q_, P * W, Q_ * W, sympy.Integer(1), P**2]
    coefficients = []
    for _ in range(degree + 1):
        terms = rng.randint(1, 3)
        weights = [-1, 1, 1, 2, 3] if signed else [1, 2, 3]
        coefficients.append(sum(rng.choice(weights) * rng.choice(monomials)
                                for _ in range(terms)))
    return sum(c * s ** (degree - i) for i, c in enumerate(coefficients))


def sign_by_assumptions(value: sympy.Expr) -> int | None:
    value = sympy.factor(value)
    return 1 if value.is_positive else (-1 if value.is_negative else None)


def verdict_by_matrix_minors(den: sympy.Expr) -> str:
    """The criterion with sympy's determinants and sympy's sign assumptions.

    With a0 > 0: every coefficient and minor positive -> stable, one negative ->
    unstable (a root right of the axis).  With a0 of open sign: coefficients of
    both signs, or a negative even-numbered minor, -> unstable.
    """
    coefficients = sympy.Poly(den, s).all_coeffs()
    leading = sign_by_assumptions(coefficients[0])
    if leading == -1:
        coefficients = [-c for c in coefficients]
    minors = hurwitz_matrix_minors(coefficients)
    if leading is None:
        signs = {sign_by_assumptions(c) for c in coefficients}
        if {1, -1} <= signs or any(sign_by_assumptions(d) == -1 for d in minors[1::2]):
            return "unstable"
        return "undetermined"
    signs = [sign_by_assumptions(v) for v in coefficients + minors]
    if all(sign == 1 for sign in signs):
        return "stable"
    return "unstable" if -1 in signs else "undetermined"


def test_verdicts_with_parameters_hold_at_random_values_and_match_the_matrix_rule():
    rng = random.Random(7)
    seen = {"stable": 0, "unstable": 0, "undetermined": 0}
    for _ in range(70):
        degree = rng.randint(2, 4)
        den = random_parameter_polynomial(rng, degree, signed=rng.random() < 0.3)
        poly = sympy.Poly(den, s)
        if poly.degree() < 1 or poly.eval(0) == 0:
            continue
        verdict = describe("V1", OUT, sympy.Poly(1, s), poly).stability
        assert verdict == verdict_by_matrix_minors(den), den
        seen[verdict] += 1
        for _ in range(8):
            values = {x: rng.uniform(0.05, 20.0) for x in (P, Q_, W)}
            numbers = [float(c.subs(values)) for c in poly.all_coeffs()]
            rightmost = float(np.max(np.roots(numbers).real))
            scale = max(1.0, float(np.max(np.abs(np.roots(numbers)))))
            if verdict == "stable":
                assert rightmost < 0, (den, values)
            elif verdict == "unstable":
                assert rightmost > -1e-9 * scale, (den, values)
    assert seen["stable"] >= 10 and seen["unstable"] >= 10  # both verdicts were exercised


def test_one_pole_at_zero_is_marginal_two_are_unstable():
    den = sympy.Poly(s * (P * s**2 + Q_ * s + W), s)
    assert describe("V1", OUT, sympy.Poly(1, s), den).stability == "marginal"
    den = sympy.Poly(s**2 * (P * s + Q_), s)
    assert describe("V1", OUT, sympy.Poly(1, s), den).stability == "unstable"


def test_third_order_condition_leaves_the_verdict_open_until_it_is_settled():
    # s^3 + s^2 + p s + 1 is stable exactly when p > 1 (the degree-3 condition): open.
    den = sympy.Poly(s**3 + s**2 + P * s + 1, s)
    assert describe("V1", OUT, sympy.Poly(1, s), den).stability == "undetermined"
    # with p + 1 in place of p the condition reads p + 1 > 1: always met.
    den = sympy.Poly(s**3 + s**2 + (P + 1) * s + 1, s)
    assert describe("V1", OUT, sympy.Poly(1, s), den).stability == "stable"
    # and with 1 + p as the last coefficient it reads 1 > 1 + p: never met.
    den = sympy.Poly(s**3 + s**2 + s + 1 + P, s)
    assert describe("V1", OUT, sympy.Poly(1, s), den).stability == "unstable"


RLC_LADDER = """\
let R in ohm
let L in H
let C in F
voltage source V from n0 to ground step 1 V
resistor R1 from n0 to a1 R
inductor L1 from a1 to n1 L
capacitor C1 from n1 to ground C
resistor R2 from n1 to a2 R
inductor L2 from a2 to n2 L
capacitor C2 from n2 to ground C
resistor R3 from n2 to a3 R
inductor L3 from a3 to n3 L
capacitor C3 from n3 to ground C
resistor Rload from n3 to ground 1 ohm
watch voltage at n3
"""


def test_three_section_ladder_with_three_parameters_is_stable_at_any_values():
    # A passive RLC network with positive values has its poles in the left half-plane
    # (common practice); numpy.roots at random values agrees.
    net = loads(RLC_LADDER)
    tf = assemble(net).transfer_function("V", net.watches[0])
    assert tf.denominator.degree() == 6
    assert tf.stability == "stable"
    coefficients = tf.denominator.all_coeffs()
    for ours, reference in zip(hurwitz_determinants(coefficients),
                               hurwitz_matrix_minors(coefficients), strict=True):
        assert sympy.expand(ours - reference) == 0
    rng = random.Random(3)
    symbols = sorted(tf.denominator.free_symbols - {s}, key=str)
    for _ in range(10):
        values = {x: 10 ** rng.uniform(-6, 2) for x in symbols}
        numbers = [float(c.subs(values)) for c in coefficients]
        assert roots_left(numbers)
