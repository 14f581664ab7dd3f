"""Sweeps on the demo garment (meshes/sensing_top.toml and its drape): the back panel, a region
near a 3D point across the side seam measured on the drape in 3D, the command line."""

from __future__ import annotations

import json
from pathlib import Path

import jsonschema
import numpy as np
import pytest
import shapely
from scipy.spatial import cKDTree

from garnav.cli import main
from garnav.drape import lift_route, link_drape, load_uv_mesh, pattern_locator
from garnav.export.commands import read_commands
from garnav.export.replay import replay_commands
from garnav.export.waypoints import route_schema
from garnav.plan import Planner
from garnav.model import Robot
from garnav.spec import load_garment
from garnav.sweep import NearPointRegion, coverage_face_mask, parse_region, plan_sweep
from test_sweep import measured_coverage

MESHES = Path(__file__).resolve().parent.parent / "meshes"
SPEC = MESHES / "sensing_top.toml"
DRAPE = MESHES / "sensing_top_drape.obj"



@pytest.fixture(scope="module")
def flat():
    """The demo garment and its planner, without the drape (fast)."""
    g = load_garment(SPEC)
    return g, Planner(g)


@pytest.fixture(scope="module")
def demo():
    g = load_garment(SPEC)
    d = link_drape(g, load_uv_mesh(DRAPE))
    return g, d, Planner(g, locate_3d=pattern_locator(d, g))


@pytest.mark.slow
def test_back_panel_coverage_at_least_99_percent(flat):
    g, planner = flat
    s = plan_sweep(g, parse_region("pieces:back"), swath_mm=10.0, planner=planner)
    cov = measured_coverage(s.route, s.reachable, 10.0)
    assert cov >= 0.99  # observed 0.9997
    assert cov == pytest.approx(s.covered_fraction, abs=1e-9)
    free = planner.free["back"].region.buffer(1e-3)
    assert all(free.covers(shapely.LineString(leg.points)) for leg in s.route.legs)


def _dense(points: np.ndarray, step: float) -> np.ndarray:
    out = [points[:1]]
    for a, b in zip(points[:-1], points[1:], strict=True):
        n = max(1, int(np.ceil(np.linalg.norm(b - a) / step)))
        out.append(a + (np.arange(1, n + 1) / n)[:, None] * (b - a))
    return np.vstack(out)


