"""Run every stage for a netlist: responses, closed forms, figures, verdicts, cautions.

Examples
--------
>>> from lumped.api import loads
>>> net = loads('''
... voltage source V at a step 10 V
... resistor R from a to b 1 kohm
... capacitor C from b to ground 1 uF
... watch voltage at b
... window 5 ms
... require final value of voltage at b between 9.9 V and 10.1 V
... ''')
>>> result = analyse(net)
>>> round(result.results[0].figures.final, 6)
10.0
>>> result.passed
True
"""

from __future__ import annotations

import functools
import math
from dataclasses import dataclass

import sympy

from lumped import model as m
from lumped.constants import STANDARD_GRAVITY, s
from lumped.errors import NetlistError, ParametersNeeded, UnknownQuantityError
from lumped.figures import Figures, Verdict, compute_figures, energy_dissipated, judge
from lumped.inversion import TimeResponse, invert
from lumped.network import Response, Solution, assemble
from lumped.topology import Topology, falling_masses, validate

# Extra-low-voltage limit for DC (common practice, from memory: 60 V ripple-free DC).
ELV_DC_LIMIT = 60.0
_MAX_DISSIPATORS = 12

GENERAL_CAUTION = (
    "These results describe an idealised linear lumped model. Applicable standards, local "
    "codes, physical testing and licensed engineering review govern any design where a "
    "voltage, stored energy, a drop or a suspension can hurt someone."
)


@dataclass(frozen=True)
class QuantityResult:
    """One watched quantity: s-domain response, closed form and figures."""

    quantity: m.Quantity
    response: Response
    time: TimeResponse | None
    figures: Figures | None
    problem: str | None = None  # why there is no time response (parameters need values)

    @property
    def unit(self) -> str:
        return self.response.unit


@dataclass(frozen=True)
class Dissipation:
    element: str
    energy: float  # joules over the window


@dataclass(frozen=True)
class DropResult:
    """What a drop does to the body (SI; compression positive)."""

    mass: str
    height: float
    contact_velocity: float
    max_compression: float | None
    compression_time: float | None
    peak_deceleration: float | None  # m/s^2, upwards
    deceleration_time: float | None
    separation_time: float | None  # when the contact force would turn tensile
    rebound_velocity: float | None
    falling: tuple[str, ...] = ()  # every mass that falls with the body, the body first


@dataclass(frozen=True)
class Analysis:
    """Everything the report needs about one netlist."""

    netlist: m.Netlist
    solution: Solution
    start: float
    stop: float
    results: tuple[QuantityResult, ...]
    verdicts: tuple[Verdict, ...]
    cautions: tuple[str, ...]
    notes: tuple[str, ...] = ()
    dissipation: tuple[Dissipation, ...] = ()
    stored_energy: float | None = None  # joules at t = 0
    drops: tuple[DropResult, ...] = ()
    window_chosen: bool = False
    window_rule: str = ""  # how the tool chose the window, when it did

    @property
    def passed(self) -> bool:
        """True when no requirement failed (an unjudgeable one counts as failed)."""
        return all(v.passed for v in self.verdicts)

    def result(self, label: str) -> QuantityResult:
        """The result for a quantity label such as ``'voltage at sw'``."""
        for item in self.results:
            if item.quantity.label == label:
                return item
        raise UnknownQuantityError(label, [item.quantity.label for item in self.results])


def _invert(response: Response) -> TimeResponse:
    return invert(response.transform, s)  # invert makes irrational numbers rational


def _network_pole_test(solution: Solution):
    """A test for "is p a root of the network's characteristic polynomial?".

    None when the polynomial has parameters; then every pole counts.
    """
    import mpmath

    den = solution.denominator
    if den.free_symbols - {s}:
        return None
    coefficients = [mpmath.mpf(int(c.p)) / int(c.q) for c in
                    (sympy.Rational(x) for x in den.all_coeffs())]

    @functools.lru_cache(maxsize=4096)  # every response of the network asks about the same poles
    def own(pole: complex) -> bool:
        with mpmath.workdps(40):
            z = mpmath.mpc(pole.real, pole.imag)
            value = mpmath.polyval(coefficients, z)
            scale = mpmath.polyval([abs(c) for c in coefficients], abs(z))
            return bool(abs(value) <= 1e-8 * scale)

    return own


