"""The s-domain solve against general-purpose reference libraries.

* sympy.dsolve on hand-written state equations, transformed with
  sympy.laplace_transform (non-zero initial conditions);
* scipy.signal.ss2tf on hand-written state-space matrices;
* scipy.integrate.solve_ivp and mpmath.invertlaplace for a drop onto a spring,
  with the maximum compression from energy conservation (from memory).
"""

from __future__ import annotations

import math

import mpmath
import numpy as np
import pytest
import scipy.integrate
import scipy.signal
import sympy

from lumped import model as m
from lumped.constants import STANDARD_GRAVITY, s
from lumped.network import TransferFunction, assemble

Q = sympy.Rational
t = sympy.Symbol("t", positive=True)


el = m.make_element  # exact elements from plain ints


def step(amplitude: int) -> m.Waveform:
    return m.Waveform((m.WaveformTerm(m.Shape.STEP, sympy.Integer(amplitude)),))


def qty(word: str, target: str, prep: str = "at") -> m.Quantity:
    return m.Quantity(m.QuantityKind.from_word(word), target, prep)


def _dsolve_transform(equations: list[sympy.Eq], ics: dict, unknown: sympy.Function) -> sympy.Expr:
    solutions = sympy.dsolve(equations, ics=ics)
    if not isinstance(solutions, list):
        solutions = [solutions]
    (chosen,) = [sol.rhs for sol in solutions if sol.lhs == unknown(t)]
    return sympy.laplace_transform(chosen, t, s, noconds=True)


def test_series_rlc_with_initial_conditions_against_dsolve() -> None:
    # Reference: sympy.dsolve on L di/dt = V - R i - vC, C dvC/dt = i, with i(0) = 2, vC(0) = 3.
    r, ind, c, v = Q(3), Q(1), Q(1, 2), 4
    i_f, vc_f = sympy.Function("i"), sympy.Function("vc")
    eqs = [
        sympy.Eq(ind * i_f(t).diff(t), v - r * i_f(t) - vc_f(t)),
        sympy.Eq(c * vc_f(t).diff(t), i_f(t)),
    ]
    ics = {i_f(0): 2, vc_f(0): 3}
    sol = assemble(
        m.Netlist(
            "rlc",
            "",
            elements=(
                el("V1", "voltage source", "a", "ground", waveform=step(v)),
                el("R1", "resistor", "a", "b", r),
                el("L1", "inductor", "b", "c", ind, initial=2),
                el("C1", "capacitor", "c", "ground", c, initial=3),
            ),
        )
    )
    for unknown, quantity in ((i_f, qty("current", "L1", "in")), (vc_f, qty("voltage", "c"))):
        expected = _dsolve_transform(eqs, ics, unknown)
        got = sol.response(quantity).transform
        assert sympy.simplify(got - expected) == 0, quantity.label


def test_mass_spring_damper_with_preload_against_dsolve() -> None:
    # Reference: sympy.dsolve on m dv/dt = f - F - c v, dF/dt = k v (F: spring force,
    # body to frame), v(0) = 1, F(0) = -6, with a 2 N force step.
    mass, k, c = Q(2), Q(20), Q(12)
    v_f, f_f = sympy.Function("v"), sympy.Function("F")
    eqs = [
        sympy.Eq(mass * v_f(t).diff(t), 2 - f_f(t) - c * v_f(t)),
        sympy.Eq(f_f(t).diff(t), k * v_f(t)),
    ]
    ics = {v_f(0): 1, f_f(0): -6}
    sol = assemble(
        m.Netlist(
            "msd",
            "",
            elements=(
                el("F1", "force source", "frame", "body", waveform=step(2)),
                el("M", "mass", "body", "frame", mass, initial=1),
                el("K", "spring", "body", "frame", k, initial=-6),
                el("D", "damper", "body", "frame", c),
            ),
        )
    )
    for unknown, quantity in ((v_f, qty("velocity", "body")), (f_f, qty("force", "K", "in"))):
        expected = _dsolve_transform(eqs, ics, unknown)
        got = sol.response(quantity).transform
        assert sympy.simplify(got - expected) == 0, quantity.label


