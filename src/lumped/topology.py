"""Topology checks with networkx, before any algebra.

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
"""

from __future__ import annotations

import difflib
from dataclasses import dataclass
from itertools import pairwise

import networkx as nx

from lumped import model as m
from lumped.errors import Location, ValidationError

DATUM = "<reference>"  # every reference node is this one node in the graphs


@dataclass(frozen=True)
class Topology:
    """The validated network: each node's domain and the element graph."""

    domains: dict[str, m.Domain]
    graph: nx.MultiGraph  # datum merged; edges keyed by element name


def _fail(netlist: m.Netlist, message: str, location: Location | None, hint: str) -> None:
    raise ValidationError(message, location, hint=hint).with_text(netlist.text)


def _datum(node: str) -> str:
    return DATUM if node in m.REFERENCE_NODES else node


def validate(netlist: m.Netlist) -> Topology:
    """Check a parsed netlist's topology; return node domains and the graph.

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
    graph = nx.MultiGraph()
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
    _check_drops(netlist)
    return Topology(domains, graph)


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
    graph = nx.Graph()
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
            graph.add_edges_from(pairwise(ends))
    body = netlist.element(dropped)
    if body is None or body.positive not in graph:
        return (dropped,)
    moving = nx.node_connected_component(graph, body.positive)
    others = [e.name for e in netlist.elements
              if e.kind is m.Kind.MASS and e.positive in moving and e.name != dropped]
    return (dropped, *others)


def _check_drops(netlist: m.Netlist) -> None:
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
        for body in falling_masses(netlist, drop.mass):
            if body in falls_with:
                _fail(netlist, f"'{body}' falls with both '{falls_with[body]}' and "
                      f"'{drop.mass}': they are one assembly", drop.location,
                      "keep one drop line per assembly (everything joined to the dropped "
                      "mass without passing through the frame falls with it)")
            falls_with[body] = drop.mass


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


def _check_reference(netlist: m.Netlist, graph: nx.MultiGraph) -> None:
    if DATUM not in graph:
        first = netlist.elements[0]
        reference = first.domain.reference
        _fail(netlist, "nothing is connected to a reference node", first.location,
              f"connect the network to '{reference}' (electrical: ground; mechanical: frame)")
    for component in nx.connected_components(graph):
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
    graph = nx.MultiGraph()
    for element in netlist.elements:
        if element.kind.role is m.Role.ACROSS_SOURCE:
            a, b = _datum(element.positive), _datum(element.negative)
            if graph.has_node(a) and graph.has_node(b) and nx.has_path(graph, a, b):
                path = nx.shortest_path(graph, a, b)
                loop = [graph.get_edge_data(u, v) for u, v in pairwise(path)]
                others = [next(iter(data)) for data in loop]
                _fail(netlist, f"{element.kind.word} '{element.name}' closes a loop of ideal "
                      f"across sources with " + ", ".join(f"'{o}'" for o in others),
                      element.location,
                      "ideal sources in a loop contradict each other; put a resistance (or "
                      "damper) in the loop, or remove one source")
            graph.add_edge(a, b, key=element.name)


def joined_graph(netlist: m.Netlist, *, without: tuple[m.Role, ...],
                 couplings_join_ports: bool) -> nx.Graph:
    """Nodes joined by every element whose role is not in ``without``; references merged.

    Each coupling joins the two ends of each of its ports, and with
    ``couplings_join_ports`` its two ports to each other as well.

    Examples
    --------
    >>> from lumped.language.parse import parse_text
    >>> net = parse_text("current source I at a step 1 A\\nresistor R from a to ground 1 ohm\\n")
    >>> sorted(joined_graph(net, without=(m.Role.THROUGH_SOURCE,),
    ...                     couplings_join_ports=True).edges)
    [('<reference>', 'a')]
    """
    graph = nx.Graph()
    graph.add_node(DATUM)
    for element in netlist.elements:
        a, b = _datum(element.positive), _datum(element.negative)
        graph.add_node(a)
        graph.add_node(b)
        if element.kind.role not in without:
            graph.add_edge(a, b)
    for coupling in netlist.couplings:
        ports = (coupling.input, coupling.output)
        ends = [_datum(n) for p in ports for n in (p.positive, p.negative)]
        links = pairwise(ends) if couplings_join_ports else (ends[:2], ends[2:])
        for u, v in links:
            graph.add_edge(u, v)
    return graph


def _check_through_cutsets(netlist: m.Netlist) -> None:
    # Every node must reach the reference without passing through a through source;
    # otherwise the sources alone fix the flow across that cut.
    graph = joined_graph(netlist, without=(m.Role.THROUGH_SOURCE,), couplings_join_ports=True)
    reachable = nx.node_connected_component(graph, DATUM)
    for element in netlist.elements:
        if element.kind.role is not m.Role.THROUGH_SOURCE:
            continue
        for node in (element.positive, element.negative):
            if _datum(node) not in reachable:
                _fail(netlist, f"node '{node}' is held only by ideal through sources "
                      f"({element.kind.word} '{element.name}')", element.location,
                      "the sources alone fix the flow into that node; connect it to the rest "
                      "through an element (a resistor, spring, damper ...)")


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