@pytest.mark.slow
def test_region_across_the_side_seam_covered_on_the_drape_in_3d(demo):
    g, d, planner = demo
    seam = g.seam("side_left_lower")
    run = g.run_polyline(seam.a)
    mid = run[len(run) // 2]
    centre = d.pattern_to_3d(seam.a.piece, mid[None], snap_mm=1.0)[0]
    radius, w = 90.0, 12.0
    s = plan_sweep(g, NearPointRegion(tuple(centre), radius), swath_mm=w, planner=planner, drape=d)
    # straight-line distance: fabric of another piece that hangs close (a sleeve) belongs too
    assert {"front", "back"} <= set(s.region)
    assert len(s.route.crossings) >= 1

    # samples on the drape triangles of both pieces, 10 per triangle (fixed barycentric points)
    bary = np.array([[a, b, 1 - a - b] for a in (0.1, 0.3, 0.5, 0.7) for b in (0.1, 0.3, 0.5, 0.7) if a + b < 0.95])
    covered = total = agree = near = 0
    lifted = lift_route(d, g, s.route)
    path3d = _dense(lifted.points, 0.5)
    tree = cKDTree(path3d)
    for piece in s.region:
        faces = d.piece_faces(piece)
        f = np.repeat(faces, len(bary))
        b = np.tile(bary, (len(faces), 1))
        xyz = d.to_3d(f, b)
        pat = d.to_pattern(f, b)
        # the region itself, checked against straight-line distance in 3D
        inside = shapely.covers(s.region[piece], shapely.points(pat))
        close = np.linalg.norm(xyz - centre, axis=1) <= radius
        agree += int(np.sum(inside == close))
        near += len(close)
        sel = shapely.covers(s.reachable[piece], shapely.points(pat))
        dist, _ = tree.query(xyz[sel])
        covered += int(np.sum(dist <= w / 2 + 0.25))
        total += int(sel.sum())
    # the drape triangles drawn as covered in 3D lie where the footprint is
    mask = coverage_face_mask(d, s.covered)
    for piece in s.region:
        faces = d.piece_faces(piece)
        cent = d.corner_pattern[faces].mean(axis=1)
        assert np.array_equal(mask[faces], shapely.covers(s.covered.get(piece, shapely.Polygon()), shapely.points(cent)))
    assert mask.sum() > 100
    assert agree / near >= 0.999  # observed 0.99996 (triangles cut where d is linear)
    assert total > 500
    assert covered / total >= 0.98  # observed 0.9993


@pytest.mark.slow
def test_cli_sweep_writes_document_commands_and_sheet(flat, tmp_path, capsys):
    g, _ = flat
    out = tmp_path / "sweep.json"
    cmds = tmp_path / "sweep.txt"
    sheet = tmp_path / "sweep.svg"
    rc = main(["sweep", str(SPEC), "--region", "polygon:back:60,60;260,60;260,200;60,200", "--swath", "15",
               "--no-drape", "--ignore-body-zones", "--json", str(out), "--commands", str(cmds), "--sheet", str(sheet)])
    assert rc == 0
    text = capsys.readouterr().out
    assert "covered" in text and "caution" in text
    doc = json.loads(out.read_text())
    jsonschema.Draft202012Validator(route_schema()).validate(doc)
    assert doc["sweep"]["covered_fraction"] >= 0.99  # observed 0.9995
    assert doc["sweep"]["region"] == ["polygon:back:60,60;260,60;260,200;60,200"]
    # the commands drive the sweep: replayed on the pattern they end at its last waypoint
    replay = replay_commands(g, read_commands(cmds))
    last = replay.poses[-1]
    end = doc["waypoints"][-1]
    assert last.piece == end["piece"]
    assert np.hypot(last.x_mm - end["x"], last.y_mm - end["y"]) < 0.05  # 0.01 mm / 0.01° steps; observed 0.0044 mm
    from garnav.preview.sheet import SheetStyle

    assert SheetStyle().coverage_fill in sheet.read_text()  # the covered ground is shaded


def test_cli_sweep_bad_region_is_one_message(capsys, tmp_path):
    # (a device such as /dev/null is refused as an output: docs/outputs.md)
    rc = main(["sweep", str(SPEC), "--region", "pieces:bak", "--swath", "10", "--no-drape",
               "--ignore-body-zones", "--json", str(tmp_path / "s.json")])
    assert rc == 2
    err = capsys.readouterr().err
    assert "unknown piece 'bak'" in err and "Traceback" not in err


@pytest.mark.slow
def test_coverage_on_the_sheet(flat):
    from garnav.preview.sheet import sheet_drawing

    g, planner = flat
    s = plan_sweep(g, parse_region("pieces:back"), swath_mm=10.0, planner=planner, start="dock")
    drawing = sheet_drawing(g, [s.route], planner.free, coverage=s.covered)
    shaded = drawing.items("coverage")
    assert shaded and all(a.kind == "coverage" for a in shaded)
    # the shaded area is the covered ground (sheet placement is a rigid motion: areas agree)
    area = sum(shapely.Polygon(a.rings[0], a.rings[1:]).area for a in shaded)
    # (a join between cells may pass over a neighbouring piece: its ground is drawn there)
    want = sum(geom.intersection(g.piece(p).polygon).area for p, geom in s.covered.items())
    assert area == pytest.approx(want, rel=1e-9)
    # the sweep starts at the dock landmark
    dock = g.landmark("dock")
    first = s.route.legs[0].points[0]
    assert s.route.legs[0].piece == dock.piece and np.hypot(first[0] - dock.x, first[1] - dock.y) < 1e-3


@pytest.mark.slow
def test_cli_sweep_pictures(tmp_path):
    rc = main(["sweep", str(SPEC), "--region", "polygon:back:60,60;260,60;260,200;60,200", "--swath", "20",
               "--json", str(tmp_path / "s.json"), "--screenshot", str(tmp_path / "s.png"),
               "--sheet", str(tmp_path / "s.png.svg")])
    assert rc == 0
    assert (tmp_path / "s.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    doc = json.loads((tmp_path / "s.json").read_text())
    assert doc["path3d"] is not None and doc["length_3d_mm"] > 0


@pytest.mark.slow
def test_example_sweep_region(tmp_path, capsys):
    import runpy

    main_fn = runpy.run_path(str(Path(__file__).resolve().parents[1] / "examples" / "sweep_region.py"),
                             run_name="garnav_example")["main"]
    figures = main_fn([str(tmp_path)])
    assert figures["covered_fraction"] >= 0.99  # observed 0.997
    assert set(figures["pieces"]) == {"front", "back"}
    doc = json.loads((tmp_path / "sweep.json").read_text())
    jsonschema.Draft202012Validator(route_schema()).validate(doc)
    assert len(doc["crossings"]) >= 1  # the two parts are joined across a seam
    assert (tmp_path / "sweep_sheet.svg").read_text().startswith("<?xml")
    assert "caution" in capsys.readouterr().out


@pytest.mark.slow
def test_sweep_energy_within_hand_worked_bounds(demo):
    # Energy model of docs/physics.md plus turning in place at the driving power: the electrical
    # power P over the driving and turning time, plus at most the weight times the climb over the
    # drive efficiency (the climb is only partly uphill per segment, so that term is a bound).
    from garnav.sweep.energy import sweep_energy_J

    g, d, planner = demo
    robot = g.robot
    s = plan_sweep(g, parse_region("polygon:back:60,60;260,60;260,200;60,200"), swath_mm=20.0, planner=planner)
    lifted = lift_route(d, g, s.route)
    energy = sweep_energy_J(s, robot, d, lifted)
    p = robot.physics
    turn_time = np.sum(np.abs(np.radians(s.route.turns_deg))) * robot.wheel_base_mm / (2 * robot.speed_mm_s)
    base = p.power_w * (lifted.length_3d_mm / robot.speed_mm_s + turn_time)
    climb = p.mass_kg * 9.80665 * lifted.climb_up_mm / 1000.0 / p.drive_efficiency
    assert base - 1e-9 <= energy <= base + climb + 1e-9
    assert sweep_energy_J(s, Robot(), d, lifted) is None  # no physics profile: no figure
