"""Random connected lumped networks and an independent reference for them.

Shared by ``tests/reference/test_random_topologies.py`` and
``scripts/campaign.py``.  A network is drawn from a seed as a description
(:class:`Network`): two-terminal parts, couplings and parameters.  From that
description this module writes the netlist text and, separately, the state
equations, so the tool's model is never consulted.

The reference (textbook state-variable method, from memory): every domain is
written in one across/through analogy (voltage-current, velocity-force,
angular velocity-torque); a mass or inertia is a capacitance to the reference,
a spring is an inductance ``1/k``, a damper a conductance ``c``.  With each
capacitance replaced by a voltage source of its state and each inductance by a
current source of its state, the remaining resistive network (conductances,
sources, ideal couplings) is solved by modified nodal analysis with
``numpy.linalg``; that gives every capacitance's current and inductance's
voltage, hence ``x' = A x + B u``.  Constant and sine sources are states of
their own (``w' = S w``), and the augmented system is solved exactly with
``scipy.linalg.expm``.  The resistive network is non-singular exactly when
there is no loop of capacitances and across sources and no cut-set of
inductances and through sources; the generator keeps to such networks, so any
initial state is consistent (no impulses at t = 0).
"""

from __future__ import annotations

import contextlib
import itertools
import math
import random
import signal
from collections.abc import Callable, Iterator
from dataclasses import dataclass, field

import mpmath
import numpy as np
from scipy.linalg import expm

REFERENCES = {"electrical": "ground", "translational": "frame", "rotational": "frame"}
PREFIX = {"electrical": "e", "translational": "m", "rotational": "r"}
ACROSS_WORD = {"electrical": "voltage at", "translational": "velocity of",
               "rotational": "angular velocity of"}


@dataclass(frozen=True)
class KindSpec:
    """How one analogue role is written in one domain."""

    word: str
    letter: str
    unit: str
    factor: float  # SI value of one unit
    low: float  # range of the number written before the unit
    high: float
    analog: str  # how the SI value maps to the analogue: "same" or "inverse"
    initial_unit: str = ""
    initial_factor: float = 1.0
    initial_max: float = 0.0


# role -> domain -> spec.  Ranges keep every time constant within a few decades of 1 ms.
SPECS: dict[str, dict[str, KindSpec]] = {
    "G": {
        "electrical": KindSpec("resistor", "R", "ohm", 1.0, 1, 100, "inverse"),
        "translational": KindSpec("damper", "D", "N*s/m", 1.0, 10, 1000, "same"),
        "rotational": KindSpec("rotary damper", "B", "N*m*s/rad", 1.0, 0.01, 1, "same"),
    },
    "L": {
        "electrical": KindSpec("inductor", "L", "mH", 1e-3, 1, 100, "same", "A", 1.0, 2.0),
        "translational": KindSpec("spring", "K", "kN/m", 1e3, 1, 100, "inverse", "N", 1.0, 100.0),
        "rotational": KindSpec("torsion spring", "K", "N*m/rad", 1.0, 1, 100, "inverse",
                               "N*m", 1.0, 5.0),
    },
    "C": {
        "electrical": KindSpec("capacitor", "C", "uF", 1e-6, 1, 100, "same", "V", 1.0, 10.0),
        "translational": KindSpec("mass", "M", "kg", 1.0, 1, 100, "same", "m/s", 1.0, 2.0),
        "rotational": KindSpec("inertia", "J", "kg*m^2", 1.0, 0.001, 0.1, "same",
                               "rad/s", 1.0, 10.0),
    },
    "V": {
        "electrical": KindSpec("voltage source", "V", "V", 1.0, 1, 50, "same"),
        "translational": KindSpec("velocity source", "V", "m/s", 1.0, 0.1, 2, "same"),
        "rotational": KindSpec("angular velocity source", "W", "rad/s", 1.0, 1, 100, "same"),
    },
    "I": {
        "electrical": KindSpec("current source", "I", "A", 1.0, 0.1, 2, "same"),
        "translational": KindSpec("force source", "F", "N", 1.0, 10, 1000, "same"),
        "rotational": KindSpec("torque source", "T", "N*m", 1.0, 0.1, 10, "same"),
    },
}

