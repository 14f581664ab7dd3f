"""Fleet planning: swaps, seam crossings, meetings, an exhaustive reference, the checker, bad input."""

from __future__ import annotations

import math
import time

import numpy as np
import pytest

from garnav import Edge, Garment, Landmark, Piece, Placement, Robot, Seam, SeamRun
from garnav.errors import SpecError
from garnav.export.commands import Wait, format_commands, parse_commands
from garnav.export.replay import replay_commands
from garnav.fleet import (
    FleetError,
    FleetPlanError,
    FleetPlanner,
    Move,
    RobotPlan,
    Schedule,
    check_schedule,
    closest_approach,
    plan_fleet,
    tasks_from_dict,
)
from garnav.fleet.commands import plan_commands
from garnav.fleet.check import sample_positions
from garnav.model import KeepOut, Rectangle
from garnav.plan import Planner

from garments import rect_piece, two_panels

ROBOT = Robot(name="bot", radius_mm=10.0, edge_margin_mm=2.0, speed_mm_s=20.0)


def t_garment() -> Garment:
    """A 300 × 200 body with a 40 × 300 sleeve sewn onto the middle of its top edge.

    Free width for a robot centre in the sleeve: 40 − 2·(10 + 2) = 16 mm; two robots side by side
    need 2·10 + gap = 22 mm, so they cannot pass each other there.
    """
    body = Piece("body", (
        Edge("bottom", ((0.0, 0.0), (300.0, 0.0))),
        Edge("right", ((300.0, 0.0), (300.0, 200.0))),
        Edge("top_right", ((300.0, 200.0), (170.0, 200.0))),
        Edge("top_mid", ((170.0, 200.0), (130.0, 200.0))),
        Edge("top_left", ((130.0, 200.0), (0.0, 200.0))),
        Edge("left", ((0.0, 200.0), (0.0, 0.0))),
    ), placement=Placement(10.0, 10.0))
    sleeve = rect_piece("sleeve", 40.0, 300.0, Placement(330.0, 10.0))
    seam = Seam("shoulder", SeamRun("body", "top_mid"), SeamRun("sleeve", "bottom", reverse=True))
    return Garment("tee", (body, sleeve), seams=(seam,), robot=ROBOT, sheet_size_mm=(400.0, 330.0),
                   landmarks=(Landmark("cuff", piece="sleeve", x=20.0, y=280.0),
                              Landmark("belly", piece="body", x=150.0, y=60.0)))


def corridor() -> Garment:
    """One 40 × 400 strip with open edges: nowhere to pass."""
    return Garment("corridor", (rect_piece("strip", 40.0, 400.0),), robot=ROBOT, sheet_size_mm=(60.0, 420.0))


def tasks(data: dict, garment: Garment):
    return tasks_from_dict(data, "<test>", garment.robot)


def assert_checked(garment, schedule, gap_mm):
    rep = check_schedule(garment, schedule)
    assert rep.ok, rep.text()
    # the planner keeps the gap; carried copies at seams are first-order, hence the small slack
    assert rep.min_gap_mm >= gap_mm - 0.05, rep.text()
    return rep


def assert_commands_reach_goals(garment, schedule):
    """Each robot's commands, written and read back, replay to its goal with its waits."""
    for p in schedule.plans:
        cl = parse_commands(format_commands(plan_commands(garment, p)))
        rp = replay_commands(garment, cl)
        goal = p.moves[-1]
        assert rp.end.piece == goal.piece
        # written to 0.01 mm and 0.01° (observed 0.0049 mm), waits to 0.001 s
        assert math.dist((rp.end.x_mm, rp.end.y_mm), goal.p0) < 0.05
        waits = sum(isinstance(c, Wait) for c in cl.commands)
        assert rp.wait_s == pytest.approx(p.arrive_s - p.driving_s, abs=0.0005 * waits + 1e-6)


# ------------------------------------------------------------------ the checks


