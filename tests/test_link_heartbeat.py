"""Heartbeat rules on a fake clock: a driving robot that hears nothing stops itself; a station that
hears nothing counts the robot lost and stops it."""

from __future__ import annotations

import json

from link_scenes import noisy_two_panels

from garnav.export.commands import CommandList, Go
from garnav.link.protocol import commands_message, encode, message
from garnav.link.robot import SimulatedRobot
from garnav.link.simserver import serve
from garnav.link.transport import Transport
from garnav.station.controller import LOST_AFTER_S, Station


class Clock:
    def __init__(self):
        self.t = 0.0

    def __call__(self):
        return self.t


class Scripted(Transport):
    """Delivers scripted lines at given times; time passes only while waiting in recv."""

    def __init__(self, clock, script):
        self.description = "scripted"
        self.clock, self.script, self.sent = clock, list(script), []

    def send(self, data):
        self.sent.append(json.loads(data))

    def recv(self, timeout_s):
        due = [line for t, line in self.script if t <= self.clock.t]
        self.script = [(t, line) for t, line in self.script if t > self.clock.t]
        if not due:
            self.clock.t += max(timeout_s, 1e-3)
        return due

    def close(self):
        pass


def test_a_driving_robot_stops_itself_when_the_station_goes_silent():
    g = noisy_two_panels()
    clock = Clock()
    hello = encode(message("hello", 1, station="s", heartbeat_timeout_s=1.0)).rstrip()
    plan = encode(commands_message(2, 1, CommandList((Go(250.0),), side="outside"))).rstrip()  # 6.25 s of driving
    tr = Scripted(clock, [(0.0, hello), (0.05, plan)])
    robot = SimulatedRobot(g, g.robot, ("left", 20.0, 200.0, 0.0), None)
    serve(robot, tr, speedup=1.0, max_seconds=3.0, clock=clock, wall=clock)
    errors = [m for m in tr.sent if m["t"] == "error"]
    assert [e["code"] for e in errors[:1]] == ["heartbeat_lost"]
    first_stopped = next(m for m in tr.sent if m["t"] == "telemetry" and m["state"] == "stopped")
    # silent since t = 0.05 s: stopped once 1 s had passed, within one telemetry period (0.1 s)
    assert 1.05 <= first_stopped["time_s"] <= 1.05 + 0.1 + 1e-9
    assert robot.truth[1] < 20.0 + 40.0 * 1.2  # it drove about 1 s at 40 mm/s, not the whole go


def test_connect_waits_for_a_first_sample_and_says_which_robot_is_missing():
    import pytest

    from garnav.link.protocol import LinkError

    g = noisy_two_panels()
    clock = Clock()
    robot = SimulatedRobot(g, g.robot, ("left", 20.0, 200.0, 0.0), None)
    profile = encode(message("profile", 1, **robot.profile_fields("ada"))).rstrip()
    station = Station(g, {"ada": Scripted(clock, [(0.0, profile)])}, clock=clock, wall=clock)
    with pytest.raises(LinkError, match="no answer within 1 s from robot\\(s\\) 'ada' \\(scripted\\)"):
        station.connect(1.0)


def test_the_station_counts_a_silent_robot_lost_and_stops_it():
    g = noisy_two_panels()
    clock = Clock()
    robot = SimulatedRobot(g, g.robot, ("left", 20.0, 200.0, 0.0), None)
    profile = encode(message("profile", 1, **robot.profile_fields("ada"))).rstrip()
    sample = encode(message("telemetry", 2, **robot.step().fields())).rstrip()
    tr = Scripted(clock, [(0.0, profile), (0.0, sample)])
    station = Station(g, {"ada": tr}, clock=clock, wall=clock)
    station.connect(1.0)
    while clock.t < LOST_AFTER_S + 0.5:
        station.poll(0.05)
    r = station.robots["ada"]
    assert r.lost and "silent" in r.lost
    assert any(m["t"] == "stop" for m in tr.sent)
    assert station.failed("ada").startswith("link lost")
