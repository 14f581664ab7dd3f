"""``garnav demo``: the whole job into a folder (files, table, cautions), rebuild, bad options."""

from __future__ import annotations

import contextlib
import io
import json
import os
from pathlib import Path
from xml.etree import ElementTree

import jsonschema
import pytest

from garnav.cli import main
from garnav.demo.run import (
    DEMO_ROUTES,
    DEMO_STEPS,
    PAGE_NAME,
    SCREENSHOT_NAME,
    SCREENSHOT_SIZE,
    SHEET_NAME,
    run_demo,
)
from garnav.export.commands import read_commands
from garnav.export.waypoints import route_schema

MESHES = Path(__file__).resolve().parents[1] / "meshes"


pytestmark = pytest.mark.slow  # the whole demo job (~10 s) behind most tests here


def _png_size(data: bytes) -> tuple[int, int]:
    # PNG signature, then the IHDR chunk: width and height as big-endian 32-bit integers
    # (PNG specification, ISO/IEC 15948, §11.2.2)
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and data[12:16] == b"IHDR"
    return int.from_bytes(data[16:20], "big"), int.from_bytes(data[20:24], "big")


@pytest.fixture(scope="module")
def demo_run(tmp_path_factory):
    """One run of ``garnav demo --out DIR`` (it calls run_demo), shared by the tests below."""
    os.environ.setdefault("PYVISTA_OFF_SCREEN", "true")
    os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")
    out = tmp_path_factory.mktemp("demo") / "garnav-demo"
    stdout = io.StringIO()
    with contextlib.redirect_stdout(stdout):
        code = main(["demo", "--out", str(out)])
    return code, out, stdout.getvalue()


def test_demo_writes_every_file(demo_run):
    code, out, text = demo_run
    assert code == 0
    names = {p.name for p in out.iterdir()}
    expected = {SCREENSHOT_NAME, f"{SHEET_NAME}.svg", f"{SHEET_NAME}.png", PAGE_NAME, "sensing_top.toml",
                "sensing_top_drape.obj", "mannequin.obj"}
    for start, goal, _ in DEMO_ROUTES:
        expected |= {f"{start}_to_{goal}.{ext}" for ext in ("json", "csv", "cmd")}
    expected |= {"acromion_right_to_wrist_right.json", "acromion_right_to_wrist_right_robust.json",
                 "acromion_right_to_wrist_right_robust.cmd", "sensing_top_arm_raised_drape.obj",
                 "mannequin_arm_raised.obj"}
    assert names == expected


def test_demo_route_fine_in_one_pose_not_the_other_and_the_robust_one(demo_run):
    """docs/demo.md, "One route, two poses": standing fine, arm raised not; robust fine in both."""
    _, out, text = demo_run
    plain = {p["pose"]: p for p in json.loads((out / "acromion_right_to_wrist_right.json").read_text())["poses"]}
    assert plain["standing"]["ok"] and not plain["arm_raised"]["ok"]
    assert "unsafe segment" in plain["arm_raised"]["problems"][0]
    robust = json.loads((out / "acromion_right_to_wrist_right_robust.json").read_text())
    assert all(p["ok"] for p in robust["poses"]) and [p["pose"] for p in robust["poses"]] == ["standing", "arm_raised"]
    assert "robust (fine in every pose)" in text
    # the demo folder is a working pose spec: the same command repeats it
    assert main(["check", str(out / "sensing_top.toml")]) == 0


def test_demo_route_files_validate_and_carry_3d(demo_run):
    _, out, _ = demo_run
    # reference: jsonschema's Draft 2020-12 validator against the shipped schema
    validator = jsonschema.Draft202012Validator(route_schema())
    for start, goal, _ in DEMO_ROUTES:
        doc = json.loads((out / f"{start}_to_{goal}.json").read_text())
        validator.validate(doc)
        assert doc["length_3d_mm"] > 0 and len(doc["path3d"]) > len(doc["waypoints"])
        # the demo drape is an isometric image of its pattern up to mesh chords (docs/demo.md)
        assert doc["length_3d_mm"] == pytest.approx(doc["length_mm"], rel=5e-3)
        cmds = read_commands(out / f"{start}_to_{goal}.cmd")
        # merged within 0.5 mm and rounded to 0.01 mm: chords are a little shorter than arcs
        assert cmds.distance_mm == pytest.approx(doc["length_mm"], abs=0.05)  # observed 0.008 mm
        assert doc["command_tolerance_mm"] == 0.5
        rows = (out / f"{start}_to_{goal}.csv").read_text().splitlines()
        assert rows[0].startswith("index,leg,piece,x_mm,y_mm") and len(rows) == len(doc["waypoints"]) + 1
    first = json.loads((out / "wrist_left_to_sternum_left.json").read_text())
    # the implant zone on the left chest blocks the front armhole: round the back and up the side
    assert first["summary"]["seams_crossed"] == ["armhole_left_back", "side_left_upper"]
    dock = json.loads((out / "olecranon_right_to_dock.json").read_text())
    assert dock["waypoints"][-1]["piece"] == "back"


