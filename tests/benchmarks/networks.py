"""The benchmark's networks: netlist text, and state equations written by hand beside it.

Each generator returns a :class:`Case`: the netlist the tool reads and, derived
here from the same description and never from the tool, the state equations
``z' = M z`` (a constant input is the last state, ``w = 1``, ``w' = 0``) with one
output row per watched quantity.  Values:

- RLC ladder of ``n`` sections: 1 V step into ``n0``; section ``k`` is a series
  1 ohm (``n(k-1)`` to ``a(k)``) and 1 uH (``a(k)`` to ``n(k)``), a shunt 1 uF at
  ``n(k)``; 1 ohm load at ``n(n)``.
- mass chain of ``n`` masses of 1 kg: link ``k`` (spring 1 kN/m and damper
  50 N*s/m) joins ``m(k)`` to ``m(k+1)``, the last one to the frame; 1 N step on
  ``m1``; optionally gravity (from unloaded: each weight applied at t = 0).
- random networks from ``tests/reference/random_networks.py`` (its own state model).

The state equations (from memory, textbook circuit and rigid-body laws):
``L di_k/dt = v(k-1) - R i_k - v_k`` (``v_0`` the source), ``C dv_k/dt = i_k - i(k+1)``
(the last node loaded by the resistor instead); for the chain, link ``k`` carries
``f_k = K (x_k - x(k+1)) + P_k + D (v_k - v(k+1))`` (``P_k`` its preload), which pulls
``m(k)`` back and ``m(k+1)`` forward, and ``m dv/dt`` is the sum of the forces on a
mass, its weight ``-m g`` included under gravity (g = 9.80665 m/s^2, the standard
value, from memory).  Positions are measured from where each mass is at t = 0.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import scipy.integrate
import scipy.linalg

# Ladder: series R + L per section, shunt C to ground, load resistor at the end.
R_SERIES, L_SERIES, C_SHUNT, R_LOAD, V_STEP = 1.0, 1e-6, 1e-6, 1.0, 1.0
# Chain: equal masses, each link a spring and a damper; the last mass to the frame.
MASS, STIFFNESS, DAMPING, F_STEP = 1.0, 1000.0, 50.0, 1.0
STANDARD_GRAVITY = 9.80665  # m/s^2, the defined standard value (from memory)


@dataclass
class Case:
    """A netlist and its hand-written state equations ``z' = M z``, ``y = C z``."""

    name: str
    family: str  # "ladder", "chain", "random"
    variant: str  # "rest", "initial", "gravity", ...
    size: int  # sections, masses or elements
    text: str
    matrix: np.ndarray
    z0: np.ndarray
    outputs: np.ndarray  # one row per watched quantity, in the netlist's watch order
    labels: list[str]
    stop: float
    scope: str = "every"  # "last" or "every"
    notes: dict = field(default_factory=dict)

    @property
    def states(self) -> int:
        """Energy stores (the constant and source states left out)."""
        return int(self.notes.get("stores", self.matrix.shape[0] - 1))


def round_up(value: float, digits: int = 2) -> float:
    """``value`` rounded up to ``digits`` significant digits."""
    exponent = math.floor(math.log10(value)) - digits + 1
    return math.ceil(value / 10**exponent) * 10**exponent


def window_of(a: np.ndarray) -> float:
    """Six of the slowest time constants of ``dx/dt = A x``, rounded up."""
    slowest = max(-1.0 / ev.real for ev in np.linalg.eigvals(a))
    return round_up(6.0 * slowest)


