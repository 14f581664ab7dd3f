"""The physics profile: [robot.physics] in a spec and the standalone robot file, validation, CLI."""

from __future__ import annotations

import dataclasses
import json
import re
from pathlib import Path

import jsonschema
import pytest

import garments
from garnav.cli import main
from garnav.errors import SpecError
from garnav.export.waypoints import route_schema
from garnav.mechanics.profile import PHYSICS_FIELDS, RobotPhysics, physics_problems
from garnav.spec import dumps_garment, garment_problems, loads_garment
from garnav.spec.robot import dumps_robot, load_robot, loads_robot, save_robot

ROOT = Path(__file__).resolve().parents[1]
SPEC = ROOT / "meshes" / "sensing_top.toml"
DOC = ROOT / "docs" / "physics.md"


def _with_physics(p: RobotPhysics):
    g = garments.single_panel()
    return dataclasses.replace(g, robot=dataclasses.replace(g.robot, physics=p))


def test_spec_round_trip_with_physics():
    p = RobotPhysics(magnet_table_gap_mm=(0.5, 1.0), magnet_table_force_n=(3.0, 2.0), piece_gap_mm=(("panel", 0.7),))
    g = _with_physics(p)
    text = dumps_garment(g)
    assert "[robot.physics]" in text
    again = loads_garment(text)
    assert again == g and dumps_garment(again) == text


def test_robot_file_round_trip(tmp_path):
    robot = dataclasses.replace(garments.single_panel().robot, physics=RobotPhysics(mass_kg=0.07))
    path = save_robot(robot, tmp_path / "r.toml")
    assert load_robot(path) == robot
    assert loads_robot(dumps_robot(robot)) == robot
    bare = loads_robot('[robot]\nname = "plain"\n')
    assert bare.physics is None and bare.name == "plain"


@pytest.mark.parametrize(
    "text, message",
    [
        ("[robot.physics]\nmass_kg = 0\n", "robot physics: 'mass_kg' must be > 0 and <= 10, found 0"),
        ("[robot.physics]\nmass_kg = 'heavy'\n", "'mass_kg' must be a number (kg), found a string ('heavy')"),
        ("[robot.physics]\nmagnet_forc = 2\n", "unknown key 'magnet_forc'; did you mean 'magnet_force_n'?"),
        ("[robot.physics]\nfriction_coefficient = -1\n", "'friction_coefficient' must be > 0 and <= 5, found -1"),
        ("[robot.physics]\nusable_fraction = 1.5\n", "'usable_fraction' must be > 0 and <= 1, found 1.5"),
        ("[robot.physics]\nsafety_factor = 0.5\n", "'safety_factor' must be >= 1 and <= 100, found 0.5"),
        ("[robot.physics]\nmax_drive_force_n = 0\n", "needs 'max_drive_force_n' > 0, or 'stall_torque_n_m' > 0"),
        ("[robot.physics]\nmagnet_table_gap_mm = [1, 2]\nmagnet_table_force_n = [3]\n",
         "'magnet_table_gap_mm' has 2 values but 'magnet_table_force_n' has 1"),
        ("[robot.physics]\nmagnet_table_gap_mm = [2, 1]\nmagnet_table_force_n = [3, 2]\n",
         "'magnet_table_gap_mm' must increase strictly"),
        ("[robot.physics]\nmagnet_table_gap_mm = [1, 'x']\n", "'magnet_table_gap_mm' must be an array of numbers"),
        ("[robot.physics]\npiece_gap_mm = [1]\n", "'piece_gap_mm' must be a table of piece = mm"),
        ("[robot.physics]\nbattery_mah = inf\n", "'battery_mah' must be a finite number"),
        ("[robot]\nphysics = 3\n", "robot: 'physics' must be a table, found an integer (3)"),
        ('piece = []\n[robot]\n', "this is a garment spec, not a robot file"),
        ('format = "garnav-garment"\n[robot]\n', "format is 'garnav-garment', not a robot file"),
        ("version = 2\n[robot]\n", "version 2 is not supported"),
        ("name = 1\n", "has no [robot] table"),
    ],
)
def test_bad_robot_files_give_one_clear_message(text, message):
    with pytest.raises(SpecError) as err:
        loads_robot(text if text.startswith(("[robot]", "piece", "format", "version", "name")) else "[robot]\n" + text,
                    "bot.toml")
    text_out = str(err.value)
    assert message in text_out and "bot.toml" in text_out and "Traceback" not in text_out


def test_every_profile_value_is_validated():
    # each field: one out-of-range value gives exactly one message naming the key
    for key, f in PHYSICS_FIELDS.items():
        if f.type != "float":
            continue
        bad = (f.low - 1.0) if f.low is not None else None
        if bad is None:
            continue
        problems = physics_problems(dataclasses.replace(RobotPhysics(stall_torque_n_m=0.001), **{key: bad}))
        assert len([p for p in problems if f"'{key}'" in p]) == 1, (key, problems)
    assert physics_problems(RobotPhysics()) == []


