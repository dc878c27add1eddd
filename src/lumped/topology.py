"""Topology checks, before any algebra, and the validated network they hand on.

:func:`validate` raises :class:`~lumped.errors.ValidationError` at the first
problem that would make the equations meaningless or unsolvable, pointing at
the element (or the watch / require line) concerned:

- no reference node, or part of the network not connected to one;
- an element whose two terminals are the same node;
- duplicate names;
- a watch or requirement naming an unknown node or element, or a quantity
  that does not belong to the target's domain;
- a loop of ideal across sources, or a cut-set of ideal through sources;
- electrical and mechanical terminals meeting at a node without a coupling;
- a drop naming something that is not a mass, or the same mass twice.

Then :func:`check_solvable` raises :class:`~lumped.errors.SolveError` for what
those checks let through and the equations cannot solve (a coupling's port
that only through sources tie to the reference).  What passes is handed on as
an immutable :class:`Topology`: the netlist and the graph facts the network
stage uses (node domains, the masses that fall together, the cut-sets of
through stores).

The checks walk plain graphs (:class:`Multigraph`): networkx takes longer to
import than the walks take, so it is loaded only for :attr:`Topology.graph`.
"""

from __future__ import annotations

import difflib
from collections.abc import Hashable, Iterable, Iterator, Mapping, Sequence
from dataclasses import dataclass
from functools import cached_property
from itertools import pairwise
from types import MappingProxyType
from typing import TYPE_CHECKING, Any

from lumped import model as m
from lumped.errors import Location, SolveError, ValidationError

if TYPE_CHECKING:
    import networkx as nx

DATUM = "<reference>"  # every reference node is this one node in the graphs

# What the command line has always said under a network without a unique solution.
_UNSOLVABLE_HINT = "the network has no unique solution as written; check the elements named above"


class Multigraph:
    """An undirected graph with parallel edges: just what the checks' walks need.

    Nodes keep the order in which they were first added, and each node's
    neighbours the order of their first edge, as networkx keeps them, so walks
    meet nodes (and messages name them) in the same order on every run.
    ``graph[node]`` maps each neighbour to ``{key: data}``, one entry per edge.

    Examples
    --------
    >>> graph = Multigraph()
    >>> graph.add_edge("a", "b", key="R1")
    >>> graph.add_edge("b", "a", key="R2")
    >>> graph.add_node("c")
    >>> list(graph), sorted(graph["a"]["b"]), [sorted(c) for c in connected_components(graph)]
    (['a', 'b', 'c'], ['R1', 'R2'], [['a', 'b'], ['c']])
    """

    def __init__(self) -> None:
        self._adjacency: dict[Hashable, dict[Hashable, dict[Hashable, dict[str, Any]]]] = {}

    def add_node(self, node: Hashable) -> None:
        """Add ``node`` (nothing happens if it is there already)."""
        self._adjacency.setdefault(node, {})

    def add_edge(self, u: Hashable, v: Hashable, key: Hashable | None = None, **data: Any) -> None:
        """Add an edge between ``u`` and ``v``, keyed ``key`` (else the first free integer).

        Adding an edge under a key already used between the two updates its data.
        """
        self.add_node(u)
        self.add_node(v)
        keyed = self._adjacency[u].get(v)
        if keyed is None:
            keyed = self._adjacency[u][v] = self._adjacency[v][u] = {}
        if key is None:
            key = len(keyed)
            while key in keyed:
                key += 1
        keyed.setdefault(key, {}).update(data)

    def __contains__(self, node: object) -> bool:
        return node in self._adjacency

    def __iter__(self) -> Iterator[Hashable]:
        return iter(self._adjacency)

    def __len__(self) -> int:
        return len(self._adjacency)

    def __getitem__(self, node: Hashable) -> Mapping[Hashable, Mapping[Hashable, dict[str, Any]]]:
        return MappingProxyType(self._adjacency[node])

    def subgraph(self, nodes: Iterable[Hashable]) -> Multigraph:
        """The graph on ``nodes`` alone, with the edges among them (their data shared)."""
        kept = set(nodes)
        sub = Multigraph()
        for node, neighbours in self._adjacency.items():
            if node in kept:
                sub._adjacency[node] = {v: keyed for v, keyed in neighbours.items() if v in kept}
        return sub

    def edges(self, data: bool = False) -> list[tuple[Any, ...]]:
        """Each edge once, as ``(u, v)`` or ``(u, v, data)``, from its first-added end."""
        seen: set[Hashable] = set()
        found: list[tuple[Any, ...]] = []
        for u, neighbours in self._adjacency.items():
            for v, keyed in neighbours.items():
                if v not in seen:
                    found.extend((u, v, d) if data else (u, v) for d in keyed.values())
            seen.add(u)
        return found