def test_sleeve_swap_one_waits_where_it_is_wide():
    g = t_garment()
    t = tasks({"gap_mm": 2.0, "task": [
        {"name": "down", "start": "cuff", "goal": "belly"},
        {"name": "up", "start": "body:150,120", "goal": "sleeve:20,200"},
    ]}, g)
    s = plan_fleet(g, t)
    assert_checked(g, s, 2.0)
    assert_commands_reach_goals(g, s)
    down, up = s.plan("down"), s.plan("up")
    # while 'down' is in the sleeve, 'up' is never in it: it makes way in the body
    times = np.arange(0.0, s.makespan_s, 0.01)
    dp, dxy = sample_positions(down, times)
    upp, _ = sample_positions(up, times)
    both = [a == "sleeve" and b == "sleeve" for a, b in zip(dp, upp, strict=True)]
    assert not any(both)
    assert up.arrive_s > up.lower_bound_s + 1.0  # it had to give way


def test_two_robots_cross_one_seam_at_the_same_time():
    g = two_panels()
    t = tasks({"gap_mm": 2.0, "task": [
        {"name": "a", "start": "left:150,100", "goal": "right:150,300"},
        {"name": "b", "start": "left:150,300", "goal": "right:150,100"},
    ]}, g)
    planner = FleetPlanner(g, t)
    # driven alone and at once, their routes meet on the seam: the checker sees it across the seam
    naive = []
    for a in planner.agents:
        r = Planner(g, a.task.robot).route(a.start, a.goal)
        pts = [(leg.piece, p) for leg in r.legs for p in leg.points]
        moves, tt = [], 0.0
        for (pa, p0), (pb, p1) in zip(pts[:-1], pts[1:], strict=True):
            if pa == pb:
                d = float(np.hypot(*(p1 - p0))) / a.task.robot.speed_mm_s
                moves.append(Move(pa, tt, tt + d, tuple(p0), tuple(p1)))
                tt += d
        moves.append(Move(pts[-1][0], tt, math.inf, tuple(pts[-1][1]), tuple(pts[-1][1])))
        naive.append(RobotPlan(a.task.name, a.task.robot, tuple(moves), 0.0, tt))
    bad = check_schedule(g, Schedule(tuple(naive), 2.0, ("a", "b"), 1, 0.0))
    assert not bad.ok and bad.min_gap_mm < -10.0
    s = planner.plan()
    assert_checked(g, s, 2.0)
    for p in s.plans:
        assert {m.piece for m in p.moves} == {"left", "right"}
    assert_commands_reach_goals(g, s)


def test_meeting_side_by_side_spacing_and_heading():
    g = two_panels()
    spacing = 30.0
    t = tasks({"gap_mm": 2.0, "task": [
        {"name": "a", "start": "left:60,60", "start_s": 1.0},
        {"name": "b", "start": "left:240,60"},
    ], "meeting": [{"name": "link", "kind": "side_by_side", "at": "right_centre", "robots": ["a", "b"],
                    "spacing_mm": spacing, "heading_deg": 90.0}]}, g)
    s = plan_fleet(g, t)
    assert_checked(g, s, 2.0)
    ends = []
    for p in s.plans:
        rp = replay_commands(g, parse_commands(format_commands(plan_commands(g, p))))
        ends.append(rp.end)
        assert abs(((rp.end.heading_deg - 90.0) + 180.0) % 360.0 - 180.0) < 1.0
    assert ends[0].piece == ends[1].piece == "right"
    assert abs(math.dist((ends[0].x_mm, ends[0].y_mm), (ends[1].x_mm, ends[1].y_mm)) - spacing) < 1.0
    # 'a' is on the left of 'b' when facing +y: smaller x
    assert ends[0].x_mm < ends[1].x_mm


