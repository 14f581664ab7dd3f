"""What the commands load when a spec may have body zones: the garment with its zones' keep-outs
on the drape, or a clear refusal when the zones cannot be placed (no drape).

Safety first: a spec with ``[[body_zone]]`` entries is only planned on without its drape when the
caller opts out explicitly (``allow_without_zones=True``, the commands' ``--ignore-body-zones``),
and the commands then say that the zones were not applied.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from typing import TYPE_CHECKING

from garnav.errors import QueryError
from garnav.zones.model import BodyZone

if TYPE_CHECKING:  # the commands' parsers import this module: keep it light (a fast --help)
    from garnav.drape.drape import Drape
    from garnav.model import Garment

__all__ = [
    "garment_and_drape_with_zones",
    "apply_zones",
    "IGNORE_ZONES_OPTION",
    "ignored_zones_note",
    "add_ignore_zones_option",
    "BodyZoneRegion",
    "zone_regions",
    "NEVER_SWEPT",
]

#: The commands' explicit opt-out.
IGNORE_ZONES_OPTION = "--ignore-body-zones"


def add_ignore_zones_option(parser) -> None:
    """The commands' explicit opt-out ``--ignore-body-zones``."""
    parser.add_argument(IGNORE_ZONES_OPTION, dest="ignore_body_zones", action="store_true",
                        help="plan without the drape even though the spec has body zones (implanted "
                        "device, neck and face, ...): the zones are then NOT kept out of; without this, "
                        "such a spec is refused when there is no drape (docs/zones.md)")


def apply_zones(garment: Garment, drape: Drape | None, source: str, allow_without_zones: bool = False,
                except_zones: tuple[str, ...] = ()) -> Garment:
    """``garment`` with its body zones' keep-outs on ``drape``; without a drape, the garment as it
    is when it has no zones or ``allow_without_zones``, else :class:`QueryError`.

    ``except_zones`` names zones left out (a sweep *of* a wound or sensor zone drives over it;
    see :func:`zone_regions`)."""
    if not garment.body_zones:
        return garment
    if drape is not None:
        from garnav.zones.project import zone_keepouts

        kept = tuple(z for z in garment.body_zones if z.name not in except_zones)
        return garment.with_keepouts(zone_keepouts(garment, drape, kept))
    if allow_without_zones:
        return garment
    names = ", ".join(z.name for z in garment.body_zones)
    raise QueryError(
        f"{source}: the spec has body zones ({names}); they become keep-outs only through the "
        f"drape, so garnav will not plan without it. Give the drape (the spec's own, or --drape "
        f"MESH, and no --no-drape), or add {IGNORE_ZONES_OPTION} to plan knowingly without the "
        f"zones (docs/zones.md)"
    )


def ignored_zones_note(garment: Garment, drape: Drape | None) -> str | None:
    """The warning line to print when zones were skipped (no drape, explicit opt-out), else None."""
    if not garment.body_zones or drape is not None:
        return None
    names = ", ".join(z.name for z in garment.body_zones)
    return (f"warning: body zones NOT applied ({names}): planned without the drape because of "
            f"{IGNORE_ZONES_OPTION}; keep the robot away from them by other means")


def garment_and_drape_with_zones(
    path: str | os.PathLike, drape: str | None = None, optional: bool = False, allow_without_zones: bool = False
) -> tuple[Garment, Drape | None]:
    """As :func:`garnav.drape.sources.garment_and_drape`, with the zones applied (:func:`apply_zones`)."""
    from garnav.drape.sources import garment_and_drape

    garment, loaded = garment_and_drape(path, drape, optional)
    return apply_zones(garment, loaded, str(path), allow_without_zones), loaded


#: Zone kinds a robot is never driven over, not even to sweep them.
NEVER_SWEPT = ("implanted_device", "neck_face")


@dataclass(frozen=True)
class BodyZoneRegion:
    """A sweep region (:class:`garnav.sweep.region.Region` protocol): the fabric of one body zone
    on the context's drape (:func:`garnav.zones.zone_areas`)."""

    zone: BodyZone

    def resolve(self, context) -> dict:
        what = f"region zone '{self.zone.name}'"
        if self.zone.kind in NEVER_SWEPT:
            raise QueryError(f"{what}: {self.zone.kind} zones are kept out of, never swept; sweep a "
                             "wound_or_sensor or custom zone, or a polygon beside it")
        if context.drape is None:
            raise QueryError(f"{what}: needs a drape to find the zone's fabric")
        from garnav.zones.project import zone_areas

        areas = zone_areas(self.zone, context.garment, context.drape)
        if not areas:
            raise QueryError(f"{what}: no fabric of the garment lies in the zone")
        return areas


def zone_regions(garment: Garment) -> dict[str, BodyZoneRegion]:
    """Name → sweep region of each of the garment's body zones (for ``--region zone:NAME``)."""
    return {z.name: BodyZoneRegion(z) for z in garment.body_zones}