def node_connected_component(graph: Multigraph, node: Hashable) -> set[Hashable]:
    """The nodes joined to ``node`` (itself included), by breadth-first search.

    Examples
    --------
    >>> graph = Multigraph()
    >>> graph.add_edge(1, 2)
    >>> graph.add_edge(3, 4)
    >>> node_connected_component(graph, 2)
    {1, 2}
    """
    seen = {node}
    level = [node]
    while level:
        following = []
        for u in level:
            for v in graph[u]:
                if v not in seen:
                    seen.add(v)
                    following.append(v)
        level = following
    return seen


def connected_components(graph: Multigraph) -> Iterator[set[Hashable]]:
    """The graph's connected components, in the order of their first-added nodes.

    Examples
    --------
    >>> graph = Multigraph()
    >>> graph.add_edge("b", "c")
    >>> graph.add_node("a")
    >>> [sorted(component) for component in connected_components(graph)]
    [['b', 'c'], ['a']]
    """
    seen: set[Hashable] = set()
    for node in graph:
        if node not in seen:
            component = node_connected_component(graph, node)
            seen.update(component)
            yield component


def tree_path(graph: Multigraph, source: Hashable, target: Hashable) -> list[Hashable] | None:
    """The nodes on a shortest path from ``source`` to ``target``, or None if there is none.

    The checks ask it of forests, where the path is the only one.

    Examples
    --------
    >>> graph = Multigraph()
    >>> for u, v in [("a", "b"), ("b", "c"), ("b", "d")]:
    ...     graph.add_edge(u, v)
    >>> tree_path(graph, "a", "d"), tree_path(graph, "a", "e")
    (['a', 'b', 'd'], None)
    """
    if source not in graph or target not in graph:
        return None
    parent: dict[Hashable, Hashable] = {source: source}
    level = [source]
    while level and target not in parent:
        following = []
        for u in level:
            for v in graph[u]:
                if v not in parent:
                    parent[v] = u
                    following.append(v)
        level = following
    if target not in parent:
        return None
    path = [target]
    while path[-1] != source:
        path.append(parent[path[-1]])
    return path[::-1]


