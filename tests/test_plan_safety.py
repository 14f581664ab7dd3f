"""Safety of planned routes, by property-based testing (hypothesis, derandomized).

Keep-outs are checked against their EXACT shapes (shapely distance to the true polygon, or to the
circle's centre minus its radius: Euclidean geometry, no buffering), not against the grown shapes
the planner used: the route keeps >= radius + clearance from every hard keep-out and
>= radius + edge margin from every open edge (1e-6 mm slack for rounding), is no shorter than the
straight line (triangle inequality) and starts and ends exactly at the query points.

The scenarios are steered to where safety is at stake: the first keep-out is centred on the
straight line from start to goal, so every route found must bend round it (asserted; with
``--hypothesis-show-statistics`` all 200 single-piece and all 100 cross-seam passing examples
bend, where 8 of 200 did before the steering).
"""

import dataclasses
import math

import numpy as np
import pytest
import shapely
from hypothesis import HealthCheck, assume, event, given, settings
from hypothesis import strategies as st

import garments
from garnav import Circle, KeepOut, PolygonShape, Rectangle
from garnav.errors import NoRouteError
from garnav.plan import PiecePoint, Planner
from garnav.testing import validate_route
from plan_courses import random_free_points

TOL = 1e-6

coord_x = st.floats(80.0, 520.0)
coord_y = st.floats(80.0, 720.0)


@st.composite
def keepout(draw, index, centre=None):
    kind = draw(st.sampled_from(["circle", "rectangle", "polygon"]))
    cx, cy = centre if centre is not None else (draw(coord_x), draw(coord_y))
    size = draw(st.floats(5.0, 80.0))
    clearance = draw(st.floats(0.0, 10.0))
    if kind == "circle":
        shape = Circle(cx, cy, size / 2)
    elif kind == "rectangle":
        shape = Rectangle(cx, cy, size, draw(st.floats(5.0, 80.0)), draw(st.floats(0.0, 180.0)))
    else:
        n = draw(st.integers(3, 7))
        a = np.sort(np.array([draw(st.floats(0.0, 2 * math.pi)) for _ in range(n)]))
        assume(len(np.unique(np.round(a, 3))) == n)
        pts = np.stack([cx + size / 2 * np.cos(a), cy + size / 2 * np.sin(a)], axis=1)
        poly = shapely.Polygon(pts)
        assume(poly.is_valid and poly.area > 10.0)
        assume(centre is None or poly.contains(shapely.Point(cx, cy)))
        shape = PolygonShape(tuple(map(tuple, pts.tolist())))
    return KeepOut(f"k{index}", "panel", "custom", shape, clearance_mm=clearance)


@st.composite
def scenario(draw):
    start = (draw(coord_x), draw(coord_y))
    goal = (draw(coord_x), draw(coord_y))
    assume(math.dist(start, goal) > 120.0)
    f = draw(st.floats(0.3, 0.7))  # the first keep-out sits on the straight line, at fraction f
    on_line = (start[0] + f * (goal[0] - start[0]), start[1] + f * (goal[1] - start[1]))
    kos = [draw(keepout(0, centre=on_line))] + [draw(keepout(i)) for i in range(1, draw(st.integers(1, 4)))]
    radius = draw(st.floats(3.0, 25.0))
    return kos, radius, start, goal


def _bend_mm(points: np.ndarray, s: np.ndarray, t: np.ndarray) -> float:
    """How far the polyline strays from the straight line s -> t, mm (0 for a straight route)."""
    return float(shapely.LineString([s, t]).hausdorff_distance(shapely.LineString(points)))


def _exact_distance(ko: KeepOut, line: shapely.LineString) -> float:
    if isinstance(ko.shape, Circle):
        return line.distance(shapely.Point(ko.shape.cx, ko.shape.cy)) - ko.shape.radius
    return line.distance(ko.shape.exact_geometry())


@settings(max_examples=200, derandomize=True, deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much])
@given(scenario())
@pytest.mark.slow
def test_route_is_safe(case):
    kos, radius, start, goal = case
    base = garments.single_panel()
    robot = dataclasses.replace(base.robot, radius_mm=radius)
    g = dataclasses.replace(base, keepouts=tuple(kos), robot=robot)
    planner = Planner(g)
    fs = planner.free["panel"]
    s, t = np.array(start), np.array(goal)
    assume(fs.covers(s[None])[0] and fs.covers(t[None])[0])
    try:
        route = planner.route(PiecePoint("panel", *start), PiecePoint("panel", *goal))
    except Exception as exc:  # a separated goal is allowed, nothing else
        from garnav.errors import NoRouteError

        assert isinstance(exc, NoRouteError)
        event("no route")
        return
    validate_route(route, planner.garment, planner.free, start=("panel", *start), goal=("panel", *goal))
    pts = route.legs[0].points
    line = shapely.LineString(pts) if len(pts) > 1 and route.length_mm > 0 else shapely.Point(pts[0])
    for ko in kos:
        assert _exact_distance(ko, line) >= radius + ko.clearance_mm - TOL, ko.name
    outline = g.piece("panel").polygon.exterior
    assert outline.distance(line) >= radius + robot.edge_margin_mm - TOL
    assert route.length_mm >= np.linalg.norm(t - s) - 1e-9
    assert _bend_mm(np.asarray(pts), s, t) > 1e-3  # the straight line runs through the first keep-out
    event("a route bending round a keep-out")
    np.testing.assert_array_equal(pts[0], s)
    np.testing.assert_array_equal(pts[-1], t)


