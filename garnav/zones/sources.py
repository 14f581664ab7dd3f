"""What the commands load when a spec may have body zones: the garment with its zones' keep-outs
on the drape, or a clear refusal when the zones cannot be placed (no drape).

Safety first: a spec with ``[[body_zone]]`` entries is only planned on without its drape when the
caller opts out explicitly (``allow_without_zones=True``, the commands' ``--ignore-body-zones``),
and the commands then say that the zones were not applied.
"""

from __future__ import annotations

import os
from typing import TYPE_CHECKING

from garnav.errors import QueryError
from garnav.model import Garment

if TYPE_CHECKING:
    from garnav.drape.drape import Drape

__all__ = ["garment_and_drape_with_zones", "apply_zones", "IGNORE_ZONES_OPTION", "ignored_zones_note"]

#: The commands' explicit opt-out.
IGNORE_ZONES_OPTION = "--ignore-body-zones"


def apply_zones(garment: Garment, drape: Drape | None, source: str, allow_without_zones: bool = False) -> Garment:
    """``garment`` with its body zones' keep-outs on ``drape``; without a drape, the garment as it
    is when it has no zones or ``allow_without_zones``, else :class:`QueryError`."""
    if not garment.body_zones:
        return garment
    if drape is not None:
        from garnav.zones.project import with_zone_keepouts

        return with_zone_keepouts(garment, drape)
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