def _trim(coeffs: np.ndarray) -> np.ndarray:
    """Drop leading coefficients that are rounding residue (ss2tf leaves ~1e-15 there)."""
    coeffs = np.atleast_1d(np.squeeze(coeffs)).astype(float)
    scale = np.max(np.abs(coeffs))
    first = next(i for i, x in enumerate(coeffs) if abs(x) > 1e-10 * scale)
    return coeffs[first:]


def _normalised(num: np.ndarray, den: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    num, den = _trim(num), _trim(den)
    return num / den[0], den / den[0]


def _ours(tf: TransferFunction) -> tuple[np.ndarray, np.ndarray]:
    num = np.array([float(x) for x in tf.numerator.all_coeffs()])
    den = np.array([float(x) for x in tf.denominator.all_coeffs()])
    return _normalised(num, den)


def test_two_section_rlc_ladder_against_ss2tf() -> None:
    # Reference: scipy.signal.ss2tf on hand-written state equations.
    # States x = [i1, v1, i2, v2]; source V -> R1 -> L1 -> node 1 (C1) -> R2 -> L2 -> node 2 (C2).
    r1, l1, c1, r2, l2, c2 = 2.0, 0.5, 0.25, 1.0, 2.0, 0.125
    a = np.array(
        [
            [-r1 / l1, -1 / l1, 0, 0],
            [1 / c1, 0, -1 / c1, 0],
            [0, 1 / l2, -r2 / l2, -1 / l2],
            [0, 0, 1 / c2, 0],
        ]
    )
    b = np.array([[1 / l1], [0], [0], [0]])
    sol = assemble(
        m.Netlist(
            "ladder",
            "",
            elements=(
                el("V1", "voltage source", "n0", "ground"),
                el("R1", "resistor", "n0", "a", Q(2)),
                el("L1", "inductor", "a", "n1", Q(1, 2)),
                el("C1", "capacitor", "n1", "ground", Q(1, 4)),
                el("R2", "resistor", "n1", "b", Q(1)),
                el("L2", "inductor", "b", "n2", Q(2)),
                el("C2", "capacitor", "n2", "ground", Q(1, 8)),
            ),
        )
    )
    for row, quantity in (
        (np.array([[0, 0, 0, 1.0]]), qty("voltage", "n2")),
        (np.array([[0, 1.0, 0, 0]]), qty("voltage", "n1")),
        (np.array([[0, 0, 1.0, 0]]), qty("current", "L2", "in")),
    ):
        ref_num, ref_den = _normalised(*scipy.signal.ss2tf(a, b, row, np.zeros((1, 1))))
        got_num, got_den = _ours(sol.transfer_function("V1", quantity))
        assert got_den == pytest.approx(ref_den, rel=1e-9), quantity.label
        assert got_num == pytest.approx(ref_num, rel=1e-9, abs=1e-9), quantity.label


def test_two_mass_system_against_ss2tf() -> None:
    # Reference: scipy.signal.ss2tf.  Quarter-car-like chain: frame -K1- m1 -K2,D2- m2,
    # force on m2.  States [v1, F1, v2, F2] with F1 = force in K1 (m1 to frame),
    # F2 = force in K2 (m2 to m1): m1 v1' = F2 + c (v2 - v1) - F1, m2 v2' = f - F2 - c (v2 - v1).
    m1, m2, k1, k2, c = 5.0, 20.0, 2000.0, 300.0, 40.0
    a = np.array(
        [
            [-c / m1, -1 / m1, c / m1, 1 / m1],
            [k1, 0, 0, 0],
            [c / m2, 0, -c / m2, -1 / m2],
            [-k2, 0, k2, 0],
        ]
    )
    b = np.array([[0], [0], [1 / m2], [0]])
    sol = assemble(
        m.Netlist(
            "car",
            "",
            elements=(
                el("F", "force source", "frame", "body"),
                el("M1", "mass", "wheel", "frame", Q(5)),
                el("M2", "mass", "body", "frame", Q(20)),
                el("K1", "spring", "wheel", "frame", Q(2000)),
                el("K2", "spring", "body", "wheel", Q(300)),
                el("D2", "damper", "body", "wheel", Q(40)),
            ),
        )
    )
    for row, quantity in (
        (np.array([[0, 0, 1.0, 0]]), qty("velocity", "body")),
        (np.array([[1.0, 0, 0, 0]]), qty("velocity", "wheel")),
        (np.array([[0, 0, 0, 1.0]]), qty("force", "K2", "in")),
    ):
        ref_num, ref_den = _normalised(*scipy.signal.ss2tf(a, b, row, np.zeros((1, 1))))
        got_num, got_den = _ours(sol.transfer_function("F", quantity))
        assert got_den == pytest.approx(ref_den, rel=1e-9), quantity.label
        assert got_num == pytest.approx(ref_num, rel=1e-9, abs=1e-9), quantity.label


def test_drop_onto_spring_against_solve_ivp_and_energy() -> None:
    # Crate of 12 kg dropped 0.3 m onto a 5 kN/m spring.
    mass, k, h = Q(12), Q(5000), Q(3, 10)
    sol = assemble(
        m.Netlist(
            "drop",
            "",
            elements=(
                el("M", "mass", "body", "frame", mass),
                el("K", "spring", "body", "frame", k),
            ),
            drops=(m.Drop("M", h),),
        )
    )
    x_s = sol.response(qty("displacement", "body")).transform
    g = float(STANDARD_GRAVITY)
    v0 = -math.sqrt(2 * g * float(h))
    mf, kf = float(mass), float(k)

    # Reference 1: scipy.integrate.solve_ivp on m x'' = -k x - m g, x(0) = 0, x'(0) = v0.
    ivp = scipy.integrate.solve_ivp(
        lambda _t, y: [y[1], -kf / mf * y[0] - g],
        (0, 0.2),
        [0.0, v0],
        rtol=1e-11,
        atol=1e-13,
        dense_output=True,
    )
    f = sympy.lambdify(s, x_s, "mpmath")
    for time in (0.01, 0.05, 0.13):
        # Reference 2: mpmath.invertlaplace (Talbot) on our transform.
        ours = float(mpmath.invertlaplace(f, time, method="talbot"))
        assert ours == pytest.approx(ivp.sol(time)[0], rel=1e-7, abs=1e-10)

    # Energy conservation (from memory): 1/2 m v0^2 + m g x = 1/2 k x^2 at the deepest point.
    x_max = mf * g / kf + math.sqrt((mf * g / kf) ** 2 + mf * v0**2 / kf)
    omega = math.sqrt(kf / mf)
    # One period sampled finely enough that the grid misses the minimum by < 1e-4 relative.
    grid = np.linspace(0, 2 * math.pi / omega, 201)[1:]
    ours_min = min(float(mpmath.invertlaplace(f, tt, method="talbot")) for tt in grid)
    assert -ours_min == pytest.approx(x_max, rel=1e-3)


def test_rc_step_reaches_63_percent_after_one_time_constant() -> None:
    # Common practice, no source: 1 - e^-1 = 63.2 % after one time constant.
    r, c = Q(4700), Q(1, 10**6)
    sol = assemble(
        m.Netlist(
            "rc",
            "",
            elements=(
                el("V1", "voltage source", "in", "ground", waveform=step(1)),
                el("R1", "resistor", "in", "out", r),
                el("C1", "capacitor", "out", "ground", c),
            ),
        )
    )
    f = sympy.lambdify(s, sol.response(qty("voltage", "out")).transform, "mpmath")
    tau = float(r * c)
    assert float(mpmath.invertlaplace(f, tau, method="talbot")) == pytest.approx(0.632, abs=5e-4)