STORE_THROUGH = {"electrical": "current in", "translational": "force in",
                 "rotational": "torque in"}


@dataclass
class Part:
    """One two-terminal element or source, ``from a to b``."""

    name: str
    role: str  # G, L, C, V or I (analogue role)
    domain: str
    a: str
    b: str
    value: float  # SI value as written (for sources: 0, see ``terms``)
    text: str  # the value (or waveform) as written
    initial: float | None = None
    initial_text: str = ""
    terms: tuple = ()  # source terms: ("const", amp) or ("sine", amp, omega, phase)
    at: bool = False  # written with ``at`` (the other end is the reference)

    @property
    def spec(self) -> KindSpec:
        return SPECS[self.role][self.domain]

    @property
    def analog(self) -> float:
        return 1.0 / self.value if self.spec.analog == "inverse" else self.value

    def line(self) -> str:
        word = self.spec.word
        ref = REFERENCES[self.domain]
        if self.at:
            node = self.b if self.role == "I" else self.a
            placement = f"at {node}"
            assert (self.b if self.role != "I" else self.a) == ref
        else:
            placement = f"from {self.a} to {self.b}"
        text = f"{word} {self.name} {placement} {self.text}"
        if self.initial is not None:
            text += f", initially {self.initial_text}"
        return text


@dataclass
class Link:
    """An ideal coupling; ``ratio`` is the factor N of across(from) = N across(to)."""

    name: str
    word: str
    a: str  # from (grounded port) or from-pair
    b: str  # to
    ratio: float  # N as the reference uses it
    text: str  # the factor as written ("ratio 2", "constant 0.1 V*s/rad", ...)
    a2: str | None = None  # floating windings: from (a, a2) to (b, b2)
    b2: str | None = None

    def line(self) -> str:
        if self.a2 is not None:
            return f"{self.word} {self.name} from ({self.a}, {self.a2}) to ({self.b}, {self.b2}) " \
                   f"{self.text}"
        return f"{self.word} {self.name} from {self.a} to {self.b} {self.text}"


@dataclass
class Network:
    """A random network: its parts, couplings, parameters and what to watch."""

    nodes: dict[str, str]  # node -> domain (no references)
    parts: list[Part] = field(default_factory=list)
    links: list[Link] = field(default_factory=list)
    lets: list[tuple[str, str]] = field(default_factory=list)
    window: str = ""
    seed: int | None = None

    # -- what is watched --------------------------------------------------------
    def node_labels(self) -> list[str]:
        return [f"{ACROSS_WORD[d]} {n}" for n, d in self.nodes.items()]

    def store_labels(self) -> list[str]:
        labels = []
        for p in self.parts:
            if p.role == "C" and p.domain == "electrical":
                labels.append(f"voltage across {p.name}")
            elif p.role == "L":
                labels.append(f"{STORE_THROUGH[p.domain]} {p.name}")
        return labels

    def labels(self) -> list[str]:
        return self.node_labels() + self.store_labels()

    def text(self, watch: list[str] | None = None) -> str:
        lines = [f"# random network, seed {self.seed}"]
        lines += [f"let {name} = {value}" for name, value in self.lets]
        lines += [p.line() for p in self.parts]
        lines += [k.line() for k in self.links]
        watch = self.labels() if watch is None else watch
        if watch:
            lines.append("watch " + ", ".join(watch))
        if self.window:
            lines.append(f"window {self.window}")
        return "\n".join(lines) + "\n"

    @property
    def has_sources(self) -> bool:
        return any(p.role in "VI" for p in self.parts)


# ---------------------------------------------------------------------------
# Writing values


_IRRATIONAL = True


def _number(rng: random.Random, low: float, high: float) -> tuple[str, float]:
    """A plain decimal in [low, high], as text and as the float it denotes."""
    x = math.exp(rng.uniform(math.log(low), math.log(high)))
    text = f"{x:.3g}"
    if "e" in text:
        text = f"{x:.6f}".rstrip("0").rstrip(".")
    return text, float(text)


