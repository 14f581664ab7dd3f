"""Mechanics of a robot on a body: gravity, grip, hold, drive force, energy and battery.

* :mod:`~garnav.mechanics.profile` — :class:`RobotPhysics`, the ``[robot.physics]`` table.
* :mod:`~garnav.mechanics.gravity` — postures and the gravity vector in the body frame.
* :mod:`~garnav.mechanics.balance` — the static force balance and heading limits (pure numpy).
* :mod:`~garnav.mechanics.evaluate` — per-segment margins, energy and time of a lifted route.
* :mod:`~garnav.mechanics.lattice` — the direction-aware lattice with switchback edges.
* :mod:`~garnav.mechanics.planning` — :class:`PhysicsPlanner`: routes the robot can drive.

The model, its sources and its limits: docs/physics.md.
"""

from typing import TYPE_CHECKING

from garnav.mechanics.profile import PHYSICS_FIELDS, STANDARD_GRAVITY_M_S2, RobotPhysics, physics_problems

if TYPE_CHECKING:
    from garnav.mechanics.balance import Balance, HeadingLimits, force_balance, heading_limits
    from garnav.mechanics.gravity import POSTURES, gravity_vector, parse_gravity, posture_rotation

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
    "Balance": "garnav.mechanics.balance",
    "HeadingLimits": "garnav.mechanics.balance",
    "force_balance": "garnav.mechanics.balance",
    "heading_limits": "garnav.mechanics.balance",
    "POSTURES": "garnav.mechanics.gravity",
    "gravity_vector": "garnav.mechanics.gravity",
    "parse_gravity": "garnav.mechanics.gravity",
    "posture_rotation": "garnav.mechanics.gravity",
    "RouteMechanics": "garnav.mechanics.evaluate",
    "route_mechanics": "garnav.mechanics.evaluate",
    "PhysicsPlanner": "garnav.mechanics.planning",
    "PlannedRoute": "garnav.mechanics.planning",
    "COSTS": "garnav.mechanics.planning",
}


def __getattr__(name: str):
    """Everything but the profile loads on first use: the spec reader, a user of the profile,
    needs neither the force balance nor the evaluation and planning parts (which pull in the
    drape and the planner)."""
    if name in _LAZY:
        import importlib

        return getattr(importlib.import_module(_LAZY[name]), name)
    raise AttributeError(f"module 'garnav.mechanics' has no attribute '{name}'")
