"""The plain graph walks of the checks against networkx, the library they replace.

The topology checks and the parameter order walk small graphs of their own
(:class:`lumped.topology.Multigraph`, ``language.build._dependency_order``) so
that reading a netlist does not import networkx.  Messages name what the walks
find, in the order they find it, so each walk must give what networkx gives
for the same graph built the same way: the reference is networkx itself, run
here on random graphs.
"""

from __future__ import annotations

import networkx as nx
from hypothesis import given, settings
from hypothesis import strategies as st

from lumped.language.build import _dependency_order
from lumped.topology import Multigraph, connected_components, node_connected_component, tree_path

NODES = st.sampled_from(["a", "b", "c", "d", "e", "f", "g", "<reference>"])
# An operation: add a node, or an edge (with a key or without, with data or without).
OPERATIONS = st.lists(st.one_of(
    st.tuples(st.just("node"), NODES),
    st.tuples(st.just("edge"), NODES, NODES, st.sampled_from([None, "R1", "R2", "C"]),
              st.integers(0, 3)),
), max_size=25)


def _build(operations):
    ours, theirs = Multigraph(), nx.MultiGraph()
    for operation in operations:
        if operation[0] == "node":
            ours.add_node(operation[1])
            theirs.add_node(operation[1])
        else:
            _, u, v, key, value = operation
            ours.add_edge(u, v, key=key, value=value)
            theirs.add_edge(u, v, key=key, value=value)
    return ours, theirs


@settings(max_examples=300, deadline=None)
@given(OPERATIONS)
def test_nodes_neighbours_and_edges_come_in_networkx_order(operations):
    ours, theirs = _build(operations)
    assert list(ours) == list(theirs.nodes)
    for node in theirs.nodes:
        assert {v: dict(keyed) for v, keyed in ours[node].items()} == \
            {v: dict(keyed) for v, keyed in theirs[node].items()}
        assert list(ours[node]) == list(theirs[node])
    assert ours.edges(data=True) == list(theirs.edges(data=True))
    assert ours.edges() == list(theirs.edges())


@settings(max_examples=300, deadline=None)
@given(OPERATIONS, st.sets(NODES))
def test_components_and_subgraphs_agree_with_networkx(operations, kept):
    ours, theirs = _build(operations)
    assert list(connected_components(ours)) == list(nx.connected_components(theirs))
    for node in theirs.nodes:
        assert node_connected_component(ours, node) == nx.node_connected_component(theirs, node)
    # networkx's subgraph view walks the kept set itself when it is the smaller (a set's
    # order, which changes from run to run); ours keeps the graph's order: same edges.
    assert _unordered(ours.subgraph(kept).edges(data=True)) == \
        _unordered(theirs.subgraph(kept).edges(data=True))
    whole = set(theirs.nodes)
    assert ours.subgraph(whole).edges(data=True) == list(theirs.subgraph(whole).edges(data=True))


def _unordered(edges):
    return sorted((min(u, v), max(u, v), sorted(data.items())) for u, v, data in edges)


@settings(max_examples=300, deadline=None)
@given(st.lists(st.tuples(NODES, NODES), max_size=12), NODES, NODES)
def test_paths_in_a_forest_are_networkx_shortest_paths(pairs, source, target):
    # Built as the checks build theirs: an edge that would close a loop is left out.
    ours, theirs = Multigraph(), nx.MultiGraph()
    for u, v in pairs:
        if u == v or (u in theirs and v in theirs and nx.has_path(theirs, u, v)):
            continue
        ours.add_edge(u, v, key=f"{u}{v}")
        theirs.add_edge(u, v, key=f"{u}{v}")
    reachable = source in theirs and target in theirs and nx.has_path(theirs, source, target)
    expected = nx.shortest_path(theirs, source, target) if reachable else None
    assert tree_path(ours, source, target) == expected


@settings(max_examples=300, deadline=None)
@given(st.lists(st.tuples(st.integers(0, 7), st.integers(0, 7)), max_size=20),
       st.integers(1, 8))
def test_parameter_order_is_networkx_topological_order(pairs, count):
    names = [f"p{i}" for i in range(count)]
    users: dict[str, dict[str, None]] = {name: {} for name in names}
    graph = nx.DiGraph()
    graph.add_nodes_from(names)
    for used, user in pairs:
        if used < count and user < count:
            users[names[used]][names[user]] = None
            graph.add_edge(names[used], names[user])
    try:
        expected = list(nx.topological_sort(graph))
    except nx.NetworkXUnfeasible:
        expected = None
    assert _dependency_order(users) == expected