def value_text(rng: random.Random, low: float, high: float, unit: str, factor: float,
               irrational: bool = True) -> tuple[str, float]:
    """A value with its unit, sometimes irrational; returns (text, SI value)."""
    form = rng.random()
    if not (irrational and _IRRATIONAL):
        # Plain or rational forms only; the draw count stays the same either way.
        form = form * 0.55 if form < 0.85 else form
    if form < 0.55:
        text, x = _number(rng, low, high)
        return f"{text} {unit}", x * factor
    if form < 0.7:
        k = rng.choice([2, 3, 5, 7, 10])
        text, x = _number(rng, low / math.sqrt(k), high / math.sqrt(k))
        return f"sqrt({k})*{text} {unit}", math.sqrt(k) * x * factor
    if form < 0.85:
        text, x = _number(rng, low / math.pi, high / math.pi)
        return f"pi*{text} {unit}", math.pi * x * factor
    d = rng.choice([3, 7, 9, 11])
    text, x = _number(rng, low * d, high * d)
    return f"{text} {unit}/{d}", x / d * factor


def signed_text(rng: random.Random, magnitude: float, unit: str) -> tuple[str, float]:
    """A signed initial value of at most ``magnitude`` (sometimes zero or irrational)."""
    if rng.random() < 0.1:
        return f"0 {unit}", 0.0
    text, x = value_text(rng, magnitude / 20, magnitude, unit, 1.0)
    if rng.random() < 0.5:
        return f"-{text}", -x
    return text, x


# ---------------------------------------------------------------------------
# Drawing a network


class _Forest:
    """Union-find over nodes, all references merged into one."""

    def __init__(self) -> None:
        self.parent: dict[str, str] = {}

    def find(self, node: str) -> str:
        node = "0" if node in ("ground", "frame") else node
        self.parent.setdefault(node, node)
        while self.parent[node] != node:
            self.parent[node] = self.parent[self.parent[node]]
            node = self.parent[node]
        return node

    def union(self, a: str, b: str) -> bool:
        ra, rb = self.find(a), self.find(b)
        if ra == rb:
            return False
        self.parent[ra] = rb
        return True


LAYOUTS = [
    ("electrical",), ("electrical",), ("translational",), ("rotational",),
    ("electrical", "rotational"), ("electrical", "electrical"),
    ("translational", "translational"), ("rotational", "rotational"),
    ("electrical", "rotational", "rotational"), ("electrical", "rotational", "translational"),
]
COUPLING_BETWEEN = {
    ("electrical", "electrical"): "transformer",
    ("translational", "translational"): "lever",
    ("rotational", "rotational"): "gear",
    ("electrical", "rotational"): "motor",
    ("rotational", "translational"): "rack",
}


def _coupling(rng: random.Random, name: str, a: str, da: str, b: str, db: str) -> Link:
    word = COUPLING_BETWEEN[(da, db)]
    if word == "motor":
        text, k = value_text(rng, 0.01, 1.0, "V*s/rad", 1.0)
        return Link(name, word, a, b, k, f"constant {text}")
    if word == "rack":
        # v(to) = R w(from), so across(from) = (1/R) across(to).
        text, r = value_text(rng, 0.005, 0.2, "m", 1.0)
        return Link(name, word, a, b, 1.0 / r, f"radius {text}")
    if word == "gear" and rng.random() < 0.3:
        word = "belt"
    text, n = value_text(rng, 0.3, 5.0, "", 1.0)
    return Link(name, word, a, b, n, f"ratio {text.strip()}")


def _source_text(rng: random.Random, spec: KindSpec, allow_sine: bool) -> tuple[str, tuple]:
    amp_text, amp = value_text(rng, spec.low, spec.high, spec.unit, spec.factor)
    if rng.random() < 0.5:
        amp_text, amp = "-" + amp_text, -amp
    form = rng.random()
    if form < 0.4 or not allow_sine:
        return f"step {amp_text}", (("const", amp),)
    if form < 0.6:
        return amp_text, (("const", amp),)
    f_text, f_hz = _number(rng, 20, 2000)
    ph_text, ph = _number(rng, 1, 90)
    s_text, s_amp = value_text(rng, spec.low, spec.high, spec.unit, spec.factor)
    sine = ("sine", s_amp, 2 * math.pi * f_hz, math.radians(ph))
    text = f"sine {s_text} at {f_text} Hz phase {ph_text} deg"
    if form < 0.8:
        return text, (sine,)
    return f"step {amp_text} plus {text}", (("const", amp), sine)