@dataclass(frozen=True)
class Topology:
    """A validated network: the netlist and the graph facts later stages use.

    Attributes
    ----------
    netlist : Netlist
        The netlist that passed :func:`validate`.
    domains : Mapping of str to Domain
        Each node's domain (the reference nodes aside).
    graph : networkx.MultiGraph
        Frozen; the reference nodes merged into :data:`DATUM`, an edge per
        element and per coupling port, keyed by its name.  Built (and networkx
        loaded) on first use.
    falling : Mapping of str to tuple of str
        Each dropped mass, and the masses that fall with it (itself first).
    through_cut_sets : tuple of frozenset of str
        The groups of nodes that only through stores and through sources join
        to the reference (and to each other): the initial through values on
        each group's boundary must balance.

    Examples
    --------
    >>> from lumped.language.parse import parse_text
    >>> topology = validate(parse_text("resistor R from a to ground 1 ohm\\n"
    ...                                "inductor L1 from a to b 1 H\\n"
    ...                                "inductor L2 from b to ground 1 H\\n"))
    >>> topology.node_domain("ground").value, topology.through_cut_sets
    ('electrical', (frozenset({'b'}),))
    """

    netlist: m.Netlist
    domains: Mapping[str, m.Domain]
    falling: Mapping[str, tuple[str, ...]]
    through_cut_sets: tuple[frozenset[str], ...]

    @cached_property
    def graph(self) -> nx.MultiGraph:
        """The network as a frozen networkx multigraph (see the class's attributes)."""
        import networkx as nx

        graph = nx.MultiGraph()
        for u, v, key in _element_edges(self.netlist):
            graph.add_edge(u, v, key=key)
        return nx.freeze(graph)

    def node_domain(self, node: str) -> m.Domain | None:
        """The domain of ``node``: ``ground`` is electrical, ``frame`` translational.

        Examples
        --------
        >>> from lumped.language.parse import parse_text
        >>> validate(parse_text("mass b 1 kg\\n")).node_domain("frame").value
        'translational'
        """
        if node == m.GROUND:
            return m.Domain.ELECTRICAL
        if node == m.FRAME:
            return m.Domain.TRANSLATIONAL
        return self.domains.get(node)


def _fail(netlist: m.Netlist, message: str, location: Location | None, hint: str) -> None:
    raise ValidationError(message, location, hint=hint).with_text(netlist.text)


def solve_error(netlist: m.Netlist, message: str, named: Sequence[str] = ()) -> SolveError:
    """A :class:`SolveError` at the first of ``named`` that is an element or coupling.

    The error carries that element's location and the netlist's text, so the
    message shows the line with a caret.

    Examples
    --------
    >>> from lumped.language.parse import parse_text
    >>> net = parse_text("resistor R from a to ground 1 ohm\\n", "f.lumped")
    >>> print(solve_error(net, "R cannot be solved", ["R"]).render().splitlines()[0])
    f.lumped:1:1: R cannot be solved
    """
    location = None
    for name in named:
        item = netlist.element(name) or netlist.coupling(name)
        if item is not None and item.location is not None:
            location = item.location
            break
    error = SolveError(message, location, hint=_UNSOLVABLE_HINT)
    return error.with_text(netlist.text)  # type: ignore[return-value]


def _datum(node: str) -> str:
    return DATUM if node in m.REFERENCE_NODES else node


def _element_edges(netlist: m.Netlist) -> Iterator[tuple[str, str, str]]:
    """An edge per element and per coupling port, references merged, keyed by its name."""
    for element in netlist.elements:
        yield _datum(element.positive), _datum(element.negative), element.name
    for coupling in netlist.couplings:
        for port in (coupling.input, coupling.output):
            yield _datum(port.positive), _datum(port.negative), coupling.name


def validate(netlist: m.Netlist) -> Topology:
    """Check a parsed netlist's topology once; return it as a :class:`Topology`.

    Parameters
    ----------
    netlist : Netlist

    Returns
    -------
    Topology
        The netlist with its node domains, graph, falling assemblies and
        cut-sets of through stores.

    Raises
    ------
    ValidationError
        At the first rule broken (see the module's description).
    SolveError
        When the checks pass but the equations still have no unique solution
        (:func:`check_solvable`).

    Examples
    --------
    >>> from lumped.language.parse import parse_text
    >>> net = parse_text("resistor R from a to ground 1 ohm\\ncurrent source I at a step 1 A\\n")
    >>> validate(net).domains["a"].value
    'electrical'
    """
    if not netlist.elements:
        _fail(netlist, "the netlist has no elements", None,
              "add elements such as `resistor R1 from a to ground 1 kohm`")
    _check_names(netlist)
    domains = _check_domains(netlist)
    graph = Multigraph()
    for element in netlist.elements:
        if element.positive == element.negative:
            _fail(netlist, f"both terminals of {element.kind.word} '{element.name}' are on node "
                  f"'{element.positive}'", element.location,
                  "connect the two ends to different nodes (or remove the element)")
        graph.add_edge(_datum(element.positive), _datum(element.negative), key=element.name)
    for coupling in netlist.couplings:
        for port in (coupling.input, coupling.output):
            if port.positive == port.negative:
                _fail(netlist, f"both terminals of a port of {coupling.kind.word} "
                      f"'{coupling.name}' are on node '{port.positive}'", coupling.location,
                      "connect the port across two different nodes")
            graph.add_edge(_datum(port.positive), _datum(port.negative), key=coupling.name)
    _check_reference(netlist, graph)
    _check_across_loops(netlist)
    _check_through_cutsets(netlist)
    _check_targets(netlist, domains)
    falling = _check_drops(netlist)
    check_solvable(netlist)
    return Topology(netlist, MappingProxyType(domains), MappingProxyType(falling),
                    _through_cut_sets(netlist))


