"""The branch and bound over seam sequences (garnav.plan.sequences) against a dense reference.

Reference: the same planner with 2 mm portals (10x denser than the default 20 mm) and without the
sequence search: a route through portals sampled every 2 mm, then slid to its best crossings. It is
a feasible route, so the default planner must never be dearer than it (1e-6 relative). Garments:
three panels sewn in a row (left | middle | right) with ease on the second seam (its runs differ
in length and are matched by arc length), a smallest crossing angle, crossing costs, and a wall
of keep-outs along the first seam on the left panel, so that the cheapest route may cross a seam
and come back over it (the pattern A* on coarse portals misses, docs/planning.md §3).
"""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import garments
from garnav import Circle, Garment, KeepOut, Placement, Robot, Seam, SeamRun
from garnav.plan import PiecePoint, Planner
from garnav.plan.sequences import interval_index, sequence_key
from garnav.testing import validate_route


def _three_panels(ease_mm: float, angle: float, cost: float, wall: list[tuple[float, float]]) -> Garment:
    h = 300.0
    left = garments.rect_piece("left", 200, h, Placement(10.0, 10.0))
    middle = garments.rect_piece("middle", 160, h, Placement(220.0, 10.0))
    right = garments.rect_piece("right", 200, h + ease_mm, Placement(390.0, 10.0))
    seams = (
        Seam("ab", SeamRun("left", "right"), SeamRun("middle", "left", reverse=True), crossing_cost_mm=cost, min_crossing_angle_deg=angle),
        Seam("bc", SeamRun("middle", "right"), SeamRun("right", "left", reverse=True), crossing_cost_mm=cost, min_crossing_angle_deg=angle),
    )
    kos = tuple(KeepOut(f"w{k}", "left", "custom", Circle(x, y, 9.0)) for k, (x, y) in enumerate(wall))
    return Garment(
        "three_panels",
        (left, middle, right),
        seams=seams,
        keepouts=kos,
        robot=Robot(radius_mm=8.0, edge_margin_mm=2.0),
        sheet_size_mm=(610.0, h + ease_mm + 20.0),
    )


@st.composite
def _cases(draw):
    ease = draw(st.sampled_from([0.0, 12.0, 30.0]))
    angle = draw(st.sampled_from([0.0, 30.0]))
    cost = draw(st.sampled_from([0.0, 6.0]))
    # a wall of buttons across the left panel from its open edge towards the first seam, ending
    # 2-14 mm before it (closed below 8 mm): the way round is either the gap (if the robot fits) or over the middle
    # panel, crossing the first seam and coming back
    wy = draw(st.floats(120.0, 180.0))
    end = 200.0 - draw(st.floats(2.0, 14.0)) - 9.0
    wall = [(x, wy) for x in np.arange(12.0, end, 15.0)] + [(end, wy)]
    sx = draw(st.floats(60.0, 170.0))
    gx = draw(st.floats(40.0, 170.0))
    goal_piece = draw(st.sampled_from(["left", "left", "right"]))
    return ease, angle, cost, wall, (sx, wy - 70.0), (gx, wy + 70.0), goal_piece


@pytest.mark.slow
@settings(max_examples=6)
@given(_cases())
def test_no_route_is_dearer_than_the_dense_portal_planner(case):
    ease, angle, cost, wall, s, e, goal_piece = case
    g = _three_panels(ease, angle, cost, wall)
    planner = Planner(g)
    dense = Planner(g, portal_spacing_mm=2.0, seam_sequences=0)
    start = PiecePoint("left", *s)
    goal = PiecePoint(goal_piece, *e)
    route = planner.route(start, goal)
    ref = dense.route(start, goal)
    validate_route(route, g, planner.free)
    assert route.cost <= ref.cost * (1 + 1e-6) + 1e-9
    found = planner.last_sequences
    assert found is not None and found.lower_mm <= route.cost + 1e-9  # the bound is a lower bound


def test_sequence_keys_name_the_free_interval_of_each_crossing():
    planner = Planner(_three_panels(0.0, 0.0, 0.0, [(170.0, y) for y in np.arange(40.0, 270.0, 19.0) if abs(y - 150.0) > 20.0]))
    ng = planner.nav
    ab = [s.name for s in ng.seams].index("ab")
    assert interval_index(ng, ab, 0.5) == 0  # the wall stands back from the seam: one interval
    assert sequence_key(ng, 0, [(ab, 0.5, 0), (ab, 0.6, 1)]) == (0, ((ab, 0, 0), (ab, 0, 1)))


def test_the_window_bound_is_below_the_straight_route_on_two_unfolded_panels():
    """Two panels unfold to one rectangle (plane geometry): the route is the straight line, and
    the window graph's bound (docs/planning.md §4c) is a lower bound of it."""
    planner = Planner(garments.two_panels())
    s, e = PiecePoint("left", 100.0, 100.0), PiecePoint("right", 200.0, 300.0)
    route = planner.route(s, e)
    straight = math.hypot(300.0 - 100.0 + 200.0, 200.0)
    assert route.length_mm == pytest.approx(straight, rel=1e-9)  # observed ~1e-15
    assert planner.last_sequences.lower_mm <= straight + 1e-9
