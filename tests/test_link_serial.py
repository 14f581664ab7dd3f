"""A simulated robot on a pseudo-terminal pair, driven by the station through pyserial (no hardware)."""

from __future__ import annotations

import os
import pty
import threading

import pytest

from link_scenes import noisy_two_panels

pytest.importorskip("serial")

from garnav.link.robot import SimulatedRobot  # noqa: E402
from garnav.link.simserver import serve  # noqa: E402
from garnav.link.transport import FdTransport, SerialTransport, open_transport  # noqa: E402
from garnav.station.controller import Station  # noqa: E402
from garnav.station.headless import run_headless  # noqa: E402


def test_station_drives_a_simulated_robot_over_a_pty_through_pyserial():
    garment = noisy_two_panels()
    master, slave = pty.openpty()
    try:
        port = open_transport(f"serial://{os.ttyname(slave)}?baud=115200")  # pyserial opens the pty (raw mode)
        assert isinstance(port, SerialTransport)
        robot = SimulatedRobot(garment, garment.robot, ("left", 150.0, 200.0, 0.0), None)
        result = {}
        thread = threading.Thread(target=lambda: result.update(r=serve(
            robot, FdTransport(master, "pty master"), speedup=20.0, max_seconds=20.0, quit_after_silence_s=0.5)))
        thread.start()
        try:
            station = Station(garment, {"ada": port})
            lines: list[str] = []
            status = run_headless(station, {"ada": "left:150,320"}, timeout_s=15.0, say=lines.append)
        finally:
            port.close()
            thread.join(25.0)
        assert status == 0, lines
        assert station.arrived("ada")
        # ideal motion: the truth ends on the goal (tick quantisation only; observed 0.00 mm)
        piece, x, y, _ = robot.truth
        assert piece == "left" and abs(x - 150.0) < 0.5 and abs(y - 320.0) < 0.5
        kinds = [r["msg"]["t"] for r in station.records if "msg" in r]
        assert kinds.index("profile") < kinds.index("commands") < kinds.index("done")
    finally:
        os.close(master)
        os.close(slave)
