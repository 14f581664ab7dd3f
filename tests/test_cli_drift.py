"""The dead-reckoning commands on a small garment spec: drift, route --confidence, simulate, track, calibrate."""

from __future__ import annotations

import dataclasses
import json

import pytest

import garments
from garnav.cli import main
from garnav.model import KeepOut, Rectangle
from garnav.spec import save_garment
from garnav.uncertainty import OdometryModel
from garnav.uncertainty.calibrate import square_run


@pytest.fixture
def spec(tmp_path):
    g = garments.two_panels()
    box = KeepOut("box", "left", "pocket", Rectangle(150.0, 200.0, 60.0, 60.0))
    robot = dataclasses.replace(g.robot, odometry=OdometryModel(start_heading_deg=1.0))
    path = tmp_path / "two.toml"
    save_garment(dataclasses.replace(g, keepouts=(box,), robot=robot), path)
    return path


@pytest.mark.slow
def test_route_confidence_drift_simulate_track(spec, tmp_path, capsys):
    r = tmp_path / "r.json"
    assert main(["route", str(spec), "--from", "left:40,200", "--to", "right:150,200", "--confidence", "0.99",
                 "--json", str(r)]) == 0
    out = capsys.readouterr().out
    assert "confidence  0.99: contact probability" in out and "+" in out.split("clearance")[1]
    d = tmp_path / "d.json"
    assert main(["drift", str(r), "--garment", str(spec), "--runs", "4000", "--seed", "3", "--json", str(d)]) == 0
    text = capsys.readouterr().out
    assert "overall" in text and "end 2σ" in text and "cross-track largest 2σ" in text
    doc = json.loads(d.read_text())
    assert doc["overall"]["probability"] <= 0.01  # observed 0.0
    assert doc["odometry"]["start_heading_deg"] == 1.0  # the spec's own model
    log = tmp_path / "run.csv"
    assert main(["simulate", str(r), "--garment", str(spec), "--no-noise", "--log", str(log)]) == 0
    t = tmp_path / "t.json"
    assert main(["track", str(spec), str(log), "--plan", str(r), "--json", str(t), "--sheet", str(tmp_path / "s.svg")]) == 0
    track = json.loads(t.read_text())
    assert track["plan"]["max_cross_track_mm"] < 0.5 and track["plan"]["first_out_of_tolerance_s"] is None
    assert track["samples"]["xyz"] is None  # no drape
    assert "route-leg" in (tmp_path / "s.svg").read_text()


def test_errors_are_one_message(spec, tmp_path, capsys):
    r = tmp_path / "r.json"
    assert main(["route", str(spec), "--from", "left:40,200", "--to", "right:150,200", "--json", str(r)]) == 0
    capsys.readouterr()
    assert main(["drift", str(r)]) == 2
    assert "route is on garment 'two_panels'; name its spec with --garment SPEC" in capsys.readouterr().err
    assert main(["drift", str(r), "--garment", str(spec), "--runs", "1"]) == 2
    assert "--runs must be within" in capsys.readouterr().err
    log = tmp_path / "run.csv"
    assert main(["simulate", str(r), "--garment", str(spec), "--log", str(log)]) == 0
    capsys.readouterr()
    out = tmp_path / "t.json"
    assert main(["track", str(spec), str(log), "--start", "left:900,10", "--heading", "0", "--json", str(out)]) == 2
    err = capsys.readouterr().err
    assert f"{log}: row 1: --start left:900,10:" in err and "outside the piece" in err
    assert not out.exists()
    assert main(["track", str(spec), str(log)]) == 2
    assert "give --start POINT and --heading DEG" in capsys.readouterr().err
    assert main(["route", str(spec), "--from", "left:40,200", "--to", "right:150,200", "--confidence", "2"]) == 2
    assert "between 0 and 1" in capsys.readouterr().err


def test_calibrate_prints_the_corrections(tmp_path, capsys):
    cw, ccw = square_run(500.0, 30.0, 1.001, 1.01, "cw"), square_run(500.0, 30.0, 1.001, 1.01, "ccw")
    runs = tmp_path / "runs.toml"
    runs.write_text(f'format = "garnav-umbmark"\nversion = 1\nside_mm = 500\n[[cw]]\nx_mm = {cw[0]!r}\n'
                    f"y_mm = {cw[1]!r}\n[[ccw]]\nx_mm = {ccw[0]!r}\ny_mm = {ccw[1]!r}\n")
    assert main(["calibrate", str(runs)]) == 0
    out = capsys.readouterr().out
    assert "E_d = D_R/D_L 1.000949" in out and "wheel base 30 -> 30.2865 mm" in out
