"""Command lists: Douglas–Peucker merging of arcs, fixed precision, and replays that stay within the
stated tolerance of the planned path (checked with shapely's Hausdorff distance)."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np
import pytest
import shapely

import export_routes as er
from export_routes import deviation
import garments
from garnav.cli import main
from garnav.cli._routes import COMMAND_TOLERANCE_HELP_DEFAULT
from garnav.errors import QueryError
from garnav.export.commands import CommandList, Go, Start, Turn, Wait, format_commands, parse_commands, route_commands
from garnav.export.replay import replay_commands
from garnav.export.steer import DEFAULT_TOLERANCE_MM, douglas_peucker, simplify_leg
from garnav.model import Circle, KeepOut
from garnav.plan import Planner


def _wiggly(rng, n: int) -> np.ndarray:
    steps = rng.uniform(0.5, 5.0, n)
    heading = np.cumsum(rng.normal(0.0, 0.2, n))
    return np.cumsum(np.column_stack([steps * np.cos(heading), steps * np.sin(heading)]), axis=0)


def test_douglas_peucker_keeps_the_vertices_geos_keeps():
    # reference: GEOS's DouglasPeuckerSimplifier through shapely.simplify(preserve_topology=False)
    rng = np.random.default_rng(3)
    for _ in range(200):
        pts = _wiggly(rng, int(rng.integers(3, 80)))
        tol = float(rng.uniform(0.05, 3.0))
        ours = pts[douglas_peucker(pts, tol)]
        geos = np.asarray(shapely.simplify(shapely.LineString(pts), tol, preserve_topology=False).coords)
        assert np.array_equal(ours, geos)
        assert np.array_equal(ours[0], pts[0]) and np.array_equal(ours[-1], pts[-1])
        # the merged line within the tolerance of the original, both ways (GEOS Hausdorff)
        assert shapely.hausdorff_distance(shapely.LineString(pts), shapely.LineString(ours), densify=0.01) <= tol + 1e-9


def test_simplify_leg_keeps_the_steps_at_crossings_and_stays_on_the_piece():
    # an arc of 1° steps that bulges out of a 100 mm square piece: chords may not cut the corner
    piece = shapely.box(0.0, 0.0, 100.0, 100.0)
    t = np.radians(np.arange(0.0, 91.0, 1.0))
    arc = np.column_stack([100.0 - 60.0 * np.cos(t) + 0.0, 60.0 * np.sin(t) + 0.0])[::-1]
    arc = arc[(arc[:, 0] <= 100.0) & (arc[:, 1] <= 100.0)]
    out = simplify_leg(arc, 0.5, piece, keep_first_step=True, keep_last_step=True)
    assert len(out) < len(arc) / 4
    assert np.array_equal(out[:2], arc[:2]) and np.array_equal(out[-2:], arc[-2:])
    assert piece.buffer(1e-6).covers(shapely.LineString(out))


def _disc_garment():
    g = garments.single_panel()
    return dataclasses.replace(g, keepouts=(KeepOut("disc", "panel", "other", Circle(300.0, 400.0, 80.0)),))


def test_route_around_a_circular_keepout_merges_within_the_tolerance():
    g = _disc_garment()
    # 32 segments per quarter circle: the grown disc is a 128-gon, a chain of 2.8° turns
    route = Planner(g, g.robot, quad_segs=32).route("panel:300,150", "panel:300,650")
    exact = route_commands(route, g, tolerance_mm=0.0)
    merged = route_commands(route, g, tolerance_mm=DEFAULT_TOLERANCE_MM)
    lines = [len(format_commands(c).splitlines()) for c in (exact, merged)]
    assert lines[1] < 0.6 * lines[0]  # observed 34 -> 18 lines
    for cl, bound in ((exact, 0.1), (merged, DEFAULT_TOLERANCE_MM)):
        rep = replay_commands(g, parse_commands(format_commands(cl)))
        hausdorff, end = deviation(route, rep)
        assert hausdorff <= bound  # observed 0.014 mm (exact), 0.22 mm (merged)
        assert end <= 0.05  # the goal is a kept vertex; observed 0.014 mm (one rounded go)
    # the robot's centre stays outside the disc's true offset less the tolerance (observed 0.22 mm inside)
    rep = replay_commands(g, merged)
    path = shapely.LineString([(p.x_mm, p.y_mm) for p in rep.poses])
    assert path.distance(shapely.Point(300.0, 400.0)) >= 80.0 + g.robot.radius_mm - DEFAULT_TOLERANCE_MM


@pytest.mark.parametrize("tol", [0.0, 0.5, 2.0])
def test_replays_of_routes_across_seams_stay_within_the_tolerance(tol):
    rng = np.random.default_rng(22)
    g = er.turned_panels()
    for side in ("outside", "inside"):
        for _ in range(15):
            route = er.turned_route(rng, int(rng.integers(1, 5)), int(rng.integers(1, 5)))
            cl = route_commands(route, g, dataclasses.replace(g.robot, side=side), tolerance_mm=tol)
            rep = replay_commands(g, parse_commands(format_commands(cl)))
            assert [c.seam for c in rep.crossings] == [c.seam for c in route.crossings]
            assert all(c.announced for c in rep.crossings) and rep.unmatched_notices == ()
            hausdorff, end = deviation(route, rep)
            assert hausdorff <= max(tol, 0.1)  # rounding alone: observed 0.063 mm
            assert end <= 0.05  # observed 0.015 mm


def test_written_numbers_have_the_fixed_precision():
    cl = CommandList((Turn(1.0 / 3.0), Go(2.0 / 3.0), Wait(0.12345), Go(40.0), Turn(-45.0)),
                     start=Start("p", 1.23456, -0.0004, 12.345678))
    text = format_commands(cl)
    assert text.splitlines()[2:] == ["start p 1.235 0 mm heading 12.35 deg", "turn +0.33 deg", "go 0.67 mm",
                                     "wait 0.123 s", "go 40 mm", "turn -45 deg"]
    # a list from route_commands is on that precision already: its text reads back equal
    g = er.turned_panels()
    route = er.turned_route(np.random.default_rng(5), 3, 3)
    cl = route_commands(route, g)
    assert parse_commands(format_commands(cl)) == cl


def test_tolerance_is_checked_and_the_help_states_the_default(capsys):
    g = er.turned_panels()
    route = er.turned_route(np.random.default_rng(5), 2, 2)
    for bad in (-0.1, float("nan"), float("inf")):
        with pytest.raises(QueryError, match="command tolerance"):
            route_commands(route, g, tolerance_mm=bad)
    assert COMMAND_TOLERANCE_HELP_DEFAULT == DEFAULT_TOLERANCE_MM
    with pytest.raises(SystemExit):
        main(["route", "--help"])
    assert "--command-tolerance MM" in capsys.readouterr().out


def test_cli_refuses_a_negative_tolerance_before_any_work(capsys):
    spec = str(Path(__file__).resolve().parents[1] / "meshes" / "sensing_top.toml")  # a missing spec is refused first
    for command in (["route", spec, "--from", "a", "--to", "b"], ["demo", "--out", "never_written"]):
        assert main([*command, "--command-tolerance", "-1"]) == 2
        assert "--command-tolerance must be zero or more mm, got -1" in capsys.readouterr().err
    with pytest.raises(SystemExit):
        main(["sweep", "x.toml", "--region", "pieces:a", "--json", "s.json", "--command-tolerance", "nan"])
    assert "is not a finite number" in capsys.readouterr().err