# The automatic window: the transients settling (several of the slowest decaying time
# constants) plus a few periods of what goes on for ever (common practice, no source).
_WINDOW_TIME_CONSTANTS = 6
_WINDOW_PERIODS = 3
_WINDOW_GROWTH_TIMES = 5


def _seconds(value: float) -> str:
    """A time for a sentence, with an SI prefix (3 significant figures)."""
    for factor, prefix in ((1.0, ""), (1e-3, "m"), (1e-6, "µ"), (1e-9, "n"), (1e-12, "p")):
        if value >= factor * 0.9995:
            return f"{value / factor:.3g} {prefix}s"
    return f"{value:.3g} s"


def _default_window(times: list[TimeResponse],
                    netlist: m.Netlist) -> tuple[float, float, str]:
    """The window a reader wants when the netlist gives none, and the rule that chose it.

    The slowest decaying pole sets the settling part (the network's or a
    source's: both must have died out).  Poles on the imaginary axis, the
    network's or a source's, add a few periods; a pole at 0 (a conserved charge
    or momentum, a constant) adds nothing; a pole is on the axis only when the
    inversion certified it there (real part exactly 0).  Growing modes add a
    few growth times.  Everything starts after the last switching instant.
    """
    tau = 0.0
    growth = math.inf
    periods: list[float] = []
    delays = [0.0]
    for time in times:
        for mode in time.modes:
            if not any(c != 0 for c in mode.coefficients):
                continue
            delays.append(float(mode.delay))
            pole = complex(mode.pole)
            if pole == 0:
                continue  # a constant or a conserved quantity: no time scale
            if pole.real == 0:
                periods.append(2 * math.pi / abs(pole.imag))
            elif pole.real > 0:
                growth = min(growth, 1 / pole.real)
            else:
                tau = max(tau, -1 / pole.real)
    for element in netlist.elements:
        for term in element.waveform.terms if element.waveform else ():
            if term.delay.is_number:
                delays.append(float(term.delay))
    parts, rules = [], []
    if tau > 0:
        parts.append(_WINDOW_TIME_CONSTANTS * tau)
        rules.append(f"{_WINDOW_TIME_CONSTANTS} times the slowest decaying time constant "
                     f"({_seconds(tau)})")
    if periods:
        parts.append(_WINDOW_PERIODS * max(periods))
        rules.append(f"{_WINDOW_PERIODS} periods of the slowest sustained oscillation "
                     f"({_seconds(max(periods))} each)")
    if math.isfinite(growth):
        parts.append(_WINDOW_GROWTH_TIMES * growth)
        rules.append(f"{_WINDOW_GROWTH_TIMES} growth times of the fastest-growing mode "
                     f"({_seconds(growth)})")
    if not parts:
        parts.append(1.0)
        rules.append("1 s (the response has no time scale of its own)")
    last = max(delays)
    rule = " plus ".join(rules)
    if last > 0:
        rule = f"the last switching instant ({_seconds(last)}) plus " + rule
    return 0.0, last + sum(parts), rule


# The most periods of one ringing mode a window may hold while the mode lasts.
# Beyond this the review figures would have to follow each period, and past
# about 1e9 radians double precision no longer knows the phase at all.
MOST_PERIODS = 100_000
# A mode has died out once its envelope fell by e^-37 (below double resolution).
_DECAYED = 37.0


def ringing_beyond_window(poles, start: float, stop: float) -> tuple[float, float] | None:
    """The fastest ringing that lasts more than :data:`MOST_PERIODS` periods in the window.

    Parameters
    ----------
    poles : iterable of (complex, float)
        Each pole with the delay at which its term starts.
    start, stop : float
        The window, in seconds.

    Returns
    -------
    (period, periods) or None
        The ringing period in seconds and how many periods it lasts within the
        window, for the worst mode; None when every mode is within the limit.

    Examples
    --------
    >>> period, periods = ringing_beyond_window([(-1 + 1e12j, 0.0)], 0.0, 5.0)
    >>> f"{period:.3g} s, {periods:.3g} periods"
    '6.28e-12 s, 7.96e+11 periods'
    >>> ringing_beyond_window([(-1 + 10j, 0.0)], 0.0, 5.0) is None
    True
    """
    worst = None
    for pole, delay in poles:
        omega = abs(complex(pole).imag)
        if omega == 0 or not math.isfinite(omega):
            continue
        decay = -complex(pole).real
        ends = min(stop, delay + _DECAYED / decay) if decay > 0 else stop
        alive = ends - max(start, delay)
        if alive <= 0:
            continue
        periods = omega * alive / (2 * math.pi)
        if periods > MOST_PERIODS and (worst is None or periods > worst[1]):
            worst = (2 * math.pi / omega, periods)
    return worst


