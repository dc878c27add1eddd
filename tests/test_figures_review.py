"""Review figures as a reader sees them: which figures apply, first extremes, clean forms.

Each expected value names its source: a formula from memory, scipy's
``solve_ivp`` run here on the hand-written differential equation, or common
practice.  None comes from a previous run of the code under test.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
import sympy
from scipy.integrate import solve_ivp

from lumped.analysis import analyse
from lumped.api import loads
from lumped.figures import compute_figures, energy_dissipated
from lumped.inversion import invert
from lumped.io import to_json
from lumped.io.text import render

s = sympy.Symbol("s")

LC_TANK = """\
inductor L1 at a 1 mH
capacitor C1 at a 1 uF initially 1 V
watch voltage at a
"""

SINE_RC = """\
voltage source V1 at a sine 1 V at 1.7 kHz
resistor R1 from a to b 1 kohm
capacitor C1 at b 1 uF
"""

# x'' = -(k/m) x with x(0) = 0, x'(0) = 1 m/s: x = sin(w t)/w, w = sqrt(k/m) = 10 rad/s
FREE_MASS_SPRING = """\
mass body 1 kg initially 1 m/s
spring K from body to frame 100 N/m
watch displacement of body
window 20 s
"""

CRATE_DROP = """\
mass   crate  12 kg
spring Kfoam  from crate to frame  90 kN/m
damper Cfoam  from crate to frame  600 N*s/m
drop crate from 0.6 m
watch acceleration of crate
window 80 ms
"""


def _text_row(report: str, name: str) -> str:
    for line in report.splitlines():
        if line.strip().startswith(name):
            return line
    raise AssertionError(f"no row {name!r} in\n{report}")


# -- extremes: the first time, within a stated tolerance ----------------------


def test_lc_tank_minimum_at_half_a_period():
    # v(t) = cos(w t), w = 1/sqrt(LC) (from memory): minimum -1 V first at t = pi/w
    analysis = analyse(loads(LC_TANK))
    figs = analysis.results[0].figures
    w = 1 / math.sqrt(1e-3 * 1e-6)
    assert figs.minimum.value == pytest.approx(-1.0, rel=1e-9)
    assert figs.minimum.time == pytest.approx(math.pi / w, rel=1e-6)
    assert figs.peak.value == pytest.approx(1.0, rel=1e-9)
    assert figs.peak.time == pytest.approx(0.0, abs=1e-12)
    assert 0 < figs.extreme_tolerance < 1e-6
    report = render(analysis)
    assert "99.3 µs" in _text_row(report, "minimum")
    assert f"within {figs.extreme_tolerance:.0e} of the largest |x|" in " ".join(report.split())
    document = json.loads(to_json(analysis))
    shown = document["quantities"][0]["figures"]
    assert shown["minimum"]["time"] == pytest.approx(math.pi / w, rel=1e-6)
    assert shown["extreme_tolerance"]["value"] == pytest.approx(figs.extreme_tolerance)


def test_free_mass_spring_peak_first_quarter_period():
    # x = sin(w t)/w (from memory): peak 1/w first at pi/(2w), minimum -1/w at 3 pi/(2w)
    figs = analyse(loads(FREE_MASS_SPRING)).results[0].figures
    w = 10.0
    assert figs.peak.value == pytest.approx(1 / w, rel=1e-9)
    assert figs.peak.time == pytest.approx(math.pi / (2 * w), rel=1e-6)
    assert figs.minimum.value == pytest.approx(-1 / w, rel=1e-9)
    assert figs.minimum.time == pytest.approx(3 * math.pi / (2 * w), rel=1e-6)


def test_lightly_damped_step_peak_and_overshoot():
    # tp = pi/wd, Mp = exp(-zeta pi / sqrt(1 - zeta^2)) (second-order step, from memory)
    zeta, wn = sympy.Rational(1, 50), 1000
    response = invert(wn**2 / (s * (s**2 + 2 * zeta * wn * s + wn**2)), s)
    figs = compute_figures(response, 0.0, 2.0)
    z = float(zeta)
    wd = wn * math.sqrt(1 - z * z)
    assert figs.peak.time == pytest.approx(math.pi / wd, rel=1e-8)
    assert figs.overshoot == pytest.approx(math.exp(-z * math.pi / math.sqrt(1 - z * z)),
                                           rel=1e-8)
    assert figs.shape == "step"


# -- closed forms without rounding noise --------------------------------------


def test_lc_tank_closed_form_has_no_zero_terms():
    analysis = analyse(loads(LC_TANK))
    result = analysis.results[0]
    assert all(mode.pole.real == 0.0 for mode in result.time.modes)
    figs = result.figures
    assert figs.damping_ratio == 0.0 and math.copysign(1.0, figs.damping_ratio) == 1.0
    report = render(analysis)
    line = _text_row(report, "x(t) =")
    for noise in ("0*", "1*", "+ 0", "-0", "exp("):
        assert noise not in line.replace("x(t) =", ""), line
    assert "damping ratio 0" in report and "damping ratio -0" not in report


def test_even_quartic_poles_certified_on_the_axis():
    # s^4 + 3 s^2 + 1 = (s^2 + a)(s^2 + b), a, b = (3 ± sqrt 5)/2: irreducible over Q,
    # all four roots on the imaginary axis (quadratic formula in s^2, from memory).
    response = invert(1 / (s**4 + 3 * s**2 + 1), s)
    assert len(response.modes) == 2
    omegas = sorted(mode.pole.imag for mode in response.modes)
    expected = sorted(math.sqrt((3 + sign * math.sqrt(5)) / 2) for sign in (1, -1))
    assert omegas == pytest.approx(expected, rel=1e-14)
    assert all(mode.pole.real == 0.0 for mode in response.modes)
    # residues of 1/D at i w are 1/D'(i w), purely imaginary: only sines remain
    expr = response.expression
    assert not expr.has(sympy.exp)
    assert not expr.has(sympy.cos)
    # 1/((s^2 + a)(s^2 + b)) = (1/(s^2 + a) - 1/(s^2 + b))/(b - a), and 1/(s^2 + w^2) is
    # sin(w t)/w (table of transforms, from memory)
    a, b = (3 - math.sqrt(5)) / 2, (3 + math.sqrt(5)) / 2
    for instant in (0.3, 1.7, 12.5):
        reference = (math.sin(math.sqrt(a) * instant) / math.sqrt(a)
                     - math.sin(math.sqrt(b) * instant) / math.sqrt(b)) / (b - a)
        assert float(expr.subs(response.t, instant)) == pytest.approx(reference, rel=1e-10)


def test_axis_roots_certified_even_from_loose_enclosures(monkeypatch):
    # Enclosures that straddle the axis with a midpoint off it (as a lower-precision
    # isolation could return) are certified onto it: s^4 + 3 s^2 + 1 is even and
    # u^2 + 3 u + 1 has two negative roots (quadratic formula, from memory).
    from flint import acb, arb

    import lumped.inversion.residues as inversion

    original = inversion.certified_roots

    def loose(coefficients, bits):
        return tuple(acb(arb(1e-35, 1e-30), r.imag) if r.real.contains(0) else r
                     for r in original(coefficients, bits))

    monkeypatch.setattr(inversion, "certified_roots", loose)
    response = invert(1 / (s**4 + 3 * s**2 + 1), s)
    assert [mode.pole.real for mode in response.modes] == [0.0, 0.0]
    # s^4 + 1 is even too, but u^2 + 1 has no negative root: nothing is moved
    assert all(abs(m.pole.real) > 0.7 for m in invert(1 / (s**4 + 1), s).modes)


def test_even_sextic_mixes_axis_and_off_axis_roots():
    # s^6 + s^2 + 1 = q(s^2), q(u) = u^3 + u + 1 irreducible with one real root u0 < 0
    # (Cardano, from memory): s = ±j sqrt(-u0) on the axis, the other four off it.
    # numpy.roots as the reference for where the roots lie.
    response = invert(s / (s**6 + s**2 + 1), s)
    roots = np.roots([1, 0, 0, 0, 1, 0, 1])
    upper = sorted((r for r in roots if r.imag > 0), key=lambda r: (r.real, r.imag))
    poles = sorted((m.pole for m in response.modes), key=lambda p: (p.real, p.imag))
    assert np.allclose(poles, upper, rtol=1e-12)
    on_axis = [m for m in response.modes if abs(m.pole.real) < 1e-6]
    assert len(on_axis) == 1 and on_axis[0].pole.real == 0.0
    assert on_axis[0].damping_ratio == 0.0
    assert math.copysign(1.0, on_axis[0].damping_ratio) == 1.0


def test_off_axis_even_quartic_keeps_its_real_parts():
    # s^4 + 1: roots exp(i pi/4 + k i pi/2), real parts ±1/sqrt 2 (from memory)
    response = invert(1 / (s**4 + 1), s)
    assert sorted(abs(mode.pole.real) for mode in response.modes) == pytest.approx(
        [1 / math.sqrt(2)] * 2, rel=1e-14)


# -- one rule for which figures apply -----------------------------------------


def test_dropped_body_acceleration_is_a_decay_without_step_figures():
    analysis = analyse(loads(CRATE_DROP))
    figs = analysis.results[0].figures
    assert figs.shape == "decay"
    for name in ("overshoot", "undershoot", "rise_time"):
        assert getattr(figs, name) is None
        assert "decay" in figs.reasons[name]
    report = render(analysis)
    assert "449" not in report and "overshoot            56" not in report
    assert figs.reasons["rise_time"] in " ".join(report.split())
    document = json.loads(to_json(analysis))["quantities"][0]["figures"]
    assert document["overshoot"] is None and document["rise_time"] is None
    assert document["shape"] == "decay"
    assert document["reasons"]["rise_time"] == figs.reasons["rise_time"]


def test_decay_in_the_api_has_no_rise_time():
    # e^{-t}: a decay toward zero (common practice: no rise time or overshoot)
    figs = compute_figures(invert(1 / (s + 1), s), 0.0, 10.0)
    assert figs.shape == "decay"
    assert figs.rise_time is None and figs.overshoot is None
    assert "decay" in figs.reasons["rise_time"]
    assert figs.time_constant == pytest.approx(1.0)


def test_shapes_of_step_oscillation_and_growth():
    step = compute_figures(invert(1 / (s * (s + 1)), s), 0.0, 10.0)
    assert step.shape == "step" and step.rise_time == pytest.approx(math.log(9))
    oscillation = compute_figures(invert(s / (s**2 + 4), s), 0.0, 10.0)
    assert oscillation.shape == "oscillation"
    assert oscillation.rise_time is None and "oscillation" in oscillation.reasons["rise_time"]
    constant = compute_figures(invert(3 / s, s), 0.0, 1.0)
    assert constant.shape == "constant" and constant.rise_time is None
    assert "constant" in constant.reasons["rise_time"]
    growth = compute_figures(invert(1 / (s * (s - 1)), s), 0.0, 2.0)
    assert growth.shape == "growth"
    assert growth.overshoot is None and "grow" in growth.reasons["overshoot"]


# -- the automatic window -----------------------------------------------------


def _sine_rc_reference(stop: float) -> tuple[np.ndarray, np.ndarray]:
    # RC v' = (sin(2 pi f t) - v), v(0) = 0, RC = 1 ms, f = 1.7 kHz: solve_ivp
    w = 2 * math.pi * 1700.0
    solution = solve_ivp(lambda t, v: (np.sin(w * t) - v) / 1e-3, (0.0, stop), [0.0],
                         method="DOP853", rtol=1e-11, atol=1e-13, dense_output=True)
    times = np.linspace(0.0, stop, 400001)
    return times, solution.sol(times)[0]


def test_sine_rc_window_from_the_network_and_the_source():
    analysis = analyse(loads(SINE_RC + "watch voltage at b\n"))
    assert analysis.window_chosen
    # ~6-8 time constants (RC = 1 ms) plus a few periods of 1.7 kHz (common practice)
    assert 5e-3 <= analysis.stop <= 2e-2
    assert "time constant" in analysis.window_rule and "period" in analysis.window_rule
    assert analysis.window_rule in " ".join(render(analysis).split())
    figs = analysis.results[0].figures
    assert figs.shape == "oscillation"
    times, values = _sine_rc_reference(analysis.stop)
    assert figs.peak.value == pytest.approx(values.max(), rel=1e-5)
    assert figs.minimum.value == pytest.approx(values.min(), rel=1e-5)
    assert figs.peak.time == pytest.approx(times[values.argmax()], abs=2 * analysis.stop / 4e5)


def test_sine_rc_without_watch_lines_finishes():
    analysis = analyse(loads(SINE_RC))
    assert analysis.stop < 1.0
    assert all(r.figures is not None for r in analysis.results)


def test_a_million_periods_cost_no_more_than_a_few():
    # |H(jw)| = 1/sqrt(1 + (w RC)^2) for the R-C low-pass (from memory): the steady
    # amplitude; the start-up (solve_ivp over the first 10 ms) may go a little higher.
    w = 2 * math.pi * 1700.0
    response = invert(sympy.Rational(1000) * sympy.Rational(10681415022205298, 10**12)
                      / ((s + 1000) * (s**2 + sympy.Rational(10681415022205298, 10**12) ** 2)),
                      s)
    stop = 1e6 * 2 * math.pi / w
    figs = compute_figures(response, 0.0, stop)
    steady = 1 / math.sqrt(1 + (w * 1e-3) ** 2)
    _, values = _sine_rc_reference(1e-2)
    assert figs.peak.value == pytest.approx(max(steady, values.max()), rel=1e-5)
    assert figs.peak.time < 1e-2
    assert figs.minimum.value == pytest.approx(min(-steady, values.min()), rel=1e-5)


def test_plot_marks_both_extremes(tmp_path):
    from lumped.io import plot

    analysis = analyse(loads(LC_TANK))
    data = plot(analysis, tmp_path / "tank.svg")
    text = data.decode()
    assert "minimum" in text and "peak" in text


def test_incommensurate_sustained_frequencies_say_how_far_they_were_searched():
    # cos(t) + cos(sqrt(2) t): no common period, the sup 2 is only approached
    response = invert(s / (s**2 + 1) + s / (s**2 + 2), s)
    figs = compute_figures(response, 0.0, 1e7)
    assert "without a common period" in figs.reasons["extremes"]
    assert 1.9 < figs.peak.value <= 2.0
    assert figs.peak.time == pytest.approx(0.0, abs=1e-12)  # 2 at t = 0 exactly


def test_energy_over_a_long_ringing_window():
    # x = e^-t + cos(10 t) in 1 ohm: the integral of x^2 by sympy.integrate, exact
    w, stop = 10, 1e4 * 2 * math.pi / 10
    response = invert(1 / (s + 1) + s / (s**2 + w**2), s)
    t = sympy.Symbol("t", positive=True)
    x = sympy.exp(-t) + sympy.cos(w * t)
    exact = sympy.integrate(sympy.expand(x**2), (t, 0, sympy.Float(stop, 30)))
    assert energy_dissipated(response, 1.0, 0.0, stop) == pytest.approx(float(exact), rel=1e-9)


def test_free_masses_window_ignores_the_conserved_momentum():
    # Two free 1 kg masses, 100 N/m and 2 N*s/m between them, pushed by 1 N: the common
    # motion has poles at s = 0 (momentum, no time scale); the relative motion has
    # reduced mass 1/2, so s^2 + 4 s + 200 and sigma = -2, tau = 0.5 s (second-order
    # factor, from memory).  Six time constants: 3 s.
    text = ("force source F at m1 step 1 N\nmass m1 1 kg\nmass m2 1 kg\n"
            "spring K from m1 to m2 100 N/m\ndamper D from m1 to m2 2 N*s/m\n"
            "watch velocity of m2, displacement of m1\n")
    analysis = analyse(loads(text))
    assert analysis.stop == pytest.approx(3.0, rel=1e-9)
    assert "time constant (500 ms)" in analysis.window_rule
    assert all(r.figures.shape == "growth" for r in analysis.results)
    # velocity of m2 = t/2 - (1/28) e^{-2t} sin(14 t) (partial fractions by hand)
    line = _text_row(render(analysis), "x(t) =")
    assert "x(t) = 0.5*t - 0.03571*sin(14*t)*exp(-2*t)" in line


def test_requirement_on_a_figure_that_does_not_apply_says_why():
    # an R-C discharge from 5 V: v = 5 e^{-t/RC} (common practice) is a decay
    text = ("capacitor C at a 1 uF initially 5 V\nresistor R at a 1 kohm\n"
            "watch voltage at a\nwindow 10 ms\n"
            "require rise time of voltage at a below 1 ms\n")
    analysis = analyse(loads(text))
    figs = analysis.results[0].figures
    assert figs.shape == "decay" and figs.time_constant == pytest.approx(1e-3, rel=1e-12)
    verdict = analysis.verdicts[0]
    assert verdict.passed is None and figs.reasons["rise_time"] in verdict.reason
    document = json.loads(to_json(analysis))
    assert document["requirements"][0]["reason"] == verdict.reason