@pytest.mark.slow
def test_demo_routes_keep_their_distances():
    """Random routes on the demo garment: every leg keeps radius + clearance from the EXACT hard
    keep-outs of its piece and radius + margin from its open edges (shapely distances)."""
    from garnav.demo import demo_garment
    from garnav.polyline import sub_polyline

    g = demo_garment()
    planner = Planner(g)
    r = planner.robot
    pts = random_free_points(planner, np.random.default_rng(7), 16)
    for s, t in zip(pts[::2], pts[1::2]):
        route = planner.route(s, t)
        validate_route(route, planner.garment, planner.free, start=s, goal=t)
        for leg in route.legs:
            line = shapely.LineString(leg.points)
            for ko in g.keepouts_on(leg.piece):
                if ko.hard:
                    assert _exact_distance(ko, line) >= r.radius_mm + ko.clearance_mm - TOL, ko.name
            for run in g.open_runs():
                if run.piece == leg.piece:
                    edge = shapely.LineString(sub_polyline(g.piece(run.piece).edge(run.edge).array, run.from_mm, run.to_mm))
                    assert edge.distance(line) >= r.radius_mm + r.edge_margin_mm - TOL, run.edge
            for opening in g.piece(leg.piece).openings:
                ring = shapely.LinearRing(opening.array)
                assert ring.distance(line) >= r.radius_mm + r.edge_margin_mm - TOL, opening.name


@st.composite
def seam_scenario(draw):
    """Keep-outs near the seam of two_panels, given in the unfolded frame (right piece at +300);
    the first one centred on the straight line from start to goal."""
    kos = []
    start = (draw(st.floats(40.0, 280.0)), draw(st.floats(40.0, 360.0)))
    goal = (draw(st.floats(320.0, 560.0)), draw(st.floats(40.0, 360.0)))
    for k in range(draw(st.integers(1, 3))):
        if k == 0:  # on the line, on either side of the seam
            x = draw(st.one_of(st.floats(240.0, 285.0), st.floats(315.0, 360.0)))
            f = (x - start[0]) / (goal[0] - start[0])
            assume(0.05 <= f <= 0.95)
            y = start[1] + f * (goal[1] - start[1])
        else:
            x = draw(st.floats(240.0, 360.0))
            y = draw(st.floats(80.0, 320.0))
        size = draw(st.floats(4.0, 40.0))
        clearance = draw(st.floats(0.0, 6.0))
        if draw(st.booleans()):
            shape = Circle(x, y, size / 2)
        else:
            shape = Rectangle(x, y, size, draw(st.floats(4.0, 40.0)), draw(st.floats(0.0, 180.0)))
        kos.append((shape, clearance))
    return kos, start, goal


@settings(max_examples=100, derandomize=True, deadline=None, suppress_health_check=[HealthCheck.too_slow, HealthCheck.filter_too_much])
@given(seam_scenario())
@pytest.mark.slow
def test_route_across_seam_is_safe(case):
    """Across a seam the route keeps its distance from keep-outs on BOTH pieces, measured in the
    unfolded plane against the exact shapes (a keep-out must lie on one piece: those straddling
    the seam are skipped)."""
    shapes, start, goal = case
    base = garments.two_panels()
    seam_line = shapely.LineString([(300.0, 0.0), (300.0, 400.0)])
    kos = []
    for i, (shape, clearance) in enumerate(shapes):
        geom = shape.exact_geometry() if not isinstance(shape, Circle) else shapely.Point(shape.cx, shape.cy).buffer(shape.radius, 64)
        assume(not geom.intersects(seam_line))
        piece, dx = ("left", 0.0) if shape.cx < 300.0 else ("right", -300.0)
        local = dataclasses.replace(shape, cx=shape.cx + dx)
        kos.append(KeepOut(f"k{i}", piece, "custom", local, clearance_mm=clearance))
    g = dataclasses.replace(base, keepouts=tuple(kos))
    planner = Planner(g)
    s = np.array(start)
    t = np.array(goal) - [300.0, 0.0]
    assume(planner.free["left"].covers(s[None])[0] and planner.free["right"].covers(t[None])[0])
    try:
        route = planner.route(PiecePoint("left", *s), PiecePoint("right", *t))
        validate_route(route, planner.garment, planner.free, start=("left", *s), goal=("right", *t))
    except NoRouteError:
        event("no route")
        return
    shift = {"left": 0.0, "right": 300.0}
    parts = [leg.points + [shift[leg.piece], 0.0] for leg in route.legs]
    line = shapely.LineString(np.vstack(parts))
    assert _bend_mm(np.vstack(parts), s, np.array(goal)) > 1e-3  # round the first keep-out
    event("a route bending round a keep-out")
    for (shape, clearance), ko in zip(shapes, kos):
        if isinstance(shape, Circle):
            d = line.distance(shapely.Point(shape.cx, shape.cy)) - shape.radius
        else:
            d = line.distance(shape.exact_geometry())
        assert d >= base.robot.radius_mm + clearance - TOL, ko.name
