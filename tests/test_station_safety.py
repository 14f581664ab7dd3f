"""What the station refuses: routes across hard keep-outs, bad options, hosts beyond loopback;
and the simulated robot's stop and self-stop rules."""

from __future__ import annotations

import dataclasses
from types import SimpleNamespace

import numpy as np
import pytest

import garments
from link_scenes import noisy_two_panels, write_spec

from garnav.cli import main
from garnav.export.commands import CommandList, Go, Turn, Wait
from garnav.link.robot import SimulatedRobot
from garnav.model import Circle, KeepOut
from garnav.station.safety import UnsafeRouteError, check_route, hard_keepout_crossings, station_caution_lines


def garment_with_button():
    g = garments.two_panels()
    k = KeepOut("button", "left", "button", Circle(150.0, 200.0, 10.0), hard=True)
    soft = KeepOut("print", "left", "print", Circle(150.0, 300.0, 10.0), hard=False)
    return dataclasses.replace(g, keepouts=(k, soft))


def test_a_route_through_a_hard_keepout_is_refused_and_a_soft_one_is_not():
    g = garment_with_button()
    through = SimpleNamespace(legs=(SimpleNamespace(piece="left", points=np.array([[50.0, 200.0], [250.0, 200.0]])),))
    assert hard_keepout_crossings(g, through) == ["button"]
    with pytest.raises(UnsafeRouteError, match="robot 'ada': the route crosses hard keep-out\\(s\\) button; not sent"):
        check_route(g, through, "ada")
    soft_only = SimpleNamespace(legs=(SimpleNamespace(piece="left", points=np.array([[50.0, 300.0], [250.0, 300.0]])),))
    check_route(g, soft_only, "ada")
    other_piece = SimpleNamespace(legs=(SimpleNamespace(piece="right", points=np.array([[50.0, 200.0], [250.0, 200.0]])),))
    check_route(g, other_piece, "ada")


def test_station_cautions_are_the_projects_plus_the_links():
    from garnav.cautions import caution_lines

    lines = station_caution_lines()
    assert lines[:len(caution_lines())] == caution_lines()
    text = " ".join(" ".join(lines).split())
    for word in ("implanted", "Neck and face", "Batteries", "Emergency stop", "no authentication", "127.0.0.1",
                 "certifies nothing"):
        assert word in text


@pytest.mark.parametrize("argv, message", [
    (["--robot", "ada"], "expected NAME=URL"),
    (["--robot", "ada=udp://192.0.2.7:9870", "--goto", "ada:left_centre", "--headless"], "not on this machine"),
    (["--robot", "ada=tcp://127.0.0.1:1", "--goto", "ada:left_centre", "--headless"], "unknown scheme"),
    (["--robot", "ada=udp://127.0.0.1:9", "--goto", "bob:left_centre", "--headless"], "no robot 'bob'"),
    (["--robot", "ada=udp://127.0.0.1:9", "--headless"], "needs at least one --goto"),
    (["--robot", "ada=serial:///dev/garnav-no-such-port", "--goto", "ada:left_centre", "--headless"], "cannot open the serial port"),
])
def test_station_bad_options_are_one_clear_message(tmp_path, capsys, argv, message):
    spec = write_spec(tmp_path)
    assert main(["station", str(spec), *argv]) == 2
    err = capsys.readouterr().err
    assert message in err and "Traceback" not in err


def test_robot_sim_refuses_a_host_beyond_loopback(tmp_path, capsys):
    spec = write_spec(tmp_path)
    assert main(["robot-sim", "--listen", "udp://192.0.2.7:9870", "--garment", str(spec), "--start", "left_centre"]) == 2
    assert "not on this machine" in capsys.readouterr().err


def test_simulated_robot_stops_at_once_and_waits_stand_still():
    g = noisy_two_panels()
    robot = SimulatedRobot(g, g.robot, ("left", 60.0, 200.0, 0.0), None)
    robot.load(1, CommandList((Go(40.0), Wait(0.5), Turn(90.0), Go(40.0)), side="outside"))
    states = [robot.step().state for _ in range(15)]
    assert "waiting" in states  # 40 mm at 40 mm/s = 1 s of driving, then 0.5 s standing
    at_stop = robot.truth
    robot.stop("test")
    after = [robot.step() for _ in range(5)]
    assert all(s.truth == at_stop and s.state == "stopped" for s in after)
    assert robot.events[-1] == {"event": "done", "plan": 1, "completed": False, "reason": "test"}
    # ideal motion: the first go ended exactly 40 mm along +x (tick rounding only)
    robot2 = SimulatedRobot(g, g.robot, ("left", 60.0, 200.0, 0.0), None)
    robot2.load(1, CommandList((Go(40.0),), side="outside"))
    while robot2.state == "driving":
        robot2.step()
    assert robot2.truth[0] == "left" and abs(robot2.truth[1] - 100.0) < 1e-6 and abs(robot2.truth[2] - 200.0) < 1e-6
    assert robot2.events[-1]["completed"] is True
