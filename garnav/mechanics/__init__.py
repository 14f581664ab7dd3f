"""Mechanics of a robot on a body: gravity, grip, hold, drive force, energy and battery.

* :mod:`~garnav.mechanics.profile` — :class:`RobotPhysics`, the ``[robot.physics]`` table.
* :mod:`~garnav.mechanics.gravity` — postures and the gravity vector in the body frame.
* :mod:`~garnav.mechanics.balance` — the static force balance and heading limits (pure numpy).
* :mod:`~garnav.mechanics.evaluate` — per-segment margins, energy and time of a lifted route.
* :mod:`~garnav.mechanics.lattice` — the direction-aware lattice with switchback edges.
* :mod:`~garnav.mechanics.planning` — :class:`PhysicsPlanner`: routes the robot can drive.

The model, its sources and its limits: docs/physics.md.
"""

from garnav.mechanics.balance import Balance, HeadingLimits, force_balance, heading_limits
from garnav.mechanics.gravity import POSTURES, gravity_vector, parse_gravity, posture_rotation
from garnav.mechanics.profile import PHYSICS_FIELDS, STANDARD_GRAVITY_M_S2, RobotPhysics, physics_problems

__all__ = [
    "Balance",
    "COSTS",
    "HeadingLimits",
    "PHYSICS_FIELDS",
    "POSTURES",
    "PhysicsPlanner",
    "PlannedRoute",
    "RobotPhysics",
    "RouteMechanics",
    "STANDARD_GRAVITY_M_S2",
    "force_balance",
    "gravity_vector",
    "heading_limits",
    "parse_gravity",
    "physics_problems",
    "posture_rotation",
    "route_mechanics",
]

_LAZY = {
    "RouteMechanics": "garnav.mechanics.evaluate",
    "route_mechanics": "garnav.mechanics.evaluate",
    "PhysicsPlanner": "garnav.mechanics.planning",
    "PlannedRoute": "garnav.mechanics.planning",
    "COSTS": "garnav.mechanics.planning",
}


def __getattr__(name: str):
    """The evaluation and planning parts load on first use (they pull in the drape and the
    planner, which the spec reader, a user of the profile, does not need)."""
    if name in _LAZY:
        import importlib

        return getattr(importlib.import_module(_LAZY[name]), name)
    raise AttributeError(f"module 'garnav.mechanics' has no attribute '{name}'")
