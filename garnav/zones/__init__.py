"""Body zones: places on the body (implanted devices, neck and face, wounds or sensors) that the
robot keeps away from, turned into keep-outs on the pattern through a drape.

* :mod:`~garnav.zones.model` — :class:`BodyZone`, the ``[[body_zone]]`` table (low layer: the
  spec reader reads it).
* :mod:`~garnav.zones.project` — a zone's fabric on one drape, as conservative keep-outs
  (:func:`zone_keepouts`, :func:`with_zone_keepouts`).
* :mod:`~garnav.zones.sources` — what the commands load: garment, drape and zone keep-outs, and
  the refusal to plan without a drape when the spec has zones.

See docs/zones.md.
"""

from garnav.zones.model import (
    IMPLANT_DEFAULT_DISTANCE_MM,
    IMPLANT_GUIDANCE,
    ZONE_KINDS,
    ZONE_SHAPES,
    BodyZone,
    body_zone_problems,
)

__all__ = [
    "BodyZone",
    "IMPLANT_DEFAULT_DISTANCE_MM",
    "IMPLANT_GUIDANCE",
    "ZONE_KINDS",
    "ZONE_SHAPES",
    "body_zone_problems",
    "zone_areas",
    "zone_excess",
    "zone_keepouts",
    "with_zone_keepouts",
    "zone_anchor_points",
    "zone_of_keepout",
    "garment_and_drape_with_zones",
]

_LAZY = {
    "zone_areas": "garnav.zones.project",
    "zone_excess": "garnav.zones.project",
    "zone_keepouts": "garnav.zones.project",
    "with_zone_keepouts": "garnav.zones.project",
    "zone_anchor_points": "garnav.zones.project",
    "zone_of_keepout": "garnav.zones.project",
    "garment_and_drape_with_zones": "garnav.zones.sources",
}


def __getattr__(name: str):
    """The projection loads on first use (it pulls in the drape, which the spec reader — a user
    of :mod:`garnav.zones.model` — must not)."""
    if name in _LAZY:
        import importlib

        return getattr(importlib.import_module(_LAZY[name]), name)
    raise AttributeError(f"module 'garnav.zones' has no attribute {name!r}")