def falling_masses(netlist: m.Netlist, dropped: str) -> tuple[str, ...]:
    """The masses that fall with a dropped one, the dropped mass first.

    Everything joined to the dropped body by springs, dampers or couplings
    without passing through the frame falls with it: an instrument on an
    isolator inside a package lands at the package's speed.

    Examples
    --------
    >>> from lumped.language.parse import parse_text
    >>> net = parse_text("mass box 8 kg\\nmass gauge 1 kg\\n"
    ...                  "spring Kpad from box to frame 80 kN/m\\n"
    ...                  "spring Kiso from gauge to box 20 kN/m\\ndrop box from 1 m\\n")
    >>> falling_masses(net, "box")
    ('box', 'gauge')
    """
    graph = Multigraph()
    for element in netlist.elements:
        if element.domain is not m.Domain.TRANSLATIONAL:
            continue
        graph.add_node(element.positive)
        if m.FRAME not in (element.positive, element.negative):
            graph.add_edge(element.positive, element.negative)
    for coupling in netlist.couplings:
        ends = [n for port in (coupling.input, coupling.output)
                for n in (port.positive, port.negative) if n != m.FRAME]
        if coupling.kind.input_domain is coupling.kind.output_domain is m.Domain.TRANSLATIONAL:
            for u, v in pairwise(ends):
                graph.add_edge(u, v)
    body = netlist.element(dropped)
    if body is None or body.positive not in graph:
        return (dropped,)
    moving = node_connected_component(graph, body.positive)
    others = [e.name for e in netlist.elements
              if e.kind is m.Kind.MASS and e.positive in moving and e.name != dropped]
    return (dropped, *others)


def _check_drops(netlist: m.Netlist) -> dict[str, tuple[str, ...]]:
    """Check the drop lines; return each dropped mass with the masses falling with it."""
    falling: dict[str, tuple[str, ...]] = {}
    falls_with: dict[str, str] = {}
    seen: set[str] = set()
    masses = [e.name for e in netlist.elements if e.kind is m.Kind.MASS]
    for drop in netlist.drops:
        element = netlist.element(drop.mass)
        if element is None or element.kind is not m.Kind.MASS:
            close = difflib.get_close_matches(drop.mass, masses, n=1)
            what = "no element" if element is None else f"a {element.kind.word}"
            _fail(netlist, f"the drop names '{drop.mass}', which is {what}, not a mass",
                  drop.location, f"did you mean '{close[0]}'?" if close else
                  "drop one of the netlist's masses")
        if drop.mass in seen:
            _fail(netlist, f"'{drop.mass}' is dropped twice", drop.location,
                  "keep one drop line per mass")
        seen.add(drop.mass)
        falling[drop.mass] = falling_masses(netlist, drop.mass)
        for body in falling[drop.mass]:
            if body in falls_with:
                _fail(netlist, f"'{body}' falls with both '{falls_with[body]}' and "
                      f"'{drop.mass}': they are one assembly", drop.location,
                      "keep one drop line per assembly (everything joined to the dropped "
                      "mass without passing through the frame falls with it)")
            falls_with[body] = drop.mass
    return falling