def test_dock_meeting_keeps_the_arrival_order():
    g = two_panels()
    t = tasks({"gap_mm": 2.0, "task": [
        {"name": "first", "start": "left:150,60", "start_s": 3.0},
        {"name": "second", "start": "right:150,60"},
    ], "meeting": [{"name": "charge", "kind": "dock", "at": "right:150,350", "robots": ["first", "second"],
                    "spacing_mm": 30.0, "heading_deg": 90.0}]}, g)
    s = plan_fleet(g, t)
    assert_checked(g, s, 2.0)
    assert s.plan("first").arrive_s <= s.plan("second").arrive_s + 1e-9
    assert s.plan("first").moves[-1].p0 == pytest.approx((150.0, 350.0))
    assert s.plan("second").moves[-1].p0 == pytest.approx((150.0, 320.0))


def test_unsolvable_corridor_swap_is_reported_quickly():
    g = corridor()
    t = tasks({"gap_mm": 2.0, "task": [
        {"name": "north", "start": "strip:20,30", "goal": "strip:20,370"},
        {"name": "south", "start": "strip:20,370", "goal": "strip:20,30"},
    ]}, g)
    t0 = time.perf_counter()
    with pytest.raises(FleetPlanError) as err:
        plan_fleet(g, t, time_limit_s=20.0)
    assert time.perf_counter() - t0 < 20.0
    text = str(err.value)
    assert "north" in text and "south" in text and "strip" in text
    assert "\n" not in text


def test_time_limit_stops_the_search():
    g = corridor()
    t = tasks({"task": [
        {"name": "north", "start": "strip:20,30", "goal": "strip:20,370"},
        {"name": "south", "start": "strip:20,370", "goal": "strip:20,30"},
    ]}, g)
    with pytest.raises(FleetPlanError, match="time limit"):
        plan_fleet(g, t, time_limit_s=0.0)


def test_robots_of_different_size_and_speed():
    g = two_panels()
    t = tasks({"robot": [{"name": "big", "radius_mm": 25.0, "speed_mm_s": 10.0}], "task": [
        {"name": "a", "start": "left:150,100", "goal": "right:150,300"},
        {"name": "b", "robot": "big", "start": "left:150,300", "goal": "right:150,100"},
    ]}, g)
    s = plan_fleet(g, t)
    rep = assert_checked(g, s, 2.0)
    assert s.plan("b").robot.radius_mm == 25.0
    assert rep.min_keepout_margin_mm >= -1e-6


# ------------------------------------------------------------------ closest approach vs the sampler


def test_closest_approach_matches_the_10ms_sampler():
    """Closed form t* = clamp(−Δp·Δv/|Δv|², 0, T) against the independent 10 ms sampler of
    check_schedule on random straight legs (the sampler may only over-estimate, by at most
    |Δv|·5 ms)."""
    rng = np.random.default_rng(7)
    g = Garment("panel", (rect_piece("p", 2000.0, 2000.0),), robot=ROBOT, sheet_size_mm=(2100.0, 2100.0))
    worst = 0.0
    for _ in range(40):
        pa, pb = rng.uniform(400, 1600, (2, 2))
        va, vb = rng.uniform(-40, 40, (2, 2))
        T = 10.0
        d = closest_approach(pa[None], va[None], pb[None], vb[None], np.array([T]))[0]
        plans = []
        for name, p, v in (("a", pa, va), ("b", pb, vb)):
            q = p + T * v
            plans.append(RobotPlan(name, ROBOT, (Move("p", 0.0, T, tuple(p), tuple(q)),
                                                  Move("p", T, math.inf, tuple(q), tuple(q))), 0.0, T))
        rep = check_schedule(g, Schedule(tuple(plans), 0.0, ("a", "b"), 1, 0.0))
        sampled = rep.min_gap_mm + 20.0
        bound = float(np.hypot(*(vb - va))) * 0.005 + 1e-9
        assert d <= sampled + 1e-9
        assert sampled - d <= bound
        worst = max(worst, sampled - d)
    assert worst < 0.3  # observed 0.12 mm


# ------------------------------------------------------------------ reference on a small grid


