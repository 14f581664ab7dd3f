"""Replay: integrating commands on the pattern reproduces the route, across seams."""

from __future__ import annotations

import math

import numpy as np
import pytest

import export_routes as er
import garments
from garnav import Robot
from garnav.export.commands import CommandList, Cross, Go, Start, Turn, format_commands, parse_commands, route_commands
from garnav.export.replay import ReplayError, replay_commands

TOL_MM = 1e-6
ROUND_MM = 0.1  # what rounding to 0.01 mm and 0.01° may add (docs/commands.md); observed 0.063 mm


def assert_replay_matches(route, garment, robot=None, via_text=False, tolerance_mm=0.0):
    """The replay of the route's commands follows the route: same seams, all announced, within
    ROUND_MM (the 0.01 mm / 0.01° rounding; observed 0.063 mm) plus the merge tolerance of the
    planned path everywhere (shapely's Hausdorff distance), and ends at the goal."""
    cl = route_commands(route, garment, robot, tolerance_mm=tolerance_mm)
    if via_text:
        cl = parse_commands(format_commands(cl))
    rep = replay_commands(garment, cl)
    assert [c.seam for c in rep.crossings] == [c.seam for c in route.crossings]
    assert all(c.announced for c in rep.crossings)
    assert rep.unmatched_notices == ()
    hausdorff, end = er.deviation(route, rep)
    assert hausdorff <= ROUND_MM + tolerance_mm, (hausdorff, rep.poses)
    assert end <= ROUND_MM
    assert rep.end.piece == route.legs[-1].piece
    # each go is rounded to 0.01 mm and a crossing may move by the rounding: observed 0.066 mm
    assert rep.distance_mm == pytest.approx(route.length_mm, abs=ROUND_MM + 0.005 * len(cl.commands))
    return rep


def test_replay_reproduces_random_routes_across_a_straight_seam():
    rng = np.random.default_rng(21)
    g = garments.two_panels()
    for i in range(60):
        route = er.two_panel_route(rng, int(rng.integers(1, 5)), int(rng.integers(1, 5)), back=bool(i % 2))
        rep = assert_replay_matches(route, g, via_text=bool(i % 3 == 0))
        # reference: the hand-computed partner points (300, y) <-> (0, y) of two_panels' seam
        for c in rep.crossings:
            assert abs(c.point_from[1] - c.point_to[1]) <= 1e-12  # observed 5.7e-14 mm
            assert {c.point_from[0], c.point_to[0]} <= {0.0, 300.0} or abs(abs(c.point_from[0] - c.point_to[0]) - 300) < 1e-9


def test_replay_reproduces_routes_across_a_turned_seam_with_ease():
    rng = np.random.default_rng(22)
    g = er.turned_panels()
    for side in ("outside", "inside"):
        for i in range(30):
            route = er.turned_route(rng, int(rng.integers(1, 5)), int(rng.integers(1, 5)))
            assert_replay_matches(route, g, Robot(side=side), via_text=bool(i % 2))


def test_replay_across_the_turned_seam_by_hand():
    # a(250, 200) heading east: the seam x = 300 is 50 mm on, at fraction 200/400 = 0.5, which
    # meets b at (300 - 150, 0) = (150, 0); a's tangent +y is b's -x, so east becomes north (+90°)
    g = er.turned_panels()
    cl = CommandList((Go(100.0),), start=Start("a", 250.0, 200.0, 0.0))
    rep = replay_commands(g, cl)
    end = rep.end
    assert (end.piece, end.x_mm, end.y_mm, end.heading_deg) == ("b", pytest.approx(150.0), pytest.approx(50.0), pytest.approx(90.0))
    assert len(rep.crossings) == 1 and not rep.crossings[0].announced
    assert rep.crossings[0].point_to == (pytest.approx(150.0), pytest.approx(0.0))


def test_replay_around_a_tube_crosses_its_closing_seam_each_lap():
    g = garments.tube()
    circ = g.pieces[0].edge("bottom").length
    # heading east 2.5 laps from x = 10: the closing seam (right edge ↔ left edge) is met at
    # C - 10 and 2C - 10 mm
    cl = CommandList((Go(2.5 * circ),), start=Start("tube", 10.0, 200.0, 0.0))
    rep = replay_commands(g, cl)
    assert len(rep.crossings) == 2
    assert rep.end.x_mm == pytest.approx(math.fmod(10.0 + 2.5 * circ, circ), abs=1e-9)
    assert rep.end.y_mm == pytest.approx(200.0, abs=1e-9)
    # a slanted drive keeps its heading across the seam (the two runs are parallel)
    cl = CommandList((Go(1.5 * circ),), start=Start("tube", 10.0, 100.0, 30.0))
    rep = replay_commands(g, cl)
    assert len(rep.crossings) == 1
    assert rep.end.heading_deg == pytest.approx(30.0, abs=1e-12)  # observed 3.6e-15 deg
    assert rep.end.x_mm == pytest.approx(10.0 + 1.5 * circ * math.cos(math.radians(30)) - circ, abs=1e-12)  # observed 1.4e-14 mm
    assert rep.end.y_mm == pytest.approx(100.0 + 0.75 * circ, abs=1e-9)


