"""`garnav export-pattern` and `garnav import PATTERN` on the command line."""

from __future__ import annotations

from pathlib import Path

import pytest


from garnav.cli import build_parser, main  # noqa: E402
from garnav.spec import load_garment  # noqa: E402

DEMO = Path(__file__).resolve().parents[1] / "meshes" / "sensing_top.toml"


@pytest.mark.parametrize("fmt", ["dxf", "svg"])
def test_export_then_import_keeps_pieces_and_seams(tmp_path, capsys, fmt):
    out = tmp_path / f"top.{fmt}"
    seams = tmp_path / "seams.toml"
    assert main(["export-pattern", str(DEMO), f"--{fmt}", str(out), "--seams-out", str(seams)]) == 0
    spec = tmp_path / "top.toml"
    assert main(["import", str(out), "--out", str(spec), "--seams", str(seams)]) == 0
    text = capsys.readouterr().out
    assert "5 pieces, 12 seams, 5 keep-outs, 11 landmarks" in text
    g, h = load_garment(DEMO), load_garment(spec)
    assert h.seams == g.seams
    assert [p.edge_names for p in h.pieces] == [p.edge_names for p in g.pieces]


@pytest.mark.slow
def test_imported_demo_routes_like_the_demo(tmp_path, capsys):
    """The demo's first route, planned on the demo re-imported from DXF, crosses the same seam
    and has the same length as on the demo spec itself (reference: garnav route on the spec)."""
    out, seams, spec = tmp_path / "top.dxf", tmp_path / "seams.toml", tmp_path / "top.toml"
    assert main(["export-pattern", str(DEMO), "--dxf", str(out), "--seams-out", str(seams)]) == 0
    assert main(["import", str(out), "--out", str(spec), "--seams", str(seams)]) == 0
    capsys.readouterr()
    from garnav.plan import Planner

    g, h = load_garment(DEMO), load_garment(spec)
    a = Planner(g, g.robot).route("wrist_left", "sternum_left")
    b = Planner(h, g.robot).route("wrist_left", "sternum_left")
    assert b.seams_crossed == a.seams_crossed == ("armhole_left_front",)
    assert b.length_mm == pytest.approx(a.length_mm, abs=1e-6)


def test_export_needs_a_target(capsys):
    assert main(["export-pattern", str(DEMO)]) == 2
    assert "give --dxf OUT.dxf, --svg OUT.svg or both" in capsys.readouterr().err


def test_import_options(tmp_path, capsys):
    out = tmp_path / "top.dxf"
    assert main(["export-pattern", str(DEMO), "--dxf", str(out)]) == 0
    assert main(["import", str(out), "-o", str(tmp_path / "a.toml"), "--tolerance", "-1"]) == 2
    assert "--tolerance: expected a chord tolerance in mm > 0" in capsys.readouterr().err
    assert main(["import", str(out), "--out", str(tmp_path / "a.toml"), "--internal", "ignore",
                 "--name", "renamed"]) == 0
    g = load_garment(tmp_path / "a.toml")
    assert g.name == "renamed" and g.keepouts == ()  # keep-outs travel as internal lines


def test_help_lists_both_commands():
    text = build_parser().format_help()
    assert "export-pattern" in text and "import" in text
