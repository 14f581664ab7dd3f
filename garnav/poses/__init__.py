"""Poses: one garment, several drapes — plan once on the pattern, check the route in every pose.

* :mod:`~garnav.poses.model` — :class:`Pose`, the ``[[pose]]`` table (low layer: the spec reader
  reads it).
* :mod:`~garnav.poses.load` — which poses a garment has (its ``[[pose]]`` tables, or its one
  ``drape``), choosing them by name (``--pose NAME|all``), reading and linking their drapes.
* :mod:`~garnav.poses.robust` — the body zones of every pose as keep-outs (the robust garment),
  and the per-pose report of a route: 3D length, climbs against that pose's gravity, the body
  zones it comes near, the robot's margins.

See docs/poses.md.
"""

from garnav.poses.model import POSE_POSTURES, Pose

__all__ = [
    "Pose",
    "POSE_POSTURES",
    "PoseDrape",
    "garment_poses",
    "select_poses",
    "load_pose_drapes",
    "robust_garment",
    "pose_report",
    "PoseReport",
]

_LAZY = {
    "PoseDrape": "garnav.poses.load",
    "garment_poses": "garnav.poses.load",
    "select_poses": "garnav.poses.load",
    "load_pose_drapes": "garnav.poses.load",
    "robust_garment": "garnav.poses.robust",
    "pose_report": "garnav.poses.robust",
    "PoseReport": "garnav.poses.robust",
}


def __getattr__(name: str):
    """The drape-level parts load on first use (the spec reader, a user of
    :mod:`garnav.poses.model`, must not pull in the drape)."""
    if name in _LAZY:
        import importlib

        return getattr(importlib.import_module(_LAZY[name]), name)
    raise AttributeError(f"module 'garnav.poses' has no attribute {name!r}")