def generate(seed: int, *, sources: bool = True, min_nodes: int = 2, max_nodes: int = 10,
             allow_sine: bool = True, irrational: bool = True) -> Network:
    """Draw a connected network from ``seed`` (deterministic).

    Parameters
    ----------
    seed : int
        The whole network follows from it.
    sources : bool
        False for a passive network driven only by its initial state.
    min_nodes, max_nodes : int
        Bounds on the number of non-reference nodes.
    allow_sine : bool
        Whether sine terms may appear in source waveforms.
    irrational : bool
        Whether values may be written with ``sqrt(...)`` and ``pi``.
    """
    global _IRRATIONAL
    _IRRATIONAL = irrational
    rng = random.Random(seed)
    for _attempt in range(100):
        net = _draw(rng, sources, min_nodes, max_nodes, allow_sine)
        if net is not None and regular(net) and spread(net) <= MAX_SPREAD:
            net.seed = seed
            return net
    raise RuntimeError(f"no regular network drawn from seed {seed}")


def _draw(rng: random.Random, sources: bool, min_nodes: int, max_nodes: int,
          allow_sine: bool) -> Network | None:
    layout = rng.choice([lay for lay in LAYOUTS if len(lay) <= max_nodes])
    total = rng.randint(max(min_nodes, len(layout)), max_nodes)
    sizes = [1] * len(layout)
    for _ in range(total - len(layout)):
        sizes[rng.randrange(len(layout))] += 1
    nodes: dict[str, str] = {}
    islands: list[list[str]] = []
    count = {d: 0 for d in PREFIX}
    for domain, size in zip(layout, sizes, strict=True):
        island = []
        for _ in range(size):
            count[domain] += 1
            name = f"{PREFIX[domain]}{count[domain]}"
            nodes[name] = domain
            island.append(name)
        islands.append(island)
    net = Network(nodes)
    cv = _Forest()
    serial = iter(range(1, 1000))

    def new_part(role: str, domain: str, a: str, b: str) -> Part:
        spec = SPECS[role][domain]
        name = f"{spec.letter}{next(serial)}"
        ref = REFERENCES[domain]
        if role in "VI":
            text, terms = _source_text(rng, spec, allow_sine)
            part = Part(name, role, domain, a, b, 0.0, text, terms=terms)
        else:
            text, value = value_text(rng, spec.low, spec.high, spec.unit, spec.factor)
            if rng.random() < 0.1:
                param = f"P{name}"
                net.lets.append((param, text))
                text = param
            part = Part(name, role, domain, a, b, value, text)
            if role in "LC":
                part.initial_text, part.initial = signed_text(rng, spec.initial_max,
                                                              spec.initial_unit)
        if role == "C" and domain != "electrical":
            part.at = True  # masses and inertias always sit on a node, to the frame
            if part.a == ref:
                part.a, part.b = part.b, part.a
        elif ref in (a, b) and rng.random() < 0.5:
            # `at NODE`: from NODE to the reference (through sources: the other way).
            node = a if b == ref else b
            part.a, part.b = ((ref, node) if role == "I" else (node, ref))
            part.at = True
        return part

    def allowed_roles(domain: str, a: str, b: str) -> list[str]:
        ref = REFERENCES[domain]
        roles = ["G", "G", "L", "I"] if sources else ["G", "G", "L"]
        free = cv.find(a) != cv.find(b)
        if free and (domain == "electrical" or ref in (a, b)):
            roles += ["C", "C"]
        if free and sources:
            roles += ["V"]
        return roles

    # A backbone tree per island over non-(L, I) parts, so that no cut-set is made
    # of inductances and through sources alone.
    for island in islands:
        domain = nodes[island[0]]
        ref = REFERENCES[domain]
        order = island[:]
        rng.shuffle(order)
        placed = [ref]
        for node in order:
            other = rng.choice(placed)
            roles = [r for r in allowed_roles(domain, node, other) if r in "GCV"]
            role = rng.choice(roles)
            a, b = (node, other) if rng.random() < 0.7 else (other, node)
            part = new_part(role, domain, a, b)
            if role in "CV":
                cv.union(part.a, part.b)
            net.parts.append(part)
            placed.append(node)
    # Couplings join the islands (and sometimes two nodes of one island).
    for left, right in itertools.pairwise(islands):
        options = [(a, b) for a in left for b in right if cv.find(a) != cv.find(b)]
        if not options:
            return None
        a, b = rng.choice(options)
        cv.union(a, b)
        net.links.append(_coupling(rng, f"X{next(serial)}", a, nodes[a], b, nodes[b]))
    for island in islands:
        if len(island) >= 2 and rng.random() < 0.25:
            a, b = rng.sample(island, 2)
            if cv.find(a) != cv.find(b):
                cv.union(a, b)
                domain = nodes[a]
                net.links.append(_coupling(rng, f"X{next(serial)}", a, domain, b, domain))
    electrical = [n for n, d in nodes.items() if d == "electrical"]
    if len(electrical) >= 3 and rng.random() < 0.2:
        # Floating windings: the voltage a - a2 follows b - b2.
        a, a2, b = rng.sample(electrical, 3)
        text, n = value_text(rng, 0.3, 5.0, "", 1.0)
        net.links.append(Link(f"X{next(serial)}", "transformer", a, b, n, f"ratio {text.strip()}",
                              a2=a2, b2="ground"))
    # Extra parts make meshes, bridges, parallel stores and floating sources.
    for _ in range(rng.randint(0, len(nodes) + 3)):
        island = rng.choice(islands)
        domain = nodes[island[0]]
        ends = [*island, REFERENCES[domain]]
        a, b = rng.sample(ends, 2)
        role = rng.choice(allowed_roles(domain, a, b))
        part = new_part(role, domain, a, b)
        if role in "CV":
            cv.union(part.a, part.b)
        net.parts.append(part)
    if sources and not net.has_sources and rng.random() < 0.7:
        return None
    if rng.random() < 0.3:
        net.window = "5 ms"
    return net


