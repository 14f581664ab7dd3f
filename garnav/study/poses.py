"""The pose axis of a study: which drapes (poses of the wearer) a garment spec offers.

A *pose* is one drape of the garment — the same pattern on the body in one arm and torso position
— so every pose gives its own 3D lengths, slopes and body-landmark positions. (A *posture* is
different: the direction of gravity, :mod:`garnav.mechanics.gravity`; it needs no new drape.)

Today a spec names one drape (``drape = ...``), which is the pose ``"default"``. This function is
the one place a study learns the poses of a spec: when specs name several drapes, it returns them
all, and nothing else in :mod:`garnav.study` changes.
"""

from __future__ import annotations

from garnav.model import Garment

__all__ = ["DEFAULT_POSE", "garment_poses"]

DEFAULT_POSE = "default"


def garment_poses(garment: Garment) -> dict[str, str | None]:
    """Pose name → drape mesh path (relative to the spec's folder; None when there is no drape).

    >>> from garnav.model import Garment
    >>> garment_poses(Garment("g", ()))
    {'default': None}
    """
    return {DEFAULT_POSE: garment.drape}
