"""Seam crossings: local optimality after refinement, straight crossings, obstacles carried across
seams, and frame-independent turn angles.

References: Snell's law with equal indices (a shortest path over a straight fold keeps its angle to
the fold: the unfolded path is a straight line, Euclid); the unfolded tube (a cylinder is
developable, so its geodesics are straight lines in the unrolled rectangle, do Carmo §4-4).
"""

import dataclasses
import math

import numpy as np
import pytest
import shapely

import garments
from garnav import Circle, Edge, KeepOut, Landmark, PolygonShape, Rectangle
from garnav.demo import demo_garment
from garnav.model import SEAM_SIDES
from garnav.plan import Planner
from garnav.plan.portals import seam_sides
from garnav.plan.refine import Anchor, piece_path
from garnav.plan.route import crossing_side
from garnav.polyline import rotation_matrix
from garnav.testing import validate_route


def _anchor_at(g, crossing, arriving, t=None):
    """Anchor (point, tangent, inward normal, angle limit) of a crossing on the leaving side or,
    with ``arriving``, on the arriving side; at fraction t if given."""
    seam = g.seam(crossing.seam)
    side = SEAM_SIDES.index(crossing_side(g, crossing))  # portal sides are indexed 0 = a, 1 = b
    sides = seam_sides(g, seam, np.array([crossing.fraction if t is None else t]))
    xy, tan, inward = sides.side(1 - side if arriving else side)
    return Anchor(xy[0], tan[0], inward[0], seam.min_crossing_angle_deg)


def _moved_cost(planner, route, i, delta_mm):
    """Cost of the route with crossing i moved by delta_mm along run a and its two legs re-planned
    (None when the moved crossing is not allowed)."""
    g = planner.garment
    c = route.crossings[i]
    t = c.fraction + delta_mm / g.run_length(g.seam(c.seam).a)
    if not 0.0 <= t <= 1.0:
        return None
    leave, arrive = _anchor_at(g, c, False, t), _anchor_at(g, c, True, t)
    leg_a, leg_b = route.legs[i], route.legs[i + 1]
    if not (planner.free[leg_a.piece].covers(leave.xy[None])[0] and planner.free[leg_b.piece].covers(arrive.xy[None])[0]):
        return None
    start = Anchor(leg_a.points[0]) if i == 0 else _anchor_at(g, route.crossings[i - 1], True)
    end = Anchor(leg_b.points[-1]) if i + 1 == len(route.crossings) else _anchor_at(g, route.crossings[i + 1], False)
    pa, ca = piece_path(planner, leg_a.piece, start, leave)
    pb, cb = piece_path(planner, leg_b.piece, arrive, end)
    if pa is None or pb is None:
        return None
    old_a = np.linalg.norm(np.diff(leg_a.points, axis=0), axis=1).sum()
    old_b = np.linalg.norm(np.diff(leg_b.points, axis=0), axis=1).sum()
    return route.cost - old_a - old_b + ca + cb


def _assert_locally_shortest(planner, route):
    assert route.crossings
    for i in range(len(route.crossings)):
        for delta in (-1.0, 1.0):
            moved = _moved_cost(planner, route, i, delta)
            if moved is not None:
                assert moved >= route.cost - 1e-3, (route.crossings[i].seam, delta)


@pytest.fixture(scope="module")
def demo_planner():
    return Planner(demo_garment())


@pytest.mark.slow
def test_wrist_to_chest_crosses_armhole_locally_shortest(demo_planner):
    route = demo_planner.route("wrist_left", "sternum_left")
    validate_route(route, demo_planner.garment, demo_planner.free, start="wrist_left", goal="sternum_left")
    assert any(c.seam.startswith("armhole_left") for c in route.crossings)
    _assert_locally_shortest(demo_planner, route)


@pytest.mark.parametrize("a, b", [("wrist_left", "wrist_right"), ("omphalion", "acromion_left"), ("wrist_right", "dock")])
@pytest.mark.slow
def test_demo_crossings_locally_shortest(demo_planner, a, b):
    route = demo_planner.route(a, b)
    validate_route(route, demo_planner.garment, demo_planner.free, start=a, goal=b)
    _assert_locally_shortest(demo_planner, route)
    for c in route.crossings:
        assert c.angle_deg >= demo_planner.garment.seam(c.seam).min_crossing_angle_deg - 1e-6


def test_two_panels_straight_crossing():
    planner = Planner(garments.two_panels())
    route = planner.route("left:50,100", "right:250,300")
    validate_route(route, planner.garment, planner.free, start="left:50,100", goal="right:250,300")
    # unfolded, the two pieces form one 600 x 400 rectangle: the route is the straight segment
    assert route.length_mm == pytest.approx(math.hypot(500.0, 200.0), rel=1e-9)
    assert route.crossings[0].fraction == pytest.approx(0.5, abs=1e-6)
    np.testing.assert_allclose(route.turns_deg, 0.0, atol=1e-12)  # observed 2.9e-15 deg
    _assert_locally_shortest(planner, route)


def test_tube_wraps_across_its_own_seam():
    planner = Planner(garments.tube())
    circ = 2 * math.pi * 50.0
    route = planner.route("tube:20,100", "tube:290,300")
    validate_route(route, planner.garment, planner.free, start="tube:20,100", goal="tube:290,300")
    # unrolled cylinder: the shorter way round is 20 + (circ - 290) across, 200 up
    assert route.length_mm == pytest.approx(math.hypot(20 + circ - 290, 200.0), rel=3e-9)  # observed 2.1e-10 relative
    assert route.seams_crossed == ("closing",)
    np.testing.assert_allclose(route.turns_deg, 0.0, atol=4e-6)  # observed 4.0e-7 deg
    _assert_locally_shortest(planner, route)