def _with_constant(a: np.ndarray, b: np.ndarray, x0: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    n = a.shape[0]
    m = np.zeros((n + 1, n + 1))
    m[:n, :n] = a
    m[:n, n] = b
    return m, np.concatenate([x0, [1.0]])


# --------------------------------------------------------------------------- ladders


def ladder_initial(k: int) -> tuple[float, float]:
    """Initial inductor current (A) and capacitor voltage (V) of section ``k``."""
    return (k % 5 + 1) / 20, (k % 9 + 1) / 10


def ladder(n: int, initial: bool = False, scope: str = "every") -> Case:
    """An ``n``-section RLC ladder; with ``initial``, every store starts charged.

    State ``x = (i_1..i_n, v_1..v_n)``; watched: every node (``n0..n(n)``, then
    ``a1..a(n)``), or the last node alone.
    """
    a = np.zeros((2 * n, 2 * n))
    b = np.zeros(2 * n)
    x0 = np.zeros(2 * n)
    for k in range(n):
        i, v = k, n + k
        a[i, i] = -R_SERIES / L_SERIES
        a[i, v] = -1.0 / L_SERIES
        if k == 0:
            b[i] = V_STEP / L_SERIES
        else:
            a[i, v - 1] = 1.0 / L_SERIES
        a[v, i] = 1.0 / C_SHUNT
        if k < n - 1:
            a[v, i + 1] = -1.0 / C_SHUNT
        else:
            a[v, v] = -1.0 / (R_LOAD * C_SHUNT)
        if initial:
            x0[i], x0[v] = ladder_initial(k + 1)
    stop = window_of(a)
    matrix, z0 = _with_constant(a, b, x0)
    size = 2 * n + 1

    def node_row(node: str) -> np.ndarray:
        row = np.zeros(size)
        kind, k = node[0], int(node[1:])
        if node == "n0":
            row[-1] = V_STEP
        elif kind == "n":
            row[n + k - 1] = 1.0
        else:  # a_k = v(k-1) - R i_k
            row[:] = node_row(f"n{k - 1}")
            row[k - 1] -= R_SERIES
        return row

    nodes = ([f"n{k}" for k in range(n + 1)] + [f"a{k}" for k in range(1, n + 1)]
             if scope == "every" else [f"n{n}"])
    lines = [f"# generated: {n}-section RLC ladder, 1 V step"
             + (", every store charged at t = 0" if initial else ""),
             "voltage source V from n0 to ground step 1 V"]
    for k in range(1, n + 1):
        current, voltage = ladder_initial(k)
        lines += [f"resistor  R{k} from n{k - 1} to a{k} 1 ohm",
                  f"inductor  L{k} from a{k} to n{k} 1 uH"
                  + (f", initially {current:g} A" if initial else ""),
                  f"capacitor C{k} from n{k} to ground 1 uF"
                  + (f", initially {voltage:g} V" if initial else "")]
    labels = [f"voltage at {node}" for node in nodes]
    lines += [f"resistor  Rload from n{n} to ground 1 ohm",
              "watch " + ", ".join(labels),
              f"window {stop:.6g} s"]
    return Case(f"ladder-{n}", "ladder", "initial" if initial else "rest", n,
                "\n".join(lines) + "\n", matrix, z0, np.array([node_row(x) for x in nodes]),
                labels, stop, scope, {"stores": 2 * n})


# --------------------------------------------------------------------------- chains


def chain_initial(k: int) -> tuple[float, float]:
    """Initial velocity (m/s) of mass ``k`` and preload (N) of link ``k``."""
    return ((k % 5) - 2) / 10, float(k % 3 + 1)


def chain(n: int, variant: str = "rest", scope: str = "every") -> Case:
    """``n`` masses in a chain; ``variant`` is "rest", "initial" or "gravity".

    State ``x = (x_1..x_n, v_1..v_n)``; watched: every mass's velocity, or the last.
    """
    a = np.zeros((2 * n, 2 * n))
    b = np.zeros(2 * n)
    x0 = np.zeros(2 * n)
    for j in range(n):
        a[j, n + j] = 1.0
    for j in range(n):  # link j, from mass j to mass j + 1 (or the frame)
        other = j + 1 if j < n - 1 else None
        preload = chain_initial(j + 1)[1] if variant == "initial" else 0.0
        for row, sign in ((j, -1.0), (other, 1.0)):
            if row is None:
                continue
            a[n + row, j] += sign * STIFFNESS / MASS
            a[n + row, n + j] += sign * DAMPING / MASS
            b[n + row] += sign * preload / MASS
            if other is not None:
                a[n + row, other] -= sign * STIFFNESS / MASS
                a[n + row, n + other] -= sign * DAMPING / MASS
    b[n] += F_STEP / MASS
    if variant == "gravity":
        b[n:] -= STANDARD_GRAVITY
    if variant == "initial":
        x0[n:] = [chain_initial(j + 1)[0] for j in range(n)]
    stop = window_of(a)
    matrix, z0 = _with_constant(a, b, x0)
    masses = list(range(1, n + 1)) if scope == "every" else [n]
    outputs = np.zeros((len(masses), 2 * n + 1))
    for row, k in enumerate(masses):
        outputs[row, n + k - 1] = 1.0
    lines = [f"# generated: {n} masses linked by springs and dampers, 1 N step on m1"]
    for k in range(1, n + 1):
        velocity = chain_initial(k)[0]
        lines.append(f"mass m{k} 1 kg" + (f", initially {velocity:g} m/s"
                                          if variant == "initial" else ""))
    for k in range(1, n + 1):
        other = f"m{k + 1}" if k < n else "frame"
        preload = chain_initial(k)[1]
        lines += [f"spring K{k} from m{k} to {other} 1 kN/m"
                  + (f", initially {preload:g} N" if variant == "initial" else ""),
                  f"damper D{k} from m{k} to {other} 50 N*s/m"]
    labels = [f"velocity of m{k}" for k in masses]
    lines += ["force source F at m1 step 1 N"]
    if variant == "gravity":
        lines.append("gravity")
    lines += ["watch " + ", ".join(labels), f"window {stop:.6g} s"]
    return Case(f"chain-{n}", "chain", variant, n, "\n".join(lines) + "\n", matrix, z0,
                outputs, labels, stop, scope, {"stores": 2 * n})


# --------------------------------------------------------------------------- random


def random_case(seed: int, nodes: int, name: str | None = None) -> Case:
    """A network of ``nodes`` nodes from the reference generator, every node watched.

    Its state equations come from that module's state-variable reference
    (``x' = A x + B u``, sources as states of their own), independent of the tool.
    """
    from tests.reference import random_networks as rn

    net = rn.generate(seed, min_nodes=nodes, max_nodes=nodes)
    return _random_from(net, name or f"random-{nodes}n-{seed}")


def random_with_elements(elements: int, seed: int, nodes: int) -> Case:
    """The network drawn from ``seed`` with ``nodes`` nodes, checked to have ``elements``.

    (Found once by trying seeds in order: drawing until the count matches takes
    a minute.)
    """
    from tests.reference import random_networks as rn

    net = rn.generate(seed, min_nodes=nodes, max_nodes=nodes)
    count = len(net.parts) + len(net.links)
    if count != elements:
        raise RuntimeError(f"seed {seed} with {nodes} nodes now draws {count} elements, "
                           f"not {elements}: the generator changed; pick a new seed")
    return _random_from(net, f"random-{elements}el-{seed}")


def _random_from(net, name: str) -> Case:
    from tests.reference import random_networks as rn

    labels = net.node_labels()
    model = rn.reference(net)
    stop = round_up(model.time_scale())  # the reference's own scale, as the window
    net.window = f"{stop:.6g} s"
    text = net.text(watch=labels)
    matrix, z0 = model.augmented()
    n = model.a.shape[0]
    rows = []
    for label in labels:
        cy, dy = model.outputs[label]
        rows.append(np.concatenate([cy, model.u_of_w.T @ dy]))
    stores = sum(1 for p in net.parts if p.role in "LC")
    # Periods of the fastest oscillation within the window, decay ignored: the tool
    # refuses a window holding more than 1e5 periods of one ringing (language guide).
    fastest = float(np.max(np.abs(np.linalg.eigvals(matrix).imag), initial=0.0))
    periods = stop * fastest / (2 * math.pi)
    return Case(name, "random", "initial", len(net.parts) + len(net.links), text, matrix, z0,
                np.array(rows).reshape(len(labels), n + len(model.w0)), labels, stop,
                "every", {"stores": stores, "nodes": len(net.nodes), "seed": net.seed,
                          "periods": periods})


# --------------------------------------------------------------------------- references


def exact_outputs(case: Case, times: np.ndarray) -> np.ndarray:
    """Outputs on a uniform grid by the exact one-step map ``z(t + h) = e^(M h) z(t)``."""
    step = float(times[1] - times[0])
    phi = scipy.linalg.expm(case.matrix * step)
    states = np.empty((len(times), len(case.z0)))
    states[0] = case.z0
    for k in range(1, len(times)):
        states[k] = phi @ states[k - 1]
    return case.outputs @ states.T


def ivp_outputs(case: Case, times: np.ndarray, method: str, rtol: float,
                atol: float) -> np.ndarray:
    """Outputs from ``scipy.integrate.solve_ivp`` on ``z' = M z``."""
    matrix = case.matrix

    def rhs(_t: float, z: np.ndarray) -> np.ndarray:
        return matrix @ z

    sol = scipy.integrate.solve_ivp(rhs, (0.0, float(times[-1])), case.z0, method=method,
                                    t_eval=times, rtol=rtol, atol=atol)
    if not sol.success:
        raise RuntimeError(sol.message)
    return case.outputs @ sol.y


def relative_difference(got: np.ndarray, want: np.ndarray) -> float:
    """Largest ``|got - want|`` over each quantity's range.

    A quantity that stays (nearly) constant is measured against 1e-6 of the
    largest value of all of them instead: its range may be rounding alone.
    """
    got, want = np.atleast_2d(got), np.atleast_2d(want)
    floor = 1e-6 * float(np.max(np.abs(want))) or 1.0
    worst = 0.0
    for x, y in zip(got, want, strict=True):
        span = max(float(np.ptp(y)), floor)
        worst = max(worst, float(np.max(np.abs(x - y))) / span)
    return worst