def test_demo_pictures(demo_run):
    _, out, _ = demo_run
    assert _png_size((out / SCREENSHOT_NAME).read_bytes()) == (2 * SCREENSHOT_SIZE[0], SCREENSHOT_SIZE[1])
    w, h = _png_size((out / f"{SHEET_NAME}.png").read_bytes())
    assert w == 1600 and h > 100
    # reference: the standard library's XML parser
    root = ElementTree.parse(out / f"{SHEET_NAME}.svg").getroot()
    assert root.tag.endswith("svg")
    svg = (out / f"{SHEET_NAME}.svg").read_text()
    for start, goal, _ in DEMO_ROUTES:
        assert f"{start}_to_{goal}" in svg


def test_demo_prints_table_and_cautions(demo_run):
    _, _, text = demo_run
    for start, goal, _ in DEMO_ROUTES:
        assert f"{start} → {goal}" in text
    for column in ("length", "3D length", "seams crossed", "turns", "climb up/down", "time"):
        assert column in text
    flat = " ".join(text.split())
    from garnav.cautions import CAUTIONS

    for heading, _ in CAUTIONS:  # the project's one caution text (garnav/cautions.py)
        assert f"{heading}:" in flat
    assert "device maker and the wearer's clinician" in flat and "certifies nothing" in flat


def test_the_demo_spec_written_is_the_committed_one(demo_run):
    _, out, _ = demo_run
    assert (out / "sensing_top.toml").read_bytes() == (MESHES / "sensing_top.toml").read_bytes()


def test_run_demo_api_reports_progress_without_the_3d_picture(tmp_path):
    labels = []
    result = run_demo(tmp_path, progress=labels.append, screenshot=False)
    assert tuple(labels) == DEMO_STEPS
    assert "screenshot" not in result.files and result.screenshot_px == (0, 0)
    assert [(r.start, r.goal) for r in result.routes] == [(s, g) for s, g, _ in DEMO_ROUTES]
    assert all(p.is_file() for p in result.files.values())
    # the body landmark scapula_right (xyz) was snapped onto the back through the drape
    assert result.routes[2].route.legs[-1].piece == "back"


def test_demo_rebuild_writes_the_committed_files(tmp_path, capsys):
    assert main(["demo", "--rebuild", "--out", str(tmp_path)]) == 0
    out = capsys.readouterr().out
    assert "sensing_top_drape.obj" in out
    for name in ("sensing_top.toml", "sensing_top_drape.obj", "mannequin.obj",
                 "sensing_top_arm_raised_drape.obj", "mannequin_arm_raised.obj"):
        assert (tmp_path / name).read_bytes() == (MESHES / name).read_bytes(), name


def test_demo_into_an_unwritable_place_is_a_clear_error(tmp_path, capsys):
    blocker = tmp_path / "file"
    blocker.write_text("x")
    assert main(["demo", "--rebuild", "--out", str(blocker / "sub")]) == 2
    err = capsys.readouterr().err
    assert "cannot write" in err
    assert main(["demo", "--out", str(blocker / "sub")]) == 2
    err = capsys.readouterr().err
    assert "cannot write" in err and "Traceback" not in err


def test_demo_fleet_scenario_writes_schedule_commands_and_pictures(tmp_path):
    """``garnav demo --fleet``: the invented three-robot scenario, checked by the fleet's own 10 ms
    sampler (garnav.fleet.check), with its schedule, per-robot commands (with ``wait``) and pictures."""
    from garnav.cli.demo import _fleet
    from garnav.spec import load_garment

    out = tmp_path / "garnav-demo" / "fleet"
    lines = _fleet(load_garment(MESHES / "sensing_top.toml"), out)
    assert lines[0].startswith("fleet: 3 robots") and lines[0].endswith(": pass")
    names = {p.name for p in out.iterdir()}
    assert {"fleet_schedule.json", "fleet_sheet.gif", "fleet_chart.png"} <= names
    cmds = sorted(n for n in names if n.endswith(".cmd"))
    assert len(cmds) == 3
    schedule = json.loads((out / "fleet_schedule.json").read_text())
    assert len(schedule["robots"]) == 3
