"""The station's dead reckoning from telemetry samples, with and without lost samples.

Checked against the simulated robot's ground truth under ideal motion (the plan's own geometry:
90° turn then 120 mm, so the end is known by hand: (150, 320) mm facing +y).
"""

from __future__ import annotations

import math

import pytest

from link_scenes import noisy_two_panels

from garnav.export.commands import CommandList, Go, Turn
from garnav.link.robot import SimulatedRobot
from garnav.station.estimate import EncoderSettings, PoseEstimate


def drive(keep_every: int, odometry: bool):
    g = noisy_two_panels()
    robot = SimulatedRobot(g, g.robot, ("left", 150.0, 200.0, 0.0), None)
    est = PoseEstimate(g, EncoderSettings.from_profile(robot.profile_fields()), ("left", 150.0, 200.0, 0.0))
    samples = [robot.step().fields()]
    robot.load(1, CommandList((Turn(90.0), Go(120.0)), side="outside"))
    while robot.state == "driving":
        samples.append(robot.step().fields())
    for i, s in enumerate(samples):
        if i % keep_every == 0 or i == len(samples) - 1:
            if not odometry:
                s = {k: v for k, v in s.items() if not k.startswith("odom_")}
            est.update(s)
    return est.pose


@pytest.mark.parametrize("keep_every, odometry, tol", [
    (1, True, 0.5), (1, False, 0.5),  # every sample: observed 0.053 mm either way
    (7, True, 0.5),                   # 6 of 7 lost, odometry chords: observed 0.053 mm
])
def test_estimate_reaches_the_hand_computed_end(keep_every, odometry, tol):
    piece, x, y, h = drive(keep_every, odometry)
    assert piece == "left"
    assert math.hypot(x - 150.0, y - 320.0) < tol
    assert abs(math.degrees(math.remainder(h - math.pi / 2, 2 * math.pi))) < 0.5


def test_lost_samples_without_odometry_cut_the_corner():
    # counters and heading alone: a turn and a go inside one long interval are integrated at the
    # mid heading, so the end misses — the reason telemetry carries the robot's own odometry
    piece, x, y, _ = drive(7, False)
    assert math.hypot(x - 150.0, y - 320.0) > 1.0  # observed 3.4 mm
