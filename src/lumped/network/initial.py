"""Initial conditions: the equilibrium start under gravity and the notes on impulses at 0.

Gravity from equilibrium: the static state under the weights alone
(``lim_{s->0} s Y(s)`` for every store) is added to the written initial
conditions, so the weights and that state cancel and the response is
measured from equilibrium.

Initial values that break KVL around a loop of across stores and sources, or
KCL across a cut-set of through stores and sources, are legal: the stores
share them at once, with an impulse at ``t = 0``.  :func:`initial_notes` says so.

Examples
--------
>>> from lumped.language.parse import parse_text
>>> from lumped.network import assemble
>>> notes = assemble(parse_text("resistor R at a 1 ohm\\ncapacitor C1 at a 1 F, initially 5 V\\n"
...                             "capacitor C2 at a 1 F\\n")).notes
>>> "KVL" in notes[0]
True
"""

from __future__ import annotations

from collections.abc import Mapping
from types import MappingProxyType

import sympy

from lumped.model import REFERENCE_NODES, Element, Kind, Role
from lumped.network import sources as waveforms
from lumped.network.solution import Form, Solution, across
from lumped.network.stamps import Plan
from lumped.topology import DATUM, Multigraph, connected_components, solve_error


def _graph_node(name: str) -> str:
    return DATUM if name in REFERENCE_NODES else name


def static_values(solution: Solution) -> Mapping[str, sympy.Expr]:
    """Each store's value at rest under gravity alone: ``lim_{s->0} s Y(s)``.

    Parameters
    ----------
    solution : Solution
        Solved with gravity from equilibrium (the plan has equilibrium inputs).

    Returns
    -------
    Mapping of str to sympy.Expr
        Store name -> its static value (the equilibrium inputs' names).

    Raises
    ------
    SolveError
        Naming every mass with no static support (it keeps moving under its
        weight), or a store with no static value.

    Examples
    --------
    >>> from lumped.language.parse import parse_text
    >>> from lumped.network import assemble
    >>> solution = assemble(parse_text("gravity from equilibrium\\nmass M 2 kg\\n"
    ...                                "spring K from M to frame 100 N/m\\n"))
    >>> dict(static_values(solution))  # the spring holds the weight: F = -m g
    {'M': 0, 'K': -196133/10000}
    """
    plan = solution.plan
    netlist = plan.netlist
    gravity = plan.gravity
    assert gravity is not None

    def static(form: Form) -> sympy.Expr | None:
        total = solution.static_value(form, plan.gravity_inputs.values())
        return None if total is None else sympy.simplify(total * gravity)

    unsupported = []
    for element in netlist.elements:
        if element.kind is Kind.MASS:
            v = static(Form(across(plan, element.positive, element.negative)))
            if v is None or v != 0:
                unsupported.append(element.name)
    if unsupported:
        raise solve_error(
            netlist,
            "no static support for mass "
            + ", ".join(unsupported)
            + ": under its weight it keeps moving, so there is "
            "no equilibrium to start from (support it with a spring, or start unloaded)",
            unsupported,
        )
    values: dict[str, sympy.Expr] = {}
    for name in plan.equilibrium_inputs:
        element = netlist.element(name)
        assert element is not None
        if element.kind.role is Role.THROUGH_STORE:
            form = Form(MappingProxyType({plan.element_rows[name]: sympy.Integer(1)}))
        else:
            form = Form(across(plan, element.positive, element.negative))
        value = static(form)
        if value is None:
            raise solve_error(
                netlist,
                f"{name} has no static value under gravity: there is no equilibrium to start from",
                [name],
            )
        values[name] = value
    return MappingProxyType(values)