# ---------------------------------------------------------------------------
# The reference


@dataclass
class StateModel:
    """x' = A x + B u, outputs y = Cy x + Dy u, sources u = U w, w' = S w."""

    a: np.ndarray
    b: np.ndarray
    x0: np.ndarray
    outputs: dict[str, tuple[np.ndarray, np.ndarray]]
    u_of_w: np.ndarray
    s: np.ndarray
    w0: np.ndarray
    energy_weights: np.ndarray  # stored energy = sum(weights * x**2)
    precise: bool = False  # arrays of mpmath numbers; evaluate under PRECISE_DIGITS

    def augmented(self) -> tuple[np.ndarray, np.ndarray]:
        n, m = self.a.shape[0], self.s.shape[0]
        big = np.zeros((n + m, n + m), dtype=object if self.precise else float)
        big[:n, :n] = self.a
        big[:n, n:] = self.b @ self.u_of_w
        big[n:, n:] = self.s
        return big, np.concatenate([self.x0, self.w0])

    def simulate(self, times: np.ndarray) -> dict[str, np.ndarray]:
        """Every output at ``times`` (exact up to rounding: matrix exponential)."""
        big, z0 = self.augmented()
        n = self.a.shape[0]
        states = np.empty((len(times), len(z0)))
        if self.precise:
            states = states.astype(object)
        for k, t in enumerate(times):
            states[k] = _exponential(big * t, self.precise) @ z0
        xs, ws = states[:, :n], states[:, n:]
        us = ws @ self.u_of_w.T
        return {label: xs @ cy + us @ dy for label, (cy, dy) in self.outputs.items()}

    def states(self, times: np.ndarray) -> np.ndarray:
        big, z0 = self.augmented()
        n = self.a.shape[0]
        return np.array([(_exponential(big * t, self.precise) @ z0)[:n] for t in times])

    def time_scale(self) -> float:
        """About five of the slowest time constants (or periods) of the network."""
        rates = _live_rates(self.a) + _live_rates(self.s)
        if not rates:
            return 1e-3
        return 5.0 / min(rates)


# Digits of the precise reference, used to re-check a disagreement: a float
# reference loses digits on ill-conditioned solves and on long sine phases.
PRECISE_DIGITS = 40


