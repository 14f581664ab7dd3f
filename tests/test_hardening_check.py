"""Class 4 of the hardening work: `garnav check` reports what `garnav route` would refuse for the
spec's own robot, with documented exit codes (0 ok, 1 warnings, 2 errors) and a JSON report."""

from __future__ import annotations

import dataclasses
import json
import shutil
from pathlib import Path

from garnav.cli import main
from garnav.plan.readiness import route_readiness
from garnav.spec import load_garment
from garnav.spec.writer import save_garment

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "meshes" / "sensing_top.toml"


def _demo_copy(tmp_path: Path, **changes) -> Path:
    """The demo spec rewritten with ``changes`` applied to its Garment, next to copies of its meshes."""
    g = load_garment(DEMO)
    for name in ("sensing_top_drape.obj", "mannequin.obj"):
        shutil.copy(ROOT / "meshes" / name, tmp_path / name)
    out = tmp_path / "garment.toml"
    save_garment(dataclasses.replace(g, **changes), out)
    return out


def _check_json(spec: Path, capsys) -> tuple[int, dict]:
    code = main(["check", str(spec), "--json"])
    return code, json.loads(capsys.readouterr().out)


def test_class4_demo_is_clean_exit_0(capsys):
    code, doc = _check_json(DEMO, capsys)
    assert code == 0 and doc["status"] == 0 and doc["errors"] == [] and doc["warnings"] == []
    assert doc["summary"]["pieces"] == 5 and doc["drape"] is not None


def test_class4_landmark_inside_a_keepout_is_an_error(tmp_path, capsys):
    g = load_garment(DEMO)
    dock = next(k for k in g.keepouts if k.name == "charging_dock")
    lm = next(m for m in g.landmarks if m.name == "dock")
    inside = dataclasses.replace(lm, name="in_dock", x=lm.x, y=lm.y)
    big = dataclasses.replace(dock, clearance_mm=dock.clearance_mm + 200.0)
    spec = _demo_copy(tmp_path, landmarks=g.landmarks + (inside,),
                      keepouts=tuple(big if k is dock else k for k in g.keepouts))
    code, doc = _check_json(spec, capsys)
    assert code == 2
    hit = [e for e in doc["errors"] if e["code"] == "landmark_blocked" and "in_dock" in e["item"]]
    assert hit and "charging_dock" in hit[0]["reason"]


def test_class4_robot_wider_than_a_piece_is_reported(tmp_path, capsys):
    g = load_garment(DEMO)
    spec = _demo_copy(tmp_path, robot=dataclasses.replace(g.robot, radius_mm=120.0))
    code, doc = _check_json(spec, capsys)
    assert code == 2  # the landmarks become unreachable too; the yoke has no room left
    codes = {w["code"] for w in doc["warnings"]} | {e["code"] for e in doc["errors"]}
    assert "piece_no_free_space" in codes and "landmark_blocked" in codes


def test_class4_mismatched_and_eased_seam_runs():
    g = load_garment(DEMO)
    seam = g.seams[0]
    s0, s1 = seam.b.span(g.piece(seam.b.piece).edge(seam.b.edge))
    for frac, code in ((0.3, "seam_runs_mismatched"), (0.85, "seam_ease_large"), (0.97, None)):
        run = dataclasses.replace(seam.b, from_mm=s0, to_mm=s0 + frac * (s1 - s0))
        found = route_readiness(dataclasses.replace(g, seams=(dataclasses.replace(seam, b=run),) + g.seams[1:]))
        codes = {f.code for f in found if f.item == f"seam '{seam.name}'"}
        assert codes == ({code} if code else set()), frac


def test_class4_drape_that_is_not_a_mesh_is_an_error(tmp_path, capsys):
    spec = _demo_copy(tmp_path)
    (tmp_path / "sensing_top_drape.obj").write_text("this is not a mesh\n", encoding="utf-8")
    code, doc = _check_json(spec, capsys)
    assert code == 2 and doc["errors"][0]["code"] == "drape_unreadable"


def test_class4_spec_problems_in_json(tmp_path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text('[garment]\nname = "x"\n', encoding="utf-8")
    code, doc = _check_json(bad, capsys)
    assert code == 2 and doc["errors"] and doc["errors"][0]["code"] == "spec"


def test_class4_exit_codes_in_help(capsys):
    import pytest

    with pytest.raises(SystemExit):
        main(["check", "--help"])
    assert "exit status: 0 nothing found, 1 warnings only, 2 errors" in capsys.readouterr().out


def test_every_command_help_ends_with_its_exit_status():
    from garnav.cli import build_parser

    sub = next(a for a in build_parser()._actions if a.dest == "command")
    for name, parser in sub.choices.items():
        assert "exit status:" in (parser.epilog or ""), name