def _check_names(netlist: m.Netlist) -> None:
    seen: dict[str, Location | None] = {}
    for item in (*netlist.elements, *netlist.couplings):
        if item.name in seen:
            first = seen[item.name]
            where = f" on line {first.line}" if first else ""
            _fail(netlist, f"the name '{item.name}' is used twice", item.location,
                  f"the first use is{where}; give every element its own name")
        seen[item.name] = item.location
    for parameter in netlist.parameters:
        if parameter.name in seen:
            _fail(netlist, f"'{parameter.name}' names both a parameter and an element",
                  parameter.location, "rename one of them")


def _check_domains(netlist: m.Netlist) -> dict[str, m.Domain]:
    domains: dict[str, m.Domain] = {}
    first_user: dict[str, str] = {}

    def claim(node: str, domain: m.Domain, who: str, location: Location | None) -> None:
        if node in m.REFERENCE_NODES:
            expected = m.GROUND if domain is m.Domain.ELECTRICAL else m.FRAME
            if node != expected:
                _fail(netlist, f"{who} is {domain.value} and cannot connect to '{node}'",
                      location, f"{domain.value} elements connect to '{expected}'")
            return
        if node in domains and domains[node] is not domain:
            _fail(netlist, f"node '{node}' joins {domains[node].value} ({first_user[node]}) "
                  f"and {domain.value} ({who}) terminals", location,
                  "different domains meet only through a coupling: transformer, lever, gear, "
                  "belt, rack or motor")
        domains.setdefault(node, domain)
        first_user.setdefault(node, who)

    for element in netlist.elements:
        who = f"{element.kind.word} '{element.name}'"
        claim(element.positive, element.domain, who, element.location)
        claim(element.negative, element.domain, who, element.location)
    for coupling in netlist.couplings:
        who = f"{coupling.kind.word} '{coupling.name}'"
        for port, domain in ((coupling.input, coupling.kind.input_domain),
                             (coupling.output, coupling.kind.output_domain)):
            claim(port.positive, domain, who + (" input" if port is coupling.input else
                                                " output"), coupling.location)
            claim(port.negative, domain, who, coupling.location)
    return domains


def _check_reference(netlist: m.Netlist, graph: Multigraph) -> None:
    if DATUM not in graph:
        first = netlist.elements[0]
        reference = first.domain.reference
        _fail(netlist, "nothing is connected to a reference node", first.location,
              f"connect the network to '{reference}' (electrical: ground; mechanical: frame)")
    for component in connected_components(graph):
        if DATUM in component:
            continue
        names = sorted(component)
        culprits = [e for e in netlist.elements
                    if e.positive in component or e.negative in component]
        location = culprits[0].location if culprits else None
        _fail(netlist, "nodes " + ", ".join(f"'{n}'" for n in names[:6])
              + (" ..." if len(names) > 6 else "") + " are not connected to the reference",
              location, "connect this part to ground or frame, or through a coupling")


def _check_across_loops(netlist: m.Netlist) -> None:
    graph = Multigraph()  # a forest: an edge that would close a loop is refused
    for element in netlist.elements:
        if element.kind.role is m.Role.ACROSS_SOURCE:
            a, b = _datum(element.positive), _datum(element.negative)
            path = tree_path(graph, a, b)
            if path is not None:
                loop = [graph[u][v] for u, v in pairwise(path)]
                others = [next(iter(data)) for data in loop]
                _fail(netlist, f"{element.kind.word} '{element.name}' closes a loop of ideal "
                      f"across sources with " + ", ".join(f"'{o}'" for o in others),
                      element.location,
                      "ideal sources in a loop contradict each other; put a resistance (or "
                      "damper) in the loop, or remove one source")
            graph.add_edge(a, b, key=element.name)