def test_crossing_angle_limit_is_kept():
    g = garments.two_panels()
    seam = dataclasses.replace(g.seams[0], min_crossing_angle_deg=80.0)
    planner = Planner(dataclasses.replace(g, seams=(seam,)))
    route = planner.route("left:100,50", "right:200,350")
    validate_route(route, planner.garment, planner.free, start="left:100,50", goal="right:200,350")
    c = route.crossings[0]
    assert c.angle_deg >= 80.0 - 1e-6
    # the first segment after the crossing keeps the limit too, for at least the robot radius
    d = route.legs[1].points[1] - route.legs[1].points[0]
    assert math.degrees(math.atan2(abs(d[1]), abs(d[0]))) <= 10.0 + 1e-6
    assert np.linalg.norm(d) >= g.robot.radius_mm - 1e-9
    _assert_locally_shortest(planner, route)


def test_keepout_across_seam_is_respected():
    """A disc on the right piece next to the seam; the route crosses beside it. Checked in the
    unfolded frame (right piece shifted by +300 mm) against the exact disc."""
    g = garments.two_panels()
    ko = KeepOut("stud", "right", "button", Circle(6.0, 200.0, 5.0), clearance_mm=2.0)
    g = dataclasses.replace(g, keepouts=(ko,))
    planner = Planner(g)
    route = planner.route("left:150,200", "right:150,200")
    validate_route(route, planner.garment, planner.free, start="left:150,200", goal="right:150,200")
    unfolded = np.vstack([route.legs[0].points, route.legs[1].points + [300.0, 0.0]])
    d = shapely.LineString(unfolded).distance(shapely.Point(306.0, 200.0)) - 5.0
    assert d >= g.robot.radius_mm + 2.0 - 1e-6
    # and the left piece's free space knows about the stud
    assert any(o.carried for o in planner.free["left"].obstacles)


def _rotate_piece(g, name, angle_deg, shift):
    rot = rotation_matrix(math.radians(angle_deg))
    move = lambda pts: tuple(map(tuple, (np.asarray(pts, float) @ rot.T + shift).tolist()))
    p = g.piece(name)
    piece = dataclasses.replace(p, edges=tuple(Edge(e.name, move(e.points)) for e in p.edges))
    kos = []
    for k in g.keepouts:
        if k.piece == name:
            s = k.shape
            if isinstance(s, Circle):
                c = move([(s.cx, s.cy)])[0]
                s = Circle(c[0], c[1], s.radius)
            elif isinstance(s, Rectangle):
                c = move([(s.cx, s.cy)])[0]
                s = Rectangle(c[0], c[1], s.width, s.height, s.angle_deg + angle_deg)
            else:
                s = PolygonShape(move(s.points))
            k = dataclasses.replace(k, shape=s)
        kos.append(k)
    lms = []
    for lm in g.landmarks:
        if lm.piece == name:
            x, y = move([(lm.x, lm.y)])[0]
            lm = dataclasses.replace(lm, x=x, y=y)
        lms.append(lm)
    pieces = tuple(piece if q.name == name else q for q in g.pieces)
    return dataclasses.replace(g, pieces=pieces, keepouts=tuple(kos), landmarks=tuple(lms))


def test_turns_do_not_depend_on_piece_frames():
    # Polygon keep-outs only: a grown polygon turns with its piece, while a circle's polygon has
    # its vertices at fixed angles of the piece frame, so rotating the frame would move them.
    g = garments.two_panels()
    kos = (
        KeepOut("hexagon", "left", "button", PolygonShape(tuple(
            (200.0 + 30.0 * math.cos(a), 220.0 + 30.0 * math.sin(a)) for a in np.arange(6) * math.pi / 3
        )), clearance_mm=3.0),
        KeepOut("bar", "right", "zip", Rectangle(120.0, 250.0, 30.0, 200.0, 20.0), clearance_mm=2.0),
    )
    lms = g.landmarks + (Landmark("a", piece="left", x=40.0, y=60.0), Landmark("b", piece="right", x=260.0, y=380.0))
    g = dataclasses.replace(g, keepouts=kos, landmarks=lms)
    base = Planner(g).route("a", "b")
    turned = _rotate_piece(_rotate_piece(g, "right", 73.0, np.array([500.0, -40.0])), "left", -20.0, np.array([3.0, 9.0]))
    other = Planner(turned).route("a", "b")
    assert other.length_mm == pytest.approx(base.length_mm, rel=1e-6)
    assert len(base.turns_deg) == len(other.turns_deg) >= 2
    np.testing.assert_allclose(other.turns_deg, base.turns_deg, atol=3e-5)  # observed 2.9e-6 deg


def test_sum_of_turns_is_net_heading_change():
    g = garments.single_panel()
    kos = tuple(
        KeepOut(f"k{i}", "panel", "custom", Circle(x, y, 25.0), clearance_mm=2.0)
        for i, (x, y) in enumerate([(300, 200), (250, 400), (350, 600)])
    )
    planner = Planner(dataclasses.replace(g, keepouts=kos))
    route = planner.route("panel:300,60", "panel:300,740")
    validate_route(route, planner.garment, planner.free, start="panel:300,60", goal="panel:300,740")
    assert len(route.turns_deg) >= 2
    net = route.headings_deg[-1] - route.headings_deg[0]
    diff = (route.turns_deg.sum() - net + 180.0) % 360.0 - 180.0
    assert diff == pytest.approx(0.0, abs=1e-9)
