"""Body zones in the commands: applied through the drape, refused without it unless the user opts
out, and swept as a region (``--region zone:NAME``) where that is allowed."""

from __future__ import annotations

import dataclasses
import json

import numpy as np
import pytest

import drape_meshes as dm
from garnav.cli import main
from garnav.drape import save_obj
from garnav.errors import QueryError
from garnav.spec import save_garment
from garnav.zones import BodyZone


@pytest.fixture
def spec(tmp_path):
    g, m = dm.flat_sheet(400.0, 300.0, 40, 30)
    zones = (BodyZone("pump", "implanted_device", "sphere", ((200.0, 150.0, 0.0),), distance_mm=60.0),
             BodyZone("patch", "wound_or_sensor", "sphere", ((320.0, 70.0, 0.0),), distance_mm=35.0))
    save_obj(m, tmp_path / "panel.obj")
    g = dataclasses.replace(g, drape="panel.obj", body_zones=zones,
                            robot=dataclasses.replace(g.robot, sensor_swath_mm=10.0))
    return save_garment(g, tmp_path / "panel.toml")


def test_route_goes_round_the_zone_through_the_drape(spec, tmp_path, capsys):
    out = tmp_path / "r.json"
    assert main(["route", str(spec), "--from", "panel:40,150", "--to", "panel:360,150", "--json", str(out)]) == 0
    doc = json.loads(out.read_text())
    pts = np.array([[w["x"], w["y"]] for w in doc["waypoints"]])
    # straight on would be 320 mm; round the 60 mm zone with an 8 mm robot it is longer
    assert doc["length_mm"] > 330.0
    seg = np.linspace(pts[:-1], pts[1:], 50).reshape(-1, 2)
    assert np.linalg.norm(seg - [200.0, 150.0], axis=1).min() >= 68.0 - 1e-6


def test_no_drape_is_refused_unless_told(spec, capsys):
    args = ["route", str(spec), "--from", "panel:40,150", "--to", "panel:360,150", "--no-drape"]
    assert main(args) == 2
    err = capsys.readouterr().err
    assert "body zones (pump, patch)" in err and "--ignore-body-zones" in err and "Traceback" not in err
    assert main(args + ["--ignore-body-zones"]) == 0
    out = capsys.readouterr().out
    assert "warning: body zones NOT applied (pump, patch)" in out
    assert "length         320.0 mm" in out  # straight through: the zone was not applied


def test_sweep_a_sensor_zone_but_never_an_implant(spec, tmp_path, capsys):
    out = tmp_path / "s.json"
    assert main(["sweep", str(spec), "--region", "zone:patch", "--json", str(out)]) == 0
    doc = json.loads(out.read_text())
    assert doc["sweep"]["covered_fraction"] >= 0.99
    xy = np.array([[w["x"], w["y"]] for w in doc["waypoints"]])
    assert np.linalg.norm(xy - [320.0, 70.0], axis=1).max() < 35.0 + 10.0  # within the zone's fabric
    assert main(["sweep", str(spec), "--region", "zone:pump", "--json", str(out)]) == 2
    assert "implanted_device zones are kept out of, never swept" in capsys.readouterr().err
    assert main(["sweep", str(spec), "--region", "zone:pmp", "--json", str(out)]) == 2
    assert "did you mean 'pump'" in capsys.readouterr().err


def test_apply_zones_api():
    from garnav.zones.sources import apply_zones

    g, m = dm.flat_sheet()
    g = dataclasses.replace(g, body_zones=(BodyZone("n", "neck_face", "sphere", ((0.0, 0.0, 0.0),), distance_mm=5.0),))
    with pytest.raises(QueryError, match="will not plan without it"):
        apply_zones(g, None, "x.toml")
    assert apply_zones(g, None, "x.toml", allow_without_zones=True) is g


def test_check_drape_reports_zones_and_landmarks_in_them(capsys):
    from pathlib import Path

    spec = Path(__file__).resolve().parents[1] / "meshes" / "sensing_top.toml"
    assert main(["check", str(spec), "--drape"]) == 0
    out = capsys.readouterr().out
    assert "body zones (kept out through the drape):" in out
    assert "body zone 'implant' (implanted_device, 152.4 mm): front" in out
    assert "landmark 'cervicale' lies in body zone 'neck_and_face'" in out
    assert "landmark 'sternum_left' lies in" not in out


@pytest.mark.slow
def test_show_sheet_draws_the_zones(spec, tmp_path, capsys):
    pytest.importorskip("pyvista")
    from garnav.preview.scene import off_screen_environment

    off_screen_environment()
    route = tmp_path / "r.json"
    assert main(["route", str(spec), "--from", "panel:40,150", "--to", "panel:360,150", "--json", str(route)]) == 0
    sheet = tmp_path / "s.svg"
    assert main(["show", str(spec), str(route), "--sheet", str(sheet), "--screenshot", str(tmp_path / "v.png")]) == 0
    text = sheet.read_text()
    assert text.count('class="body-zone"') == 2 and "pump: implanted device, 60 mm" in text
