"""Which poses a garment has, choosing them by name, and reading their drapes.

A garment with ``[[pose]]`` tables has those poses; a garment with only a top-level ``drape`` has
one pose, named :data:`SINGLE_POSE`; a garment without a drape has none. Every pose's drape is
linked to the same pieces (:func:`garnav.drape.link_drape`, with all its checks), so a mesh that
does not fit the pattern is refused by pose name.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

from garnav.drape.drape import Drape, load_drape
from garnav.errors import MeshError, QueryError, did_you_mean
from garnav.model import Garment
from garnav.poses.model import Pose

__all__ = ["PoseDrape", "SINGLE_POSE", "ALL_POSES", "garment_poses", "default_pose", "select_poses",
           "load_pose_drapes"]

#: The name of the one pose of a garment that has a ``drape`` but no ``[[pose]]`` tables.
SINGLE_POSE = "default"

#: ``--pose all``.
ALL_POSES = "all"


@dataclass(frozen=True)
class PoseDrape:
    """A pose and its drape, linked to the garment's pieces."""

    pose: Pose
    drape: Drape

    @property
    def name(self) -> str:
        return self.pose.name


def garment_poses(garment: Garment) -> tuple[Pose, ...]:
    """The garment's poses: its ``[[pose]]`` tables, or one pose of its ``drape``, or none."""
    if garment.poses:
        return garment.poses
    if garment.drape is None:
        return ()
    return (Pose(SINGLE_POSE, garment.drape, garment.body),)


def default_pose(garment: Garment) -> Pose | None:
    """The pose of the garment's top-level ``drape`` (the first pose with that drape), or None."""
    poses = garment_poses(garment)
    return next((p for p in poses if p.drape == garment.drape), poses[0] if poses else None)


def select_poses(garment: Garment, which: str | None, source: str = "--pose") -> tuple[Pose, ...]:
    """The poses ``--pose`` asks for: ``None`` → the default pose, ``all`` → every pose, else the
    pose of that name.

    Raises
    ------
    QueryError
        The garment has no drape (so no pose), or no pose of that name (with the names it has).
    """
    poses = garment_poses(garment)
    if not poses:
        raise QueryError(f"{source}: garment '{garment.name}' names no drape, so it has no pose; give "
                         "the spec a drape or [[pose]] tables (docs/poses.md)")
    if which is None:
        pose = default_pose(garment)
        return () if pose is None else (pose,)
    if which == ALL_POSES:
        return poses
    for p in poses:
        if p.name == which:
            return (p,)
    names = [p.name for p in poses]
    hint = did_you_mean(which, names)
    raise QueryError(f"{source}: garment '{garment.name}' has no pose '{which}'; its poses: "
                     f"{', '.join(names)} (or '{ALL_POSES}')" + (f"; {hint}" if hint else ""))


def load_pose_drapes(garment: Garment, poses: tuple[Pose, ...], folder: str | os.PathLike = "."
                     ) -> tuple[PoseDrape, ...]:
    """Read and link each pose's drape (paths relative to ``folder``, the spec's folder).

    A drape shared by several poses (same file, different posture) is read once.

    Raises
    ------
    MeshError
        A drape cannot be read or does not fit the pattern; the message names the pose.
    """
    read: dict[str, Drape] = {}
    out = []
    for pose in poses:
        if pose.drape not in read:
            try:
                read[pose.drape] = load_drape(garment, str(Path(folder) / pose.drape))
            except MeshError as exc:
                raise MeshError(f"pose '{pose.name}': {exc}") from None
        out.append(PoseDrape(pose, read[pose.drape]))
    return tuple(out)