def refuse_unresolvable(netlist: m.Netlist, times: list[TimeResponse | None], start: float,
                        stop: float, window_rule: str = "") -> None:
    """Refuse a network whose fastest ringing the window cannot follow (see MOST_PERIODS).

    Raises
    ------
    NetlistError
        Naming the ringing period and the window; at the ``window`` line when
        the netlist has one.

    Examples
    --------
    >>> from lumped.api import loads
    >>> try:
    ...     analyse(loads("capacitor C at a 1 pF\\ninductor L at a 1 pH, initially 1 A\\n"
    ...                   "resistor R at a 1 Gohm\\nwatch voltage at a\\nwindow 1 s\\n"))
    ... except Exception as error:
    ...     print(error.message.split(" within")[0])
    the network rings with a period of 6.28e-12 s for about 1.18e+10 periods
    """
    poles = [(mode.pole, float(mode.delay)) for time in times if time is not None
             for mode in time.modes]
    worst = ringing_beyond_window(poles, start, stop)
    if worst is None:
        return
    period, periods = worst
    window = netlist.window
    chosen = f" (chosen by the tool: {window_rule})" if window_rule else ""
    raise NetlistError(
        f"the network rings with a period of {period:.3g} s for about {periods:.3g} periods "
        f"within the window of {stop - start:.3g} s{chosen}; the tool follows at most "
        f"{MOST_PERIODS:.0e} periods of one ringing, so these two time scales are too far "
        "apart to solve here",
        window.location if window is not None else None,
        hint="check the values that set the ringing and the slow decay (a stiffness, a "
        "constant or a damping many decades off?), or "
        + ("give a `window`" if window_rule else "shorten the window")
        + f" of a few periods, e.g. `window {10 * period:.3g} s`",
    ).with_text(netlist.text)


def _quantities(netlist: m.Netlist) -> list[m.Quantity]:
    seen: dict[str, m.Quantity] = {}
    for quantity in (*netlist.watches, *(r.quantity for r in netlist.requirements)):
        seen.setdefault(quantity.label, quantity)
    return list(seen.values())