def _grid_oracle(free, h, starts, goals, radius, gap, speed):
    """Makespan-optimal joint search of two robots on a 4-connected grid of cell ``h``.

    Written here as the reference (no usable multi-agent library: see docs/fleet.md): breadth-first
    search over joint states (cell_a, cell_b), one step = h / speed seconds, each robot moving to
    a neighbour cell or waiting; a joint step is allowed when the two discs, moving linearly,
    stay at least 2·radius + gap apart at 21 samples of the step. Exhaustive, so optimal for the
    grid.
    """
    cells = {}
    xs = np.arange(h / 2, 400, h)
    for x in xs:
        for y in xs:
            if free.covers(np.array([[x, y]]))[0]:
                cells[(round(x / h - 0.5), round(y / h - 0.5))] = np.array([x, y])

    def nbrs(c):
        out = [c]
        for dx, dy in ((1, 0), (-1, 0), (0, 1), (0, -1)):
            n = (c[0] + dx, c[1] + dy)
            if n in cells:
                mid = 0.5 * (cells[c] + cells[n])
                if free.covers(mid[None])[0]:
                    out.append(n)
        return out

    def key(p):
        return (round(p[0] / h - 0.5), round(p[1] / h - 0.5))

    s = (key(starts[0]), key(starts[1]))
    goal = (key(goals[0]), key(goals[1]))
    need = 2 * radius + gap
    f = np.linspace(0, 1, 21)[:, None]
    seen = {s: 0}
    frontier = [s]
    steps = 0
    while frontier:
        if goal in seen:
            return seen[goal] * h / speed
        steps += 1
        nxt = []
        for a, b in frontier:
            for na in nbrs(a):
                for nb in nbrs(b):
                    if (na, nb) in seen or na == nb:
                        continue
                    pa = cells[a] + f * (cells[na] - cells[a])
                    pb = cells[b] + f * (cells[nb] - cells[b])
                    if np.min(np.hypot(*(pa - pb).T)) >= need:
                        seen[(na, nb)] = steps
                        nxt.append((na, nb))
        frontier = nxt
    return None


def test_makespan_no_worse_than_exhaustive_grid_search():
    g = Garment("box", (rect_piece("p", 240.0, 160.0),), robot=ROBOT, sheet_size_mm=(260.0, 180.0),
                keepouts=(KeepOut("block", "p", "custom", Rectangle(120.0, 80.0, 80.0, 60.0)),))
    h = 20.0
    starts = [(30.0, 90.0), (210.0, 90.0)]
    goals = [(210.0, 70.0), (30.0, 70.0)]
    t = tasks({"gap_mm": 2.0, "task": [
        {"name": "a", "start": f"p:{starts[0][0]},{starts[0][1]}", "goal": f"p:{goals[0][0]},{goals[0][1]}"},
        {"name": "b", "start": f"p:{starts[1][0]},{starts[1][1]}", "goal": f"p:{goals[1][0]},{goals[1][1]}"},
    ]}, g)
    s = plan_fleet(g, t)
    assert_checked(g, s, 2.0)
    free = Planner(g, ROBOT).free["p"]
    ref = _grid_oracle(free, h, [np.array(p) for p in starts], [np.array(p) for p in goals], 10.0, 2.0, 20.0)
    assert ref is not None
    # the grid's discretisation: one cell step of slack (its start/goal cells are exact here)
    assert s.makespan_s <= ref + h / 20.0, (s.makespan_s, ref)
    assert s.makespan_s >= s.lower_bound_s - 1e-6


# ------------------------------------------------------------------ bad input


def _one_line(exc) -> str:
    text = str(exc.value)
    return text


def test_overlapping_starts():
    g = two_panels()
    t = tasks({"task": [{"name": "a", "start": "left:100,100", "goal": "left:100,300"},
                        {"name": "b", "start": "left:110,100", "goal": "left:200,300"}]}, g)
    with pytest.raises(FleetError, match=r"tasks 'a' and 'b': starts overlap: centres 10\.0 mm apart"):
        FleetPlanner(g, t)


