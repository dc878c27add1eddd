"""Drops: what the fall and the contact do to each dropped body.

Examples
--------
>>> from lumped.api import loads
>>> from lumped.analysis import analyse
>>> net = loads("mass box 1 kg\\nspring K from box to frame 1 kN/m\\n"
...             "gravity 9.81 m/s^2\\ndrop box from 0.5 m\\n")
>>> (drop,) = drop_figures(net, Responses(analyse(net).solution), 0.0, 0.1)
>>> round(drop.contact_velocity, 4)  # -sqrt(2 g h), downwards (common practice)
-3.1321
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from lumped import model as m
from lumped.analysis.responses import Responses
from lumped.errors import ParametersNeeded
from lumped.figures import compute_figures


@dataclass(frozen=True, repr=False)
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

    def __repr__(self) -> str:
        shown = f"<DropResult {self.mass} from {self.height:.4g} m: contact at " \
                f"{self.contact_velocity:.4g} m/s"
        if self.max_compression is not None:
            shown += f", compression {self.max_compression:.4g} m"
        if self.peak_deceleration is not None:
            shown += f", peak deceleration {self.peak_deceleration:.4g} m/s^2"
        if self.separation_time is not None:
            shown += f", leaves the surface at {self.separation_time:.4g} s"
        return shown + ">"


def _contact_force(netlist: m.Netlist, responses: Responses,
                   nodes: set[str]) -> Callable[[np.ndarray], np.ndarray] | None:
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
        time = responses.time(m.Quantity(m.QuantityKind.FORCE, element.name, "in"))
        if time.parameters:
            return None
        # The element's force flows from its `from` end to its `to` end; on the body
        # it acts against that flow when the body is the `from` end.
        parts.append((-1.0 if element.positive in nodes else 1.0, time))
    if not parts:
        return None
    return lambda times: sum(sign * time.evaluate(times) for sign, time in parts)


def _separation(contact: Callable[[np.ndarray], np.ndarray], stop: float) -> float | None:
    """The first instant the contact force turns tensile, or None within the window."""
    grid = np.linspace(0.0, stop, 20001)
    push = contact(grid)
    scale = float(np.max(np.abs(push))) or 1.0
    # Skip the first instant: at contact the spring force is zero by construction.
    pulling = np.nonzero((push < -1e-9 * scale) & (grid > 0))[0]
    if not pulling.size:
        return None
    low, high = grid[max(pulling[0] - 1, 0)], grid[pulling[0]]
    for _ in range(60):  # bisection on the closed form
        middle = 0.5 * (low + high)
        if contact(np.array([middle]))[0] < 0:
            high = middle
        else:
            low = middle
    return high


def drop_figures(netlist: m.Netlist, responses: Responses, start: float,
                 stop: float) -> tuple[DropResult, ...]:
    """Compression, deceleration and rebound of each dropped body.

    The body leaves the surface when the surface would have to pull on it: when
    the force of the elements joining it to the frame turns tensile.  Motions
    and forces already inverted for a watch are reused.

    Parameters
    ----------
    netlist : Netlist
    responses : Responses
        The analysis's record of solved and inverted quantities.
    start, stop : float
        The window, in seconds (the drop is followed from contact at 0).

    Returns
    -------
    tuple of DropResult
        One per drop whose motions have numbers (none need parameter values).
    """
    found = []
    for drop in netlist.drops:
        mass = netlist.element(drop.mass)
        if mass is None:
            continue
        node = mass.positive
        falling = responses.solution.topology.falling[drop.mass]
        nodes = {body.positive for name in falling if (body := netlist.element(name))}
        try:
            parts = {kind: responses.time(m.Quantity(kind, node, "of"))
                     for kind in (m.QuantityKind.ACCELERATION, m.QuantityKind.DISPLACEMENT,
                                  m.QuantityKind.VELOCITY)}
            contact = _contact_force(netlist, responses, nodes)
        except ParametersNeeded:
            continue
        if any(p.parameters for p in parts.values()):
            continue
        acceleration = parts[m.QuantityKind.ACCELERATION]
        separation = _separation(contact, stop) if contact is not None else None
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
    return tuple(found)
