"""Energy of a sweep from the robot's physics profile (``[robot.physics]``, docs/physics.md).

Driving: the mechanics stage's per-segment model on the lifted route
(:func:`garnav.mechanics.route_mechanics`: level driving power and base load over the driving
time, plus the work against gravity over the drive efficiency). Turning in place: the sweep's many
turns are not in that model; each is taken to draw the level driving power, base load included,
for its duration ``|θ|·wheel_base / (2·speed)`` (both wheels roll θ·b/2 at cruise speed:
differential-drive kinematics, Siegwart & Nourbakhsh §3.2; the power figure is an assumption, no
source).
"""

from __future__ import annotations

import math

import numpy as np

from garnav.model import Robot

__all__ = ["sweep_energy_J"]


def sweep_energy_J(sweep, robot: Robot, drape, lifted, gravity: np.ndarray | None = None) -> float | None:
    """Energy of the sweep's route, J; None without a physics profile or a lifted route.

    Parameters
    ----------
    sweep : garnav.sweep.Sweep
    robot : Robot
        Its ``physics`` (RobotPhysics) or None.
    drape : Drape
    lifted : LiftedRoute
        The sweep's route lifted onto ``drape``.
    gravity : (3,) array, optional
        Unit gravity direction in the body frame (default: upright).
    """
    physics = getattr(robot, "physics", None)
    if physics is None or lifted is None or drape is None:
        return None
    from garnav.mechanics import gravity_vector, route_mechanics

    g = gravity_vector("upright") if gravity is None else np.asarray(gravity, dtype=float)
    mech = route_mechanics(lifted, drape, physics, g, speed_mm_s=robot.speed_mm_s, side=robot.side)
    turn_rad = float(np.sum(np.abs(np.radians(sweep.route.turns_deg))))
    turn_time = turn_rad * robot.wheel_base_mm / (2.0 * robot.speed_mm_s) if robot.speed_mm_s > 0 else math.inf
    return float(mech.total_energy_j + physics.power_w * turn_time)
