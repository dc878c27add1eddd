"""Behaviour of the inverse Laplace engine (lumped.inversion).

The expected closed forms here are partial fractions worked by hand (common
practice) and the transform pairs of Abramowitz & Stegun ch. 29 (from memory);
the reference suite checks the same engine against mpmath and sympy.
"""

from __future__ import annotations

import mpmath
import numpy as np
import pytest
import sympy

from lumped.errors import ParametersNeeded
from lumped.inversion import Impulse, Mode, TimeResponse, invert

s = sympy.Symbol("s")
t = sympy.Symbol("t", real=True)


def _lambdified(result: TimeResponse):
    return sympy.lambdify(t, result.expression, "numpy")


# ---------------------------------------------------------------------------
# impulses
# ---------------------------------------------------------------------------


def test_improper_part_gives_impulses() -> None:
    # (s^2+3s+1)/(s+1) = s + 2 - 1/(s+1) by long division (worked by hand)
    result = invert((s**2 + 3 * s + 1) / (s + 1), s, t=t)
    assert set(result.impulses) == {
        Impulse(order=1, weight=sympy.Integer(1), delay=sympy.Integer(0)),
        Impulse(order=0, weight=sympy.Integer(2), delay=sympy.Integer(0)),
    }
    expected = sympy.DiracDelta(t, 1) + 2 * sympy.DiracDelta(t) - sympy.exp(-t)
    assert sympy.simplify(result.expression - expected) == 0
    # impulses are excluded from evaluate
    assert result.evaluate(np.array([0.0, 1.0])) == pytest.approx([-1.0, -np.exp(-1.0)])


def test_delayed_impulse_and_constant() -> None:
    result = invert(3 + sympy.exp(-2 * s) * (s + 1) / s, s, t=t)
    delays = sorted((imp.delay, imp.order, imp.weight) for imp in result.impulses)
    assert delays == [(0, 0, 3), (2, 0, 1)]
    assert result.evaluate(np.array([1.0, 2.5])) == pytest.approx([0.0, 1.0])


# ---------------------------------------------------------------------------
# exact forms
# ---------------------------------------------------------------------------


def test_repeated_root_cubed() -> None:
    result = invert(1 / (s + 1) ** 3, s, t=t)
    assert sympy.simplify(result.expression - t**2 * sympy.exp(-t) / 2) == 0
    (mode,) = result.modes
    assert mode.multiplicity == 3
    assert mode.pole_exact == -1
    assert mode.coefficients == pytest.approx([0, 0, 1])
    assert mode.time_constant == pytest.approx(1.0)


def test_double_pole_at_origin() -> None:
    result = invert((2 * s + 3) / (s**2 * (s + 1)), s, t=t)
    # (2s+3)/(s^2(s+1)) = 3/s^2 - 1/s + 1/(s+1)
    assert sympy.simplify(result.expression - (3 * t - 1 + sympy.exp(-t))) == 0
    origin = [m for m in result.modes if m.pole == 0]
    assert len(origin) == 1 and origin[0].multiplicity == 2
    assert origin[0].time_constant is None


def test_exact_quadratic_roots_stay_exact() -> None:
    result = invert(1 / (s**2 + s + 1), s, t=t)
    assert result.expression.has(sympy.sqrt(3))
    assert not result.expression.atoms(sympy.Float)
    expected = 2 / sympy.sqrt(3) * sympy.exp(-t / 2) * sympy.sin(sympy.sqrt(3) * t / 2)
    assert sympy.simplify(result.expression - expected) == 0
    (mode,) = result.modes
    assert mode.is_pair
    assert mode.pole_exact == sympy.Rational(-1, 2) + sympy.sqrt(3) * sympy.I / 2
    assert mode.ringing_frequency == pytest.approx(np.sqrt(3) / 2)
    assert mode.damping_ratio == pytest.approx(0.5)
    assert mode.natural_frequency == pytest.approx(1.0)