def test_piece_gap_must_name_a_piece():
    g = _with_physics(RobotPhysics(piece_gap_mm=(("sleve", 1.0),)))
    reasons = [p.reason for p in garment_problems(g)]
    assert any("names piece 'sleve', which the garment does not have" in r for r in reasons)


def test_stall_torque_gives_the_drive_force():
    # F = 2 motors · τ · gear ratio / wheel radius (wheel statics)
    p = RobotPhysics(max_drive_force_n=0.0, stall_torque_n_m=0.0005, gear_ratio=3.0, wheel_radius_mm=5.0)
    assert p.drive_force_n == pytest.approx(2 * 0.0005 * 3.0 / 0.005)


def test_docs_list_every_physics_key():
    text = DOC.read_text(encoding="utf-8")
    for key in PHYSICS_FIELDS:
        assert f"| `{key}` |" in text, key


def test_docs_force_vs_gap_table_matches_the_demo_robot():
    from garnav.demo.pattern import DEMO_PHYSICS

    text = DOC.read_text(encoding="utf-8")
    for piece in ("front", "back", "sleeve_left", "sleeve_right", "yoke"):
        gap = DEMO_PHYSICS.gap_mm(piece)
        force = float(DEMO_PHYSICS.magnet_force_at(gap))
        assert re.search(rf"\| `{piece}` \| {gap:.1f} \| {force:.2f} \|", text), piece


@pytest.mark.slow
def test_route_cli_with_robot_file_cost_and_posture(tmp_path, capsys):
    robot = tmp_path / "bot.toml"
    robot.write_text('[robot]\nname = "bot"\nradius_mm = 20.0\nspeed_mm_s = 25.0\n'
                     "[robot.physics]\nmax_drive_force_n = 0.6\n", encoding="utf-8")
    out = tmp_path / "r.json"
    code = main(["route", str(SPEC), "--from", "omphalion", "--to", "sternum_left", "--robot", str(robot),
                 "--cost", "energy", "--posture", "upright", "--json", str(out), "--csv", str(tmp_path / "r.csv")])
    text = capsys.readouterr().out
    assert code == 0 and "energy" in text and "worst:" in text and "not drivable" in text
    doc = json.loads(out.read_text())
    jsonschema.Draft202012Validator(route_schema()).validate(doc)
    phys = doc["physics"]
    assert phys["unsafe_segments"] == [] and phys["posture"] == "upright"
    assert phys["min_drive_margin"] >= phys["drive_safety_factor"]
    assert len(phys["segments"]["grip_margin"]) == len(doc["path3d"]) - 1
    assert len(phys["waypoints"]["grip_margin"]) == len(doc["waypoints"])
    assert phys["energy_mah"] == pytest.approx(phys["energy_j"] / (3.7 * 3.6))
    assert phys["return_to_dock"]["dock"] == "dock" and phys["return_to_dock"]["reachable"]
    assert doc["robot"]["name"] == "bot"


@pytest.mark.slow
def test_route_cli_lying_down_changes_gravity(tmp_path, capsys):
    out = tmp_path / "r.json"
    assert main(["route", str(SPEC), "--from", "wrist_right", "--to", "scapula_right", "--gravity", "0,-1,0",
                 "--json", str(out)]) == 0
    doc = json.loads(out.read_text())
    assert doc["physics"]["posture"] == "custom" and doc["physics"]["gravity"] == [0.0, -1.0, 0.0]
    # lying on the back the sleeve run is level: no climb against gravity, so less energy than upright
    # (observed 12.1 J against 12.5 J)
    assert main(["route", str(SPEC), "--from", "wrist_right", "--to", "scapula_right", "--json", str(tmp_path / "u.json")]) == 0
    up = json.loads((tmp_path / "u.json").read_text())
    assert doc["physics"]["energy_j"] < up["physics"]["energy_j"]


def test_route_cli_physics_options_need_a_profile(tmp_path, capsys):
    spec = tmp_path / "plain.toml"
    g = garments.single_panel()
    spec.write_text(dumps_garment(g), encoding="utf-8")
    code = main(["route", str(spec), "--from", "panel:100,100", "--to", "panel:300,300", "--cost", "energy"])
    err = capsys.readouterr().err
    assert code == 2 and "no physics profile" in err and "Traceback" not in err
    code = main(["route", str(spec), "--from", "panel:100,100", "--to", "panel:300,300", "--posture", "supin"])
    assert code == 2


def test_unknown_posture_message(tmp_path, capsys):
    code = main(["route", str(SPEC), "--from", "wrist_left", "--to", "sternum_left", "--posture", "supin"])
    err = capsys.readouterr().err
    assert code == 2 and "unknown posture 'supin'" in err and "did you mean 'supine'" in err
