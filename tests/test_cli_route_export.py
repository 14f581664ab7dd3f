"""``garnav route`` writes the route document, its CSV and robot commands that replay the route."""

from __future__ import annotations

import json
import math

import jsonschema

import garments
from garnav.cli import main
from garnav.export.commands import read_commands
from garnav.export.replay import replay_commands
from garnav.export.waypoints import route_schema
from garnav.spec import save_garment


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
    assert doc["summary"]["seams_crossed"] == ["middle"] and doc["path_3d"] is None
    rep = replay_commands(g, read_commands(out["cmd"]))
    end = doc["waypoints"][-1]
    assert rep.end.piece == "right" and math.hypot(rep.end.x_mm - end["x_mm"], rep.end.y_mm - end["y_mm"]) < 1e-6
    assert "left_centre to right:250,300" in out["cmd"].read_text()
    assert len(out["csv"].read_text().splitlines()) == len(doc["waypoints"]) + 1
