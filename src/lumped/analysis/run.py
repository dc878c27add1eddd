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
from collections.abc import Callable
from dataclasses import dataclass

import sympy

from lumped import model as m
from lumped.analysis.cautions import cautions
from lumped.analysis.drops import DropResult, drop_figures
from lumped.analysis.energy import Dissipation, dissipation, stored_energy
from lumped.analysis.responses import Responses
from lumped.analysis.window import default_window, refuse_unresolvable
from lumped.constants import s
from lumped.errors import ParametersNeeded, UnknownQuantityError
from lumped.figures import Figures, Verdict, compute_figures, judge
from lumped.inversion import TimeResponse
from lumped.network import Response, Solution, assemble
from lumped.topology import Topology, validate

# How many quantity labels a short repr lists before it only counts the rest.
_REPR_LABELS = 4


@dataclass(frozen=True, repr=False)
class QuantityResult:
    """One watched quantity: s-domain response, closed form and figures.

    In a notebook it shows as its closed form (``_repr_latex_``).
    """

    quantity: m.Quantity
    response: Response
    time: TimeResponse | None
    figures: Figures | None
    problem: str | None = None  # why there is no time response (parameters need values)

    @property
    def unit(self) -> str:
        """The SI unit of the quantity, e.g. ``'V'``."""
        return self.response.unit

    def __repr__(self) -> str:
        head = f"<QuantityResult {self.quantity.label} [{self.unit}]"
        if self.time is None:
            return f"{head}: no closed form: {self.problem or 'not available'}>"
        if self.time.parameters:
            names = ", ".join(sorted(str(p) for p in self.time.parameters))
            return f"{head}: closed form in {names}>"
        shown = f"{head}: closed form with {_count(len(self.time.modes), 'mode')}"
        figures = self.figures
        if figures is not None and figures.final is not None:
            shown += f", final {figures.final:.4g}"
        if figures is not None and figures.peak is not None:
            shown += f", peak {figures.peak.value:.4g} at {figures.peak.time:.3g} s"
        return shown + ">"

    def _repr_latex_(self) -> str:
        # Formatting belongs to the outputs stage; imported on use only.
        from lumped.io.latex import quantity_latex

        return quantity_latex(self)


@dataclass(frozen=True, repr=False)
class Analysis:
    """Everything the report needs about one netlist.

    In a notebook it shows as its report table (``_repr_html_``).
    """

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

    @property
    def labels(self) -> tuple[str, ...]:
        """The labels of the quantities, in report order."""
        return tuple(item.quantity.label for item in self.results)

    def result(self, label: str) -> QuantityResult:
        """The result for a quantity label such as ``'voltage at sw'``.

        Raises
        ------
        UnknownQuantityError
            When no quantity has that label; the message lists those there are.
        """
        for item in self.results:
            if item.quantity.label == label:
                return item
        raise UnknownQuantityError(label, list(self.labels))

    def __repr__(self) -> str:
        netlist = self.netlist
        nodes = sum(1 for n in netlist.nodes if n not in m.REFERENCE_NODES)
        labels = [f"{r.quantity.label} [{r.unit}]" for r in self.results[:_REPR_LABELS]]
        if len(self.results) > _REPR_LABELS:
            labels.append(f"and {len(self.results) - _REPR_LABELS} more")
        window = f"window {self.start:.3g} s to {self.stop:.3g} s"
        if self.window_chosen:
            window += " (chosen by the tool)"
        passing = sum(1 for v in self.verdicts if v.passed)
        if not self.verdicts:
            verdict = "no requirements stated"
        else:
            verdict = (f"{'PASS' if self.passed else 'FAIL'}, {passing} of "
                       f"{len(self.verdicts)} requirements pass")
        return (f"<Analysis of {netlist.source}: {_count(len(netlist.elements), 'element')}, "
                f"{_count(nodes, 'node')}, {window}\n"
                f"  quantities: {', '.join(labels) or 'none'}\n"
                f"  verdict: {verdict}>")

    def _repr_html_(self) -> str:
        # Formatting belongs to the outputs stage; imported on use only.
        from lumped.io.notebook import to_html

        return to_html(self)


def _count(number: int, noun: str) -> str:
    return f"{number} {noun}{'' if number == 1 else 's'}"


def _network_pole_test(solution: Solution) -> Callable[[complex], bool] | None:
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


def _quantities(netlist: m.Netlist, topology: Topology) -> list[m.Quantity]:
    """The watched and required quantities, each once; without any, every node's across."""
    seen: dict[str, m.Quantity] = {}
    for quantity in (*netlist.watches, *(r.quantity for r in netlist.requirements)):
        seen.setdefault(quantity.label, quantity)
    if seen:
        return list(seen.values())
    return [m.Quantity(domain.watched_by_default, node, "at")
            for node, domain in topology.domains.items() if node not in m.REFERENCE_NODES]


def analyse(network: m.Netlist | Topology) -> Analysis:
    """Solve a network and measure every watched or required quantity.

    Parameters
    ----------
    network : Netlist or Topology
        A netlist from :func:`lumped.api.load` or :func:`lumped.api.loads` (validated
        here), or a :class:`~lumped.topology.Topology` already validated (not again).

    Returns
    -------
    Analysis

    Examples
    --------
    >>> from lumped.api import loads
    >>> analysis = analyse(loads("current source I at a step 1 mA\\n"
    ...                          "resistor R from a to ground 1 kohm\\n"))
    >>> analysis.labels
    ('voltage at a',)
    """
    topology = network if isinstance(network, Topology) else validate(network)
    netlist = topology.netlist
    solution = assemble(topology)
    responses = Responses(solution)
    quantities = _quantities(netlist, topology)
    times: list[TimeResponse | None] = []
    problems: list[str | None] = []
    for quantity in quantities:
        try:
            times.append(responses.time(quantity))
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
        start, stop, window_rule = default_window([t for t in times if t is not None], netlist)
    else:
        start, stop = float(netlist.window.start), float(netlist.window.stop)
    refuse_unresolvable(netlist, times, start, stop, window_rule)  # never left running
    band = float(netlist.settling_band)
    own_pole = _network_pole_test(solution)
    results = []
    for quantity, time, problem in zip(quantities, times, problems, strict=True):
        figures = None
        if time is not None and not time.parameters:
            figures = compute_figures(time, start, stop, band=band, kind=quantity.kind,
                                      own_pole=own_pole)
        elif time is not None and problem is None:
            names = ", ".join(sorted(str(p) for p in time.parameters))
            problem = f"figures need values for {names}"
        results.append(QuantityResult(quantity, responses.response(quantity), time, figures,
                                      problem))
    by_label = {r.quantity.label: r for r in results}
    verdicts = []
    for requirement in netlist.requirements:
        result = by_label[requirement.quantity.label]
        if result.figures is None:
            verdicts.append(Verdict(requirement, None, None, None, None, None,
                                    result.problem or "no figures"))
        else:
            verdicts.append(judge(requirement, result.figures, result.time))
    heat = dissipation(netlist, responses, start, stop)
    drops = drop_figures(netlist, responses, start, stop)
    warnings = cautions(netlist, responses, results, verdicts, drops, start, stop)
    return Analysis(
        netlist=netlist,
        solution=solution,
        start=start,
        stop=stop,
        results=tuple(results),
        verdicts=tuple(verdicts),
        cautions=warnings,
        notes=tuple(getattr(solution, "notes", ())),
        dissipation=heat,
        drops=drops,
        stored_energy=stored_energy(topology),
        window_chosen=window_chosen,
        window_rule=window_rule,
    )