def test_real_irrational_quadratic_roots_exact() -> None:
    result = invert(1 / (s**2 + 4 * s + 1), s, t=t)
    assert not result.expression.atoms(sympy.Float)
    assert {m.pole_exact for m in result.modes} == {-2 + sympy.sqrt(3), -2 - sympy.sqrt(3)}


def test_common_factors_cancel() -> None:
    result = invert((s + 2) / ((s + 2) * (s + 5)), s, t=t)
    assert len(result.modes) == 1
    assert result.modes[0].pole == -5


def test_numeric_poles_are_floats_with_digits() -> None:
    result = invert(1 / (s**3 + 2 * s + 5), s, t=t, digits=25)
    floats = result.expression.atoms(sympy.Float)
    assert floats
    assert all(f._prec >= 80 for f in floats)  # about 25 decimal digits
    real = [m for m in result.modes if not m.is_pair]
    pairs = [m for m in result.modes if m.is_pair]
    assert len(real) == 1 and len(pairs) == 1
    assert real[0].pole.imag == 0
    assert pairs[0].pole.imag > 0
    # the residues sum to zero for a denominator of degree 3 with constant numerator
    with mpmath.workdps(40):
        total = real[0].coefficients_precise[0] + 2 * pairs[0].coefficients_precise[0].real
        assert abs(total) < 1e-24


def test_tiny_imaginary_real_roots_are_real() -> None:
    # three close real roots of an irreducible cubic: all must come out real
    roots = [1, sympy.Rational(1001, 1000), sympy.Rational(1002, 1000)]
    den = sympy.expand((s - roots[0]) * (s - roots[1]) * (s - roots[2]))
    den = den + sympy.Rational(1, 10**12)
    assert len(sympy.factor_list(den)[1]) == 1
    result = invert(1 / den, s, t=t)
    assert all(not m.is_pair for m in result.modes)
    assert len(result.modes) == 3


# ---------------------------------------------------------------------------
# symbolic parameters
# ---------------------------------------------------------------------------


def test_symbolic_second_order_piecewise_branches() -> None:
    m, c, k = sympy.symbols("m c k", positive=True)
    result = invert(1 / (m * s**2 + c * s + k), s, t=t)
    assert result.parameters == {m, c, k}
    pieces = list(result.expression.atoms(sympy.Piecewise))
    assert len(pieces) == 1 and len(pieces[0].args) == 3
    times = np.linspace(0.0, 6.0, 25)
    cases = {
        "over": {m: 1, c: 5, k: 4},
        "critical": {m: 1, c: 4, k: 4},
        "under": {m: 2, c: 1, k: 3},
    }
    for name, values in cases.items():
        numeric = invert(1 / (values[m] * s**2 + values[c] * s + values[k]), s, t=t)
        closed = result.expression.subs(values)
        assert not closed.has(sympy.Piecewise), name
        got = np.array([float(closed.subs(t, tv)) for tv in times])
        assert got == pytest.approx(numeric.evaluate(times), rel=1e-12, abs=1e-14), name
        assert result.substitute(values).evaluate(times) == pytest.approx(
            numeric.evaluate(times), rel=1e-12, abs=1e-14
        )


def test_symbolic_evaluate_needs_values() -> None:
    a = sympy.Symbol("a", positive=True)
    result = invert(1 / (s + a), s, t=t)
    assert sympy.simplify(result.expression - sympy.exp(-a * t)) == 0
    with pytest.raises(ParametersNeeded) as info:
        result.evaluate(np.array([1.0]))
    assert info.value.parameters == {a}


def test_parameters_needed_on_symbolic_cubic() -> None:
    a = sympy.Symbol("a", positive=True)
    with pytest.raises(ParametersNeeded) as info:
        invert(1 / (s**3 + a * s + 1), s, t=t)
    assert info.value.parameters == {a}
    assert "a" in str(info.value)