def test_overlapping_goals_suggest_a_meeting():
    g = two_panels()
    t = tasks({"task": [{"name": "a", "start": "left:100,100", "goal": "right_centre"},
                        {"name": "b", "start": "left:200,100", "goal": "right_centre"}]}, g)
    with pytest.raises(FleetError, match="goals overlap.*meeting"):
        FleetPlanner(g, t)


def test_overlap_across_a_seam_counts():
    g = two_panels()
    t = tasks({"task": [{"name": "a", "start": "left:295,200", "goal": "left:100,300"},
                        {"name": "b", "start": "right:5,200", "goal": "right:200,300"}]}, g)
    with pytest.raises(FleetError, match=r"starts overlap: centres 10\.0 mm apart"):
        FleetPlanner(g, t)


def test_robot_does_not_fit_meeting_slot():
    g = two_panels()
    t = tasks({"task": [{"name": "a", "start": "left:60,60"}, {"name": "b", "start": "left:240,60"}],
               "meeting": [{"name": "edge", "kind": "side_by_side", "at": "right:20,200", "robots": ["a", "b"],
                            "spacing_mm": 60.0, "heading_deg": 90.0}]}, g)
    with pytest.raises(FleetError, match=r"meeting 'edge': robot 'a' .* does not fit at its slot 1 on right \(-10\.0, 200\.0\) mm: .*outside the piece"):
        FleetPlanner(g, t)


def test_meeting_spacing_too_small():
    g = two_panels()
    t = tasks({"task": [{"name": "a", "start": "left:60,60"}, {"name": "b", "start": "left:240,60"}],
               "meeting": [{"name": "tight", "kind": "side_by_side", "at": "right_centre", "robots": ["a", "b"],
                            "spacing_mm": 15.0, "heading_deg": 0.0}]}, g)
    with pytest.raises(FleetError, match=r"meeting 'tight': spacing 15 mm is too small .* at least 22 mm"):
        FleetPlanner(g, t)


def test_unknown_robot_profile_and_landmark():
    g = two_panels()
    with pytest.raises(SpecError, match=r"task 'a': unknown robot profile 'robott'; did you mean 'robot'\?"):
        tasks({"task": [{"name": "a", "robot": "robott", "start": "left_centre", "goal": "right_centre"}]}, g)
    t = tasks({"task": [{"name": "a", "start": "left_centr", "goal": "right_centre"}]}, g)
    with pytest.raises(FleetError, match=r"task 'a': start: .*left_centr"):
        FleetPlanner(g, t)
    with pytest.raises(SpecError, match=r"meeting 'm': unknown robot 'z'"):
        tasks({"task": [{"name": "a", "start": "left_centre"}],
               "meeting": [{"name": "m", "kind": "dock", "at": "right_centre", "robots": ["a", "z"],
                            "spacing_mm": 30.0, "heading_deg": 0.0}]}, g)


def test_unsatisfiable_meeting_deadline():
    g = two_panels()
    t = tasks({"task": [{"name": "a", "start": "left:60,60", "arrive_by_s": 2.0},
                        {"name": "b", "start": "left:240,60"}],
               "meeting": [{"name": "m", "kind": "side_by_side", "at": "right_centre", "robots": ["a", "b"],
                            "spacing_mm": 30.0, "heading_deg": 90.0}]}, g)
    with pytest.raises(FleetPlanError, match=r"robot 'a' arrives at .* after its arrive_by_s 2 s"):
        plan_fleet(g, t)


def test_task_file_problems_are_collected():
    g = two_panels()
    with pytest.raises(SpecError) as err:
        tasks({"task": [{"name": "a", "start": "left_centre", "goal": "right_centre"},
                        {"name": "a", "start": "left_centre", "goal": "right_centre"},
                        {"name": "b", "start": "left_centre", "goal": "right_centre", "colour": "red"},
                        {"name": "c", "start": "left_centre"}]}, g)
    text = str(err.value)
    assert "unknown key 'colour'" in text
    assert "name is used by an earlier task" in text
    assert "task 'c': has no 'goal' and is in no meeting" in text


