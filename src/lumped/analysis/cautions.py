"""Cautions: the hazards the results show, said in plain words.

Voltages beyond the extra-low-voltage range, responses that grow without
bound, energy held at the start, a dropped body leaving the surface, travel
beyond a stated limit; and always the general caution on what a linear
lumped model can tell.

Examples
--------
>>> GENERAL_CAUTION.split(".")[0]
'These results describe an idealised linear lumped model'
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING

from lumped import model as m
from lumped.analysis.drops import DropResult
from lumped.analysis.energy import stored_energy
from lumped.analysis.responses import Responses
from lumped.errors import ParametersNeeded
from lumped.figures import Verdict, compute_figures

if TYPE_CHECKING:  # the result type is built by run.py, which calls this module
    from lumped.analysis.run import QuantityResult

# Extra-low-voltage limit for DC (common practice, from memory: 60 V ripple-free DC).
ELV_DC_LIMIT = 60.0
# Past this many nodes only the voltages the sources impose are checked, to stay quick.
MOST_CHECKED_NODES = 12

GENERAL_CAUTION = (
    "These results describe an idealised linear lumped model. Applicable standards, local "
    "codes, physical testing and licensed engineering review govern any design where a "
    "voltage, stored energy, a drop or a suspension can hurt someone."
)


def highest_node_voltage(netlist: m.Netlist, responses: Responses,
                         results: Sequence[QuantityResult], start: float, stop: float) -> float:
    """The largest voltage magnitude over the window at any electrical node.

    Watched voltages are already at hand; the other nodes are checked too on
    networks small enough for it to stay quick, since a hazard at a node nobody
    watches is still a hazard.  A voltage already inverted is not inverted again.

    Examples
    --------
    >>> from lumped.api import loads
    >>> from lumped.analysis import analyse
    >>> net = loads("voltage source V at a step 100 V\\nresistor R from a to b 1 kohm\\n"
    ...             "capacitor C from b to ground 1 uF\\n")
    >>> round(highest_node_voltage(net, Responses(analyse(net).solution), (), 0.0, 0.01), 6)
    100.0
    """
    highest = 0.0
    watched = set()
    for result in results:
        if result.quantity.kind is m.QuantityKind.VOLTAGE and result.figures is not None \
                and result.figures.magnitude is not None:
            highest = max(highest, abs(result.figures.magnitude.value))
            if result.quantity.preposition in ("at", "of"):
                watched.add(result.quantity.target)
    solution = responses.solution
    nodes = [n for n in dict.fromkeys(netlist.nodes)
             if n not in m.REFERENCE_NODES and solution.node_domain(n) is m.Domain.ELECTRICAL]
    quantities = [m.Quantity(m.QuantityKind.VOLTAGE, node, "at") for node in nodes
                  if node not in watched]
    if len(nodes) > MOST_CHECKED_NODES:
        # On large networks, at least the voltages the sources impose.
        quantities = [m.Quantity(m.QuantityKind.VOLTAGE, e.name, "across")
                      for e in netlist.elements if e.kind is m.Kind.VOLTAGE_SOURCE]
    for quantity in quantities:
        try:
            time = responses.time(quantity)
        except ParametersNeeded:
            continue
        if time.parameters:
            continue
        figures = compute_figures(time, start, stop)
        if figures.magnitude is not None:
            highest = max(highest, abs(figures.magnitude.value))
    return highest


def cautions(netlist: m.Netlist, responses: Responses, results: Sequence[QuantityResult],
             verdicts: Sequence[Verdict], drops: Sequence[DropResult], start: float,
             stop: float) -> tuple[str, ...]:
    """Every caution the results call for, the general caution last.

    Examples
    --------
    >>> from lumped.api import loads
    >>> from lumped.analysis import analyse
    >>> net = loads("capacitor C at a 1 F, initially 100 V\\nresistor R at a 1 ohm\\n")
    >>> found = cautions(net, Responses(analyse(net).solution), (), (), (), 0.0, 5.0)
    >>> [text.split(" ")[0] for text in found]
    ['Voltages', 'The', 'These']
    """
    found = []
    # Only values the response reaches in the window count: a capacitor's initial
    # voltage (reached at t = 0) and the computed voltages, never a waveform's
    # parameters (a ramp's slope is not a voltage).
    highest = 0.0
    for element in netlist.elements:
        if element.kind is m.Kind.CAPACITOR and element.initial is not None \
                and element.initial.is_number:
            highest = max(highest, abs(float(element.initial)))
    highest = max(highest, highest_node_voltage(netlist, responses, results, start, stop))
    if highest > ELV_DC_LIMIT:
        found.append(
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
            found.append(
                f"The {result.quantity.label} grows without bound in this model{reached} and "
                "keeps growing after the window: a real part saturates, breaks down or meets "
                "a stop first, so judge only the window you care about."
            )
    topology = responses.solution.topology
    electrical = stored_energy(topology, {m.Domain.ELECTRICAL})
    mechanical = stored_energy(topology, {m.Domain.TRANSLATIONAL, m.Domain.ROTATIONAL})
    if electrical is not None and electrical > 1.0:
        found.append(
            f"The capacitors and inductors hold {electrical:.4g} J at t = 0: enough to burn or "
            "shock. Provide discharge paths and protection as the electrical standards require."
        )
    if mechanical is not None and mechanical > 1.0:
        found.append(
            f"The moving and wound-up parts hold {mechanical:.4g} J at t = 0 (kinetic and "
            "elastic energy): enough to injure. Guard, contain and test as the machinery "
            "standards require."
        )
    for drop in drops:
        if drop.separation_time is not None:
            found.append(
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
            found.append(
                f"The travel of {requirement.quantity.target} goes beyond the stated limit "
                f"(line {requirement.location.line if requirement.location else '?'}): a real "
                "mechanism would hit its stop, and the linear model no longer holds after that."
            )
    if any(e.domain is not m.Domain.ELECTRICAL for e in netlist.elements):
        found.append(
            "Mechanical results assume linear springs and dampers, rigid masses and small "
            "motions; suspensions, mounts and drops that protect people or goods need physical "
            "testing."
        )
    found.append(GENERAL_CAUTION)
    return tuple(found)