def analyse(network: m.Netlist | Topology) -> Analysis:
    """Solve a network and measure every watched or required quantity.

    Parameters
    ----------
    network : Netlist or Topology
        A netlist from :func:`lumped.api.load` or :func:`lumped.api.loads`
        (validated here), or the :class:`~lumped.topology.Topology` that
        :func:`lumped.topology.validate` returned (not validated again).

    Returns
    -------
    Analysis
    """
    topology = network if isinstance(network, Topology) else validate(network)
    netlist = topology.netlist
    solution = assemble(topology)
    quantities = _quantities(netlist)
    if not quantities:
        quantities = _default_quantities(topology)
    responses = [solution.response(q) for q in quantities]
    times: list[TimeResponse | None] = []
    problems: list[str | None] = []
    for response in responses:
        try:
            times.append(_invert(response))
            problems.append(None)
        except ParametersNeeded as needed:
            times.append(None)
            names = ", ".join(sorted(str(p) for p in needed.parameters))
            problems.append(f"the time response needs values for {names} "
                            "(the denominator is above second order in s)")
    window_chosen = netlist.window is None or not (
        netlist.window.start.is_number and netlist.window.stop.is_number)
    window_rule = ""
    if window_chosen:
        start, stop, window_rule = _default_window([t for t in times if t is not None],
                                                   netlist)
    else:
        start, stop = float(netlist.window.start), float(netlist.window.stop)
    refuse_unresolvable(netlist, times, start, stop, window_rule)  # never left running
    band = float(netlist.settling_band)
    own_pole = _network_pole_test(solution)
    results = []
    for quantity, response, time, problem in zip(quantities, responses, times, problems,
                                                 strict=True):
        figures = None
        if time is not None and not time.parameters:
            figures = compute_figures(time, start, stop, band=band, kind=quantity.kind,
                                      own_pole=own_pole)
        elif time is not None and problem is None:
            names = ", ".join(sorted(str(p) for p in time.parameters))
            problem = f"figures need values for {names}"
        results.append(QuantityResult(quantity, response, time, figures, problem))
    by_label = {r.quantity.label: r for r in results}
    verdicts = []
    for requirement in netlist.requirements:
        result = by_label[requirement.quantity.label]
        if result.figures is None:
            verdicts.append(Verdict(requirement, None, None, None, None, None,
                                    result.problem or "no figures"))
        else:
            verdicts.append(judge(requirement, result.figures, result.time))
    dissipation = _dissipation(netlist, solution, start, stop)
    stored = _stored_energy(netlist)
    drops = _drop_figures(netlist, solution, start, stop)
    cautions = _cautions(netlist, solution, results, verdicts, drops, start, stop)
    return Analysis(
        netlist=netlist,
        solution=solution,
        start=start,
        stop=stop,
        results=tuple(results),
        verdicts=tuple(verdicts),
        cautions=tuple(cautions),
        notes=tuple(getattr(solution, "notes", ())),
        dissipation=tuple(dissipation),
        drops=tuple(drops),
        stored_energy=stored,
        window_chosen=window_chosen,
        window_rule=window_rule,
    )


def _default_quantities(topology: Topology) -> list[m.Quantity]:
    """Without watch lines: the across value of every node."""
    return [m.Quantity(domain.watched_by_default, node, "at")
            for node, domain in topology.domains.items() if node not in m.REFERENCE_NODES]


def _dissipation(netlist: m.Netlist, solution: Solution, start: float,
                 stop: float) -> list[Dissipation]:
    dissipators = [e for e in netlist.elements if e.kind.role is m.Role.DISSIPATOR]
    if len(dissipators) > _MAX_DISSIPATORS:
        return []
    found = []
    for element in dissipators:
        if element.value is None or element.value.free_symbols:
            continue
        through = m.Quantity(element.domain.through_kind, element.name, "in")
        response = solution.response(through)
        try:
            time = _invert(response)
        except ParametersNeeded:
            continue
        if time.parameters:
            continue
        value = float(element.value)
        # Resistors: R i^2.  Dampers: F^2 / c (the value is the damping coefficient).
        coefficient = value if element.domain is m.Domain.ELECTRICAL else 1 / value
        found.append(Dissipation(element.name, energy_dissipated(time, coefficient, start, stop)))
    return found


def _stored_energy(netlist: m.Netlist, domains=None) -> float | None:
    """Energy held at t = 0 by the stores' initial conditions and the drops (joules)."""
    total = sympy.Integer(0)
    for element in netlist.elements:
        if domains is not None and element.domain not in domains:
            continue
        if element.initial is None or element.value is None:
            continue
        if element.kind.role is m.Role.ACROSS_STORE:
            total += element.value * element.initial**2 / 2
        elif element.kind.role is m.Role.THROUGH_STORE:
            compliance = element.value if element.domain is m.Domain.ELECTRICAL \
                else 1 / element.value
            total += compliance * element.initial**2 / 2
    for drop in netlist.drops if domains is None or m.Domain.TRANSLATIONAL in domains else ():
        g = netlist.gravity.acceleration if netlist.gravity else STANDARD_GRAVITY
        for name in falling_masses(netlist, drop.mass):
            mass = netlist.element(name)
            if mass is not None and mass.value is not None:
                total += mass.value * g * drop.height
    if total.free_symbols:
        return None
    return float(total)


_MAX_CHECKED_NODES = 12


