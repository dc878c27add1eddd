"""What each element kind contributes to the equations: the plan of unknowns and inputs.

One across/through formulation serves every domain (mobility analogy).  The
unknowns are the across value of every node other than the reference
(``ground`` and ``frame`` are one common datum) and the through value of every
element whose law is not an admittance (inductors, springs, across sources,
couplings, and resistors whose value is symbolic).  Every equation has
entries ``a0 + a1*s`` (modified nodal analysis), so the system ``A(s) x =
sum_j B_j U_j(s)`` is polynomial in ``s`` and in the free parameters.

Each independent excitation is one input ``j``: a source (its waveform
``U_j(s)``), an initial condition (a companion source), the weight of a mass,
a drop.  Companion sources (the initial conditions):

* across store (capacitor ``C``, mass, inertia): ``I = s C V - C v0``;
* through store (inductor ``L``): ``V = s L I - L i0``; spring ``k``:
  ``k V - s F = -F0`` (``F0`` the initial force), which keeps ``k`` in the
  numerator.

A coupling's through unknown is its input port's; the output port carries
``-n i_in`` from ``output.positive`` to ``output.negative``.

Examples
--------
>>> from lumped.language.parse import parse_text
>>> from lumped.topology import validate
>>> plan = plan_equations(validate(parse_text("inductor L from a to ground 1 H\\n"
...                                           "resistor R from a to ground 2 ohm\\n")))
>>> plan.unknowns
(('node', 'a'), ('branch', 'L'))
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from dataclasses import dataclass, replace
from types import MappingProxyType

import sympy

from lumped.constants import STANDARD_GRAVITY, s
from lumped.model import REFERENCE_NODES, Element, GravityStart, Kind, Netlist, Role
from lumped.network import sources as waveforms
from lumped.network.rational import is_number
from lumped.network.sources import Piece
from lumped.topology import Topology, solve_error

Key = tuple[str, str]  # ('node' | 'branch' | 'coupling', name)


@dataclass(frozen=True)
class Input:
    """One excitation: ``column * sum(pieces)``, ``column`` constant in ``s``.

    Attributes
    ----------
    label : str
        Readable description, e.g. ``"initial voltage of C1"``.
    element : str
        The element (or mass) the excitation belongs to.
    origin : str
        ``'source'``, ``'initial'``, ``'gravity'`` or ``'drop'``.
    column : Mapping of int to sympy.Expr
        The right-hand side entries, by equation row.
    pieces : tuple of Piece
        The excitation's transform, piece by piece (empty while an
        equilibrium value is still unknown).
    """

    label: str
    element: str
    origin: str
    column: Mapping[int, sympy.Expr]
    pieces: tuple[Piece, ...]


@dataclass(frozen=True)
class Plan:
    """The equations before solving: unknowns, rows ``a0 + a1 s`` and inputs.

    Attributes
    ----------
    topology : Topology
    unknowns : tuple of (str, str)
        ``('node' | 'branch' | 'coupling', name)`` in order.
    index : Mapping of (str, str) to int
        Each unknown's position.
    rows : tuple of Mapping of int to (sympy.Expr, sympy.Expr)
        Row ``i``: column -> ``(a0, a1)``.
    inputs : tuple of Input
    element_rows : Mapping of str to int
        Element or coupling name -> its through unknown.
    admittance : Mapping of str to (sympy.Expr, sympy.Expr)
        Elements stamped as admittances -> ``(c0, c1)`` of their law.
    store_inputs, source_inputs, equilibrium_inputs, gravity_inputs : Mapping of str to int
        Element -> index of its input of that kind.
    drop_velocity : Mapping of str to sympy.Expr
        Each falling mass -> its contact velocity.
    gravity : sympy.Expr or None
    equilibrium : bool
        Start from the static state under the weights.
    notes : tuple of str
        Choices made on the user's behalf.
    """

    topology: Topology
    unknowns: tuple[Key, ...]
    index: Mapping[Key, int]
    rows: tuple[Mapping[int, tuple[sympy.Expr, sympy.Expr]], ...]
    inputs: tuple[Input, ...]
    element_rows: Mapping[str, int]
    admittance: Mapping[str, tuple[sympy.Expr, sympy.Expr]]
    store_inputs: Mapping[str, int]
    source_inputs: Mapping[str, int]
    equilibrium_inputs: Mapping[str, int]
    gravity_inputs: Mapping[str, int]
    drop_velocity: Mapping[str, sympy.Expr]
    gravity: sympy.Expr | None
    equilibrium: bool
    notes: tuple[str, ...]

    @property
    def netlist(self) -> Netlist:
        """The netlist the plan is for."""
        return self.topology.netlist

    def node(self, name: str) -> int | None:
        """The unknown of a node's across value (``None`` for the reference)."""
        return None if name in REFERENCE_NODES else self.index[("node", name)]

    def with_pieces(self, pieces: Mapping[int, tuple[Piece, ...]]) -> Plan:
        """The same plan with new pieces for some inputs (equilibrium values, once known)."""
        inputs = tuple(replace(inp, pieces=pieces[j]) if j in pieces else inp
                       for j, inp in enumerate(self.inputs))
        return replace(self, inputs=inputs)


