"""The pattern sheet's body-zone layer: projected body zones (:mod:`garnav.zones`) in their own
style — a colour per zone kind, a darker outline, the zone's name — and a legend.

Kept apart from :mod:`garnav.preview.sheet` (which draws everything else) so that each module
keeps one job; the sheet calls :func:`zone_items` and :func:`zone_legend`.
"""

from __future__ import annotations

import numpy as np
import shapely

from garnav.model import BODY_ZONE_KIND, Garment
from garnav.zones.model import BodyZone

__all__ = ["ZONE_COLOURS", "ZONE_WORDS", "zone_items", "zone_legend"]

#: Fill and outline per zone kind (our own palette, apart from the keep-out reds).
ZONE_COLOURS = {
    "implanted_device": ("#b39ddb", "#4527a0"),
    "neck_face": ("#90a4ae", "#263238"),
    "wound_or_sensor": ("#80cbc4", "#00695c"),
    "custom": ("#fff59d", "#f57f17"),
}
ZONE_WORDS = {
    "implanted_device": "implanted device",
    "neck_face": "neck and face",
    "wound_or_sensor": "wound or sensor site",
    "custom": "body zone",
}


def _zone_of(garment: Garment, name: str) -> BodyZone | None:
    from garnav.zones.project import zone_of_keepout

    for k in garment.keepouts:
        if k.name == name:
            return zone_of_keepout(garment, k)
    return None


def zone_items(garment: Garment, to_sheet, area, label, label_size: float) -> list:
    """Drawing items of the garment's ``body_zone`` keep-outs.

    Parameters
    ----------
    garment : Garment
        With its projected keep-outs (:func:`garnav.zones.with_zone_keepouts`).
    to_sheet : callable (piece, (n, 2) array) -> (n, 2) array
        Piece frame → sheet frame.
    area, label : callable
        The sheet's ``Area`` and ``Label`` constructors.
    label_size : float
        Text height of the zone names, mm.
    """
    items: list = []
    named: set[str] = set()
    for k in garment.keepouts:
        if k.kind != BODY_ZONE_KIND:
            continue
        zone = _zone_of(garment, k.name)
        kind = zone.kind if zone is not None else "custom"
        fill, stroke = ZONE_COLOURS[kind]
        piece = garment.piece(k.piece)
        geom = k.shape.exact_geometry()
        info = (("piece", k.piece), ("keepout", k.name), ("zone", zone.name if zone else k.name), ("zone-kind", kind))
        fabric = geom.intersection(piece.polygon)  # the fabric part only
        for part in shapely.get_parts(fabric):
            if isinstance(part, shapely.Polygon) and part.area > 0:
                rings = (to_sheet(piece, np.asarray(part.exterior.coords)),) + tuple(
                    to_sheet(piece, np.asarray(r.coords)) for r in part.interiors)
                items.append(area(rings, fill, stroke, 0.8, 0.6, "body-zone", info))
        key = f"{zone.name if zone else k.name}@{k.piece}"
        if key not in named and fabric.area > 400.0:  # one name per zone and piece, where it fits
            named.add(key)
            c = shapely.point_on_surface(fabric)
            at = to_sheet(piece, np.array([[c.x, c.y]]))[0]
            items.append(label((float(at[0]), float(at[1])), zone.name if zone else k.name, label_size, stroke))
    return items


def zone_legend(garment: Garment, size: tuple[float, float], area, label, label_size: float) -> list:
    """A legend of the drawn zone kinds in the sheet's upper right corner: a swatch and the zone's
    name, kind and distance per body zone that has keep-outs."""
    drawn = {k.name.split("@", 1)[0] for k in garment.keepouts if k.kind == BODY_ZONE_KIND}
    zones = [z for z in garment.body_zones if z.name in drawn]
    if not zones:
        return []
    w, h = size
    s = label_size
    x0, y0 = 0.97 * w - 34.0 * s * 0.55, 0.97 * h - (len(zones) + 1.5) * 1.5 * s
    items: list = [label((x0 + 12.0 * s * 0.55, y0 + (len(zones) + 0.2) * 1.5 * s), "body zones (kept out)",
                         s * 0.75, "#2b2118")]
    for i, z in enumerate(reversed(zones)):
        fill, stroke = ZONE_COLOURS[z.kind]
        y = y0 + i * 1.5 * s
        sw = np.array([[x0, y], [x0 + s, y], [x0 + s, y + s], [x0, y + s], [x0, y]])
        items.append(area((sw,), fill, stroke, 0.8, 0.8, "zone-legend", (("zone", z.name),)))
        text = f"{z.name}: {ZONE_WORDS[z.kind]}, {z.distance_mm:g} mm"
        items.append(label((x0 + s * 1.4 + len(text) * s * 0.27, y + 0.5 * s), text, s * 0.7, "#2b2118"))
    return items
