"""The navigation graph's edge arrays (garnav.plan.edgegraph) read like the networkx graph the
planner held before: the reference is ``networkx.Graph`` with nodes 0..N-1 and the same edges
added in sorted order (networkx 3, its documented insertion-ordered adjacency), compared exactly
(same order, same floats)."""

from __future__ import annotations

import dataclasses

import networkx as nx
import numpy as np
import pytest

import garments
from garnav import Circle, KeepOut
from garnav.plan import Planner
from garnav.plan.edgegraph import EdgeGraph


def _reference(g: EdgeGraph) -> nx.Graph:
    """The networkx graph built as garnav built it before (add nodes, then sorted edges)."""
    h = nx.Graph()
    h.add_nodes_from(range(g.number_of_nodes()))
    for a, b, ln, w, c in zip(g.i.tolist(), g.j.tolist(), g.length.tolist(), g.weight.tolist(), g.crossing.tolist()):
        h.add_edge(a, b, length=ln, weight=w, crossing=c)
    return h


@pytest.fixture(scope="module")
def planner():
    g = garments.two_panels()
    ko = KeepOut("disc", "left", "button", Circle(200.0, 220.0, 30.0), clearance_mm=3.0)
    seam = dataclasses.replace(g.seams[0], min_crossing_angle_deg=40.0)
    return Planner(dataclasses.replace(g, keepouts=(ko,), seams=(seam,)))


def test_reads_like_the_networkx_graph(planner):
    g = planner.nav.graph
    h = _reference(g)
    assert g.number_of_nodes() == h.number_of_nodes() and g.number_of_edges() == h.number_of_edges()
    assert g.number_of_edges() > 100 and g.crossing.any()
    assert list(g.edges()) == list(h.edges())
    assert list(g.edges(data=True)) == list(h.edges(data=True))
    assert g.adjacency() == [[(m, d["weight"]) for m, d in h.adj[n].items()] for n in range(h.number_of_nodes())]
    for n in range(h.number_of_nodes()):
        assert list(g.neighbors(n)) == list(h.neighbors(n))
        assert g[n] == dict(h[n])
        assert all(g.is_crossing(n, m) == d["crossing"] for m, d in h[n].items())
    assert not g.is_crossing(0, 0)
    k = g.to_networkx()
    assert list(k.edges(data=True)) == list(h.edges(data=True)) and list(k.nodes) == list(h.nodes)


def test_search_agrees_with_networkx_dijkstra(planner):
    # networkx's Dijkstra on the converted graph gives the costs the planner's A* finds
    g = planner.nav.graph.to_networkx()
    rng = np.random.default_rng(3)
    nodes = rng.choice(g.number_of_nodes(), size=6, replace=False).tolist()
    dist = nx.single_source_dijkstra_path_length(g, nodes[0], weight="weight")
    from garnav.plan.search import astar

    for goal in nodes[1:]:
        found = astar(planner.nav.neighbours, {nodes[0]: 0.0}, {goal}, lambda n: 0.0)
        if goal not in dist:
            assert found is None
        else:
            assert found is not None
            assert found[1] == pytest.approx(dist[goal], rel=1e-12)  # same sums, maybe in another order


def test_refuses_edges_out_of_order():
    with pytest.raises(ValueError, match="sorted"):
        EdgeGraph(3, [1, 0], [2, 1], [1.0, 1.0], [1.0, 1.0], [False, False])
    with pytest.raises(ValueError, match="smaller end first"):
        EdgeGraph(3, [1], [1], [1.0], [1.0], [False])
    with pytest.raises(ValueError, match="smaller end first"):
        EdgeGraph(2, [0], [2], [1.0], [1.0], [False])
    empty = EdgeGraph.from_edges(4, [])
    assert empty.number_of_edges() == 0 and empty.adjacency() == [[], [], [], []]
