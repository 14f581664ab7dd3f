"""Body zones: places on the body (not on the pattern) that the robot keeps away from.

A :class:`BodyZone` is a simple solid in the world frame (mm) plus a distance: a **sphere** around
one point, a **capsule** around the segment between two points, or the **half-space above a plane**
through three points. Each point is an *anchor*: a landmark name (a body landmark's ``xyz``, or a
pattern landmark lifted through the drape) or a world point ``(x, y, z)``. The zone is the set of
points whose straight-line (Euclidean, 3D) distance to the solid is at most ``distance_mm``; on a
drape it becomes keep-outs on the pattern (:func:`garnav.zones.zone_keepouts`).

This module is the ``[[body_zone]]`` table of a garment spec: the plain dataclass, the table
parser the spec reader calls (:func:`parse_body_zones`) and the writer's inverse
(:func:`body_zone_to_table`). It imports nothing above the model's own layer.

Implanted devices
-----------------
:data:`IMPLANT_DEFAULT_DISTANCE_MM` = 152.4 mm (6 in) follows the US FDA's consumer guidance of May 2021,
"Magnets in Cell Phones and Smart Watches May Affect Pacemakers and Other Implanted Medical
Devices": keep consumer electronics with strong magnets at least six inches (15 cm) away from
implanted medical devices such as pacemakers and defibrillators. That is a floor for phones and
watches, not a figure for a robot held on by magnets: the device maker and the wearer's clinician
decide the distance (docs/zones.md).

>>> z = BodyZone("device", "implanted_device", "sphere", ((-80.0, 110.0, 1300.0),))
>>> z.distance_mm
152.4
>>> body_zone_problems(BodyZone("n", "neck_face", "sphere", ((0.0, 0.0, 0.0),), distance_mm=10.0))
[]
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

from garnav.cautions import IMPLANT_GUIDANCE_MM
from garnav.errors import Problem, SpecError, did_you_mean, table_key_problems

__all__ = [
    "BodyZone",
    "Anchor",
    "ZONE_KINDS",
    "ZONE_SHAPES",
    "ZONE_ANCHORS",
    "IMPLANT_DEFAULT_DISTANCE_MM",
    "IMPLANT_GUIDANCE",
    "body_zone_problems",
    "parse_body_zones",
    "body_zone_to_table",
]

#: What a zone protects. ``implanted_device``: a pacemaker, defibrillator, neurostimulator, pump;
#: ``neck_face``: neck, face and hair; ``wound_or_sensor``: a wound, dressing or a body-worn sensor.
ZONE_KINDS = ("implanted_device", "neck_face", "wound_or_sensor", "custom")

#: Solid shapes and how many anchors each takes.
ZONE_ANCHORS = {"sphere": 1, "capsule": 2, "above_plane": 3}
ZONE_SHAPES = tuple(ZONE_ANCHORS)

#: Default distance of an ``implanted_device`` zone, mm: at least 6 in / 15 cm, after the US FDA
#: consumer guidance "Magnets in Cell Phones and Smart Watches May Affect Pacemakers and Other
#: Implanted Medical Devices" (May 2021): the project's one figure,
#: :data:`garnav.cautions.IMPLANT_GUIDANCE_MM` (6 in = 152.4 mm, the larger of the two). The device
#: maker and the wearer's clinician decide.
IMPLANT_DEFAULT_DISTANCE_MM = IMPLANT_GUIDANCE_MM

IMPLANT_GUIDANCE = (
    "US FDA consumer guidance (May 2021), 'Magnets in Cell Phones and Smart Watches May Affect "
    "Pacemakers and Other Implanted Medical Devices': at least 6 in / 15 cm"
)

#: A landmark name or a world point (x, y, z), mm.
Anchor = str | tuple[float, float, float]

_MAX_ABS = 1.0e7  # as garnav.spec.fields.MAX_ABS: 10 km


@dataclass(frozen=True)
class BodyZone:
    """A zone on the body, in the world frame.

    Parameters
    ----------
    name : str
        Unique among the garment's zones.
    kind : str
        One of :data:`ZONE_KINDS`.
    shape : str
        ``sphere`` (1 anchor), ``capsule`` (2 anchors: the axis) or ``above_plane`` (3 anchors:
        the plane; the zone is on the side world +z points to, the wearer's "up").
    anchors : tuple of Anchor
        Landmark names or world points (x, y, z), mm.
    radius_mm : float
        Radius of the sphere or capsule itself (e.g. the neck), mm; 0 for a point or a segment.
        Not used by ``above_plane``.
    distance_mm : float, optional
        How far beyond the solid the zone reaches, mm (Euclidean, 3D). Default
        :data:`IMPLANT_DEFAULT_DISTANCE_MM` for ``implanted_device``; required for other kinds.
    hard : bool
        True: never entered (the default, and the only sensible choice for implanted devices and
        the neck); False: entered at ``cost_factor``.
    cost_factor : float
        For soft zones: length driven inside counts this many times (>= 1).
    clearance_mm : float
        Distance the robot keeps beyond the zone's keep-out on the pattern, on top of its radius,
        mm (>= 0): an allowance for dead-reckoning drift (docs/uncertainty.md), not part of the
        zone itself — the zone's ``distance_mm`` is what the device maker or clinician decides.
    description : str
    """

    name: str
    kind: str
    shape: str
    anchors: tuple[Anchor, ...]
    radius_mm: float = 0.0
    distance_mm: float | None = None
    hard: bool = True
    cost_factor: float = 1.0
    description: str = ""
    clearance_mm: float = 0.0

    def __post_init__(self) -> None:
        if self.distance_mm is None and self.kind == "implanted_device":
            object.__setattr__(self, "distance_mm", IMPLANT_DEFAULT_DISTANCE_MM)
        found = body_zone_problems(self)  # held to the reader's rules when built in Python
        if found:
            raise SpecError([Problem("<memory>", f"body_zone '{self.name}'", reason) for reason in found])

    @property
    def reach_mm(self) -> float:
        """Radius plus distance: how far from the sphere's centre or the capsule's axis the zone
        reaches (for ``above_plane``: the distance below the plane), mm."""
        return float(self.radius_mm) + float(self.distance_mm or 0.0)

    @property
    def landmark_names(self) -> tuple[str, ...]:
        return tuple(a for a in self.anchors if isinstance(a, str))


def _finite(v: Any) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v) and abs(v) <= _MAX_ABS


def body_zone_problems(zone: BodyZone) -> list[str]:
    """Why a zone is not valid on its own (an empty list when it is); landmark names are checked
    against a garment by the spec reader."""
    out: list[str] = []
    if zone.kind not in ZONE_KINDS:
        out.append(f"kind '{zone.kind}' is not one of {', '.join(ZONE_KINDS)}")
    if zone.shape not in ZONE_ANCHORS:
        out.append(f"shape '{zone.shape}' is not one of {', '.join(ZONE_SHAPES)}")
    elif len(zone.anchors) != ZONE_ANCHORS[zone.shape]:
        n = ZONE_ANCHORS[zone.shape]
        out.append(f"a {zone.shape} takes {n} anchor{'s' if n > 1 else ''} (landmark names or "
                   f"[x, y, z] points), found {len(zone.anchors)}")
    for i, a in enumerate(zone.anchors):
        if isinstance(a, str):
            if not a:
                out.append(f"anchor {i + 1} is an empty landmark name")
        elif not (isinstance(a, tuple) and len(a) == 3 and all(_finite(v) for v in a)):
            out.append(f"anchor {i + 1} must be a landmark name or 3 finite numbers [x, y, z] (mm)")
    if not _finite(zone.radius_mm) or zone.radius_mm < 0:
        out.append(f"'radius_mm' must be a finite number >= 0, found {zone.radius_mm}")
    if zone.distance_mm is None:
        out.append("needs 'distance_mm' (how far beyond the solid the robot keeps away, mm); only "
                   f"implanted_device zones default to {IMPLANT_DEFAULT_DISTANCE_MM:g} mm")
    elif not _finite(zone.distance_mm) or zone.distance_mm < 0:
        out.append(f"'distance_mm' must be a finite number >= 0, found {zone.distance_mm}")
    elif zone.shape != "above_plane" and zone.reach_mm <= 0:
        out.append("a sphere or capsule needs radius_mm + distance_mm > 0")
    if not _finite(zone.cost_factor) or zone.cost_factor < 1:
        out.append(f"'cost_factor' must be a finite number >= 1, found {zone.cost_factor}")
    if not _finite(zone.clearance_mm) or zone.clearance_mm < 0:
        out.append(f"'clearance_mm' must be a finite number >= 0, found {zone.clearance_mm}")
    if zone.shape == "above_plane" and zone.radius_mm:
        out.append("'radius_mm' does not apply to an above_plane zone (give distance_mm)")
    return out


# ------------------------------------------------------------------ the [[body_zone]] table

_KEYS = {
    "name": "str",
    "kind": "str",
    "shape": "str",
    "anchors": "anchors",
    "radius_mm": "float",
    "distance_mm": "float",
    "hard": "bool",
    "cost_factor": "float",
    "clearance_mm": "float",
    "description": "str",
}
_REQUIRED = ("name", "kind", "shape", "anchors")


def _anchor(value: Any) -> Anchor | None:
    if isinstance(value, str):
        return value
    if isinstance(value, list) and len(value) == 3 and all(_finite(v) for v in value):
        return (float(value[0]), float(value[1]), float(value[2]))
    return None


def parse_body_zones(tables: Any, source: str, landmarks: dict[str, bool] | None = None
                     ) -> tuple[tuple[BodyZone, ...], list[tuple[str, str, str | None]]]:
    """Read the ``[[body_zone]]`` tables of a spec: the zones that are valid and every problem.

    Parameters
    ----------
    tables : list of dict
        The parsed TOML array of tables.
    source : str
        The file name (for messages; the reader adds it).
    landmarks : dict, optional
        Known landmark names (name → True); anchors naming others are problems.

    Returns
    -------
    zones : tuple of BodyZone
    problems : list of (item, reason, hint)
        In the spec reader's style, ``item`` like ``"body_zone 'device'"``.

    Examples
    --------
    >>> zs, found = parse_body_zones([{"name": "n", "kind": "neck_face", "shape": "sphere",
    ...                                "anchors": [[0, 0, 1500]], "distance_mm": 40}], "a.toml")
    >>> zs[0].anchors, found
    (((0.0, 0.0, 1500.0),), [])
    """
    problems: list[tuple[str, str, str | None]] = []
    zones: list[BodyZone] = []
    if not isinstance(tables, list) or not all(isinstance(t, dict) for t in tables):
        return (), [("body_zone", "must be an array of tables (written [[body_zone]])", None)]
    seen: set[str] = set()
    for index, table in enumerate(tables):
        name = table.get("name")
        item = f"body_zone '{name}'" if isinstance(name, str) else f"body_zone #{index + 1}"
        before = len(problems)
        problems += table_key_problems(table, item, _KEYS, _REQUIRED)
        values: dict[str, Any] = {}
        for key, kind in _KEYS.items():
            if key not in table:
                continue
            v = table[key]
            if kind == "str" and not isinstance(v, str):
                problems.append((item, f"'{key}' must be a string", None))
            elif kind == "bool" and not isinstance(v, bool):
                problems.append((item, f"'{key}' must be true or false", None))
            elif kind == "float" and not _finite(v):
                problems.append((item, f"'{key}' must be a finite number (mm)", None))
            elif kind == "anchors":
                if not isinstance(v, list) or not v:
                    problems.append((item, "'anchors' must be an array of landmark names or "
                                     "[x, y, z] points (mm)", None))
                    continue
                parsed = [_anchor(a) for a in v]
                for i, a in enumerate(parsed):
                    if a is None:
                        problems.append((item, f"anchor {i + 1} must be a landmark name or 3 "
                                         "finite numbers [x, y, z] (mm)", None))
                values[key] = tuple(a for a in parsed if a is not None)
            else:
                values[key] = float(v) if kind == "float" else v
        if len(problems) > before:
            continue
        kind_value = values["kind"]
        if kind_value not in ZONE_KINDS:
            problems.append((item, f"unknown kind '{kind_value}'; valid kinds: {', '.join(ZONE_KINDS)}",
                             did_you_mean(kind_value, list(ZONE_KINDS))))
            continue
        if values["shape"] not in ZONE_ANCHORS:
            problems.append((item, f"unknown shape '{values['shape']}'; valid shapes: {', '.join(ZONE_SHAPES)}",
                             did_you_mean(values["shape"], list(ZONE_SHAPES))))
            continue
        try:
            zone = BodyZone(**values)
        except SpecError as exc:
            problems.extend((item, p.reason, None) for p in exc.problems)
            continue
        found = []
        if landmarks is not None:
            for a in zone.landmark_names:
                if a not in landmarks:
                    found.append(f"anchor '{a}' is not a landmark of this garment")
        if name in seen:
            found.append("the name is used by another body zone")
        seen.add(name)
        if found:
            problems.extend((item, reason, None) for reason in found)
            continue
        zones.append(zone)
    return tuple(zones), problems


def body_zone_to_table(zone: BodyZone) -> dict[str, Any]:
    """The zone as the plain dict its ``[[body_zone]]`` table parses to."""
    d: dict[str, Any] = {
        "name": zone.name,
        "kind": zone.kind,
        "shape": zone.shape,
        "anchors": [a if isinstance(a, str) else [float(v) for v in a] for a in zone.anchors],
    }
    if zone.shape != "above_plane":
        d["radius_mm"] = float(zone.radius_mm)
    if zone.distance_mm is not None:
        d["distance_mm"] = float(zone.distance_mm)
    d["hard"] = bool(zone.hard)
    d["cost_factor"] = float(zone.cost_factor)
    if zone.clearance_mm:
        d["clearance_mm"] = float(zone.clearance_mm)
    if zone.description:
        d["description"] = zone.description
    return d
