"""Poses: one garment, several drapes — the ``[[pose]]`` tables of a garment spec.

A person does not stand in one pose. The flat pattern stays the same in every pose (it is the
robot's map), but the drape — the 3D shape of the fabric on the body — changes: slopes against
gravity, what lies near the face or an implanted device. A :class:`Pose` names one drape mesh
(UV-mapped like the spec's ``drape``: every pose shares the pattern ↔ UV link), optionally the body
mesh in that pose (for previews) and the wearer's posture for gravity
(:mod:`garnav.mechanics.gravity`).

The spec's top-level ``drape``/``body`` is the **default pose**: with ``[[pose]]`` tables it must
be the drape of one of them (the first such pose is the default) or be left out (then the first
pose is the default and the garment's ``drape``/``body`` are taken from it), so every command that
knows one drape keeps working on the default pose.

This module is the table parser the spec reader calls (:func:`parse_poses`) and the writer's
inverse (:func:`pose_to_table`); it imports nothing above the model's own layer.

>>> poses, found = parse_poses([{"name": "standing", "drape": "d.obj"},
...                             {"name": "arm_raised", "drape": "r.obj", "posture": "seated"}], "a.toml")
>>> [p.name for p in poses], poses[1].posture, found
(['standing', 'arm_raised'], 'seated', [])
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

from garnav.errors import did_you_mean, table_key_problems

__all__ = ["Pose", "POSE_POSTURES", "parse_poses", "pose_to_table", "default_pose_problems"]

#: Posture names a pose may give (the same as :data:`garnav.mechanics.gravity.POSTURES`; a test
#: keeps the two equal).
POSE_POSTURES = ("upright", "supine", "prone", "left_side", "right_side", "seated")

_KEYS = {"name": "str", "drape": "str", "body": "str", "posture": "str", "description": "str"}
_REQUIRED = ("name", "drape")


@dataclass(frozen=True)
class Pose:
    """One pose of the wearer: a drape of the garment in that pose.

    Attributes
    ----------
    name : str
        Unique among the garment's poses (``--pose NAME``).
    drape : str
        UV-mapped drape mesh, path relative to the spec file; its UV islands are the same pieces.
    body : str or None
        Body mesh in this pose (previews), relative to the spec file.
    posture : str
        The wearer's posture for gravity (one of :data:`POSE_POSTURES`); ``upright`` by default.
    description : str
        Free text.
    """

    name: str
    drape: str
    body: str | None = None
    posture: str = "upright"
    description: str = ""


def _control(text: str) -> bool:
    return any(ord(c) < 0x20 or 0x7F <= ord(c) < 0xA0 for c in text)


def parse_poses(tables: Any, source: str) -> tuple[tuple[Pose, ...], list[tuple[str, str, str | None]]]:
    """Read the ``[[pose]]`` tables of a spec: the valid poses and every problem.

    Returns
    -------
    poses : tuple of Pose
    problems : list of (item, reason, hint)
        In the spec reader's style, ``item`` like ``"pose 'arm_raised'"``.
    """
    problems: list[tuple[str, str, str | None]] = []
    if not isinstance(tables, list) or not all(isinstance(t, dict) for t in tables):
        return (), [("pose", "must be an array of tables (written [[pose]])", None)]
    poses: list[Pose] = []
    seen: set[str] = set()
    for index, table in enumerate(tables):
        name = table.get("name")
        item = f"pose '{name}'" if isinstance(name, str) and not _control(name) else f"pose #{index + 1}"
        before = len(problems)
        problems += table_key_problems(table, item, _KEYS, _REQUIRED, " (a string)")
        for key in _KEYS:
            value = table.get(key)
            if value is None:
                continue
            if not isinstance(value, str):
                problems.append((item, f"'{key}' must be a string", None))
            elif key != "description" and _control(value):
                problems.append((item, f"'{key}' contains a control character; use printable text", None))
            elif key != "description" and not value.strip():
                problems.append((item, f"'{key}' is empty", None))
        if len(problems) > before:
            continue
        posture = table.get("posture", "upright")
        if posture not in POSE_POSTURES:
            problems.append((item, f"unknown posture '{posture}'; postures: {', '.join(POSE_POSTURES)}",
                             did_you_mean(posture, list(POSE_POSTURES))))
            continue
        if name in seen:
            problems.append((item, "the name is used by another pose", None))
            continue
        seen.add(name)
        poses.append(Pose(name, table["drape"], table.get("body"), posture, table.get("description", "")))
    return tuple(poses), problems


def default_pose_problems(poses: tuple[Pose, ...], drape: str | None) -> list[tuple[str, str, str | None]]:
    """Problems of the top-level ``drape`` against the poses (it must be one pose's drape)."""
    if not poses or drape is None or any(p.drape == drape for p in poses):
        return []
    return [("top level", f"drape '{drape}' is the drape of none of the [[pose]] tables",
             "the top-level drape is the default pose: name one pose's drape, or leave it out "
             "(then the first pose is the default)")]


def pose_to_table(pose: Pose) -> dict[str, Any]:
    """The pose as the plain dict its ``[[pose]]`` table parses to."""
    d: dict[str, Any] = {"name": pose.name, "drape": pose.drape}
    if pose.body is not None:
        d["body"] = pose.body
    if pose.posture != "upright":
        d["posture"] = pose.posture
    if pose.description:
        d["description"] = pose.description
    return d