def test_symbolic_cubic_that_factors_is_fine() -> None:
    a = sympy.Symbol("a", positive=True)
    result = invert(1 / ((s + a) * (s**2 + 1)), s, t=t)
    values = {a: sympy.Rational(3, 2)}
    numeric = invert(1 / ((s + values[a]) * (s**2 + 1)), s, t=t)
    times = np.array([0.2, 1.0, 3.0])
    got = [float(result.expression.subs(values).subs(t, tv)) for tv in times]
    assert got == pytest.approx(numeric.evaluate(times), rel=1e-12)


def test_symbolic_delay() -> None:
    tau = sympy.Symbol("tau", positive=True)
    result = invert(sympy.exp(-tau * s) / (s + 1), s, t=t)
    expected = sympy.exp(-(t - tau)) * sympy.Heaviside(t - tau)
    assert sympy.simplify(result.expression - expected) == 0
    with pytest.raises(ParametersNeeded):
        result.evaluate(np.array([1.0]))


def test_rejects_non_delay_exponential() -> None:
    with pytest.raises(ValueError):
        invert(sympy.exp(-s**2) / s, s, t=t)
    with pytest.raises(ValueError):
        invert(sympy.exp(s) / s, s, t=t)


# ---------------------------------------------------------------------------
# evaluation
# ---------------------------------------------------------------------------

CASES = [
    (s + 3) / (s**4 + 2 * s**3 + 3 * s**2 + s + 1),
    (s**2 + 1) / ((s + 1) ** 2 * (s**2 + s + 3) ** 2),
    1 / (s * (s**3 + 2 * s**2 + 3 * s + 5)),
    sympy.exp(-s) / (s**2 + 4) + sympy.exp(-s / 3) * (2 * s + 1) / (s + 2) ** 2,
]


@pytest.mark.parametrize("transform", CASES, ids=[str(c) for c in CASES])
def test_evaluate_matches_expression(transform: sympy.Expr) -> None:
    result = invert(transform, s, t=t)
    f = _lambdified(result)
    # uniform grid (fast path) and scattered times (general path)
    for times in (np.linspace(0.0, 8.0, 4001), np.random.default_rng(1).uniform(0, 8, 300)):
        want = f(times)
        got = result.evaluate(times)
        scale = np.max(np.abs(want))
        off_jump = np.min(np.abs(times[:, None] - np.array([1.0, 1 / 3])), axis=1) > 1e-9
        assert np.max(np.abs(got - want)[off_jump]) < 1e-12 * scale


@pytest.mark.parametrize("transform", CASES, ids=[str(c) for c in CASES])
def test_derivative_matches_finite_differences(transform: sympy.Expr) -> None:
    result = invert(transform, s, t=t)
    f = _lambdified(result)
    times = np.array([0.45, 1.7, 2.9, 5.3])
    h = 1e-5
    first = (f(times + h) - f(times - h)) / (2 * h)
    second = (f(times + h) - 2 * f(times) + f(times - h)) / h**2
    assert result.evaluate(times, derivative=1) == pytest.approx(first, rel=1e-6, abs=1e-8)
    assert result.evaluate(times, derivative=2) == pytest.approx(second, rel=1e-3, abs=1e-5)
    # the symbolic derivative agrees to full precision
    smooth = sympy.diff(result.expression, t).replace(sympy.DiracDelta, lambda *args: 0)
    exact = sympy.lambdify(t, smooth, "numpy")
    assert result.evaluate(times, derivative=1) == pytest.approx(exact(times), rel=1e-11,
                                                                 abs=1e-13)


def test_evaluate_zero_before_delay_and_shape() -> None:
    result = invert(sympy.exp(-2 * s) / (s + 1), s, t=t)
    times = np.array([[0.0, 1.999], [2.0, 3.0]])
    got = result.evaluate(times)
    assert got.shape == (2, 2)
    assert got == pytest.approx(np.array([[0.0, 0.0], [1.0, np.exp(-1.0)]]))


