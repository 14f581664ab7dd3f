"""The station window off screen: the pick callback with a 3D point plans the selected robot there."""

from __future__ import annotations

import json

import numpy as np
import pytest

from garnav.link.protocol import encode, message
from garnav.link.robot import SimulatedRobot
from garnav.link.transport import Transport
from garnav.preview.scene import off_screen_environment

DEMO = "meshes/sensing_top.toml"


class AnsweringRobot(Transport):
    """A transport whose robot answers a hello with its profile and acks everything reliable."""

    def __init__(self, profile: dict, sample: dict):
        self.description = "fake"
        self.sample = sample
        self.profile = profile
        self.inbox: list[bytes] = []
        self.sent: list[dict] = []
        self.seq = 100

    def send(self, data):
        msg = json.loads(data)
        self.sent.append(msg)
        if msg["t"] in ("hello", "commands", "stop"):
            self.seq += 1
            self.inbox.append(encode(message("ack", self.seq, ack=msg["seq"])).rstrip())
        if msg["t"] == "hello":
            self.seq += 1
            self.inbox.append(encode(message("profile", self.seq, **self.profile)).rstrip())
            self.seq += 1
            self.inbox.append(encode(message("telemetry", self.seq, **self.sample)).rstrip())

    def recv(self, timeout_s):
        out, self.inbox = self.inbox, []
        return out

    def close(self):
        pass


@pytest.mark.slow
def test_pick_callback_plans_the_selected_robot_to_the_picked_point():
    off_screen_environment()
    from garnav.drape.sources import garment_and_drape
    from garnav.station.controller import Station
    from garnav.station.window import StationWindow

    garment, drape = garment_and_drape(DEMO, "")
    robot = SimulatedRobot(garment, garment.robot, ("sleeve_left", 182.517, 47.165, 90.0))
    fake = AnsweringRobot(robot.profile_fields("ada"), robot.step().fields())
    station = Station(garment, {"ada": fake})
    station.connect(2.0)
    window = StationWindow(station, drape, off_screen=True, size=(400, 300))
    # a point on the drape: the sternum_left landmark's pattern point lifted to 3D
    lm = garment.landmark("sternum_left")
    xyz = drape.pattern_to_3d(lm.piece, np.array([[lm.x, lm.y]]), 1.0)[0]
    goal = window.on_pick(xyz)
    assert goal is not None, window.message
    # identity check through the drape: the planned goal is the picked point on the pattern
    # (observed 1e-9 mm: lifting and locating are inverses on the mesh)
    assert goal.piece == lm.piece
    assert np.hypot(goal.x - lm.x, goal.y - lm.y) < 1e-3
    r = station.robots["ada"]
    end = r.route.legs[-1].points[-1]
    assert np.hypot(end[0] - goal.x, end[1] - goal.y) < 1e-6
    sent = [m for m in fake.sent if m["t"] == "commands"]
    assert len(sent) == 1 and sent[0]["plan"] == r.plan_id
    assert "plan 1 sent" in window.message
    assert window.margins["ada"].startswith("margins grip")  # the demo robot has a physics profile
    assert "station-route-ada" in window.plotter.actors and "station-robot-ada" in window.plotter.actors
    # a pick off the garment's pieces is refused with a message, nothing sent
    window.on_pick(np.array([0.0, 0.0, -5000.0]))
    assert window.message.startswith("not sent") and len([m for m in fake.sent if m["t"] == "commands"]) == 1
    window.stop_all()
    assert fake.sent[-1]["t"] == "stop"
    window.plotter.close()