def test_head_on_over_a_seam_that_closes_a_tube():
    """A seam joining a piece to itself (a sleeve's underarm): robots on opposite edges of the
    flat piece are neighbours on the fabric; the planner and the checker both see it."""
    from garments import tube

    g = tube()
    c = g.piece("tube").polygon.bounds[2]
    t = tasks({"gap_mm": 2.0, "task": [
        {"name": "a", "start": f"tube:{c - 40},200", "goal": "tube:40,200"},
        {"name": "b", "start": "tube:40,200.5", "goal": f"tube:{c - 40},200.5"},
    ]}, g)
    with pytest.raises(FleetError):  # not yet: the two starts are 80 mm apart on the fabric...
        FleetPlanner(g, tasks({"task": [{"name": "a", "start": f"tube:{c - 5},200", "goal": "tube:100,100"},
                                        {"name": "b", "start": "tube:5,200", "goal": "tube:100,300"}]}, g))
    s = plan_fleet(g, t)
    rep = assert_checked(g, s, 2.0)
    assert rep.min_gap_mm < 40.0  # they did pass close by each other, across the closing seam
    for p in s.plans:
        assert p.length_mm < 150.0  # both went the short way, over the seam
    assert_commands_reach_goals(g, s)


def test_vectorised_seam_carry_matches_seam_transform():
    """carry_points (all points at once) against garnav.plan.freespace.seam_transform (one point
    at a time) on every seam side of the demo garment (identity of two computations; observed
    2e-13 mm)."""
    from pathlib import Path

    from garnav.fleet.unfold import carry_matrix, carry_points, seam_sides
    from garnav.spec import load_garment

    g = load_garment(Path(__file__).resolve().parents[1] / "meshes" / "sensing_top.toml")
    rng = np.random.default_rng(3)
    worst = 0.0
    for sides in seam_sides(g).values():
        for sd in sides:
            pts = sd.polyline[rng.integers(0, len(sd.polyline), 12)] + rng.normal(0, 10, (12, 2))
            q, _, dist = carry_points(sd, pts)
            for i, p in enumerate(pts):
                m, d = carry_matrix(g, sd, p)
                worst = max(worst, float(np.abs(m[:2, :2] @ p + m[:2, 2] - q[i]).max()), abs(d - dist[i]))
    assert worst < 1e-9


def test_meeting_slot_out_of_reach():
    """A meeting on a piece the robot cannot get to (no crossable seam): one message naming it."""
    import dataclasses

    g = two_panels()
    g = dataclasses.replace(g, seams=tuple(dataclasses.replace(s, crossable=False) for s in g.seams))
    t = tasks({"task": [{"name": "a", "start": "left:60,60"}, {"name": "b", "start": "right:240,60"}],
               "meeting": [{"name": "m", "kind": "side_by_side", "at": "right_centre", "robots": ["a", "b"],
                            "spacing_mm": 30.0, "heading_deg": 90.0}]}, g)
    with pytest.raises(FleetError, match=r"meeting 'm': robot 'a' cannot reach its slot even alone"):
        FleetPlanner(g, t)


def test_through_seam_distance_on_a_straight_seam_is_the_unfolded_distance():
    """Two panels side by side, a straight seam: the fabric distance through it is the plane
    distance with the right panel laid next to the left one (reflection argument)."""
    from garnav.fleet.unfold import seam_sides, through_seam_distance

    g = two_panels()
    sd = next(s for s in seam_sides(g)["right"] if s.to_piece == "left")
    rng = np.random.default_rng(5)
    b = rng.uniform([0, 50], [60, 350], (50, 2))        # on 'right'
    a = rng.uniform([240, 50], [300, 350], (50, 2))     # on 'left'
    got = through_seam_distance(sd, g, b, a)
    want = np.hypot(b[:, 0] + 300.0 - a[:, 0], b[:, 1] - a[:, 1])
    assert np.max(np.abs(got - want)) < 1e-4  # observed 1e-5 mm
