"""Exactness of single-piece planning against pyvisgraph (an independent visibility-graph library).

pyvisgraph (Reksten-Monsen, MIT) builds a full visibility graph of polygonal obstacles and runs
Dijkstra on it; we give it the SAME free-space polygons our planner uses (the hole rings of the
free space). Its quirks: it knows only obstacle polygons (interiors blocked), not an outer
boundary, so every course keeps all grown keep-outs and both query points inside the box
[60, 540] x [60, 740], strictly inside the panel's free outer boundary (x, y >= 10.05 mm from the
hems); a shortest path lies in the convex hull of the query points and the obstacles, so the outer
boundary never matters. Courses whose free space falls apart are skipped (pyvisgraph has no notion
of separate components).
"""

import copy

import numpy as np
import pyvisgraph as vg
import pytest
import shapely

from garnav.plan import PiecePoint, Planner
from garnav.testing import validate_route
from plan_courses import LazyCases, course, fast_then_slow

BOX = shapely.box(60.0, 60.0, 540.0, 740.0)


def _courses(count=50):
    seed = 0
    while count:
        g, rng = course(seed, n=6)
        seed += 1
        planner = Planner(g, quad_segs=4)
        region = planner.free["panel"].region
        if region.geom_type != "Polygon":
            continue
        holes = [shapely.Polygon(r) for r in region.interiors]
        if not all(BOX.contains(h) for h in holes):
            continue
        yield seed - 1, planner, rng
        count -= 1


@pytest.fixture(scope="module")
def courses():
    return LazyCases(_courses(50))


@pytest.mark.parametrize("k", fast_then_slow(50, fast=2))
def test_route_length_equals_pyvisgraph(courses, k):
    seed, planner, rng = courses[k]
    rng = copy.deepcopy(rng)  # the course's own stream, unchanged by earlier runs
    region = planner.free["panel"].region
    while True:
        s, g = rng.uniform([60, 60], [540, 740], size=(2, 2))
        if region.covers(shapely.Point(*s)) and region.covers(shapely.Point(*g)):
            break
    route = planner.route(PiecePoint("panel", *s), PiecePoint("panel", *g))
    validate_route(route, planner.garment, planner.free, start=("panel", *s), goal=("panel", *g))
    polys = [[vg.Point(x, y) for x, y in np.asarray(r.coords)[:-1]] for r in region.interiors]
    ref = vg.VisGraph()
    ref.build(polys, workers=1, status=False)
    path = ref.shortest_path(vg.Point(*s), vg.Point(*g))
    ref_len = sum(np.hypot(a.x - b.x, a.y - b.y) for a, b in zip(path[:-1], path[1:]))
    assert route.length_mm == pytest.approx(ref_len, rel=3e-14)  # observed 2.2e-15 relative
    # the route stayed in the box where the outer boundary cannot matter
    assert BOX.covers(shapely.LineString(route.legs[0].points))
