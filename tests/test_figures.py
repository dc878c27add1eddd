"""Unit tests of the figures stage and requirement verdicts.

Expected values come from the closed forms of textbook transforms worked by
hand in the comments, never from the code under test.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import pytest
import sympy

from lumped.constants import STANDARD_GRAVITY_SI as STANDARD_GRAVITY
from lumped.figures import (
    Extremum,
    Figures,
    Verdict,
    compute_figures,
    energy_dissipated,
    in_g,
    judge,
)
from lumped.inversion import invert
from lumped.model import Figure, Quantity, QuantityKind, Requirement

s = sympy.Symbol("s")
R = sympy.Rational


def respond(transform: sympy.Expr):
    return invert(transform, s)


def second_order_step(zeta: sympy.Expr, omega: sympy.Expr, delay: sympy.Expr = 0):
    """omega^2 / (s (s^2 + 2 zeta omega s + omega^2)), optionally delayed."""
    return respond(
        omega**2 / (s * (s**2 + 2 * zeta * omega * s + omega**2)) * sympy.exp(-s * delay)
    )


# -- a stand-in response: any object with modes, impulses and evaluate works --


@dataclass(frozen=True)
class StandInMode:
    pole: complex
    multiplicity: int
    coefficients: tuple[complex, ...]
    delay: float
    is_pair: bool


@dataclass(frozen=True)
class StandIn:
    """x(t) = sum over modes of c_k (t-d)^k/k! e^{p(t-d)} for t >= d."""

    modes: tuple[StandInMode, ...]
    impulses: tuple = ()

    def evaluate(self, times: np.ndarray, derivative: int = 0) -> np.ndarray:
        t = np.asarray(times, dtype=float)
        out = np.zeros(t.shape)
        for m in self.modes:
            tau = t - m.delay
            on = tau >= 0
            coeffs = list(m.coefficients)
            for _ in range(derivative):  # d/dt of the polynomial-exponential
                coeffs = [
                    m.pole * coeffs[k] + (coeffs[k + 1] if k + 1 < len(coeffs) else 0)
                    for k in range(len(coeffs))
                ]
            value = sum(
                c * tau[on] ** k / math.factorial(k) for k, c in enumerate(coeffs)
            ) * np.exp(m.pole * tau[on])
            out[on] += (2 if m.is_pair else 1) * np.real(value)
        return out


def test_figures_are_immutable_and_read_briefly():
    # 1 - e^{-t/2}(cos wt + sin(wt)/(2w)), zeta = 1/2: overshoot e^{-pi/sqrt(3)} = 16.3 %
    # (second-order step, from memory)
    figs = compute_figures(second_order_step(R(1, 2), 1), 0.0, 20.0)
    with pytest.raises(TypeError):
        figs.reasons["peak"] = "changed"  # type: ignore[index]
    assert isinstance(figs.impulses, tuple)
    shown = repr(figs)
    assert shown.startswith("Figures(0..20 s: step") and "overshoot 16.3 %" in shown
    assert "\n" not in shown and len(shown) < 300
    # a dict given by the caller is copied: changing it later changes nothing
    reasons = {"peak": "why"}
    record = Figures(start=0.0, stop=1.0, band=0.02, kind=None, reasons=reasons)
    reasons["peak"] = "changed"
    assert record.reasons["peak"] == "why"


def test_stand_in_first_order_rise():
    # 2 (1 - e^{-t/3}): 10-90 % rise = 3 ln 9 (first-order step response, from memory)
    response = StandIn(
        (
            StandInMode(0j, 1, (2,), 0.0, False),
            StandInMode(-1 / 3 + 0j, 1, (-2,), 0.0, False),
        )
    )
    figs = compute_figures(response, 0.0, 40.0)
    assert figs.final == pytest.approx(2.0, rel=1e-14)
    assert figs.rise_time == pytest.approx(3 * math.log(9), rel=1e-10)
    assert figs.time_constant == pytest.approx(3.0, rel=1e-14)


# -- final value and its absence ---------------------------------------------


def test_integrator_has_no_final_value():
    # 1/s^2 is a ramp t: double pole at the origin
    figs = compute_figures(respond(1 / s**2), 0.0, 5.0)
    assert figs.final is None
    assert "pole at s = 0 with multiplicity 2" in figs.reasons["final"]
    assert "grows without bound" in figs.reasons["final"]
    for name in ("overshoot", "rise_time", "settling_time"):
        assert getattr(figs, name) is None
        assert figs.reasons[name].startswith("no final value")
    assert figs.peak == Extremum(pytest.approx(5.0, rel=1e-12), 5.0)


def test_undamped_oscillator_has_no_final_value():
    # step into an ideal LC at 314 rad/s: 1 - cos(314 t)
    w = 314
    figs = compute_figures(respond(w**2 / (s * (s**2 + w**2))), 0.0, 0.1)
    assert figs.final is None
    assert "imaginary axis at ±j314 rad/s" in figs.reasons["final"]
    assert "sustained oscillation" in figs.reasons["final"]
    assert figs.damping_ratio == 0.0
    assert figs.ringing_frequency == pytest.approx(314.0, rel=1e-14)
    assert figs.ringing_frequency_hz == pytest.approx(314.0 / (2 * math.pi), rel=1e-14)
    # peaks 2 at t = pi/314 (first maximum of 1 - cos)
    assert figs.peak.value == pytest.approx(2.0, rel=1e-12)
    assert figs.minimum.value == pytest.approx(0.0, abs=1e-12)
    assert "time_constant" in figs.reasons


def test_unstable_pole_has_no_final_value():
    figs = compute_figures(respond(1 / (s * (s - 1))), 0.0, 2.0)
    assert figs.final is None
    assert "right half-plane" in figs.reasons["final"]


def test_cancelling_ramps_give_a_final_value():
    # (1 - e^{-s})/s^2: t - (t-1) u(t-1) saturates at 1 for t > 1
    figs = compute_figures(respond((1 - sympy.exp(-s)) / s**2), 0.0, 3.0)
    assert figs.final == pytest.approx(1.0, rel=1e-12)
    assert figs.rise_time == pytest.approx(0.8, rel=1e-10)
    assert figs.settling_time == pytest.approx(0.98, rel=1e-10)
    # t - (t - 1) rounds to 1 + 2e-16 in floating point: no overshoot beyond that
    assert figs.overshoot == pytest.approx(0.0, abs=1e-14)


def test_half_sine_pulse_ends_at_zero():
    # sin(4t) for 0 <= t <= pi/4 and nothing after: the two shifted sines cancel
    w = 4
    figs = compute_figures(
        respond(w / (s**2 + w**2) * (1 + sympy.exp(-s * sympy.pi / w))), 0.0, 2.0
    )
    assert figs.final == pytest.approx(0.0, abs=1e-15)
    assert figs.peak.value == pytest.approx(1.0, rel=1e-12)
    assert figs.peak.time == pytest.approx(math.pi / 8, rel=1e-9)
    assert figs.overshoot is None
    assert "no change" in figs.reasons["overshoot"]


# -- impulses ----------------------------------------------------------------


def test_impulse_is_noted_and_makes_the_peak_unbounded():
    # (s+2)/(s+1) = 1 + 1/(s+1): delta(t) + e^{-t}
    response = respond((s + 2) / (s + 1))
    figs = compute_figures(response, 0.0, 10.0)
    assert figs.peak is None and figs.peak_unbounded
    assert "unbounded" in figs.reasons["peak"]
    assert "impulse of weight 1 at t = 0 s" in figs.reasons["impulses"]
    assert len(figs.impulses) == 1
    # a positive impulse leaves the minimum alone: e^{-10} at the window end
    assert not figs.minimum_unbounded
    assert figs.minimum.value == pytest.approx(math.exp(-10), rel=1e-10)
    assert figs.initial == pytest.approx(1.0, rel=1e-14)
    q = Quantity(QuantityKind.VOLTAGE, "n", "at")
    fail = judge(Requirement(Figure.PEAK, q, None, sympy.Integer(100), "V"), figs)
    assert fail.passed is False and fail.value == math.inf
    assert energy_dissipated(response, 1.0, 0.0, 1.0) == math.inf


def test_impulse_outside_the_window_is_ignored():
    # delta(t - 2) + e^{-(t - 2)} u(t - 2), window 0 .. 1: identically zero there
    figs = compute_figures(respond((s + 2) / (s + 1) * sympy.exp(-2 * s)), 0.0, 1.0)
    assert not figs.peak_unbounded
    assert figs.peak.value == 0.0
    assert figs.impulses == ()


# -- settling, overshoot, rise ----------------------------------------------


def test_not_settled_within_the_window():
    # zeta = 0.05, wn = 1: the 2 % band is reached only near t ~ 4/0.05 = 80 s
    figs = compute_figures(second_order_step(R(1, 20), 1), 0.0, 20.0)
    assert figs.settling_time is None
    assert figs.reasons["settling_time"] == "not settled within the window"
    assert figs.final == pytest.approx(1.0, rel=1e-12)


def test_monotone_response_has_zero_overshoot():
    # 1 - e^{-t}(1 + t): critically damped, never passes 1
    figs = compute_figures(respond(1 / (s * (s + 1) ** 2)), 0.0, 30.0)
    assert figs.overshoot == 0.0
    assert figs.undershoot == 0.0
    assert figs.peak.time == pytest.approx(30.0)
    assert figs.natural_frequency is None
    assert figs.time_constant == pytest.approx(1.0, rel=1e-12)


def test_falling_response_measures_against_its_direction():
    # 1 + e^{-t}: from 2 to 1, so the change is -1; 10-90 % rise = ln 9
    figs = compute_figures(respond(1 / s + 1 / (s + 1)), 0.0, 20.0)
    assert figs.initial == pytest.approx(2.0, rel=1e-14)
    assert figs.change == pytest.approx(-1.0, rel=1e-12)
    assert figs.rise_time == pytest.approx(math.log(9), rel=1e-10)
    assert figs.settling_time == pytest.approx(math.log(50), rel=1e-10)
    assert figs.overshoot == 0.0


def test_undershoot_of_a_wrong_way_start():
    # (1 - s)/(s (s + 1)) = 1/s - 2/(s + 1): 1 - 2 e^{-t}, starts at -1 and rises to 1
    figs = compute_figures(respond((1 - s) / (s * (s + 1))), 0.0, 20.0)
    assert figs.initial == pytest.approx(-1.0, rel=1e-14)
    assert figs.change == pytest.approx(2.0, rel=1e-12)
    # the dip below the start is zero here: the start is the minimum
    assert figs.undershoot == pytest.approx(0.0, abs=1e-12)
    # 10 % level is -0.8: 1 - 2 e^{-t} = -0.8 at t = ln(2/1.8)
    assert figs.rise_crossings[0] == pytest.approx(math.log(2 / 1.8), rel=1e-10)


def test_non_minimum_phase_undershoot():
    # (1 - s)/(s (s + 1)^2) = 1/s - 1/(s+1) - 2/(s+1)^2: 1 - e^{-t} - 2 t e^{-t}
    # x' = e^{-t}(2t - 1): minimum at t = 1/2 with x = 1 - 2 e^{-1/2}
    figs = compute_figures(respond((1 - s) / (s * (s + 1) ** 2)), 0.0, 30.0)
    assert figs.minimum.time == pytest.approx(0.5, rel=1e-10)
    assert figs.undershoot == pytest.approx(2 * math.exp(-0.5) - 1, rel=1e-10)


def test_delayed_step_peaks_after_the_delay():
    # the zeta = 1/2, wn = 2 step response shifted by 3 s: peak at 3 + pi/wd
    zeta, wn = 0.5, 2.0
    wd = wn * math.sqrt(1 - zeta**2)
    figs = compute_figures(second_order_step(R(1, 2), 2, delay=3), 0.0, 30.0)
    assert figs.peak.time == pytest.approx(3 + math.pi / wd, rel=1e-10)
    assert figs.peak.value == pytest.approx(
        1 + math.exp(-zeta * math.pi / math.sqrt(1 - zeta**2)), rel=1e-10
    )
    assert figs.initial == 0.0
    assert figs.rise_crossings[0] > 3.0
    undelayed = compute_figures(second_order_step(R(1, 2), 2), 0.0, 27.0)
    assert figs.rise_time == pytest.approx(undelayed.rise_time, rel=1e-9)
    assert figs.settling_time == pytest.approx(undelayed.settling_time + 3, rel=1e-9)


def test_jump_extremes_are_one_sided_limits():
    # (1 - 3 e^{-s})/s: 1 until t = 1, then -2
    figs = compute_figures(respond((1 - 3 * sympy.exp(-s)) / s), 0.0, 2.0)
    assert figs.peak == Extremum(1.0, 0.0)
    assert figs.minimum == Extremum(-2.0, 1.0)
    assert figs.magnitude == Extremum(2.0, 1.0)
    # the 10 % and 90 % levels of the change (-3) are crossed at the jump
    assert figs.rise_crossings == (pytest.approx(1.0), pytest.approx(1.0))
    assert figs.settling_time == pytest.approx(1.0)


def test_peak_just_before_a_jump():
    # 1/s^2 - e^{-s}(1/s^2 + 1/s): x = t for t < 1, then 0.  The supremum 1 is
    # the value just before the drop at t = 1.
    figs = compute_figures(respond(1 / s**2 - sympy.exp(-s) * (1 / s**2 + 1 / s)), 0.0, 2.0)
    assert figs.peak.value == pytest.approx(1.0, rel=1e-12)
    assert figs.peak.time == 1.0
    assert figs.minimum == Extremum(0.0, 0.0)


def test_resonant_build_up_over_many_cycles():
    # w^3/(s^2 + w^2)^2 <-> (sin wt - wt cos wt)/2 (transform table, from
    # memory): a sine driving an undamped resonance.  The extremes are at
    # t = n pi/w with value (-1)^(n+1) n pi/2, so over 0 .. 1 s with w = 1e5
    # the peak is at the last odd n and the minimum at the last even n.
    # 20000 uniform points would give about one per period.
    w = 10**5
    figs = compute_figures(respond(sympy.Integer(w) ** 3 / (s**2 + w**2) ** 2), 0.0, 1.0)
    last = math.floor(w / math.pi)  # 31830
    odd, even = (last, last - 1) if last % 2 else (last - 1, last)
    assert figs.peak.value == pytest.approx(odd * math.pi / 2, rel=1e-9)
    assert figs.peak.time == pytest.approx(odd * math.pi / w, rel=1e-9)
    assert figs.minimum.value == pytest.approx(-even * math.pi / 2, rel=1e-9)
    assert "grid" not in figs.reasons


def test_fast_ringing_in_a_long_window_is_resolved():
    # poles -1e3 +- j1e6 (zeta = 1e-3) over a 1 s window: the uniform grid alone
    # would have ~1 point per 50 periods; the peak is still at pi/wd
    a, b = 1000, 10**6
    wn2 = a**2 + b**2
    figs = compute_figures(respond(wn2 / (s * ((s + a) ** 2 + b**2))), 0.0, 1.0)
    zeta = a / math.sqrt(wn2)
    assert figs.peak.time == pytest.approx(math.pi / b, rel=1e-9)
    assert figs.overshoot == pytest.approx(
        math.exp(-zeta * math.pi / math.sqrt(1 - zeta**2)), rel=1e-9
    )
    assert figs.damping_ratio == pytest.approx(zeta, rel=1e-9)
    assert "grid" not in figs.reasons


def test_fast_transient_in_a_long_window():
    # e^{-1e6 t} - e^{-2e6 t}: peaks 1/4 at t = ln 2 / 1e6, seen over 0 .. 1 s
    a = 10**6
    figs = compute_figures(respond(1 / (s + a) - 1 / (s + 2 * a)), 0.0, 1.0)
    assert figs.peak.value == pytest.approx(0.25, rel=1e-12)
    assert figs.peak.time == pytest.approx(math.log(2) / a, rel=1e-9)


def test_bump_and_dip_inside_one_uniform_step():
    # -u + 3u^2 - 2u^3 with u = e^{-a t} = -u (1 - u)(1 - 2u): a bump then a
    # dip of +-sqrt(3)/18 at u = (3 +- sqrt 3)/6, both within the first 2 us of
    # a 1 s window, with the slope positive at both ends of that step.
    a = 10**6
    figs = compute_figures(respond(-1 / (s + a) + 3 / (s + 2 * a) - 2 / (s + 3 * a)), 0.0, 1.0)
    assert figs.peak.value == pytest.approx(math.sqrt(3) / 18, rel=1e-10)
    assert figs.peak.time == pytest.approx(-math.log((3 + math.sqrt(3)) / 6) / a, rel=1e-9)
    assert figs.minimum.value == pytest.approx(-math.sqrt(3) / 18, rel=1e-10)
    assert figs.minimum.time == pytest.approx(-math.log((3 - math.sqrt(3)) / 6) / a, rel=1e-9)


def test_settling_sees_an_extreme_just_outside_the_band():
    # Second-order step whose second extreme (at 2 pi/wd, error
    # exp(-2 zeta pi/sqrt(1-zeta^2)), from memory) exceeds the 2 % band by one
    # part in 10^9: far less than the grid's sampling error, so only the
    # refinement on the closed form sees it.  The last entry is then after it.
    log_dec = -math.log(0.02 * (1 + 1e-9)) / 2
    zeta = log_dec / math.sqrt(math.pi**2 + log_dec**2)
    wd = math.sqrt(1 - zeta**2)
    figs = compute_figures(second_order_step(R(zeta), 1), 0.0, 30.0)
    assert 2 * math.pi / wd < figs.settling_time < 3 * math.pi / wd


def test_window_start_after_zero():
    # 1 - e^{-t} seen over 5 .. 10: already inside the 2 % band? e^{-5} = 0.0067 yes
    figs = compute_figures(respond(1 / (s * (s + 1))), 5.0, 10.0)
    assert figs.settling_time == 5.0
    assert "window start" in figs.reasons["settling_time"]
    assert figs.rise_time is None
    assert figs.peak.time == 10.0 and figs.minimum.time == 5.0


def test_bad_window_and_band_are_refused():
    response = respond(1 / (s * (s + 1)))
    with pytest.raises(ValueError):
        compute_figures(response, 2.0, 1.0)
    with pytest.raises(ValueError):
        compute_figures(response, -1.0, 1.0)
    with pytest.raises(ValueError):
        compute_figures(response, 0.0, 1.0, band=0.0)


# -- mechanical extras -------------------------------------------------------


def test_acceleration_in_g_and_travel():
    assert in_g(2 * STANDARD_GRAVITY) == 2.0
    # acceleration -9.80665 * 3 e^{-t}: minimum -3 g at t = 0
    accel = respond(-3 * R(980665, 100000) / (s + 1))
    figs = compute_figures(accel, 0.0, 5.0, kind=QuantityKind.ACCELERATION)
    assert figs.minimum_g == pytest.approx(-3.0, rel=1e-12)
    assert figs.magnitude_g == pytest.approx(3.0, rel=1e-12)
    assert figs.max_travel is None
    # displacement 0.02 (1 - cos t): the largest travel is 0.04 m
    travel = respond(R(2, 100) / (s * (s**2 + 1)))
    figs = compute_figures(travel, 0.0, 10.0, kind=QuantityKind.DISPLACEMENT)
    assert figs.max_travel == pytest.approx(0.04, rel=1e-12)
    assert figs.peak_g is None
    electrical = compute_figures(accel, 0.0, 5.0, kind=QuantityKind.VOLTAGE)
    assert electrical.minimum_g is None and electrical.max_travel is None


# -- energy ------------------------------------------------------------------


def test_energy_in_the_charging_resistor_is_half_cv2():
    # RC charging from V: i = V/R e^{-t/RC}; the resistor takes C V^2 / 2 overall
    # (textbook result, from memory) and C V^2/2 (1 - e^{-2T/RC}) up to T
    r_ohm, c_farad, volts = 10, R(1, 1000), 48
    tau = r_ohm * c_farad
    current = respond(sympy.Integer(volts) / r_ohm / (s + 1 / tau))
    half_cv2 = float(c_farad) * volts**2 / 2
    total = energy_dissipated(current, r_ohm, 0.0, 60 * float(tau))
    assert total == pytest.approx(half_cv2, rel=1e-10)
    part = energy_dissipated(current, r_ohm, 0.0, float(tau))
    assert part == pytest.approx(half_cv2 * (1 - math.exp(-2)), rel=1e-10)


def test_energy_of_a_ringing_current():
    # i = e^{-t} sin(50 t) in 1 ohm over 0 .. 10:
    # int e^{-2t} sin^2(50 t) dt = (1 - e^{-20}) (1/4 - 2/(4 (4 + 4 * 2500)))
    # from sin^2 = (1 - cos 100 t)/2 and int e^{-2t} cos(100 t) = 2/(4 + 10^4)
    current = respond(50 / ((s + 1) ** 2 + 2500))
    expected = (1 - math.exp(-20)) * (0.25 - 0.5 * 2 / (4 + 10**4))
    assert energy_dissipated(current, 1.0, 0.0, 10.0) == pytest.approx(expected, rel=1e-9)


# -- verdicts ----------------------------------------------------------------

VOLTS = Quantity(QuantityKind.VOLTAGE, "out", "at")


def test_verdict_pass_fail_and_margin():
    figs = compute_figures(second_order_step(R(1, 2), 1), 0.0, 30.0)
    mp = math.exp(-0.5 * math.pi / math.sqrt(0.75))  # 16.3 %
    ok = judge(Requirement(Figure.OVERSHOOT, VOLTS, None, R(20, 100), "%"), figs)
    assert isinstance(ok, Verdict)
    assert ok.passed is True
    assert ok.margin == pytest.approx(0.2 - mp, rel=1e-9)
    assert "16.3 %" in ok.reason and "passes" in ok.reason
    bad = judge(Requirement(Figure.OVERSHOOT, VOLTS, None, R(10, 100), "%"), figs)
    assert bad.passed is False
    assert bad.margin == pytest.approx(0.1 - mp, rel=1e-9)
    between = judge(Requirement(Figure.PEAK, VOLTS, R(11, 10), R(12, 10), "V"), figs)
    assert between.passed is True
    assert between.margin == pytest.approx(min(1 + mp - 1.1, 1.2 - 1 - mp), rel=1e-9)
    above = judge(Requirement(Figure.FINAL, VOLTS, R(2), None, "V"), figs)
    assert above.passed is False and above.margin == pytest.approx(-1.0, rel=1e-12)
    assert above.lower == 2.0 and above.upper is None


def test_verdict_cannot_be_judged():
    integrator = compute_figures(respond(1 / s**2), 0.0, 1.0)
    v = judge(Requirement(Figure.FINAL, VOLTS, None, R(1), "V"), integrator)
    assert v.passed is None and v.value is None
    assert "multiplicity 2" in v.reason
    figs = compute_figures(second_order_step(R(1, 2), 1), 0.0, 30.0)
    free = judge(Requirement(Figure.PEAK, VOLTS, None, sympy.Symbol("Vmax"), "V"), figs)
    assert free.passed is None and "Vmax" in free.reason


def test_verdict_settling_band_of_its_own():
    response = second_order_step(R(1, 2), 1)
    figs = compute_figures(response, 0.0, 30.0)  # 2 % band
    req = Requirement(Figure.SETTLING_TIME, VOLTS, None, R(10), "s", band=R(5, 100))
    unknown = judge(req, figs)
    assert unknown.passed is None and "pass the response" in unknown.reason
    v = judge(req, figs, response)
    five = compute_figures(response, 0.0, 30.0, band=0.05)
    assert v.value == five.settling_time
    assert v.value < figs.settling_time
    assert v.passed is True
    same = Requirement(Figure.SETTLING_TIME, VOLTS, None, R(10), "s", band=R(2, 100))
    assert judge(same, figs).value == figs.settling_time


def test_figures_record_their_settings():
    figs = compute_figures(respond(1 / (s * (s + 1))), 0.0, 8.0, band=0.05)
    assert (figs.start, figs.stop, figs.band) == (0.0, 8.0, 0.05)
    assert isinstance(figs, Figures)
    assert figs.settling_time == pytest.approx(math.log(20), rel=1e-10)