def test_tube_route_replays():
    g = garments.tube()
    circ = g.pieces[0].edge("bottom").length
    # route: (100, 50) → seam right edge at y = 150, partner (0, 150) → (80, 300); hand partners
    legs = [("tube", np.array([[100.0, 50.0], [circ, 150.0]])), ("tube", np.array([[0.0, 150.0], [80.0, 300.0]]))]
    route = er.build_route(legs, [("closing", 150.0 / 400.0, 0.0)])
    assert_replay_matches(route, g)


def test_go_into_an_open_edge_is_a_fall():
    g = garments.two_panels()
    cl = CommandList((Turn(-90.0), Go(500.0)), start=Start("left", 100.0, 100.0, 0.0))
    with pytest.raises(ReplayError, match=r"drives off piece 'left' through open edge 'bottom' at \(100.000, 0.000\)"):
        replay_commands(g, cl)


def test_go_ending_on_a_seam_without_notice_stays_then_crosses_on_the_next_go():
    g = garments.two_panels()
    cl = CommandList((Go(200.0), Turn(10.0), Go(10.0)), start=Start("left", 100.0, 200.0, 0.0))
    rep = replay_commands(g, cl)
    assert rep.poses[1].piece == "left" and rep.poses[1].x_mm == pytest.approx(300.0)
    assert rep.end.piece == "right"
    assert rep.end.x_mm == pytest.approx(10.0 * math.cos(math.radians(10.0)))
    assert not rep.crossings[0].announced


def test_notice_that_never_happens_is_reported():
    g = garments.two_panels()
    cl = CommandList((Cross("middle", 50.0, 90.0), Go(100.0)), start=Start("left", 10.0, 200.0, 0.0))
    rep = replay_commands(g, cl)
    assert rep.unmatched_notices == (Cross("middle", 50.0, 90.0),)


def test_replay_needs_a_start_on_the_garment():
    g = garments.two_panels()
    with pytest.raises(ReplayError, match="start pose"):
        replay_commands(g, CommandList((Go(1.0),)))
    with pytest.raises(ReplayError, match="'sleeve'"):
        replay_commands(g, CommandList((Go(1.0),), start=Start("sleeve", 0, 0, 0)))


def test_touching_or_running_along_a_seam_does_not_cross():
    g = garments.two_panels()
    # to the seam (x = 300) and back; then along the seam line and off it again
    legs = [("left", np.array([[100.0, 100.0], [300.0, 150.0], [100.0, 200.0], [300.0, 250.0], [300.0, 330.0], [150.0, 360.0]]))]
    route = er.build_route(legs, [])
    rep = assert_replay_matches(route, g)
    assert rep.crossings == () and {p.piece for p in rep.poses} == {"left"}


def _three_panels():
    """'l' and 'r' (300 × 400) side by side under 't' (600 × 200); all three meet at one corner:
    l(300, 400) = r(0, 400) = t(300, 0). Seams: l.right–r.left, l.top–t.bottom[0, 300],
    r.top–t.bottom[300, 600], each run pair given in one direction of travel."""
    from garnav import Garment, Placement, Robot, Seam, SeamRun

    pieces = (
        garments.rect_piece("l", 300, 400, Placement(10, 10)),
        garments.rect_piece("r", 300, 400, Placement(320, 10)),
        garments.rect_piece("t", 600, 200, Placement(10, 420)),
    )
    seams = (
        Seam("middle", SeamRun("l", "right"), SeamRun("r", "left", reverse=True)),
        Seam("top_left", SeamRun("l", "top"), SeamRun("t", "bottom", 0.0, 300.0, reverse=True)),
        Seam("top_right", SeamRun("r", "top"), SeamRun("t", "bottom", 300.0, 600.0, reverse=True)),
    )
    return Garment("three", pieces, seams=seams, robot=Robot(radius_mm=5.0), sheet_size_mm=(620.0, 630.0))


def test_crossings_chained_at_a_corner_where_three_pieces_meet():
    # l → r at the corner (fraction 1 of 'middle'), a stub on r, then r → t (fraction 1 of
    # 'top_right'): all tangents there point the same way in the three frames (by hand: +y, +y;
    # -x, -x), so the heading is carried unchanged and t continues at (300, 0)
    g = _three_panels()
    legs = [("l", np.array([[100.0, 200.0], [300.0, 400.0]])), ("r", np.array([[0.0, 400.0], [0.0, 400.0]])),
            ("t", np.array([[300.0, 0.0], [450.0, 100.0]]))]
    route = er.build_route(legs, [("middle", 1.0, 45.0), ("top_right", 1.0, 45.0)])
    rep = assert_replay_matches(route, g)
    assert [(c.from_piece, c.to_piece) for c in rep.crossings] == [("l", "r"), ("r", "t")]
    assert rep.end.heading_deg == pytest.approx(math.degrees(math.atan2(100.0, 150.0)), abs=0.005)  # 0.01° steps