def _exponential(matrix: np.ndarray, precise: bool) -> np.ndarray:
    if not precise:
        return expm(matrix)
    return np.array(mpmath.expm(mpmath.matrix(matrix.tolist())).tolist(), dtype=object)


def _solve(matrix: np.ndarray, rhs: np.ndarray, precise: bool) -> np.ndarray:
    if not precise:
        return np.linalg.solve(matrix, rhs)
    inverse = mpmath.inverse(mpmath.matrix(matrix.tolist()))
    return np.array((inverse * mpmath.matrix(rhs.tolist())).tolist(), dtype=object)


class SingularNetworkError(Exception):
    """The resistive network left with stores replaced by sources is singular."""


def _resistive(net: Network):
    """MNA of the resistive network; returns (matrix, rhs, layout)."""
    nodes = list(net.nodes)
    index = {n: k for k, n in enumerate(nodes)}
    caps = [p for p in net.parts if p.role == "C"]
    inds = [p for p in net.parts if p.role == "L"]
    srcs = [p for p in net.parts if p.role in "VI"]
    n_x = len(caps) + len(inds)
    n_u = len(srcs)
    vbranches = [p for p in net.parts if p.role in "CV"]
    size = len(nodes) + len(vbranches) + len(net.links)
    mat = np.zeros((size, size))
    rhs = np.zeros((size, n_x + n_u))  # columns: states (caps, then inductors), sources
    col = {p.name: k for k, p in enumerate(caps + inds)}
    col.update({p.name: n_x + k for k, p in enumerate(srcs)})

    def idx(node: str) -> int | None:
        return index.get(node)

    for p in net.parts:
        a, b = idx(p.a), idx(p.b)
        if p.role == "G":
            g = p.analog
            for i, j, v in ((a, a, g), (b, b, g), (a, b, -g), (b, a, -g)):
                if i is not None and j is not None:
                    mat[i, j] += v
        elif p.role in "LI":
            # Through j flows a -> part -> b: it leaves a and enters b.
            if a is not None:
                rhs[a, col[p.name]] -= 1
            if b is not None:
                rhs[b, col[p.name]] += 1
    row = len(nodes)
    vrow = {}
    for p in vbranches:
        a, b = idx(p.a), idx(p.b)
        if a is not None:
            mat[a, row] += 1
            mat[row, a] += 1
        if b is not None:
            mat[b, row] -= 1
            mat[row, b] -= 1
        rhs[row, col[p.name]] = 1
        vrow[p.name] = row
        row += 1
    for link in net.links:
        # Port current i1 flows a -> coupling -> a2 (the reference when grounded);
        # the to-port's through is -N i1 (lossless); across(a) - across(a2) = N (b - b2).
        n = link.ratio
        a, a2 = idx(link.a), idx(link.a2) if link.a2 else None
        b, b2 = idx(link.b), idx(link.b2) if link.b2 else None
        for node, coef in ((a, 1.0), (a2, -1.0), (b, -n), (b2, n)):
            if node is not None:
                mat[node, row] += coef
                mat[row, node] += coef
        row += 1
    return mat, rhs, index, vrow, caps, inds, srcs


def regular(net: Network) -> bool:
    """True when the network's stores are independent (no C/V loop, no L/I cut-set)."""
    mat = _resistive(net)[0]
    if mat.size == 0:
        return False
    return np.linalg.cond(mat) < 1e10


