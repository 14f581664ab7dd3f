"""``garnav route`` writes the route document, its CSV and robot commands that replay the route."""

from __future__ import annotations

import json
import math
from pathlib import Path

import jsonschema
import numpy as np
import pytest

import garments
from garnav.cli import main
from garnav.export.commands import read_commands
from garnav.export.replay import replay_commands
from garnav.export.waypoints import route_schema
from garnav.spec import load_garment, save_garment


def test_route_cli_outputs_validate_and_replay(tmp_path, capsys):
    g = garments.two_panels()
    spec = tmp_path / "two.toml"
    save_garment(g, spec)
    out = {k: tmp_path / f"r.{k}" for k in ("json", "csv", "cmd")}
    code = main(["route", str(spec), "--from", "left_centre", "--to", "right:250,300",
                 "--json", str(out["json"]), "--csv", str(out["csv"]), "--commands", str(out["cmd"])])
    assert code == 0
    doc = json.loads(out["json"].read_text())
    # reference: jsonschema's Draft 2020-12 validator against the shipped schema
    jsonschema.Draft202012Validator(route_schema()).validate(doc)
    assert doc["summary"]["seams_crossed"] == ["middle"] and doc["path3d"] is None
    rep = replay_commands(g, read_commands(out["cmd"]))
    end = doc["waypoints"][-1]
    # written to 0.01 mm and 0.01°: observed 0.018 mm
    assert rep.end.piece == "right" and math.hypot(rep.end.x_mm - end["x"], rep.end.y_mm - end["y"]) < 0.1
    assert doc["command_tolerance_mm"] == 0.5 and "arcs merged within 0.5 mm" in out["cmd"].read_text()
    assert "left_centre to right:250,300" in out["cmd"].read_text()
    assert len(out["csv"].read_text().splitlines()) == len(doc["waypoints"]) + 1


MESHES = Path(__file__).resolve().parents[1] / "meshes"


@pytest.mark.slow
def test_route_json_contract_with_the_demo_drape(tmp_path, monkeypatch, capsys):
    # the keys other tools rely on: top-level length_mm, length_3d_mm and path3d, and per
    # waypoint piece, x, y, heading_deg and xyz
    monkeypatch.chdir(tmp_path)
    spec = str(MESHES / "sensing_top.toml")
    code = main(["route", spec, "--from", "wrist_left", "--to", "xyz:80,-97,1230", "--drape", "--json", "r.json"])
    assert code == 0
    doc = json.loads((tmp_path / "r.json").read_text())
    # reference: jsonschema's Draft 2020-12 validator against the shipped schema
    jsonschema.Draft202012Validator(route_schema()).validate(doc)
    assert doc["length_mm"] > 0 and doc["length_3d_mm"] > 0
    # the demo drape is an isometric image of the pattern up to mesh chords (docs/demo.md)
    assert doc["length_3d_mm"] == pytest.approx(doc["length_mm"], rel=5e-3)
    path = np.array(doc["path3d"])
    assert path.ndim == 2 and path.shape[1] == 3 and len(path) > len(doc["waypoints"])
    assert np.sum(np.linalg.norm(np.diff(path, axis=0), axis=1)) == pytest.approx(doc["length_3d_mm"])
    for w in doc["waypoints"]:
        assert {"piece", "x", "y", "heading_deg", "xyz"} <= set(w) and len(w["xyz"]) == 3
    assert doc["waypoints"][0]["piece"] == "sleeve_left" and doc["waypoints"][-1]["piece"] == "back"
    # the goal was given in world mm: the route ends within the 10 mm snap distance of it
    assert np.linalg.norm(np.array(doc["waypoints"][-1]["xyz"]) - [80.0, -97.0, 1230.0]) < 10.0


@pytest.mark.slow
def test_route_lifts_onto_the_specs_own_drape_unless_told_not_to(tmp_path, capsys):
    spec = str(MESHES / "sensing_top.toml")
    auto, off = tmp_path / "auto.json", tmp_path / "off.json"
    assert main(["route", spec, "--from", "wrist_left", "--to", "sternum_left", "--json", str(auto)]) == 0
    assert "3D length" in capsys.readouterr().out
    # the demo spec has body zones: without the drape only with the explicit opt-out
    assert main(["route", spec, "--from", "wrist_left", "--to", "sternum_left", "--no-drape", "--json", str(off)]) == 2
    assert "--ignore-body-zones" in capsys.readouterr().err and not off.exists()
    assert main(["route", spec, "--from", "wrist_left", "--to", "sternum_left", "--no-drape", "--ignore-body-zones",
                 "--json", str(off)]) == 0
    out = capsys.readouterr().out
    assert "3D length" not in out and "body zones NOT applied" in out
    a, o = json.loads(auto.read_text()), json.loads(off.read_text())
    assert a["length_3d_mm"] is not None and len(a["path3d"]) > 2
    assert o["length_3d_mm"] is None and o["path3d"] is None and o["waypoints"][0]["xyz"] is None
    assert a["length_mm"] > o["length_mm"]  # round the implant zone (753 mm) vs straight on (657 mm)
    # a spec naming a drape file that is not there: one message, with the way out
    g = load_garment(MESHES / "sensing_top.toml")
    save_garment(g, tmp_path / "moved.toml")
    assert main(["route", str(tmp_path / "moved.toml"), "--from", "wrist_left", "--to", "sternum_left"]) == 2
    err = capsys.readouterr().err
    assert "sensing_top_drape.obj" in err and "--no-drape" in err