class _Builder:
    """Collects unknowns, stamps and inputs (mutable while the plan is drawn up)."""

    def __init__(self, netlist: Netlist) -> None:
        self.unknowns: list[Key] = []
        self.index: dict[Key, int] = {}
        self.rows: list[dict[int, list[sympy.Expr]]] = []
        self.inputs: list[Input] = []
        for node in netlist.nodes:
            if node not in REFERENCE_NODES:
                self._unknown(("node", node))

    def _unknown(self, key: Key) -> int:
        k = len(self.unknowns)
        self.unknowns.append(key)
        self.index[key] = k
        self.rows.append({})
        return k

    def node(self, name: str) -> int | None:
        return None if name in REFERENCE_NODES else self.index[("node", name)]

    def add(self, row: int | None, col: int | None, c0: sympy.Expr = 0, c1: sympy.Expr = 0) -> None:
        if row is None or col is None:
            return
        entry = self.rows[row].setdefault(col, [sympy.Integer(0), sympy.Integer(0)])
        entry[0] += c0
        entry[1] += c1

    def admittance(self, a: int | None, b: int | None, c0: sympy.Expr, c1: sympy.Expr) -> None:
        self.add(a, a, c0, c1)
        self.add(b, b, c0, c1)
        self.add(a, b, -c0, -c1)
        self.add(b, a, -c0, -c1)

    def branch(self, key: Key, a: int | None, b: int | None) -> int:
        """A through unknown flowing from ``a`` to ``b``; returns its index (also its row)."""
        k = self._unknown(key)
        self.add(a, k, 1)
        self.add(b, k, -1)
        return k

    def across_row(self, k: int, a: int | None, b: int | None, scale: sympy.Expr = 1) -> None:
        self.add(k, a, scale)
        self.add(k, b, -scale)

    def add_input(
        self,
        label: str,
        element: str,
        origin: str,
        column: dict[int | None, sympy.Expr],
        pieces: Iterable[Piece],
    ) -> int:
        clean = {
            row: sympy.Integer(value) if isinstance(value, int) else value
            for row, value in column.items()
            if row is not None and value != 0
        }
        self.inputs.append(Input(label, element, origin, MappingProxyType(clean), tuple(pieces)))
        return len(self.inputs) - 1

    def frozen_rows(self) -> tuple[Mapping[int, tuple[sympy.Expr, sympy.Expr]], ...]:
        return tuple(MappingProxyType({col: (e[0], e[1]) for col, e in row.items()})
                     for row in self.rows)


