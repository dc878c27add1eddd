"""Drops of assemblies: everything joined to the dropped body falls with it.

Sources named beside each check:

* ``scipy.integrate.solve_ivp`` on hand-written two- and three-mass equations of
  motion (Newton's second law, gravity down, positions measured up from first
  contact, every mass arriving at -sqrt(2 g h) with unstressed internal springs);
* energy conservation (common practice, no source): kinetic + elastic +
  gravitational energy + energy dissipated so far stays equal to the kinetic
  energy at contact.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy.integrate import cumulative_trapezoid, solve_ivp

import lumped
from lumped.errors import LumpedError

G = 9.80665  # standard gravity, m/s^2 (CGPM 1901 definition, from memory)

# A package on a pad holding an instrument on an isolator (values of this test only).
M_PACKAGE, M_INSTRUMENT = 8.0, 1.5
K_PAD, C_PAD = 80e3, 400.0
K_ISO, C_ISO = 20e3, 60.0
HEIGHT = 0.8

TWO_MASS = f"""
mass package {M_PACKAGE} kg
mass instrument {M_INSTRUMENT} kg
spring Kpad from package to frame {K_PAD} N/m
damper Cpad from package to frame {C_PAD} N*s/m
spring Kiso from instrument to package {K_ISO} N/m
damper Ciso from instrument to package {C_ISO} N*s/m
drop package from {HEIGHT} m
watch displacement of package, displacement of instrument, acceleration of instrument
window 0.2 s
"""


def _two_mass(t: float, y: np.ndarray) -> list[float]:
    x1, x2, v1, v2 = y
    iso = K_ISO * (x2 - x1) + C_ISO * (v2 - v1)  # tension of the isolator, pulls 1 up
    a1 = (-K_PAD * x1 - C_PAD * v1 + iso) / M_PACKAGE - G
    a2 = -iso / M_INSTRUMENT - G
    return [v1, v2, a1, a2]


def _reference(rhs, count: int, times: np.ndarray, height: float = HEIGHT) -> np.ndarray:
    v0 = -math.sqrt(2 * G * height)
    y0 = [0.0] * count + [v0] * count
    sol = solve_ivp(rhs, (0.0, float(times[-1])), y0, method="DOP853", rtol=1e-11,
                    atol=1e-13, t_eval=times)
    assert sol.success
    return sol.y


def test_every_mass_of_the_assembly_arrives_at_the_contact_speed() -> None:
    # source: scipy.integrate.solve_ivp on the hand-written two-mass equations.
    analysis = lumped.analyse(lumped.loads(TWO_MASS))
    times = np.linspace(0.0, 0.2, 801)
    y = _reference(_two_mass, 2, times)
    for label, row in (("displacement of package", 0), ("displacement of instrument", 1)):
        got = analysis.result(label).time.evaluate(times)
        scale = np.ptp(y[row])
        assert np.max(np.abs(got - y[row])) < 1e-7 * scale, label
    # The instrument's acceleration: differentiate the reference's velocity by the law.
    accel = np.array([_two_mass(0.0, y[:, i])[3] for i in range(times.size)])
    got = analysis.result("acceleration of instrument").time.evaluate(times)
    assert np.max(np.abs(got - accel)) < 1e-7 * np.ptp(accel)
    peak = analysis.result("acceleration of instrument").figures.magnitude.value
    assert peak == pytest.approx(np.max(np.abs(accel)), rel=1e-3)
    drop = analysis.drops[0]
    assert drop.falling == ("package", "instrument")
    assert drop.contact_velocity == pytest.approx(-math.sqrt(2 * G * HEIGHT), rel=1e-12)


def test_the_report_and_json_name_the_masses_that_fall() -> None:
    analysis = lumped.analyse(lumped.loads(TWO_MASS))
    from lumped.io import to_json
    from lumped.io.text import render

    assert "falling together     package, instrument" in render(analysis)
    assert json.loads(to_json(analysis))["drops"][0]["falling"] == ["package", "instrument"]


def test_energy_is_conserved_through_the_landing_of_an_assembly() -> None:
    # source: energy conservation (common practice, no source): kinetic + elastic
    # + gravitational (from the contact position) + dissipated = kinetic at contact.
    analysis = lumped.analyse(lumped.loads(TWO_MASS + """
