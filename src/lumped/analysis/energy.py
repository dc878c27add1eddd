"""Energy: what the dissipators turn into heat over the window, what the stores hold at 0.

Examples
--------
>>> from lumped.api import loads
>>> from lumped.topology import validate
>>> stored_energy(validate(loads("capacitor C at a 2 F, initially 3 V\\nresistor R at a 1 ohm\\n")))
9.0
"""

from __future__ import annotations

from collections.abc import Collection
from dataclasses import dataclass

import sympy

from lumped import model as m
from lumped.analysis.responses import Responses
from lumped.constants import STANDARD_GRAVITY
from lumped.errors import ParametersNeeded
from lumped.figures import energy_dissipated
from lumped.topology import Topology

# Past this many dissipators the report leaves the energies out, to stay quick.
MOST_DISSIPATORS = 12


@dataclass(frozen=True)
class Dissipation:
    """Energy one resistor or damper turned into heat over the window.

    Examples
    --------
    >>> Dissipation("R1", 0.25)
    Dissipation(element='R1', energy=0.25)
    """

    element: str
    energy: float  # joules over the window


def dissipation(netlist: m.Netlist, responses: Responses, start: float,
                stop: float) -> tuple[Dissipation, ...]:
    """The energy each dissipator with a numeric value turns into heat over the window.

    Empty on networks with more than :data:`MOST_DISSIPATORS` dissipators.
    A dissipator's current or force is inverted once, shared with a watch of it.

    Examples
    --------
    >>> from lumped.api import loads
    >>> from lumped.analysis import analyse
    >>> net = loads("capacitor C at a 2 F, initially 3 V\\nresistor R at a 1 ohm\\n")
    >>> (heat,) = dissipation(net, Responses(analyse(net).solution), 0.0, 100.0)
    >>> round(heat.energy, 9)  # all of C v^2 / 2 = 9 J
    9.0
    """
    dissipators = [e for e in netlist.elements if e.kind.role is m.Role.DISSIPATOR]
    if len(dissipators) > MOST_DISSIPATORS:
        return ()
    found = []
    for element in dissipators:
        if element.value is None or element.value.free_symbols:
            continue
        through = m.Quantity(element.domain.through_kind, element.name, "in")
        try:
            time = responses.time(through)
        except ParametersNeeded:
            continue
        if time.parameters:
            continue
        value = float(element.value)
        # Resistors: R i^2.  Dampers: F^2 / c (the value is the damping coefficient).
        coefficient = value if element.domain is m.Domain.ELECTRICAL else 1 / value
        found.append(Dissipation(element.name, energy_dissipated(time, coefficient, start, stop)))
    return tuple(found)


def stored_energy(topology: Topology,
                  domains: Collection[m.Domain] | None = None) -> float | None:
    """Energy held at t = 0 by the stores' initial conditions and the drops (joules).

    Parameters
    ----------
    topology : Topology
        The validated network (its falling assemblies count for the drops).
    domains : collection of Domain, optional
        Count only the stores of these domains (drops count with the translational).

    Returns
    -------
    float or None
        None when the energy depends on a parameter without a value.

    Examples
    --------
    >>> from lumped.api import loads
    >>> from lumped.topology import validate
    >>> net = validate(loads("inductor L at a 2 H, initially 1 A\\nresistor R at a 1 ohm\\n"))
    >>> stored_energy(net), stored_energy(net, {m.Domain.ROTATIONAL})
    (1.0, 0.0)
    """
    netlist = topology.netlist
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
        for name in topology.falling[drop.mass]:
            mass = netlist.element(name)
            if mass is not None and mass.value is not None:
                total += mass.value * g * drop.height
    if total.free_symbols:
        return None
    return float(total)
