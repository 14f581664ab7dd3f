"""A* against networkx Dijkstra on the same graph, and the heuristic's admissibility.

Reference: networkx ``dijkstra_path_length`` (Dijkstra 1959) on the navigation graph plus the
query's temporary edges; A* with an admissible heuristic must return the same least cost
(Hart, Nilsson & Raphael 1968).
"""

import dataclasses

import networkx as nx
import numpy as np
import pytest

import garments
from garnav import Circle, KeepOut, Rectangle
from garnav.demo import demo_garment
from garnav.plan import Planner
from garnav.testing import validate_route
from plan_courses import random_free_points


def _two_panels_with_keepouts():
    g = garments.two_panels()
    kos = (
        KeepOut("disc", "left", "button", Circle(200.0, 220.0, 30.0), clearance_mm=3.0),
        KeepOut("bar", "right", "zip", Rectangle(120.0, 150.0, 30.0, 200.0, 20.0), clearance_mm=2.0),
        KeepOut("near_seam", "right", "label", Circle(15.0, 300.0, 8.0), clearance_mm=1.0),
    )
    return dataclasses.replace(g, keepouts=kos)


def _check_against_dijkstra(planner, rng, queries):
    n0 = planner.nav.graph.number_of_nodes()
    pts = random_free_points(planner, rng, 2 * queries)
    h = planner.nav.graph.copy()
    for s, g in zip(pts[::2], pts[1::2]):
        h.add_nodes_from([n0, n0 + 1])
        for u, v, w in planner.query_edges(s, [g]):
            if not h.has_edge(u, v) or h[u][v]["weight"] > w:
                h.add_edge(u, v, weight=w)
        try:
            ref = nx.dijkstra_path_length(h, n0, n0 + 1, weight="weight")
        except nx.NetworkXNoPath:
            ref = None
        h.remove_nodes_from([n0, n0 + 1])
        found = planner._search(s, [g])
        if ref is None:
            assert found[0] is None
        else:
            assert found[1] == pytest.approx(ref, rel=1e-12, abs=1e-9)


def test_astar_equals_dijkstra_two_panels():
    planner = Planner(_two_panels_with_keepouts())
    _check_against_dijkstra(planner, np.random.default_rng(1), 50)


def test_astar_equals_dijkstra_tube():
    planner = Planner(garments.tube())
    _check_against_dijkstra(planner, np.random.default_rng(2), 20)


@pytest.fixture(scope="module")
def demo_planner():
    return Planner(demo_garment())


@pytest.mark.slow
def test_astar_equals_dijkstra_demo(demo_planner):
    _check_against_dijkstra(demo_planner, np.random.default_rng(3), 100)


@pytest.mark.slow
def test_heuristic_is_a_lower_bound_demo(demo_planner):
    """h(n) <= exact cost to the goal for every node (multi-source Dijkstra from the goal)."""
    from garnav.plan.search import heuristic_values

    planner = demo_planner
    ng = planner.nav
    n0 = ng.graph.number_of_nodes()
    rng = np.random.default_rng(4)
    h = ng.graph.copy()
    for s, g in zip(*[iter(random_free_points(planner, rng, 10))] * 2):
        h.remove_nodes_from([n0, n0 + 1])
        for u, v, w in planner.query_edges(s, [g]):
            h.add_edge(u, v, weight=w)
        dist = nx.single_source_dijkstra_path_length(h, n0 + 1, weight="weight")
        xy = np.vstack([ng.xy, s.xy[None], g.xy[None]])
        piece = np.concatenate([ng.node_piece, [ng.piece_index(s.piece), ng.piece_index(g.piece)]])
        hv = heuristic_values(planner.portal_graph, [(ng.piece_index(g.piece), g.xy)], xy, piece)
        for n, d in dist.items():
            assert hv[n] <= d + 1e-9


def test_nearest_picks_cheapest_goal():
    planner = Planner(_two_panels_with_keepouts())
    goals = ["right:250,350", "left:40,40", "right:60,60"]
    k, route = planner.nearest("left:100,100", goals)
    validate_route(route, planner.garment, planner.free, start="left:100,100", goal=goals[k])
    costs = [planner.route("left:100,100", g).cost for g in goals]
    assert k == int(np.argmin(costs))
    assert route.cost == pytest.approx(min(costs), rel=1e-9)


def test_via_points_join_legs():
    planner = Planner(_two_panels_with_keepouts())
    a = planner.route("left:50,50", "right:250,350")
    b = planner.route("left:50,50", "right:250,350", via=["left:280,380"])
    first = planner.route("left:50,50", "left:280,380")
    second = planner.route("left:280,380", "right:250,350")
    for r in (a, b):
        validate_route(r, planner.garment, planner.free, start="left:50,50", goal="right:250,350")
    assert b.length_mm == pytest.approx(first.length_mm + second.length_mm)
    assert b.length_mm >= a.length_mm - 1e-9
    assert len(b.turns_deg) == len(b.waypoints()) - 2 - len(b.crossings)