def joined_graph(netlist: m.Netlist, *, without: tuple[m.Role, ...],
                 couplings_join_ports: bool) -> Multigraph:
    """Nodes joined by every element whose role is not in ``without``; references merged.

    Each coupling joins the two ends of each of its ports, and with
    ``couplings_join_ports`` its two ports to each other as well.  Two nodes
    are joined by one edge at most.

    Examples
    --------
    >>> from lumped.language.parse import parse_text
    >>> net = parse_text("current source I at a step 1 A\\nresistor R from a to ground 1 ohm\\n")
    >>> sorted(joined_graph(net, without=(m.Role.THROUGH_SOURCE,),
    ...                     couplings_join_ports=True).edges())
    [('<reference>', 'a')]
    """
    graph = Multigraph()
    graph.add_node(DATUM)

    def join(u: str, v: str) -> None:
        if u not in graph or v not in graph[u]:
            graph.add_edge(u, v)

    for element in netlist.elements:
        a, b = _datum(element.positive), _datum(element.negative)
        graph.add_node(a)
        graph.add_node(b)
        if element.kind.role not in without:
            join(a, b)
    for coupling in netlist.couplings:
        ports = (coupling.input, coupling.output)
        ends = [_datum(n) for p in ports for n in (p.positive, p.negative)]
        links = pairwise(ends) if couplings_join_ports else (ends[:2], ends[2:])
        for u, v in links:
            join(u, v)
    return graph


def _check_through_cutsets(netlist: m.Netlist) -> None:
    # Every node must reach the reference without passing through a through source;
    # otherwise the sources alone fix the flow across that cut.
    graph = joined_graph(netlist, without=(m.Role.THROUGH_SOURCE,), couplings_join_ports=True)
    reachable = node_connected_component(graph, DATUM)
    for element in netlist.elements:
        if element.kind.role is not m.Role.THROUGH_SOURCE:
            continue
        for node in (element.positive, element.negative):
            if _datum(node) not in reachable:
                _fail(netlist, f"node '{node}' is held only by ideal through sources "
                      f"({element.kind.word} '{element.name}')", element.location,
                      "the sources alone fix the flow into that node; connect it to the rest "
                      "through an element (a resistor, spring, damper ...)")


def _through_cut_sets(netlist: m.Netlist) -> tuple[frozenset[str], ...]:
    # Super-nodes: nodes joined by everything but through stores and through sources.
    joined = joined_graph(netlist, without=(m.Role.THROUGH_STORE, m.Role.THROUGH_SOURCE),
                          couplings_join_ports=False)
    return tuple(frozenset(component) for component in connected_components(joined)
                 if DATUM not in component)


