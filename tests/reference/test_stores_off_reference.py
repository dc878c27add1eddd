"""Stores that do not touch the reference, and cautions from the values reached.

Sources named beside each check:

* series RC driven by a step through a divider: v = V R2/(R1 + R2) e^(-t/((R1 + R2) C))
  (first-order circuit, common practice, from memory);
* ``scipy.integrate.solve_ivp`` on hand-written state equations;
* the extra-low-voltage limit of 60 V DC (common practice, from memory).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy.integrate import solve_ivp

import lumped


def test_a_coupling_capacitor_between_two_nodes() -> None:
    # source: first-order RC through a divider (common practice, from memory):
    # v(e) = 5 * 1k/(1k + 1k) * exp(-t / (2 kohm * 1 uF)) = 2.5 exp(-t / 2 ms).
    analysis = lumped.analyse(lumped.loads("""
voltage source V1 at a step 5 V
resistor R1 from a to out 1 kohm
capacitor C1 from out to e 1 uF
resistor R2 from e to ground 1 kohm
watch voltage at e
"""))
    times = np.linspace(0, 10e-3, 201)
    got = analysis.result("voltage at e").time.evaluate(times)
    assert np.max(np.abs(got - 2.5 * np.exp(-times / 2e-3))) < 1e-12


def test_groups_of_capacitors_not_joined_to_each_other() -> None:
    # source: scipy.integrate.solve_ivp on the hand-written state equations.
    # C1 (a to ground) and C2 (b to c, charged to 1 V) form two separate groups.
    analysis = lumped.analyse(lumped.loads("""
resistor R1 from a to ground 1 ohm
resistor R2 from a to b 1 ohm
capacitor C1 from a to ground 1 F
capacitor C2 from b to c 1 F initially 1 V
resistor R3 from c to ground 1 ohm
watch voltage at a, voltage at b, voltage at c
"""))

    # States: v1 = v(a), v2 = v(b) - v(c).  The R2 current flows on through C2 and R3,
    # so v(c) = i and v(b) = v2 + i with i = v(a) - v(b): i = (v1 - v2) / 2.
    def rhs(t, y):
        v1, v2 = y
        i = (v1 - v2) / 2
        return [-v1 - i, i]

    times = np.linspace(0, 8, 161)
    ref = solve_ivp(rhs, (0, 8), [0.0, 1.0], method="DOP853", rtol=1e-12, atol=1e-14,
                    t_eval=times).y
    i = (ref[0] - ref[1]) / 2
    expected = {"voltage at a": ref[0], "voltage at b": ref[1] + i, "voltage at c": i}
    for label, want in expected.items():
        got = analysis.result(label).time.evaluate(times)
        assert np.max(np.abs(got - want)) < 1e-9, label


def test_inductor_groups_off_the_reference_with_currents() -> None:
    # source: scipy.integrate.solve_ivp on hand-written state equations.
    # L1 (a to b, 1 A) and L2 (c to d, -2 A) each sit between two resistors.
    analysis = lumped.analyse(lumped.loads("""
resistor Ra from a to ground 2 ohm
inductor L1 from a to b 1 H initially 1 A
resistor Rb from b to ground 3 ohm
resistor Rc from c to ground 1 ohm
inductor L2 from c to d 0.5 H initially -2 A
resistor Rd from d to ground 1 ohm
watch current in L1, current in L2, voltage at b
"""))
    times = np.linspace(0, 2, 101)
    # Each loop: L di/dt = -(R + R') i.
    i1 = np.exp(-5 * times)
    i2 = -2 * np.exp(-4 * times)
    assert np.max(np.abs(analysis.result("current in L1").time.evaluate(times) - i1)) < 1e-12
    assert np.max(np.abs(analysis.result("current in L2").time.evaluate(times) - i2)) < 1e-12
    assert np.max(np.abs(analysis.result("voltage at b").time.evaluate(times) - 3 * i1)) < 1e-12


def _cautions(text: str) -> str:
    return "\n".join(lumped.analyse(lumped.loads(text)).cautions)


def test_a_ramp_slope_is_not_read_as_a_voltage() -> None:
    # 2 V/ms over 1 ms reaches 2 V: far below the 60 V DC extra-low-voltage limit
    # (common practice, from memory); the ramp keeps rising, and the caution says so.
    cautions = _cautions("""
voltage source V1 at a ramp 2 V/ms
resistor R1 from a to out 1 kohm
capacitor C1 at out 1 nF
watch voltage at out
window 1 ms
""")
    assert "extra-low-voltage" not in cautions
    assert "grows without bound" in cautions


def test_the_hazard_caution_follows_the_voltage_reached() -> None:
    # 100 V/ms over 1 ms reaches 100 V (about 99.9 V at the capacitor): beyond 60 V DC.
    cautions = _cautions("""
voltage source V1 at a ramp 100 V/ms
resistor R1 from a to out 1 kohm
capacitor C1 at out 1 nF
watch voltage at out
window 1 ms
""")
    assert "Voltages reach 100 V within the window" in cautions


def test_an_unwatched_node_still_raises_the_hazard() -> None:
    # A 400 V step reaches the unwatched node `a`.
    cautions = _cautions("""
voltage source V1 at a step 400 V
resistor R1 from a to out 1 kohm
resistor R2 from out to ground 1 ohm
watch voltage at out
""")
    assert "Voltages reach 400 V" in cautions


def test_a_decaying_response_does_not_warn_of_growth() -> None:
    cautions = _cautions("""
voltage source V1 at a step 5 V
resistor R1 from a to out 1 kohm
capacitor C1 at out 1 uF
watch voltage at out
""")
    assert "grows without bound" not in cautions
    assert "extra-low-voltage" not in cautions


@pytest.mark.parametrize("window", ["1 ms", "10 ms"])
def test_a_free_mass_pushed_by_a_constant_force_grows(window: str) -> None:
    cautions = _cautions(f"""
mass cart 2 kg
force source F at cart step 10 N
watch velocity of cart
window {window}
""")
    assert "velocity of cart grows without bound" in cautions