def _highest_node_voltage(netlist, solution, results, start: float, stop: float) -> float:
    """The largest voltage magnitude over the window at any electrical node.

    Watched voltages are already at hand; the other nodes are checked too on
    networks small enough for it to stay quick, since a hazard at a node nobody
    watches is still a hazard.
    """
    highest = 0.0
    watched = set()
    for result in results:
        if result.quantity.kind is m.QuantityKind.VOLTAGE and result.figures is not None \
                and result.figures.magnitude is not None:
            highest = max(highest, abs(result.figures.magnitude.value))
            if result.quantity.preposition in ("at", "of"):
                watched.add(result.quantity.target)
    nodes = [n for n in dict.fromkeys(netlist.nodes)
             if n not in m.REFERENCE_NODES and solution.node_domain(n) is m.Domain.ELECTRICAL]
    quantities = [m.Quantity(m.QuantityKind.VOLTAGE, node, "at") for node in nodes
                  if node not in watched]
    if len(nodes) > _MAX_CHECKED_NODES:
        # On large networks, at least the voltages the sources impose.
        quantities = [m.Quantity(m.QuantityKind.VOLTAGE, e.name, "across")
                      for e in netlist.elements if e.kind is m.Kind.VOLTAGE_SOURCE]
    for quantity in quantities:
        try:
            time = _invert(solution.response(quantity))
        except ParametersNeeded:
            continue
        if time.parameters:
            continue
        figures = compute_figures(time, start, stop)
        if figures.magnitude is not None:
            highest = max(highest, abs(figures.magnitude.value))
    return highest


def _cautions(netlist, solution, results, verdicts, drops, start, stop) -> list[str]:
    cautions = []
    # Only values the response reaches in the window count: a capacitor's initial
    # voltage (reached at t = 0) and the computed voltages, never a waveform's
    # parameters (a ramp's slope is not a voltage).
    highest = 0.0
    for element in netlist.elements:
        if element.kind is m.Kind.CAPACITOR and element.initial is not None \
                and element.initial.is_number:
            highest = max(highest, abs(float(element.initial)))
    highest = max(highest, _highest_node_voltage(netlist, solution, results, start, stop))
    if highest > ELV_DC_LIMIT:
        cautions.append(
            f"Voltages reach {highest:.4g} V within the window, beyond the extra-low-voltage "
            "range (about 60 V DC, common practice): treat the circuit as hazardous; "
            "insulation, clearances, discharge paths and interlocks follow the applicable "
            "electrical safety standards."
        )
    for result in results:
        # The figures' one rule for a response's shape decides what grows.
        if result.figures is not None and result.figures.shape == "growth":
            reached = ""
            if result.figures.magnitude is not None:
                reached = (f" (magnitude {result.figures.magnitude.value:.4g} {result.unit} "
                           "by the end of the window)")
            cautions.append(
                f"The {result.quantity.label} grows without bound in this model{reached} and "
                "keeps growing after the window: a real part saturates, breaks down or meets "
                "a stop first, so judge only the window you care about."
            )
    electrical = _stored_energy(netlist, {m.Domain.ELECTRICAL})
    mechanical = _stored_energy(netlist, {m.Domain.TRANSLATIONAL, m.Domain.ROTATIONAL})
    if electrical is not None and electrical > 1.0:
        cautions.append(
            f"The capacitors and inductors hold {electrical:.4g} J at t = 0: enough to burn or "
            "shock. Provide discharge paths and protection as the electrical standards require."
        )
    if mechanical is not None and mechanical > 1.0:
        cautions.append(
            f"The moving and wound-up parts hold {mechanical:.4g} J at t = 0 (kinetic and "
            "elastic energy): enough to injure. Guard, contain and test as the machinery "
            "standards require."
        )
    for drop in drops:
        if drop.separation_time is not None:
            cautions.append(
                f"The contact force on {drop.mass} turns tensile at t = "
                f"{drop.separation_time:.4g} s: a real body would leave the surface there "
                f"(rebound at {drop.rebound_velocity:.3g} m/s), and the results after that "
                "instant do not hold; requirements are judged over the whole window, so end "
                "the window there to judge the contact alone."
            )
    for verdict in verdicts:
        requirement = verdict.requirement
        if requirement is None or verdict.passed is not False:
            continue
        if requirement.quantity.kind in (m.QuantityKind.DISPLACEMENT, m.QuantityKind.ANGLE) \
                and requirement.figure in (m.Figure.PEAK, m.Figure.MINIMUM, m.Figure.MAGNITUDE):
            cautions.append(
                f"The travel of {requirement.quantity.target} goes beyond the stated limit "
                f"(line {requirement.location.line if requirement.location else '?'}): a real "
                "mechanism would hit its stop, and the linear model no longer holds after that."
            )
    if any(e.domain is not m.Domain.ELECTRICAL for e in netlist.elements):
        cautions.append(
            "Mechanical results assume linear springs and dampers, rigid masses and small "
            "motions; suspensions, mounts and drops that protect people or goods need physical "
            "testing."
        )
    cautions.append(GENERAL_CAUTION)
    return cautions


