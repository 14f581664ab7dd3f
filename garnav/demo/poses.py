"""The demo garment's poses (invented scenario): standing, and the right arm raised.

Both poses share the pattern: ``arm_raised`` moves only the right sleeve (its forearm rigidly, the
band to the armhole by ARAP; :mod:`garnav.demo.raise_arm`). The wearer stays upright in both.
"""

from __future__ import annotations

from garnav.poses.model import Pose

__all__ = ["demo_poses", "DRAPE_NAME", "BODY_NAME", "BASE_POSE", "BASE_POSTURE", "ARM_RAISED_POSE",
           "ARM_RAISED_POSTURE", "ARM_RAISED_DRAPE_NAME", "ARM_RAISED_BODY_NAME"]

DRAPE_NAME = "sensing_top_drape.obj"
BODY_NAME = "mannequin.obj"
#: The standing pose (the spec's ``drape`` and ``body``) and its gravity posture
#: (:data:`garnav.mechanics.gravity.POSTURES`).
BASE_POSE = "standing"
BASE_POSTURE = "upright"
#: The second pose: the right arm raised forward and up (:mod:`garnav.demo.raise_arm`); the body
#: stays upright, so its posture is the standing one.
ARM_RAISED_POSE = "arm_raised"
ARM_RAISED_POSTURE = "upright"
ARM_RAISED_DRAPE_NAME = "sensing_top_arm_raised_drape.obj"
ARM_RAISED_BODY_NAME = "mannequin_arm_raised.obj"


def demo_poses() -> tuple[Pose, ...]:
    """The ``[[pose]]`` tables of the demo spec: standing (the default) and arm_raised."""
    return (
        Pose(BASE_POSE, DRAPE_NAME, BODY_NAME, BASE_POSTURE,
             "arms down in the A-pose the pattern was developed on"),
        Pose(ARM_RAISED_POSE, ARM_RAISED_DRAPE_NAME, ARM_RAISED_BODY_NAME, ARM_RAISED_POSTURE,
             "invented: the right forearm raised forward and up; the sleeve's band to the armhole "
             "stretches (not an exact development)"),
    )
