"""Random connected networks of any shape against a reference built in the test.

The networks (``tests/reference/random_networks.py``) have 2 to 10 nodes in the
electrical, translational and rotational domains: meshes, bridges, stores
between two non-reference nodes, floating sources, parallel stores, ideal
couplings (transformer, floating windings, lever, gear, belt, rack, motor),
values written with ``sqrt(...)``, ``pi``, quotients and parameters, and an
initial condition on every store.  The tool reads the netlist text; the
reference reads only the description the text was written from.

Sources of truth, named beside each check:
- the state-variable method (textbook, from memory) with ``numpy.linalg`` for
  the resistive network and ``scipy.linalg.expm`` (reference library) for the
  exact solution of the linear state equations;
- ``scipy.integrate.solve_ivp`` (reference library, rtol 1e-10) to check that
  reference itself on a random network;
- closed forms recalled from memory for hand cases: RC charging
  ``1 - exp(-t/RC)``, the LC tank ``v0 cos(t/sqrt(LC))``, mass on a spring,
  the DC motor's no-load speed ``K V/(K^2 + R B)``, ideal gear and transformer
  ratios;
- passivity (physical law, common practice): with no source the stored
  energy ``C v^2/2 + L i^2/2 + m v^2/2 + F^2/(2k)`` never grows.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import HealthCheck, Phase, given, settings
from hypothesis import strategies as st
from scipy.integrate import solve_ivp

import lumped
from lumped.errors import LumpedError

from .random_networks import (
    Link,
    Network,
    Part,
    compare,
    energy_profile,
    generate,
    reference,
    time_limit,
)

# A network that takes longer than this is a failure (the tool should answer in
# well under a second for 10 nodes), not a hang of the suite.
PER_NETWORK_SECONDS = 20


def budget(examples: int) -> settings:
    """Reproducible example counts; no shrinking (a seed has nothing to shrink)."""
    # Stop at the first failure: its seed and netlist are in the message.
    return settings(max_examples=examples, deadline=None, derandomize=True, database=None,
                    phases=[Phase.explicit, Phase.generate], report_multiple_bugs=False,
                    suppress_health_check=[HealthCheck.too_slow])


def check_agreement(net: Network) -> None:
    text = net.text()
    with time_limit(PER_NETWORK_SECONDS, lambda: AssertionError(f"over the limit on:\n{text}")):
        outcome = compare(net)  # any exception other than the tool's own is a failure
    assert outcome.status in ("agree", "refused"), f"{outcome.detail}\n--- netlist ---\n{text}"


# ---------------------------------------------------------------------------
# The reference itself on hand cases


def electrical(nodes: list[str]) -> dict[str, str]:
    return dict.fromkeys(nodes, "electrical")


def test_reference_rc_charging():
    # RC charging, v(t) = V (1 - exp(-t/RC)) (from memory).
    r, c, v = 1e3, 1e-6, 5.0
    net = Network(electrical(["a", "b"]), [
        Part("V1", "V", "electrical", "a", "ground", 0.0, "step 5 V", terms=(("const", v),)),
        Part("R1", "G", "electrical", "a", "b", r, "1 kohm"),
        Part("C1", "C", "electrical", "b", "ground", c, "1 uF", initial=0.0, initial_text="0 V"),
    ])
    model = reference(net)
    times = np.linspace(0, 5e-3, 50)
    got = model.simulate(times)["voltage at b"]
    assert np.allclose(got, v * (1 - np.exp(-times / (r * c))), rtol=0, atol=1e-12)


def test_reference_lc_tank_and_floating_capacitor():
    # LC tank from v0: v = v0 cos(w t), i_L = v0 sqrt(C/L) sin(w t), w = 1/sqrt(LC)
    # (from memory).  The capacitor sits between two nodes, the inductor from b.
    l_h, c, v0 = 2e-3, 5e-6, 3.0
    net = Network(electrical(["a", "b"]), [
        Part("C1", "C", "electrical", "a", "b", c, "5 uF", initial=v0, initial_text="3 V"),
        Part("L1", "L", "electrical", "b", "a", l_h, "2 mH", initial=0.0, initial_text="0 A"),
        Part("R1", "G", "electrical", "b", "ground", 1e3, "1 kohm"),
    ])
    model = reference(net)
    w = 1 / math.sqrt(l_h * c)
    times = np.linspace(0, 10 / w, 80)
    got = model.simulate(times)
    assert np.allclose(got["voltage across C1"], v0 * np.cos(w * times), atol=1e-9)
    # C1 discharges a -> L1 -> b, against L1's written direction (b -> a):
    # i = C dv/dt = -v0 sqrt(C/L) sin(w t).
    assert np.allclose(got["current in L1"], -v0 * math.sqrt(c / l_h) * np.sin(w * times),
                       atol=1e-9)
    assert np.allclose(got["voltage at b"], 0.0, atol=1e-12)


def test_reference_mass_on_spring():
    # Mass m released at velocity v0 on spring k: v = v0 cos(w t), w = sqrt(k/m) (from memory).
    m, k, v0 = 2.0, 800.0, 1.5
    net = Network({"x": "translational"}, [
        Part("M1", "C", "translational", "x", "frame", m, "2 kg", initial=v0,
             initial_text="1.5 m/s", at=True),
        Part("K1", "L", "translational", "x", "frame", k, "0.8 kN/m", initial=0.0,
             initial_text="0 N"),
    ])
    model = reference(net)
    w = math.sqrt(k / m)
    times = np.linspace(0, 3, 60)
    got = model.simulate(times)
    assert np.allclose(got["velocity of x"], v0 * np.cos(w * times), atol=1e-9)
    # The spring from x to frame carries k * displacement: m v0 / ... = v0 sqrt(k m) sin.
    assert np.allclose(got["force in K1"], v0 * math.sqrt(k * m) * np.sin(w * times), atol=1e-9)


def test_reference_motor_and_gear():
    # DC motor, winding R, constant K, viscous load B at the shaft, no-load speed
    # w = K V/(K^2 + R B) (from memory); a gear of ratio N: w_from = N w_to.
    r, k, b, j, n, v = 2.0, 0.1, 0.01, 1e-3, 4.0, 12.0
    net = Network({"s": "electrical", "w": "electrical", "sh": "rotational",
                   "dr": "rotational"}, [
        Part("V1", "V", "electrical", "s", "ground", 0.0, "12 V", terms=(("const", v),)),
        Part("R1", "G", "electrical", "s", "w", r, "2 ohm"),
        Part("J1", "C", "rotational", "sh", "frame", j, "0.001 kg*m^2", initial=0.0,
             initial_text="0 rad/s", at=True),
        Part("B1", "G", "rotational", "sh", "frame", b, "0.01 N*m*s/rad"),
    ], [Link("M1", "motor", "w", "sh", k, "constant 0.1 V*s/rad"),
        Link("G1", "gear", "sh", "dr", n, "ratio 4")])
    model = reference(net)
    got = model.simulate(np.array([10.0]))
    assert got["angular velocity of sh"][0] == pytest.approx(k * v / (k**2 + r * b), rel=1e-9)
    assert got["angular velocity of dr"][0] == pytest.approx(k * v / (k**2 + r * b) / n,
                                                             rel=1e-9)


def test_reference_transformer_ratio():
    # Ideal transformer of ratio N (primary/secondary) into a load: v2 = v1/N, and the
    # primary sees R N^2 (from memory): with a series Rs, v1 = V R N^2/(R N^2 + Rs).
    rs, rl, n, v = 10.0, 5.0, 3.0, 9.0
    net = Network(electrical(["s", "p", "q"]), [
        Part("V1", "V", "electrical", "s", "ground", 0.0, "9 V", terms=(("const", v),)),
        Part("R1", "G", "electrical", "s", "p", rs, "10 ohm"),
        Part("R2", "G", "electrical", "q", "ground", rl, "5 ohm"),
    ], [Link("X1", "transformer", "p", "q", n, "ratio 3")])
    got = reference(net).simulate(np.array([0.0]))
    v1 = v * rl * n**2 / (rl * n**2 + rs)
    assert got["voltage at p"][0] == pytest.approx(v1, rel=1e-12)
    assert got["voltage at q"][0] == pytest.approx(v1 / n, rel=1e-12)


def test_reference_matches_an_integrator():
    # The matrix-exponential reference against scipy's integrator on the first drawn
    # networks mild enough for an explicit method (mode spread below 1e3).
    from .random_networks import spread

    checked = 0
    for seed in range(200):
        net = generate(seed, irrational=False)
        model = reference(net)
        if model.a.shape[0] < 2 or spread(net) > 1e3:
            continue
        big, z0 = model.augmented()
        scale = model.time_scale()
        times = np.linspace(0, scale, 40)
        solution = solve_ivp(lambda t, z, big=big: big @ z, (0, scale), z0, method="DOP853",
                             t_eval=times, rtol=1e-10, atol=1e-12 * max(1.0, np.abs(z0).max()))
        exact = model.states(times).T
        n = model.a.shape[0]
        span = np.ptp(exact, axis=1) + np.abs(exact).max() * 1e-6 + 1e-12
        assert np.all(np.abs(solution.y[:n] - exact) <= 1e-6 * span[:, None]), net.text()
        checked += 1
        if checked == 3:
            break
    assert checked == 3


def test_precise_reference_matches_the_float_reference():
    # The 40-digit re-check is the same model: on ordinary drawn networks it agrees
    # with the float reference to rounding (both from the same description).
    import mpmath

    from .random_networks import PRECISE_DIGITS, sample_times

    for seed in (3, 11, 29):
        net = generate(seed, irrational=True)
        model = reference(net)
        times = sample_times(model.time_scale())[::15]
        fast = model.simulate(times)
        with mpmath.workdps(PRECISE_DIGITS):
            slow = reference(net, precise=True).simulate(times)
            slow = {k: np.array(v, dtype=float) for k, v in slow.items()}
        for label, values in fast.items():
            scale = np.abs(values).max() + 1e-300
            assert np.allclose(slow[label], values, rtol=0, atol=1e-8 * scale), (seed, label)


def test_a_wrong_answer_is_still_flagged_after_the_precise_recheck(monkeypatch):
    # The comparison must be able to fail: a tool answer off by 1e-4 of the range
    # survives neither the float nor the 40-digit reference.
    from lumped import inversion

    net = Network(electrical(["a", "b"]), [
        Part("V1", "V", "electrical", "a", "ground", 0.0, "step 5 V", terms=(("const", 5.0),)),
        Part("R1", "G", "electrical", "a", "b", 1e3, "1 kohm"),
        Part("C1", "C", "electrical", "b", "ground", 1e-6, "1 uF", initial=0.0,
             initial_text="0 V"),
    ])
    assert compare(net).status == "agree"
    honest = inversion.TimeResponse.evaluate

    def skewed(self, times, derivative=0):
        return np.asarray(honest(self, times, derivative), dtype=float) * (1 + 1e-4)

    monkeypatch.setattr(inversion.TimeResponse, "evaluate", skewed)
    outcome = compare(net)
    assert outcome.status == "disagree", outcome


def test_reference_refuses_a_capacitor_loop():
    # Two capacitors in parallel with a voltage source: not a state model (the generator
    # never draws it; the check says so).
    net = Network(electrical(["a"]), [
        Part("V1", "V", "electrical", "a", "ground", 0.0, "1 V", terms=(("const", 1.0),)),
        Part("C1", "C", "electrical", "a", "ground", 1e-6, "1 uF", initial=0.0,
             initial_text="0 V"),
    ])
    from .random_networks import SingularNetworkError, regular

    assert not regular(net)
    with pytest.raises(SingularNetworkError):
        reference(net)


# ---------------------------------------------------------------------------
# The tool against the reference


def test_hand_networks_through_the_tool():
    # The hand cases above, as text through the public library.
    text = ("voltage source V1 from a to ground step 5 V\n"
            "resistor R1 from a to b 1 kohm\n"
            "capacitor C1 from b to ground 1 uF, initially 0 V\n"
            "watch voltage at b\n")
    result = lumped.analyse(lumped.loads(text)).result("voltage at b")
    times = np.linspace(0, 5e-3, 50)
    assert np.allclose(result.time.evaluate(times), 5 * (1 - np.exp(-times / 1e-3)), atol=1e-9)


@given(seed=st.integers(0, 2**31 - 1))
@budget(90)
def test_random_networks_plain_values(seed):
    check_agreement(generate(seed, irrational=False))


@given(seed=st.integers(0, 2**31 - 1))
@budget(60)
def test_random_networks_irrational_values(seed):
    check_agreement(generate(seed))


@given(seed=st.integers(0, 2**31 - 1))
@budget(50)
def test_stored_energy_never_grows_without_sources(seed):
    net = generate(seed, sources=False, irrational=seed % 2 == 0)
    text = net.text()
    try:
        with time_limit(PER_NETWORK_SECONDS, lambda: AssertionError(f"over the limit on:\n{text}")):
            times, energy, initial = energy_profile(net)
    except LumpedError:
        return  # a clean refusal
    assert len(times) >= 200
    # The closed forms start from the stored initial state...
    assert energy[0] == pytest.approx(initial, rel=1e-9, abs=1e-12), text
    # ...and the energy never grows (passivity; couplings are lossless).
    rises = np.diff(energy)
    assert np.all(rises <= 1e-9 * initial + 1e-300), (
        f"energy grows by {rises.max():.3g} J of {initial:.3g} J\n{text}")