def check_solvable(netlist: m.Netlist) -> None:
    """Raise SolveError for loops of across sources and nodes with no path to the reference.

    The conditions the equations need, port by port: a coupling ties its two
    ports' across and through values, not their potentials, so a port whose
    nodes only through sources tie to the reference has no unique solution
    even where :func:`validate`'s cut-set rule (which crosses couplings) is met.
    The messages name the elements; the error points at the first.

    Examples
    --------
    >>> from lumped.language.parse import parse_text
    >>> check_solvable(parse_text("current source I at a step 1 A\\n"
    ...                           "resistor R from a to ground 1 ohm\\n"))
    """
    across = Multigraph()  # a forest: an edge that would close a loop is refused
    for element in netlist.elements:
        if element.kind.role is m.Role.ACROSS_SOURCE:
            a, b = _datum(element.positive), _datum(element.negative)
            if a == b:
                raise solve_error(
                    netlist,
                    f"{element.kind.word} {element.name} is shorted: both ends are the same node",
                    [element.name],
                )
            path = tree_path(across, a, b)
            if path is not None:
                names = sorted([element.name] + [
                    next(iter(across[u][v].values()))["name"]
                    for u, v in pairwise(path)
                ])
                raise solve_error(
                    netlist,
                    "across sources " + ", ".join(names)
                    + " form a loop: their values cannot all hold",
                    names,
                )
            across.add_edge(a, b, name=element.name)
    held = Multigraph()
    held.add_node(DATUM)
    through_sources: dict[str, list[str]] = {}
    for element in netlist.elements:
        a, b = _datum(element.positive), _datum(element.negative)
        held.add_node(a)
        held.add_node(b)
        if element.kind.role is m.Role.THROUGH_SOURCE:
            through_sources.setdefault(a, []).append(element.name)
            through_sources.setdefault(b, []).append(element.name)
        else:
            held.add_edge(a, b)
    for coupling in netlist.couplings:
        for port in (coupling.input, coupling.output):
            held.add_edge(_datum(port.positive), _datum(port.negative))
    for component in connected_components(held):
        if DATUM in component:
            continue
        nodes = sorted(component)
        feeders = sorted({x for node in nodes for x in through_sources.get(node, [])})
        where = "node " + nodes[0] if len(nodes) == 1 else "nodes " + ", ".join(nodes)
        if feeders:
            raise solve_error(
                netlist,
                f"{where} reach the reference only through the through sources "
                f"{', '.join(feeders)}: "
                "nothing fixes their across values (add a path to ground/frame)"
                if len(nodes) > 1
                else f"{where} is fed only by the through source(s) {', '.join(feeders)}: "
                "nothing fixes its across value (add a path to ground/frame)",
                feeders,
            )
        raise solve_error(
            netlist,
            f"{where} have no path to the reference (ground/frame): "
            "nothing fixes their across values",
        )


_NODE_PREPOSITIONS = ("at", "of")
_ELEMENT_PREPOSITIONS = ("in", "through", "across", "of")


def _check_targets(netlist: m.Netlist, domains: dict[str, m.Domain]) -> None:
    quantities = [(q, q.location) for q in netlist.watches]
    quantities += [(r.quantity, r.quantity.location or r.location) for r in netlist.requirements]
    names = [e.name for e in netlist.elements] + [c.name for c in netlist.couplings]
    nodes = list(domains)
    for quantity, location in quantities:
        target = quantity.target
        element = netlist.element(target)
        if quantity.preposition == "at" or (quantity.preposition == "of" and element is None):
            if target in m.REFERENCE_NODES:
                _fail(netlist, f"'{target}' is the reference; its {quantity.kind.word} is zero "
                      "by definition", location, "watch another node")
            if target not in domains:
                close = difflib.get_close_matches(target, nodes + names, n=1)
                _fail(netlist, f"unknown node '{target}'", location,
                      f"did you mean '{close[0]}'?" if close else
                      "name a node that an element connects to")
            domain = domains[target]
        else:
            coupling = netlist.coupling(target)
            if element is None and coupling is not None:
                # A coupling's quantities are those of the port in the quantity's domain
                # (the input port when both ports share a domain).
                ports = (coupling.kind.input_domain, coupling.kind.output_domain)
                if quantity.kind.domain not in ports:
                    _fail(netlist, f"{quantity.kind.word} does not apply to {coupling.kind.word} "
                          f"'{target}'", location, _quantity_hint(ports[0]))
                continue
            if element is None:
                close = difflib.get_close_matches(target, names + nodes, n=1)
                _fail(netlist, f"unknown element '{target}'", location,
                      f"did you mean '{close[0]}'?" if close else "name an element of the netlist")
            domain = element.domain
            if quantity.kind.is_through and quantity.preposition == "across":
                _fail(netlist, f"a {quantity.kind.word} flows in an element, not across it",
                      location, f"write `{quantity.kind.word} in {target}`")
        if quantity.kind.domain is not domain:
            _fail(netlist, f"{quantity.kind.word} does not apply to {domain.value} "
                  f"'{target}'", location, _quantity_hint(domain))


def _quantity_hint(domain: m.Domain) -> str:
    words = ", ".join(kind.word for kind in domain.quantity_kinds)
    return f"for {domain.value} parts watch {words}"
