"""The pose axis of a study: which drapes (poses of the wearer) a garment spec offers.

A *pose* is one drape of the garment — the same pattern on the body in one arm and torso position
— so every pose gives its own 3D lengths, slopes and body-landmark positions. (A *posture* is
different: the direction of gravity, :mod:`garnav.mechanics.gravity`; it needs no new drape.)

A spec's poses are its ``[[pose]]`` tables (:mod:`garnav.poses`); a spec with one ``drape`` and
no tables has the one pose ``"default"``; ``"default"`` always names the spec's default pose (its
top-level ``drape``), beside the named ones. This function is the one place a study learns them.
"""

from __future__ import annotations

from garnav.model import Garment

__all__ = ["DEFAULT_POSE", "garment_poses"]

DEFAULT_POSE = "default"  # = garnav.poses.load.SINGLE_POSE


def garment_poses(garment: Garment) -> dict[str, str | None]:
    """Pose name → drape mesh path (relative to the spec's folder; None when there is no drape).

    >>> from garnav.model import Garment
    >>> garment_poses(Garment("g", ()))
    {'default': None}
    """
    from garnav.poses.load import garment_poses as poses_of

    out: dict[str, str | None] = {DEFAULT_POSE: garment.drape}  # always: the spec's default pose
    out.update((p.name, p.drape) for p in poses_of(garment))
    return out