def test_amplitude_phase_equals_cos_sin_form() -> None:
    for transform in [*CASES[:2], 1 / (s**2 + s + 1), (s + 2) / (s**2 + 2 * s + 10) ** 2]:
        result = invert(transform, s, t=t)
        ap = result.amplitude_phase()
        assert ap.has(sympy.cos)
        assert not ap.has(sympy.sin)
        times = np.linspace(0.05, 7.0, 50)
        got = sympy.lambdify(t, ap, "numpy")(times)
        assert got == pytest.approx(_lambdified(result)(times), rel=1e-11, abs=1e-13)


def test_mode_and_interface_types() -> None:
    result = invert(1 / (s**2 + 2 * s + 5), s)
    assert result.t == sympy.Symbol("t", real=True)
    assert result.s is s
    (mode,) = result.modes
    assert isinstance(mode, Mode)
    assert isinstance(mode.pole, complex)
    assert mode.delay == 0.0 and mode.delay_exact == 0
    assert mode.pole == pytest.approx(-1 + 2j)
    assert mode.ringing_frequency == pytest.approx(2.0)
    assert mode.time_constant == pytest.approx(1.0)
    assert result.parameters == frozenset()


def test_notebook_views_are_short_and_carry_the_closed_form() -> None:
    # 1/(s(s+2)) = 1/2 - e^{-2t}/2 (partial fractions, worked by hand)
    result = invert(1 / (s * (s + 2)), s)
    shown = repr(result)
    assert "1/2 - exp(-2*t)/2" in shown and "2 modes" in shown and "no parameters" in shown
    assert "\n" not in shown
    assert result._repr_latex_() == f"${sympy.latex(result.expression)}$"
    # a long closed form is cut short; free parameters are named
    a = sympy.Symbol("a", positive=True)
    long = invert(1 / ((s + a) * (s**2 + s + 1) * (s**2 + 3 * s + 7)), s)
    assert len(repr(long)) < 160 and "..." in repr(long) and "parameters a" in repr(long)


def test_results_are_immutable() -> None:
    import dataclasses

    result = invert(sympy.exp(-s) / (s * (s**2 + s + 1)), s)
    with pytest.raises(dataclasses.FrozenInstanceError):
        result.modes = ()  # type: ignore[misc]
    assert isinstance(result.modes, tuple) and isinstance(result.impulses, tuple)
    assert isinstance(result.parameters, frozenset)
    for mode in result.modes:
        assert isinstance(mode.coefficients, tuple)
        with pytest.raises(dataclasses.FrozenInstanceError):
            mode.pole = 0j  # type: ignore[misc]


def test_derivative_coefficients_are_formed_once_per_order(monkeypatch) -> None:
    # The evaluator is kept on the response: repeated calls (root refinement,
    # quadrature) reuse the coefficients of each derivative order.
    from lumped.inversion import evaluator

    calls = []
    original = evaluator._derivative_coefficients

    def counted(group, order, digits):
        calls.append(order)
        return original(group, order, digits)

    monkeypatch.setattr(evaluator, "_derivative_coefficients", counted)
    result = invert(1 / (s * (s**2 + s + 1)), s)
    times = np.array([0.5, 1.0, 2.0])
    for _ in range(5):
        first = result.evaluate(times, derivative=1)
        result.evaluate(times)
    assert sorted(calls) == [0, 1]
    # x = 1 - e^{-t/2}(cos wt + sin(wt)/(2w)), w = sqrt(3)/2: x' = e^{-t/2} sin(wt)/w
    # (differentiated by hand)
    w = np.sqrt(3) / 2
    assert first == pytest.approx(np.exp(-times / 2) * np.sin(w * times) / w, rel=1e-13)


# ---------------------------------------------------------------------------
# irrational coefficients at the entry point
# ---------------------------------------------------------------------------

