"""Mechanical networks written as netlists, checked against textbook results.

Each check names its source beside it.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from lumped.analysis import analyse
from lumped.api import loads

G = 9.80665  # standard gravity, exact by definition (from memory)


def _result(text: str, label: str):
    analysis = analyse(loads(text))
    return analysis, analysis.result(label)


@pytest.mark.parametrize("m, k, c", [(2.0, 800.0, 8.0), (350.0, 22e3, 900.0), (0.5, 50.0, 0.3)])
def test_free_vibration_logarithmic_decrement(m: float, k: float, c: float) -> None:
    # Source: standard vibration textbook result (from memory): successive peaks of a
    # damped free vibration satisfy ln(x_n / x_{n+1}) = 2*pi*zeta / sqrt(1 - zeta^2),
    # with zeta = c / (2 sqrt(k m)) and the damped period 2*pi / (wn sqrt(1 - zeta^2)).
    zeta = c / (2 * math.sqrt(k * m))
    wn = math.sqrt(k / m)
    wd = wn * math.sqrt(1 - zeta**2)
    text = (f"mass body {m} kg, initially 1 m/s\n"
            f"spring K from body to frame {k} N/m\n"
            f"damper C from body to frame {c} N*s/m\n"
            f"watch displacement of body\nwindow {8 * 2 * math.pi / wd} s\n")
    _, result = _result(text, "displacement of body")
    period = 2 * math.pi / wd
    # Peaks of e^(-zeta wn t) sin(wd t) are one damped period apart.
    first_peak = math.atan(wd / (zeta * wn)) / wd
    peaks = result.time.evaluate(np.array([first_peak, first_peak + period,
                                           first_peak + 2 * period]))
    decrement = math.log(peaks[0] / peaks[1])
    assert decrement == pytest.approx(2 * math.pi * zeta / math.sqrt(1 - zeta**2), rel=1e-9)
    assert math.log(peaks[1] / peaks[2]) == pytest.approx(decrement, rel=1e-9)
    # The figures report the same pair: wn and zeta (common practice formulas).
    assert result.figures.natural_frequency == pytest.approx(wn, rel=1e-9)
    assert result.figures.damping_ratio == pytest.approx(zeta, rel=1e-9)


def test_gravity_from_equilibrium_leaves_the_body_at_rest_with_static_spring_force() -> None:
    # Source: statics (common practice): a mass hanging on a spring in equilibrium carries
    # m*g in the spring and does not move; static deflection m*g/k.
    text = ("mass body 80 kg\nspring K from body to frame 20 kN/m\n"
            "damper C from body to frame 500 N*s/m\ngravity from equilibrium\n"
            "watch displacement of body, force in K\nwindow 1 s\n")
    analysis = analyse(loads(text))
    times = np.linspace(0, 1, 101)
    assert np.max(np.abs(analysis.result("displacement of body").time.evaluate(times))) < 1e-12
    force = analysis.result("force in K").time.evaluate(times)
    # The spring (from body to frame) is compressed by the weight: force = k*x = -m*g.
    assert force == pytest.approx(np.full_like(times, -80 * G), rel=1e-12)


def test_gravity_unloaded_settles_at_the_static_deflection() -> None:
    # Source: statics (common practice): final deflection m*g/k downwards.
    text = ("mass body 80 kg\nspring K from body to frame 20 kN/m\n"
            "damper C from body to frame 2 kN*s/m\ngravity\n"
            "watch displacement of body\nwindow 3 s\n")
    _, result = _result(text, "displacement of body")
    assert result.figures.final == pytest.approx(-80 * G / 20e3, rel=1e-12)


def test_undamped_drop_maximum_compression_by_energy_conservation() -> None:
    # Source: energy conservation (common practice): a mass m dropped from h onto a
    # spring k compresses it by (m g / k) (1 + sqrt(1 + 2 k h / (m g))).
    m, k, h = 5.0, 4000.0, 0.25
    text = (f"mass box {m} kg\nspring K from box to frame {k} N/m\ndrop box from {h} m\n"
            "watch displacement of box\nwindow 0.2 s\n")
    analysis, result = _result(text, "displacement of box")
    expected = m * G / k * (1 + math.sqrt(1 + 2 * k * h / (m * G)))
    assert analysis.drops[0].max_compression == pytest.approx(expected, rel=1e-9)
    assert -result.figures.minimum.value == pytest.approx(expected, rel=1e-9)
    assert analysis.drops[0].contact_velocity == pytest.approx(-math.sqrt(2 * G * h), rel=1e-12)


def test_rack_and_pinion_turns_torque_into_force_through_the_radius() -> None:
    # Source: rack and pinion kinematics (common practice): v = r*omega, F = T/r, so a
    # torque T on an inertia J driving a rack with mass m accelerates the rack at
    # a = (T/r) / (m + J/r^2).
    r, J, m, T = 0.02, 1e-3, 3.0, 0.5
    text = (f"torque source Tm at pinion step {T} N*m\ninertia Jp at pinion {J} kg*m^2\n"
            f"rack R from pinion to slider radius {r} m\nmass slide at slider {m} kg\n"
            "watch velocity of slider\nwindow 1 s\n")
    _, result = _result(text, "velocity of slider")
    slope = (T / r) / (m + J / r**2)
    times = np.linspace(0, 1, 11)
    assert result.time.evaluate(times) == pytest.approx(slope * times, rel=1e-12, abs=1e-15)


def test_lever_multiplies_force_by_its_ratio() -> None:
    # Source: lever law (common practice): v_in = n v_out, F_out = n F_in; a force F at the
    # input against a spring k at the output deflects it by n F / k.
    n, F, k = 4.0, 25.0, 10e3
    text = (f"force source P at pedal step {F} N\nlever L from pedal to rod ratio {n}\n"
            f"spring K from rod to frame {k} N/m\ndamper C from rod to frame 300 N*s/m\n"
            "mass rodmass at rod 0.2 kg\nwatch displacement of rod\nwindow 2 s\n")
    _, result = _result(text, "displacement of rod")
    assert result.figures.final == pytest.approx(n * F / k, rel=1e-12)


def test_imperial_units_give_the_same_natural_frequency() -> None:
    # Source: exact unit definitions (from memory): 1 lb = 0.45359237 kg,
    # 1 lbf = 4.4482216152605 N, 1 in = 0.0254 m; wn = sqrt(k/m) (common practice).
    text = ("mass body 100 lb, initially 1 m/s\nspring K from body to frame 500 lbf/inch\n"
            "watch velocity of body\nwindow 1 s\n")
    _, result = _result(text, "velocity of body")
    k = 500 * 4.4482216152605 / 0.0254
    m = 100 * 0.45359237
    assert result.time.modes[0].natural_frequency == pytest.approx(math.sqrt(k / m), rel=1e-12)


def test_two_mass_corner_over_a_kerb_matches_hand_written_equations() -> None:
    # Source: scipy.integrate.solve_ivp (reference library) on the quarter-car equations
    # written by hand: ms xs'' = -ks (xs - xu) - cs (xs' - xu'),
    # mu xu'' = ks (xs - xu) + cs (xs' - xu') - kt (xu - r), with r = 30 mm for t >= 0.
    ms, mu, ks, cs, kt, r = 350.0, 40.0, 22e3, 1.8e3, 200e3, 0.03
    text = (f"mass body {ms} kg\nmass wheel {mu} kg\nspring Ks from body to wheel {ks} N/m\n"
            f"damper Cs from body to wheel {cs} N*s/m\nspring Kt from wheel to road {kt} N/m\n"
            f"displacement source Road at road step {r} m\n"
            "watch displacement of body, displacement of wheel\nwindow 2 s\n")
    analysis = analyse(loads(text))

    def rates(_t, y):
        xs, vs, xu, vu = y
        fs = ks * (xs - xu) + cs * (vs - vu)
        return [vs, -fs / ms, vu, (fs - kt * (xu - r)) / mu]

    times = np.linspace(0, 2, 801)
    reference = solve_ivp(rates, (0, 2), [0, 0, 0, 0], t_eval=times, rtol=1e-12, atol=1e-14,
                          method="DOP853")
    body = analysis.result("displacement of body").time.evaluate(times)
    wheel = analysis.result("displacement of wheel").time.evaluate(times)
    span = np.ptp(reference.y[0])
    assert np.max(np.abs(body - reference.y[0])) < 1e-8 * span
    assert np.max(np.abs(wheel - reference.y[2])) < 1e-8 * np.ptp(reference.y[2])


def test_motor_torque_is_constant_times_winding_current() -> None:
    # Source: DC machine relations (common practice, from memory): torque = k i, and the
    # winding current is the current of the series winding inductor (KCL).
    k = 0.06
    text = ("voltage source V at supply step 24 V\nresistor Rw from supply to wind 0.8 ohm\n"
            "inductor Lw from wind to term 1.2 mH\n"
            f"motor M1 from term to shaft constant {k} V*s/rad\n"
            "inertia rotor at shaft 4e-5 kg*m^2\n"
            "rotary damper B from shaft to frame 2e-5 N*m*s/rad\n"
            "watch current in Lw, current in M1, torque in M1\nwindow 0.3 s\n")
    analysis = analyse(loads(text))
    times = np.linspace(0, 0.3, 301)
    winding = analysis.result("current in Lw").time.evaluate(times)
    current = analysis.result("current in M1").time.evaluate(times)
    torque = analysis.result("torque in M1").time.evaluate(times)
    assert current == pytest.approx(winding, rel=1e-12, abs=1e-15)
    # The shaft port's through variable flows from the shaft through the motor to the
    # frame, so the torque delivered into the shaft is its negative.
    assert -torque == pytest.approx(k * current, rel=1e-12, abs=1e-15)


def test_a_coupling_quantity_of_the_wrong_domain_is_refused() -> None:
    from lumped.errors import ValidationError

    text = ("voltage source V at a step 1 V\nmotor M1 from a to shaft constant 0.1 V*s/rad\n"
            "inertia J at shaft 1 kg*m^2\nwatch force in M1\n")
    with pytest.raises(ValidationError, match="force does not apply to motor 'M1'"):
        loads(text)
