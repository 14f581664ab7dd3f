"""The scripts in examples/ run and produce what they promise."""

from __future__ import annotations

import csv
import json
import os
import runpy
from pathlib import Path
from xml.etree import ElementTree

import jsonschema
import pytest

from garnav.export.waypoints import route_schema

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"


def _main(name: str):
    """The example's ``main(argv)``, loaded without running it as a script."""
    return runpy.run_path(str(EXAMPLES / name), run_name="garnav_example")["main"]


def _png_size(data: bytes) -> tuple[int, int]:
    # PNG signature and IHDR chunk (PNG specification, ISO/IEC 15948, §11.2.2)
    assert data[:8] == b"\x89PNG\r\n\x1a\n" and data[12:16] == b"IHDR"
    return int.from_bytes(data[16:20], "big"), int.from_bytes(data[20:24], "big")


@pytest.mark.slow
def test_route_between_landmarks(tmp_path, capsys):
    results = _main("route_between_landmarks.py")([str(tmp_path)])
    text = capsys.readouterr().out
    saved = json.loads((tmp_path / "routes.json").read_text())
    assert saved == results and len(results) >= 4
    for r in results:
        assert r["length_mm"] > 0 and f"{r['start']:>15} → {r['goal']}" in text
    first = results[0]
    assert (first["start"], first["goal"]) == ("wrist_left", "sternum_left")
    assert first["seams_crossed"] == ["armhole_left_front"]
    # around the neck opening: the yoke alone, no seam
    assert results[3]["seams_crossed"] == [] and results[3]["turns"] > 0


@pytest.mark.slow
def test_preview_route(tmp_path, capsys):
    os.environ.setdefault("PYVISTA_OFF_SCREEN", "true")
    os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")
    result = _main("preview_route.py")([str(tmp_path), "--size", "400", "300"])
    assert "on the drape" in capsys.readouterr().out
    assert _png_size((tmp_path / "route_3d.png").read_bytes()) == (400, 300)
    assert _png_size((tmp_path / "route_sheet.png").read_bytes())[0] == 1200
    # reference: the standard library's XML parser
    assert ElementTree.parse(tmp_path / "route_sheet.svg").getroot().tag.endswith("svg")
    lifted, route = result["lifted"], result["route"]
    # the demo drape is an isometric image of its pattern up to mesh chords (docs/demo.md)
    assert lifted.length_3d_mm == pytest.approx(route.length_mm, rel=5e-3)


@pytest.mark.slow
def test_export_for_robot(tmp_path, capsys):
    result = _main("export_for_robot.py")([str(tmp_path)])
    text = capsys.readouterr().out
    stem = "wrist_right_to_scapula_right"
    doc = json.loads((tmp_path / f"{stem}.json").read_text())
    # reference: jsonschema's Draft 2020-12 validator against the shipped schema
    jsonschema.Draft202012Validator(route_schema()).validate(doc)
    rows = list(csv.DictReader((tmp_path / f"{stem}.csv").open(encoding="utf-8")))
    assert len(rows) == len(doc["waypoints"])
    assert (tmp_path / f"{stem}.cmd").read_text().startswith("garnav-commands 1\n")
    # the replayed commands end where the route ends, having crossed the same seams
    assert result["miss_mm"] < 0.05  # written to 0.01 mm and 0.01°; observed 0.005 mm
    assert [c.seam for c in result["replay"].crossings] == doc["summary"]["seams_crossed"]
    assert "replay: ends on back" in text and "crossed armhole_right_back" in text


def test_import_pattern(tmp_path, capsys):
    import math

    from garnav.spec import load_garment

    result = _main("import_pattern.py")([str(tmp_path)])
    text = capsys.readouterr().out
    assert "proposed seams (not applied)" in text
    g = load_garment(tmp_path / "vest.toml")
    assert [s.name for s in g.seams] == ["side_1", "side_2", "shoulder"]
    # the pieces lie 20 mm apart on the sheet, side seams parallel: unfolded along the side
    # seam, the shortest route is the straight line from the navel (150, 90) to the spine
    # (340 - 20, 220) mm (plane geometry), clear of the pocket and within the seam
    assert result["route"].length_mm == pytest.approx(math.hypot(170.0, 130.0), abs=1e-6)
    assert result["route"].seams_crossed == ("side_1",)
    assert (tmp_path / "vest.dxf").exists()


@pytest.mark.slow
def test_drivable_routes(tmp_path, capsys):
    results = _main("drivable_routes.py")([str(tmp_path)])
    assert json.loads((tmp_path / "drivable.json").read_text()) == results
    assert all(r["safe"] for r in results)
    up = next(r for r in results if r["posture"] == "upright" and r["start"] == "omphalion")
    assert up["method"] == "lattice"  # straight up the chest is too steep for the demo drive
    lying = next(r for r in results if r["posture"] == "supine" and r["start"] == "omphalion")
    assert lying["method"] == "length-optimal" and lying["energy_j"] < up["energy_j"]  # level when lying