_A = sympy.cos(sympy.sin(7) / 2)  # the constant of sympy's own inverse-Laplace tests


def _impulse_free(expr: sympy.Expr) -> sympy.Expr:
    return expr.replace(lambda e: isinstance(e, sympy.DiracDelta), lambda e: sympy.Integer(0))


def _impulse_weights(expr: sympy.Expr) -> dict:
    weights: dict = {}
    for term in sympy.Add.make_args(sympy.expand(expr)):
        deltas = [f for f in sympy.Mul.make_args(term) if isinstance(f, sympy.DiracDelta)]
        if deltas:
            (delta,) = deltas
            weights[delta] = weights.get(delta, 0) + term / delta
    return weights


@pytest.mark.parametrize("transform", [
    _A * sympy.exp(-3 * s),
    s**2 / (s**2 + _A**2),
    1 / (s**2 + sympy.pi * s + sympy.sqrt(2)),
    sympy.exp(-sympy.sqrt(3) * s) / (s + sympy.E),
], ids=["constant-times-delay", "s2-over-s2-plus-a2", "pi-and-sqrt2", "irrational-delay"])
def test_irrational_coefficients_agree_with_sympy(transform) -> None:
    # Reference: sympy.inverse_laplace_transform run here (its own tests hold the first two).
    tt = sympy.Symbol("t", positive=True)
    expected = sympy.inverse_laplace_transform(transform, s, tt)
    result = invert(transform, s, t=tt)
    assert result.rounded
    got_weights = _impulse_weights(result.expression)
    want_weights = _impulse_weights(expected)
    assert len(got_weights) == len(want_weights)
    for delta, weight in want_weights.items():
        match = [w for k, w in got_weights.items()
                 if abs(float(k.args[0].subs(tt, 5) - delta.args[0].subs(tt, 5))) < 1e-30]
        assert match and abs(float(match[0] - weight)) <= 1e-30 * abs(float(weight))
    smooth_got = _impulse_free(result.expression)
    smooth_want = _impulse_free(expected).subs(sympy.Heaviside(0), sympy.Rational(1, 2))
    for time in (0.25, 1.0, 2.5, 4.0):
        with mpmath.workdps(50):
            want = sympy.N(smooth_want.subs(tt, sympy.Rational(str(time))), 45)
            got = sympy.N(smooth_got.subs(tt, sympy.Rational(str(time))), 45)
        assert abs(got - want) <= sympy.Float(10, 45) ** -30 * max(1, abs(want))


def test_rational_coefficients_are_not_flagged_rounded() -> None:
    assert not invert(1 / (s + 1), s).rounded


@pytest.mark.parametrize("transform", [
    1 / (sympy.sqrt(sympy.Symbol("a", positive=True)) * s + 1),
    1 / (s * (s + sympy.sqrt(sympy.Symbol("a", positive=True) / 3))),
    sympy.sqrt(sympy.Symbol("a", positive=True))
    / (s + 1 + sympy.sqrt(1 + sympy.sqrt(sympy.Symbol("a", positive=True)))),
], ids=["sqrt-a-times-s", "sqrt-of-a-ratio", "nested-roots"])
def test_roots_of_parameters_keep_their_form(transform) -> None:
    # Reference: sympy.inverse_laplace_transform run here, compared at a = 2 and t = 0.7.
    tt = sympy.Symbol("t", positive=True)
    a = sympy.Symbol("a", positive=True)
    result = invert(transform, s, t=tt)
    assert result.parameters == {a}
    assert not any(isinstance(x, sympy.Dummy) for x in result.expression.free_symbols)
    expected = sympy.inverse_laplace_transform(transform, s, tt)
    point = {a: 2, tt: sympy.Rational(7, 10)}
    assert float(result.expression.subs(point)) == pytest.approx(
        float(expected.subs(point)), rel=1e-12)
