"""Random passive RLC networks checked against references the test builds itself.

The networks are trees (ladders are the special case where every node hangs
off the previous one).  Node ``n_k`` has a capacitor to ground and, sometimes,
a resistor to ground; the edge from a node's parent to the node is a series
resistor, sometimes followed by an inductor through an internal node ``m_k``.
The root ``n0`` is either a stepped voltage source or ground, and a current
source may drive one node.  With capacitor voltages and inductor currents as
states, the state equations are written here directly from that topology.

Sources of truth, named beside each check:
- scipy.integrate.solve_ivp (reference library) on the hand-written state
  equations;
- passivity (physical law, common practice): without sources the stored energy
  1/2 sum C v^2 + 1/2 sum L i^2 never grows;
- the DC operating point (common practice, no source): inductors shorted,
  capacitors opened, the resistive network solved with numpy.linalg.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from hypothesis import HealthCheck, Phase, assume, given, settings
from hypothesis import strategies as st
from scipy.integrate import solve_ivp

from lumped.analysis import analyse
from lumped.api import loads

# Time-scale spread allowed between the fastest and the slowest mode, so that
# the reference integrator stays accurate over the whole window.
MAX_SPREAD = 1e6
# Element ranges (over nine decades and more).
R_RANGE = (1e-3, 1e6)
L_RANGE = (1e-9, 1e0)
C_RANGE = (1e-12, 1e-3)



def budget(examples: int) -> settings:
    """Modest, reproducible example counts: the whole file stays well under a minute."""
    # No shrinking: a failure prints its network at once instead of minutes later.
    return settings(max_examples=examples, deadline=None, derandomize=True, database=None,
                    phases=[Phase.explicit, Phase.generate],
                    suppress_health_check=[HealthCheck.too_slow,
                                           HealthCheck.filter_too_much])


def rounded(value: float) -> float:
    """The value as the netlist will state it (6 significant figures), parsed back."""
    return float(f"{value:.6g}")


@dataclass(frozen=True)
class Network:
    parent: tuple[int, ...]  # parent[k - 1] of node k; 0 is the root n0
    series_r: tuple[float, ...]
    series_l: tuple[float | None, ...]
    shunt_c: tuple[float, ...]
    shunt_r: tuple[float | None, ...]
    v0: tuple[float, ...]
    i0: tuple[float | None, ...]
    step: float | None  # voltage step at n0; None: n0 is ground
    current: tuple[int, float] | None  # (node, amplitude) of a current step into a node

    @property
    def size(self) -> int:
        return len(self.parent)

    def node(self, k: int) -> str:
        if k == 0:
            return "n0" if self.step is not None else "ground"
        return f"n{k}"

    def inductor_edges(self) -> list[int]:
        return [k for k in range(1, self.size + 1) if self.series_l[k - 1] is not None]

    # -- netlist text ------------------------------------------------------------
    def text(self, window: float) -> str:
        lines = ["# random passive network (property test)"]
        if self.step is not None:
            lines.append(f"voltage source Vs at n0 step {self.step:.6g} V")
        for k in range(1, self.size + 1):
            parent = self.node(self.parent[k - 1])
            inductance = self.series_l[k - 1]
            end = f"m{k}" if inductance is not None else f"n{k}"
            lines.append(f"resistor R{k} from {parent} to {end} {self.series_r[k - 1]:.6g} ohm")
            if inductance is not None:
                lines.append(f"inductor L{k} from m{k} to n{k} {inductance:.6g} H, "
                             f"initially {self.i0[k - 1]:.6g} A")
            lines.append(f"capacitor C{k} at n{k} {self.shunt_c[k - 1]:.6g} F, "
                         f"initially {self.v0[k - 1]:.6g} V")
            if self.shunt_r[k - 1] is not None:
                lines.append(f"resistor Rp{k} at n{k} {self.shunt_r[k - 1]:.6g} ohm")
        if self.current is not None:
            node, amplitude = self.current
            lines.append(f"current source Is at n{node} step {amplitude:.6g} A")
        watched = [f"voltage at n{k}" for k in range(1, self.size + 1)]
        watched += [f"current in L{k}" for k in self.inductor_edges()]
        lines.append("watch " + ", ".join(watched))
        lines.append(f"window {window:.6g} s")
        return "\n".join(lines) + "\n"

    def labels(self) -> list[str]:
        return ([f"voltage at n{k}" for k in range(1, self.size + 1)]
                + [f"current in L{k}" for k in self.inductor_edges()])

    # -- state equations written from the topology: x' = A x + b -------------------
    def state_equations(self) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        n = self.size
        edges = self.inductor_edges()
        index_i = {k: n + j for j, k in enumerate(edges)}
        size = n + len(edges)
        a = np.zeros((size, size))
        b = np.zeros(size)
        e = self.step or 0.0

        def voltage(k: int) -> tuple[int | None, float]:
            """(state index of node k's voltage or None, constant part)."""
            return (None, e) if k == 0 else (k - 1, 0.0)

        for k in range(1, n + 1):
            p_index, p_const = voltage(self.parent[k - 1])
            c = self.shunt_c[k - 1]
            # current into node k along its edge, as a row over the states plus a constant
            row = np.zeros(size)
            const = 0.0
            if k in index_i:
                row[index_i[k]] = 1.0
                # L di/dt = v_parent - v_k - R i
                li = self.series_l[k - 1]
                a[index_i[k], k - 1] -= 1 / li
                a[index_i[k], index_i[k]] -= self.series_r[k - 1] / li
                if p_index is None:
                    b[index_i[k]] += p_const / li
                else:
                    a[index_i[k], p_index] += 1 / li
            else:
                g = 1 / self.series_r[k - 1]
                row[k - 1] -= g
                if p_index is None:
                    const += g * p_const
                else:
                    row[p_index] += g
            # C dv_k/dt = edge current in - edge current out to the parent ... handled by
            # adding the edge current to node k and subtracting it from the parent.
            a[k - 1] += row / c
            b[k - 1] += const / c
            if p_index is not None:
                cp = self.shunt_c[p_index]
                a[p_index] -= row / cp
                b[p_index] -= const / cp
            if self.shunt_r[k - 1] is not None:
                a[k - 1, k - 1] -= 1 / (self.shunt_r[k - 1] * c)
        if self.current is not None:
            node, amplitude = self.current
            b[node - 1] += amplitude / self.shunt_c[node - 1]
        x0 = np.array(list(self.v0) + [self.i0[k - 1] for k in edges])
        return a, b, x0

    def spread(self) -> tuple[float, float]:
        a, _, _ = self.state_equations()
        rates = -np.linalg.eigvals(a).real
        return float(rates.min()), float(rates.max())

    # -- DC operating point: inductors shorted, capacitors open -----------------------
    def dc(self) -> np.ndarray:
        n = self.size
        g = np.zeros((n, n))
        rhs = np.zeros(n)
        e = self.step or 0.0
        for k in range(1, n + 1):
            conductance = 1 / self.series_r[k - 1]
            p = self.parent[k - 1]
            g[k - 1, k - 1] += conductance
            if p == 0:
                rhs[k - 1] += conductance * e
            else:
                g[p - 1, p - 1] += conductance
                g[k - 1, p - 1] -= conductance
                g[p - 1, k - 1] -= conductance
            if self.shunt_r[k - 1] is not None:
                g[k - 1, k - 1] += 1 / self.shunt_r[k - 1]
        if self.current is not None:
            node, amplitude = self.current
            rhs[node - 1] += amplitude
        v = np.linalg.solve(g, rhs)
        currents = []
        for k in self.inductor_edges():
            p = self.parent[k - 1]
            vp = e if p == 0 else v[p - 1]
            currents.append((vp - v[k - 1]) / self.series_r[k - 1])
        return np.concatenate([v, currents])


def _log_uniform(low: float, high: float):
    return st.floats(np.log10(low), np.log10(high)).map(lambda x: 10.0**x)


@st.composite
def networks(draw, sources: bool | None = None, max_nodes: int = 3) -> Network:
    n = draw(st.integers(1, max_nodes))
    ladder = draw(st.booleans())
    parent = tuple(k - 1 if ladder else draw(st.integers(0, k - 1)) for k in range(1, n + 1))
    # One impedance level and one time scale per network, each element spread
    # around them, so the values cover many decades across examples while one
    # network's modes stay within MAX_SPREAD.
    z0 = draw(_log_uniform(1e-2, 1e5))
    t0 = draw(_log_uniform(1e-7, 1e-2))
    spread = st.floats(-2.0, 2.0).map(lambda u: 10.0**u)
    magnitude = st.floats(0.1, 20.0)

    def pick(value: float, bounds: tuple[float, float]) -> float:
        return rounded(min(max(value, bounds[0]), bounds[1]))

    series_r, series_l, shunt_c, shunt_r, v0, i0 = [], [], [], [], [], []
    for _ in range(n):
        series_r.append(pick(z0 * draw(spread), R_RANGE))
        has_l = draw(st.booleans())
        series_l.append(pick(z0 * t0 * draw(spread), L_RANGE) if has_l else None)
        shunt_c.append(pick(t0 / z0 * draw(spread), C_RANGE))
        has_rp = draw(st.booleans())
        shunt_r.append(pick(z0 * 10 * draw(spread), R_RANGE) if has_rp else None)
        v0.append(rounded(draw(st.sampled_from([0.0, 1.0, -1.0])) * draw(magnitude)))
        i0.append(rounded(draw(st.sampled_from([0.0, 1.0, -1.0])) * draw(magnitude) / z0)
                  if has_l else None)
    with_sources = draw(st.booleans()) if sources is None else sources
    step = current = None
    if with_sources:
        step = rounded(draw(st.floats(0.5, 50)) * draw(st.sampled_from([1, -1])))
        if draw(st.booleans()):
            current = (draw(st.integers(1, n)), rounded(draw(st.floats(-5, 5)) / z0))
    return Network(parent, tuple(series_r), tuple(series_l), tuple(shunt_c),
                   tuple(shunt_r), tuple(v0), tuple(i0), step, current)


def _analyse(network: Network, window: float):
    analysis = analyse(loads(network.text(window), "<property>"))
    return [analysis.result(label) for label in network.labels()]


def _sample_times(slow: float, fast: float, window: float) -> np.ndarray:
    near_start = np.geomspace(0.01 / fast, window, 120)
    return np.unique(np.concatenate([[0.0], near_start, np.linspace(0, window, 121)]))


# source: scipy.integrate.solve_ivp (reference library) on the state equations above
@budget(40)
@given(networks(max_nodes=4))
def test_closed_form_matches_solve_ivp_on_random_networks(network: Network):
    slow, fast = network.spread()
    assume(fast / slow <= MAX_SPREAD)
    window = rounded(6 / slow)
    a, b, x0 = network.state_equations()
    times = _sample_times(slow, fast, window)
    times = times[times <= window]
    # Absolute tolerances per unit (volts, amperes) from the sizes the network can reach.
    is_voltage = np.arange(len(x0)) < network.size
    volts = max([abs(network.step or 0.0), *np.abs(x0[is_voltage]),
                 *np.abs(network.dc()[is_voltage]), 1e-3])
    amperes = max([*np.abs(x0[~is_voltage]), volts / min(network.series_r),
                   abs(network.current[1]) if network.current else 0.0])
    atol = np.where(is_voltage, 1e-14 * volts, 1e-14 * amperes)
    # LSODA (stiff/non-stiff switching) with the exact Jacobian; Radau agrees as
    # closely but is far slower here.
    reference = solve_ivp(lambda _t, x: a @ x + b, (0.0, window), x0, method="LSODA",
                          jac=lambda _t, _x: a, t_eval=times, rtol=1e-11, atol=atol)
    assert reference.success, reference.message
    results = _analyse(network, window)
    unit_range = {}
    for row, result in enumerate(results):
        unit_range[result.unit] = max(unit_range.get(result.unit, 0.0), np.ptp(reference.y[row]))
    for row, result in enumerate(results):
        expected = reference.y[row]
        got = result.time.evaluate(times)
        # The signal's own range; a signal that barely moves (a branch the others
        # hardly reach) is judged against a millionth of its unit's largest range,
        # below which the integrator's absolute tolerance is not meaningful.
        signal_range = max(np.ptp(expected), 1e-6 * unit_range[result.unit], 1e-300)
        error = np.max(np.abs(got - expected)) / signal_range
        assert error < 1e-7, (result.quantity.label, error, network.text(window))


# source: passivity (physical law, common practice): no sources, energy never grows
@budget(30)
@given(networks(sources=False, max_nodes=4))
def test_stored_energy_never_grows_without_sources(network: Network):
    slow, fast = network.spread()
    assume(fast / slow <= MAX_SPREAD)
    window = rounded(6 / slow)
    times = _sample_times(slow, fast, window)
    times = times[times <= window]
    results = _analyse(network, window)
    by_label = {r.quantity.label: r for r in results}
    energy = np.zeros_like(times)
    for k in range(1, network.size + 1):
        v = by_label[f"voltage at n{k}"].time.evaluate(times)
        energy += 0.5 * network.shunt_c[k - 1] * v**2
    for k in network.inductor_edges():
        i = by_label[f"current in L{k}"].time.evaluate(times)
        energy += 0.5 * network.series_l[k - 1] * i**2
    initial = (0.5 * sum(c * v**2 for c, v in zip(network.shunt_c, network.v0, strict=True))
               + sum(0.5 * network.series_l[k - 1] * network.i0[k - 1] ** 2
                     for k in network.inductor_edges()))
    assume(initial > 0)
    assert abs(energy[0] - initial) <= 1e-9 * initial
    growth = np.diff(energy)
    assert np.all(growth <= 1e-9 * initial), (growth.max() / initial, network.text(window))
    assert energy[-1] < initial


# source: DC operating point, inductors shorted and capacitors opened (common practice)
@budget(30)
@given(networks(sources=True, max_nodes=4))
def test_final_value_is_the_dc_solution(network: Network):
    slow, fast = network.spread()
    assume(fast / slow <= MAX_SPREAD)
    window = rounded(6 / slow)
    results = _analyse(network, window)
    dc = network.dc()
    scale = np.abs(dc).max()
    for row, result in enumerate(results):
        final = result.figures.final
        assert final is not None, result.figures.reasons
        assert abs(final - dc[row]) <= 1e-9 * scale + 1e-300, (result.quantity.label, final,
                                                              dc[row], network.text(window))


def test_state_equations_of_a_single_rc_match_the_textbook_exponential():
    # Self-check of the test's own equations: R-C from a stepped source, the
    # textbook v(t) = E (1 - exp(-t / RC)) + v0 exp(-t / RC) (common practice).
    net = Network((0,), (1000.0,), (None,), (1e-6,), (None,), (2.0,), (None,), 10.0, None)
    a, b, x0 = net.state_equations()
    assert np.allclose(a, [[-1000.0]]) and np.allclose(b, [10000.0]) and x0[0] == 2.0
    assert np.allclose(net.dc(), [10.0])


def test_state_equations_of_a_series_rlc_match_kirchhoff():
    # R-L-C from the source: L di/dt = E - R i - v, C dv/dt = i (Kirchhoff, common practice).
    net = Network((0,), (2.0,), (1e-3,), (1e-6,), (None,), (0.0,), (0.5,), 5.0, None)
    a, b, x0 = net.state_equations()
    assert np.allclose(a, [[0.0, 1e6], [-1e3, -2e3]])
    assert np.allclose(b, [0.0, 5e3])
    assert list(x0) == [0.0, 0.5]
