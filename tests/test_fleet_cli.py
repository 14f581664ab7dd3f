"""`garnav fleet` on files, and the `wait` command in the command format."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest

from garnav.cli import main
from garnav.export.commands import CommandSyntaxError, Go, Wait, commands_to_json, format_commands, parse_commands
from garnav.export.commands import CommandList, Start
from garnav.export.replay import replay_commands
from garnav.spec.writer import save_garment

from garments import two_panels

TASKS = """\
format = "garnav-fleet-tasks"
version = 1
garment = "g.toml"
gap_mm = 2.0

[[task]]
name = "a"
start = "left:150,100"
goal = "right:150,300"

[[task]]
name = "b"
start = "left:150,300"
goal = "right:150,100"
start_s = 0.5
"""


def test_cli_writes_schedule_and_prints_the_check(tmp_path, capsys):
    save_garment(two_panels(), tmp_path / "g.toml")
    (tmp_path / "tasks.toml").write_text(TASKS)
    out = tmp_path / "s.json"
    rc = main(["fleet", str(tmp_path / "tasks.toml"), "--json", str(out), "--commands-dir", str(tmp_path / "cmd")])
    text = capsys.readouterr().out
    assert rc == 0
    assert "check every 10 ms" in text and "smallest gap between robots" in text and "pass" in text
    doc = json.loads(out.read_text())
    assert doc["format"] == "garnav-fleet-schedule" and doc["check"]["pass"] is True
    assert doc["check"]["min_gap_mm"] >= 2.0 - 0.05
    assert [r["name"] for r in doc["robots"]] == ["a", "b"]
    b = doc["robots"][1]
    assert b["waypoints"][0]["t_s"] == 0.0
    assert any(c["op"] == "wait" for c in b["commands"])  # it leaves at 0.5 s at the earliest
    assert doc["makespan_s"] >= doc["lower_bound_s"] - 1e-6
    assert (tmp_path / "cmd" / "a.cmd").read_text().startswith("garnav-commands 1")


@pytest.mark.parametrize("body, message", [
    ('format = "garnav-fleet-tasks"\nversion = 1\ngarment = "g.toml"\n[[task]]\nname = "a"\nstart = "nowhere"\ngoal = "right_centre"\n',
     "task 'a': start: "),
    ('format = "garnav-fleet-tasks"\nversion = 1\ngarment = "g.toml"\n[[task]]\nname = "a"\nstart = "left_centre"\n',
     "task 'a': has no 'goal' and is in no meeting"),
    ('format = "garnav-fleet-tasks"\nversion = 1\n[[task]]\nname = "a"\nstart = "left_centre"\ngoal = "right_centre"\n',
     "no 'garment' path"),
    ('format = "garnav-fleet-tasks"\nversion = [\n', "is not valid TOML"),
])
def test_cli_bad_tasks_one_message(tmp_path, capsys, body, message):
    save_garment(two_panels(), tmp_path / "g.toml")
    (tmp_path / "tasks.toml").write_text(body)
    rc = main(["fleet", str(tmp_path / "tasks.toml")])
    err = capsys.readouterr().err
    assert rc == 2
    assert message in err and "Traceback" not in err
    assert str(tmp_path / "tasks.toml") in err


def test_wait_round_trip_and_replay():
    g = two_panels()
    cl = CommandList((Wait(1.5), Go(50.0), Wait(0.25), Go(20.0)), start=Start("left", 100.0, 100.0, 0.0))
    text = format_commands(cl)
    assert "wait 1.5 s" in text and "wait 0.25 s" in text
    back = parse_commands(text)
    assert back == cl
    rp = replay_commands(g, back)
    assert rp.wait_s == 1.75
    assert math.isclose(rp.end.x_mm, 170.0) and rp.distance_mm == 70.0
    assert {"op": "wait", "time_s": 1.5} in commands_to_json(cl)


@pytest.mark.parametrize("line, message", [
    ("wait 2 mm", "expected unit 's'"),
    ("wait -1 s", "time must be >= 0 s"),
    ("wiat 2 s", "did you mean 'wait'"),
])
def test_bad_wait_lines(line, message):
    with pytest.raises(CommandSyntaxError, match=message):
        parse_commands(f"garnav-commands 1\n{line}\n", source="x.cmd")


@pytest.mark.slow
def test_fleet_demo_example_writes_schedule_and_pictures(tmp_path, capsys):
    import runpy
    from pathlib import Path

    main_ = runpy.run_path(str(Path(__file__).resolve().parents[1] / "examples" / "fleet_demo.py"),
                           run_name="garnav_example")["main"]
    result = main_([str(tmp_path), "--frames", "6"])
    assert result["check"].ok
    assert len(result["schedule"].plans) == 3
    gif = (tmp_path / "fleet_sheet.gif").read_bytes()
    assert gif[:6] in (b"GIF89a", b"GIF87a")  # GIF signature (GIF89a specification, 1990)
    assert (tmp_path / "fleet_chart.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    doc = json.loads((tmp_path / "fleet_schedule.json").read_text())
    left, right = doc["robots"][0], doc["robots"][1]
    # the meeting: side by side at 46 mm, both facing 90 degrees
    a, b = left["waypoints"][-1], right["waypoints"][-1]
    assert abs(math.hypot(a["x_mm"] - b["x_mm"], a["y_mm"] - b["y_mm"]) - 46.0) < 1.0
    assert left["final_heading_deg"] == right["final_heading_deg"] == 90.0
    assert "check every 10 ms" in capsys.readouterr().out


@pytest.mark.slow
def test_drape_animation_frames(tmp_path):
    from garnav.drape.drape import load_drape
    from garnav.fleet import pictures
    from garnav.fleet.scenario import demo_fleet_tasks
    from garnav.fleet import plan_fleet
    from garnav.preview.scene import off_screen_environment
    from garnav.spec import load_garment

    off_screen_environment()
    meshes = Path(__file__).resolve().parents[1] / "meshes"
    g = load_garment(meshes / "sensing_top.toml")
    s = plan_fleet(g, demo_fleet_tasks(g))
    drape = load_drape(g, folder=str(meshes))
    out = pictures.write_drape_gif(tmp_path / "d.gif", g, drape, s, max_frames=3, size=(200, 160))
    from PIL import Image

    im = Image.open(out)
    assert im.n_frames == 3 and im.size == (200, 160)


@pytest.mark.slow
def test_cli_pictures_and_robot_files(tmp_path, capsys):
    save_garment(two_panels(), tmp_path / "g.toml")
    (tmp_path / "mini.toml").write_text('[robot]\nname = "mini"\nradius_mm = 8.0\nspeed_mm_s = 30.0\n')
    (tmp_path / "tasks.toml").write_text(TASKS.replace('gap_mm = 2.0\n', 'gap_mm = 2.0\nrobot_files = ["mini.toml"]\n')
                                         .replace('name = "b"\n', 'name = "b"\nrobot = "mini"\n'))
    rc = main(["fleet", str(tmp_path / "tasks.toml"), "--gif", str(tmp_path / "f.gif"), "--frames", "3",
               "--chart", str(tmp_path / "c.svg"), "--json", str(tmp_path / "s.json")])
    assert rc == 0, capsys.readouterr().err
    from PIL import Image

    assert Image.open(tmp_path / "f.gif").n_frames == 3
    assert (tmp_path / "c.svg").read_text().lstrip().startswith("<?xml")
    doc = json.loads((tmp_path / "s.json").read_text())
    assert doc["robots"][1]["profile"]["radius_mm"] == 8.0


def test_robot_file_problems_name_the_file(tmp_path, capsys):
    save_garment(two_panels(), tmp_path / "g.toml")
    (tmp_path / "bad.toml").write_text('[robot]\nname = "bad"\nradius_mm = -1.0\n')
    (tmp_path / "tasks.toml").write_text(TASKS.replace('gap_mm = 2.0\n', 'gap_mm = 2.0\nrobot_files = ["bad.toml"]\n'))
    assert main(["fleet", str(tmp_path / "tasks.toml")]) == 2
    err = capsys.readouterr().err
    assert "bad.toml: robot: 'radius_mm' must be > 0" in err


def test_energy_with_a_physics_profile(tmp_path, capsys):
    """Level-fabric energy = power · driving time + idle power · standing time (the physics
    profile's own powers; hand-worked identity)."""
    save_garment(two_panels(), tmp_path / "g.toml")
    (tmp_path / "phys.toml").write_text('[robot]\nname = "phys"\nradius_mm = 10.0\nspeed_mm_s = 20.0\n'
                                        '[robot.physics]\ndrive_power_w = 0.5\nidle_power_w = 0.1\n')
    (tmp_path / "tasks.toml").write_text(TASKS.replace('gap_mm = 2.0\n', 'gap_mm = 2.0\nrobot_files = ["phys.toml"]\n')
                                         .replace('name = "b"\n', 'name = "b"\nrobot = "phys"\n'))
    assert main(["fleet", str(tmp_path / "tasks.toml"), "--json", str(tmp_path / "s.json")]) == 0
    doc = json.loads((tmp_path / "s.json").read_text())
    a, b = doc["robots"]
    assert a["energy_j"] is None
    want = 0.6 * b["driving_s"] + 0.1 * (b["arrive_s"] - b["driving_s"])
    assert b["energy_j"] == pytest.approx(want, rel=1e-6)
    assert "J (level)" in capsys.readouterr().out