def initial_notes(plan: Plan, extra: Mapping[str, sympy.Expr]) -> tuple[str, ...]:
    """KVL loops of across stores/sources and KCL cut-sets of through stores/sources.

    Initial values that break them are legal but make impulses at t = 0.
    ``extra`` adds equilibrium initial values on top of the written ones.

    Examples
    --------
    >>> from lumped.language.parse import parse_text
    >>> from lumped.network.stamps import plan_equations
    >>> from lumped.topology import validate
    >>> plan = plan_equations(validate(parse_text(
    ...     "resistor R at a 1 ohm\\ninductor L1 from a to b 1 H, initially 2 A\\n"
    ...     "inductor L2 from b to ground 1 H\\n")))
    >>> print(initial_notes(plan, {})[0])  # doctest: +ELLIPSIS
    the initial currents of L1, L2 do not balance (KCL) at b: ...
    """
    netlist = plan.netlist
    notes: list[str] = []

    def initial(element: Element) -> sympy.Expr | None:
        if element.kind.is_source:
            if element.waveform is None:
                return sympy.Integer(0)
            if element.kind is Kind.DISPLACEMENT_SOURCE:
                return None  # a displacement that jumps is a velocity impulse: expected
            return waveforms.initial_value(element.waveform)
        if element.name in plan.drop_velocity:
            return plan.drop_velocity[element.name]
        value = element.initial if element.initial is not None else sympy.Integer(0)
        return value + extra.get(element.name, 0)

    # KVL: spanning forest with potentials over across stores and across sources.
    edges = [
        e
        for e in netlist.elements
        if e.kind.role in (Role.ACROSS_STORE, Role.ACROSS_SOURCE) and initial(e) is not None
    ]
    graph = Multigraph()
    for e in edges:
        graph.add_edge(
            _graph_node(e.positive), _graph_node(e.negative), name=e.name, value=initial(e)
        )
    for component in connected_components(graph):
        root = DATUM if DATUM in component else sorted(component)[0]
        potential = {root: sympy.Integer(0)}
        parent: dict[str, tuple[str, str]] = {}
        queue = [root]
        while queue:
            u = queue.pop(0)
            for v, keyed in graph[u].items():
                for data in keyed.values():
                    if v in potential:
                        continue
                    e = netlist.element(data["name"])
                    assert e is not None
                    # phi(positive) - phi(negative) = value along the tree.
                    sign = 1 if _graph_node(e.positive) == u else -1
                    potential[v] = potential[u] - sign * data["value"]
                    parent[v] = (u, data["name"])
                    queue.append(v)
        tree = {name for _, name in parent.values()}
        # Only this component's edges: stores need not touch the reference, so the
        # graph may hold several groups, each with its own potentials.
        for _, _, data in graph.subgraph(component).edges(data=True):
            if data["name"] in tree:
                continue
            e = netlist.element(data["name"])
            assert e is not None
            a, b = _graph_node(e.positive), _graph_node(e.negative)
            if sympy.simplify(potential[a] - potential[b] - data["value"]) != 0:
                loop = {data["name"]} | (_tree_path(parent, a) ^ _tree_path(parent, b))
                domain = e.domain
                notes.append(
                    f"the initial {domain.across_kind.word}s of "
                    + ", ".join(sorted(loop))
                    + " do not add up around their loop (KVL): the stores share them at once, "
                    f"with an impulse of {domain.through_kind.word} at t = 0"
                )

    # KCL: the super-nodes that only through stores and through sources join to the rest.
    for component in plan.topology.through_cut_sets:
        total = sympy.Integer(0)
        crossing: list[str] = []
        unknown = False
        for e in netlist.elements:
            if e.kind.role not in (Role.THROUGH_STORE, Role.THROUGH_SOURCE):
                continue
            a_in = _graph_node(e.positive) in component
            b_in = _graph_node(e.negative) in component
            if a_in == b_in:
                continue
            value = initial(e)
            if value is None:
                unknown = True
                continue
            crossing.append(e.name)
            total += value if a_in else -value
        if crossing and not unknown and sympy.simplify(total) != 0:
            domain = netlist.element(crossing[0]).domain
            notes.append(
                f"the initial {domain.through_kind.word}s of "
                + ", ".join(sorted(crossing))
                + " do not balance (KCL) at "
                + ", ".join(sorted(component))
                + f": expect an impulse of {domain.across_kind.word} at t = 0"
            )
    return tuple(notes)


def _tree_path(parent: dict[str, tuple[str, str]], node: str) -> set[str]:
    names: set[str] = set()
    while node in parent:
        node, name = parent[node]
        names.add(name)
    return names