watch velocity of package, velocity of instrument, force in Kpad, force in Kiso
watch force in Cpad, force in Ciso
"""))
    times = np.linspace(0.0, 0.2, 20001)

    def value(label: str) -> np.ndarray:
        return analysis.result(label).time.evaluate(times)

    v1, v2 = value("velocity of package"), value("velocity of instrument")
    x1, x2 = value("displacement of package"), value("displacement of instrument")
    kinetic = 0.5 * M_PACKAGE * v1**2 + 0.5 * M_INSTRUMENT * v2**2
    elastic = value("force in Kpad") ** 2 / (2 * K_PAD) + value("force in Kiso") ** 2 / (
        2 * K_ISO)
    potential = (M_PACKAGE * x1 + M_INSTRUMENT * x2) * G
    power = value("force in Cpad") ** 2 / C_PAD + value("force in Ciso") ** 2 / C_ISO
    dissipated = cumulative_trapezoid(power, times, initial=0.0)
    total = kinetic + elastic + potential + dissipated
    at_contact = 0.5 * (M_PACKAGE + M_INSTRUMENT) * 2 * G * HEIGHT
    assert total[0] == pytest.approx(at_contact, rel=1e-12)
    assert np.max(np.abs(total - at_contact)) < 1e-5 * at_contact


THREE_MASS = """
mass crate 20 kg
mass tray 4 kg
mass sensor 0.5 kg
spring Kfloor from crate to frame 150 kN/m
damper Cfloor from crate to frame 900 N*s/m
spring Ktray from tray to crate 40 kN/m
damper Ctray from tray to crate 120 N*s/m
spring Ksensor from sensor to tray 8 kN/m
damper Csensor from sensor to tray 6 N*s/m
drop crate from 0.5 m
watch displacement of crate, displacement of tray, displacement of sensor
window 0.15 s
"""


def _three_mass(t: float, y: np.ndarray) -> list[float]:
    x1, x2, x3, v1, v2, v3 = y
    tray = 40e3 * (x2 - x1) + 120 * (v2 - v1)
    sensor = 8e3 * (x3 - x2) + 6 * (v3 - v2)
    a1 = (-150e3 * x1 - 900 * v1 + tray) / 20 - G
    a2 = (-tray + sensor) / 4 - G
    a3 = -sensor / 0.5 - G
    return [v1, v2, v3, a1, a2, a3]


def test_a_three_mass_chain_falls_as_one() -> None:
    # source: scipy.integrate.solve_ivp on the hand-written three-mass equations.
    analysis = lumped.analyse(lumped.loads(THREE_MASS))
    times = np.linspace(0.0, 0.15, 601)
    y = _reference(_three_mass, 3, times, height=0.5)
    for row, name in enumerate(("crate", "tray", "sensor")):
        got = analysis.result(f"displacement of {name}").time.evaluate(times)
        assert np.max(np.abs(got - y[row])) < 1e-7 * np.ptp(y[row]), name
    assert analysis.drops[0].falling == ("crate", "tray", "sensor")


def test_a_mass_standing_on_the_frame_does_not_fall() -> None:
    # A second body on its own mount is not part of the dropped assembly: it only
    # sags under its weight, applied at t = 0 (a drop starts from unloaded springs):
    # v = -(g / w) sin(w t), w = sqrt(k / m) (undamped step response, from memory).
    net = lumped.loads("""
mass box 2 kg
mass bench 50 kg
spring Kbox from box to frame 10 kN/m
spring Kbench from bench to frame 200 kN/m
drop box from 0.1 m
watch velocity of bench
""")
    analysis = lumped.analyse(net)
    assert analysis.drops[0].falling == ("box",)
    times = np.linspace(0, 0.1, 11)
    omega = math.sqrt(200e3 / 50)
    expected = -(G / omega) * np.sin(omega * times)
    got = analysis.result("velocity of bench").time.evaluate(times)
    assert np.max(np.abs(got - expected)) < 1e-12


def test_two_drops_of_one_assembly_are_refused() -> None:
    with pytest.raises(LumpedError, match="one assembly"):
        lumped.analyse(lumped.loads("""
mass a 1 kg
mass b 1 kg
spring K1 from a to frame 1 kN/m
spring K2 from b to a 1 kN/m
drop a from 0.1 m
drop b from 0.2 m
"""))