def element_value(netlist: Netlist, element: Element) -> sympy.Expr:
    """An element's exact value; SolveError (at the element) when it has none or a float.

    Examples
    --------
    >>> from lumped.language.parse import parse_text
    >>> net = parse_text("resistor R from a to ground 2 kohm\\n")
    >>> element_value(net, net.elements[0])
    2000
    """
    if element.value is None:
        raise solve_error(netlist, f"element {element.name} ({element.kind.word}) has no value",
                          [element.name])
    value = sympy.Integer(element.value) if isinstance(element.value, int) else element.value
    if value.atoms(sympy.Float):
        raise solve_error(netlist, f"element {element.name} has an inexact (floating-point) "
                          f"value {value}", [element.name])
    return value


def _source_pieces(element: Element) -> tuple[Piece, ...]:
    if element.waveform is None:
        return ()
    pieces = waveforms.waveform_pieces(element.waveform)
    if element.kind is Kind.DISPLACEMENT_SOURCE:
        # The unknowns are velocities: v = dx/dt, with x(0-) = 0, so V = s X.
        pieces = tuple(replace(p, shape=sympy.cancel(p.shape * s)) for p in pieces)
    return pieces


def plan_equations(topology: Topology) -> Plan:
    """Stamp every element and coupling of a validated network; collect its inputs.

    Parameters
    ----------
    topology : Topology
        From :func:`lumped.topology.validate`.

    Returns
    -------
    Plan

    Raises
    ------
    SolveError
        For an element without an exact value.

    Examples
    --------
    >>> from lumped.language.parse import parse_text
    >>> from lumped.topology import validate
    >>> plan = plan_equations(validate(parse_text("capacitor C at a 1 F, initially 2 V\\n"
    ...                                           "resistor R at a 1 ohm\\n")))
    >>> [(i.label, dict(i.column)) for i in plan.inputs]
    [('initial voltage of C', {0: 1})]
    """
    netlist = topology.netlist
    b = _Builder(netlist)
    notes: list[str] = []
    element_rows: dict[str, int] = {}
    admittance: dict[str, tuple[sympy.Expr, sympy.Expr]] = {}
    store_inputs: dict[str, int] = {}
    source_inputs: dict[str, int] = {}
    equilibrium_inputs: dict[str, int] = {}
    gravity_inputs: dict[str, int] = {}

    gravity = netlist.gravity.acceleration if netlist.gravity is not None else None
    equilibrium = netlist.gravity is not None and netlist.gravity.start is GravityStart.EQUILIBRIUM
    drop_velocity: dict[str, sympy.Expr] = {}
    if netlist.drops:
        if gravity is None:
            gravity = STANDARD_GRAVITY
        if equilibrium:
            notes.append(
                "a drop starts with unloaded springs: gravity acts from t = 0, not from equilibrium"
            )
            equilibrium = False
        for drop in netlist.drops:
            # The whole assembly arrives at the contact speed; in free fall its
            # internal springs carry no weight, so they start as written (unstressed).
            for name in topology.falling[drop.mass]:
                drop_velocity[name] = -sympy.sqrt(2 * gravity * drop.height)
                body = netlist.element(name)
                if body is not None and body.initial is not None and body.initial != 0:
                    notes.append(
                        f"the drop of {drop.mass} sets the initial velocity of {name}; "
                        "the written one is unused"
                    )

    def add_store_inputs(element: Element, column: dict, word: str) -> None:
        """The companion source of a store's initial value (or its drop velocity), and the
        column the equilibrium start fills in later."""
        name = element.name
        if name in drop_velocity:
            label, origin, start = f"drop of {name}", "drop", drop_velocity[name]
        elif element.initial is not None and element.initial != 0:
            label, origin, start = f"initial {word} of {name}", "initial", element.initial
        else:
            start = None
        if start is not None:
            store_inputs[name] = b.add_input(
                label, name, origin, column, [Piece(start, sympy.Integer(1), 0)]
            )
        if equilibrium:
            equilibrium_inputs[name] = b.add_input(
                f"equilibrium {word} of {name}", name, "initial", column, ()
            )

    for element in netlist.elements:
        a, c = b.node(element.positive), b.node(element.negative)
        role = element.kind.role
        name = element.name
        if role is Role.ACROSS_STORE:
            value = element_value(netlist, element)
            admittance[name] = (sympy.Integer(0), value)
            b.admittance(a, c, 0, value)
            column = {a: value, c: -value}
            add_store_inputs(element, column, element.domain.across_kind.word)
        elif role is Role.THROUGH_STORE:
            value = element_value(netlist, element)
            k = b.branch(("branch", name), a, c)
            element_rows[name] = k
            if element.kind is Kind.INDUCTOR:
                b.across_row(k, a, c)
                b.add(k, k, 0, -value)
                column = {k: -value}
            else:
                b.across_row(k, a, c, value)
                b.add(k, k, 0, -1)
                column = {k: sympy.Integer(-1)}
            add_store_inputs(element, column, element.domain.through_kind.word)
        elif role is Role.DISSIPATOR:
            value = element_value(netlist, element)
            if element.kind is Kind.RESISTOR and (not is_number(value) or value == 0):
                # V - R I = 0 keeps a symbolic R in the numerator (and allows R = 0).
                k = b.branch(("branch", name), a, c)
                element_rows[name] = k
                b.across_row(k, a, c)
                b.add(k, k, -value)
            else:
                g = 1 / value if element.kind is Kind.RESISTOR else value
                admittance[name] = (g, sympy.Integer(0))
                b.admittance(a, c, g, 0)
        elif role is Role.THROUGH_SOURCE:
            # Through from a to b: it leaves node a and is injected into node b.
            source_inputs[name] = b.add_input(
                f"{element.kind.word} {name}",
                name,
                "source",
                {a: -1, c: 1},
                _source_pieces(element),
            )
        elif role is Role.ACROSS_SOURCE:
            k = b.branch(("branch", name), a, c)
            element_rows[name] = k
            b.across_row(k, a, c)
            source_inputs[name] = b.add_input(
                f"{element.kind.word} {name}", name, "source", {k: 1}, _source_pieces(element)
            )

    for coupling in netlist.couplings:
        n = coupling.ratio
        p1, n1 = b.node(coupling.input.positive), b.node(coupling.input.negative)
        p2, n2 = b.node(coupling.output.positive), b.node(coupling.output.negative)
        k = b.branch(("coupling", coupling.name), p1, n1)
        element_rows[coupling.name] = k
        # The output port's through, from output.positive to output.negative, is -n i_in.
        b.add(p2, k, -n)
        b.add(n2, k, n)
        b.across_row(k, p1, n1)
        b.add(k, p2, -n)
        b.add(k, n2, n)

    if gravity is not None:
        for element in netlist.elements:
            if element.kind is Kind.MASS:
                mass = element_value(netlist, element)
                a, c = b.node(element.positive), b.node(element.negative)
                gravity_inputs[element.name] = b.add_input(
                    f"weight of {element.name}",
                    element.name,
                    "gravity",
                    {a: -mass, c: mass},
                    [Piece(gravity, 1 / s, 0)],
                )
    return Plan(
        topology=topology,
        unknowns=tuple(b.unknowns),
        index=MappingProxyType(b.index),
        rows=b.frozen_rows(),
        inputs=tuple(b.inputs),
        element_rows=MappingProxyType(element_rows),
        admittance=MappingProxyType(admittance),
        store_inputs=MappingProxyType(store_inputs),
        source_inputs=MappingProxyType(source_inputs),
        equilibrium_inputs=MappingProxyType(equilibrium_inputs),
        gravity_inputs=MappingProxyType(gravity_inputs),
        drop_velocity=MappingProxyType(drop_velocity),
        gravity=gravity,
        equilibrium=equilibrium,
        notes=tuple(notes),
    )