def reference(net: Network, precise: bool = False) -> StateModel:
    """The state model of ``net``, built from its description alone.

    With ``precise``, the arrays hold mpmath numbers; build and use such a model
    inside ``mpmath.workdps(PRECISE_DIGITS)``.
    """
    mat, rhs, index, vrow, caps, inds, srcs = _resistive(net)
    if np.linalg.cond(mat) > 1e10:
        raise SingularNetworkError(net.text())
    sol = _solve(mat, rhs, precise)  # rows: node across values and branch throughs
    n_x = len(caps) + len(inds)
    n_u = len(srcs)

    def across(node: str) -> np.ndarray:
        k = index.get(node)
        return np.zeros(n_x + n_u) if k is None else sol[k]

    rows = []
    for p in caps:
        rows.append(sol[vrow[p.name]] / p.analog)  # C dv/dt = i
    for p in inds:
        rows.append((across(p.a) - across(p.b)) / p.analog)  # L di/dt = v
    full = np.array(rows).reshape(n_x, n_x + n_u)
    # Entries at rounding level of the solve are zeros: left in, a diagonal of 4e-15
    # beside a 0 makes scipy's expm of the (triangular) augmented matrix lose the
    # coupling between them (e^d - 1 rounds to 0 over d), and a ramp vanishes.
    if full.size and not precise:
        full[np.abs(full) < 1e-12 * np.abs(full).max()] = 0.0
    a_mat, b_mat = full[:, :n_x], full[:, n_x:]
    x0 = np.array([p.initial for p in caps + inds], dtype=float)
    outputs: dict[str, tuple[np.ndarray, np.ndarray]] = {}
    for node, domain in net.nodes.items():
        y = across(node)
        outputs[f"{ACROSS_WORD[domain]} {node}"] = (y[:n_x], y[n_x:])
    for k, p in enumerate(caps + inds):
        e = np.zeros(n_x)
        e[k] = 1.0
        if p.role == "C" and p.domain == "electrical":
            outputs[f"voltage across {p.name}"] = (e, np.zeros(n_u))
        elif p.role == "L":
            outputs[f"{STORE_THROUGH[p.domain]} {p.name}"] = (e, np.zeros(n_u))
    # Sources as states: w = (1, sin_1, cos_1, sin_2, cos_2, ...).
    u_rows = []
    for p in srcs:
        u_rows.append(p.terms)
    sines = [t for terms in u_rows for t in terms if t[0] == "sine"]
    m = 1 + 2 * len(sines)
    s_mat = np.zeros((m, m))
    w0 = np.zeros(m)
    w0[0] = 1.0
    u_of_w = np.zeros((n_u, m))
    k = 0
    for i, terms in enumerate(u_rows):
        for term in terms:
            if term[0] == "const":
                u_of_w[i, 0] += term[1]
            else:
                _, amp, omega, phase = term
                j = 1 + 2 * k
                s_mat[j, j + 1] = omega  # d/dt sin(wt + p) = w cos(wt + p)
                s_mat[j + 1, j] = -omega
                w0[j], w0[j + 1] = math.sin(phase), math.cos(phase)
                u_of_w[i, j] += amp
                k += 1
    weights = np.array([0.5 * p.analog for p in caps + inds])
    if precise:
        s_mat, w0, u_of_w = (array.astype(object) for array in (s_mat, w0, u_of_w))
    return StateModel(a_mat, b_mat, x0, outputs, u_of_w, s_mat, w0, weights, precise)


# Largest ratio of the fastest to the slowest mode drawn.  The reference works in
# floating point: its state matrix carries errors of about eps * |A|, which over
# the window (five slowest time constants) move a slow or conserved mode by about
# eps * spread * 5 of its size; 1e7 keeps that near 1e-8, well inside the tolerance.
MAX_SPREAD = 1e7


def spread(net: Network) -> float:
    """Fastest over slowest non-zero mode of the network (1 without stores)."""
    a = reference(net).a
    if a.size == 0:
        return 1.0
    rates = _live_rates(a)
    return max(rates) / min(rates) if rates else 1.0


def _live_rates(matrix: np.ndarray) -> list[float]:
    """Magnitudes of the eigenvalues that are not zero within rounding.

    Modes within rounding of zero (relative to the matrix's norm, the scale of
    eigenvalue rounding) are conserved quantities (charge of a capacitor cut-set,
    flux of an inductor loop), not slow modes; the spread filter and the time
    scale must agree on this.  A true mode that slow would exceed MAX_SPREAD anyway,
    and the drawn values keep true rates far above 1e-9 per second.
    """
    if matrix.size == 0:
        return []
    norm = float(np.linalg.norm(matrix, ord=np.inf))
    sizes = np.abs(np.linalg.eigvals(matrix))
    # Also an absolute floor: when every true mode is zero, the norm is rounding too.
    return [float(z) for z in sizes if z > max(1e-10 * norm, 1e-9)]


def sample_times(scale: float) -> np.ndarray:
    """Times from 0 to ``scale``: uniform, plus log-spaced near 0 for fast modes."""
    return np.unique(np.concatenate([np.linspace(0.0, scale, 121),
                                     np.geomspace(scale * 1e-5, scale, 60)]))