def _contact_force(netlist: m.Netlist, solution: Solution, nodes: set[str]):
    """The push of the surface on a falling assembly: the forces of the elements joining
    any of its nodes to the frame.

    Returns a callable of the times, or None when some part needs parameter values.
    """
    parts = []
    for element in netlist.elements:
        if element.kind.role not in (m.Role.THROUGH_STORE, m.Role.DISSIPATOR):
            continue
        ends = {element.positive, element.negative}
        if m.FRAME not in ends or not ends & nodes:
            continue
        time = _invert(solution.response(m.Quantity(m.QuantityKind.FORCE, element.name, "in")))
        if time.parameters:
            return None
        # The element's force flows from its `from` end to its `to` end; on the body
        # it acts against that flow when the body is the `from` end.
        parts.append((-1.0 if element.positive in nodes else 1.0, time))
    if not parts:
        return None
    return lambda times: sum(sign * time.evaluate(times) for sign, time in parts)


def _drop_figures(netlist: m.Netlist, solution: Solution, start: float,
                  stop: float) -> list[DropResult]:
    """Compression, deceleration and rebound of each dropped body.

    The body leaves the surface when the surface would have to pull on it: when
    the force of the elements joining it to the frame turns tensile.
    """
    import numpy as np

    found = []
    for drop in netlist.drops:
        mass = netlist.element(drop.mass)
        if mass is None:
            continue
        node = mass.positive
        falling = falling_masses(netlist, drop.mass)
        nodes = {body.positive for name in falling if (body := netlist.element(name))}
        try:
            parts = {kind: _invert(solution.response(m.Quantity(kind, node, "of")))
                     for kind in (m.QuantityKind.ACCELERATION, m.QuantityKind.DISPLACEMENT,
                                  m.QuantityKind.VELOCITY)}
            contact = _contact_force(netlist, solution, nodes)
        except ParametersNeeded:
            continue
        if any(p.parameters for p in parts.values()):
            continue
        acceleration = parts[m.QuantityKind.ACCELERATION]
        separation = None
        if contact is not None:
            grid = np.linspace(0.0, stop, 20001)
            push = contact(grid)
            scale = float(np.max(np.abs(push))) or 1.0
            # Skip the first instant: at contact the spring force is zero by construction.
            pulling = np.nonzero((push < -1e-9 * scale) & (grid > 0))[0]
            if pulling.size:
                low, high = grid[max(pulling[0] - 1, 0)], grid[pulling[0]]
                for _ in range(60):  # bisection on the closed form
                    middle = 0.5 * (low + high)
                    if contact(np.array([middle]))[0] < 0:
                        high = middle
                    else:
                        low = middle
                separation = high
        end = separation if separation is not None and separation > 0 else stop
        travel = compute_figures(parts[m.QuantityKind.DISPLACEMENT], 0.0, end)
        decel = compute_figures(acceleration, 0.0, end)
        velocity = parts[m.QuantityKind.VELOCITY]
        found.append(DropResult(
            mass=drop.mass,
            height=float(drop.height),
            contact_velocity=float(velocity.evaluate(np.array([0.0]))[0]),
            max_compression=-travel.minimum.value if travel.minimum else None,
            compression_time=travel.minimum.time if travel.minimum else None,
            peak_deceleration=decel.peak.value if decel.peak else None,
            deceleration_time=decel.peak.time if decel.peak else None,
            separation_time=separation,
            rebound_velocity=float(velocity.evaluate(np.array([separation]))[0])
            if separation is not None else None,
            falling=falling,
        ))
    return found