# ---------------------------------------------------------------------------
# Comparing the tool with the reference


@dataclass
class Comparison:
    """Outcome of one network: 'agree', 'disagree', 'refused' or 'error'."""

    status: str
    detail: str = ""
    worst: float = 0.0  # worst error as a fraction of the quantity's range
    label: str = ""


def compare(net: Network, tolerance: float = 1e-6) -> Comparison:
    """Run the tool on ``net`` and compare every watched quantity with the reference.

    Unexpected exceptions propagate to the caller (they are failures).
    """
    import lumped
    from lumped.errors import LumpedError

    text = net.text()
    model = reference(net)
    try:
        analysis = lumped.analyse(lumped.loads(text))
    except LumpedError as error:
        return Comparison("refused", f"{type(error).__name__}: {error}")
    times = sample_times(model.time_scale())
    outcome = _judge(analysis, times, model.simulate(times), tolerance)
    if outcome.status == "disagree" and not math.isinf(outcome.worst):
        # Before calling it a fault of the tool, rule out the float reference's own
        # rounding (ill-conditioned solves, long sine phases): re-run it at 40 digits.
        with mpmath.workdps(PRECISE_DIGITS):
            precise = reference(net, precise=True).simulate(times)
            expected = {label: np.array(values, dtype=float)
                        for label, values in precise.items()}
        outcome = _judge(analysis, times, expected, tolerance)
    return outcome


def _judge(analysis, times: np.ndarray, expected: dict[str, np.ndarray],
           tolerance: float) -> Comparison:
    overall = max(float(np.max(np.abs(v))) for v in expected.values()) if expected else 1.0
    worst = Comparison("agree")
    for label, want in expected.items():
        result = analysis.result(label)
        if result.time is None:
            return Comparison("disagree", f"{label}: no time response ({result.problem})",
                              math.inf, label)
        got = np.asarray(result.time.evaluate(times), dtype=float)
        span = float(np.ptp(want))
        allowed = tolerance * span + 1e-9 * overall + 1e-300
        error = float(np.max(np.abs(got - want)))
        ratio = error / allowed * tolerance
        if not np.all(np.isfinite(got)) or error > allowed:
            k = int(np.argmax(np.abs(got - want)))
            return Comparison(
                "disagree",
                f"{label}: at t = {times[k]:.6g} s the tool gives {got[k]:.10g}, the reference "
                f"{want[k]:.10g} (range {span:.4g}); closed form {result.time.expression}",
                ratio, label)
        if ratio > worst.worst:
            worst = Comparison("agree", "", ratio, label)
    return worst


def energy_profile(net: Network, points: int = 400) -> tuple[np.ndarray, np.ndarray, float]:
    """Stored energy at ``points`` times from the tool's closed forms.

    Returns (times, energy, initial energy from the description).
    """
    import lumped

    analysis = lumped.analyse(lumped.loads(net.text()))
    model = reference(net)
    times = np.linspace(0.0, model.time_scale(), points)
    energy = np.zeros(points)
    for p in net.parts:
        if p.role == "C":
            label = (f"voltage across {p.name}" if p.domain == "electrical"
                     else f"{ACROSS_WORD[p.domain]} {p.a}")
            x = analysis.result(label).time.evaluate(times)
            energy += 0.5 * p.analog * np.asarray(x, dtype=float) ** 2  # C v^2/2, m v^2/2
        elif p.role == "L":
            x = analysis.result(f"{STORE_THROUGH[p.domain]} {p.name}").time.evaluate(times)
            energy += 0.5 * p.analog * np.asarray(x, dtype=float) ** 2  # L i^2/2, F^2/(2k)
    initial = sum(0.5 * p.analog * p.initial ** 2 for p in net.parts if p.role in "LC")
    return times, energy, initial


@contextlib.contextmanager
def time_limit(seconds: int, expired: Callable[[], BaseException]) -> Iterator[None]:
    """Raise ``expired()`` in the main thread once ``seconds`` have passed (POSIX alarm)."""

    def expire(signum, frame):
        raise expired()

    previous = signal.signal(signal.SIGALRM, expire)
    signal.alarm(seconds)
    try:
        yield
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, previous)
