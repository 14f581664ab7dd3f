"""Free space used by the references when garnav's own free space is not importable.

Same definition as garnav's planner documents (piece minus open edges grown by radius + edge
margin, minus hard keep-outs grown by radius + clearance, every growth scaled by 1/cos(π/(4q)) so
the polygon contains the true round offset). The runner prefers ``garnav.plan.freespace`` and
records which one was used.
"""

from __future__ import annotations

import math

import shapely

from garnav.model import Circle, Garment, Robot

QUAD_SEGS = 8


def piece_free_space(garment: Garment, piece: str, robot: Robot, quad_segs: int = QUAD_SEGS) -> shapely.Geometry:
    """Free region (Polygon or MultiPolygon) of one piece whose edges are all open, mm."""
    f = 1.0 / math.cos(math.pi / (4 * quad_segs))
    p = garment.piece(piece)
    r = robot.radius_mm
    blocked = [shapely.LineString(p.outline.tolist() + [p.outline[0].tolist()]).buffer((r + robot.edge_margin_mm) * f, quad_segs=quad_segs)]
    for k in garment.keepouts_on(piece):
        d = r + k.clearance_mm
        if isinstance(k.shape, Circle):
            blocked.append(shapely.Point(k.shape.cx, k.shape.cy).buffer((k.shape.radius + d) * f, quad_segs=quad_segs))
        else:
            blocked.append(k.shape.exact_geometry().buffer(d * f, quad_segs=quad_segs))
    region = p.polygon.difference(shapely.union_all(blocked))
    parts = [g for g in shapely.get_parts(region) if g.geom_type == "Polygon" and not g.is_empty]
    out = parts[0] if len(parts) == 1 else shapely.MultiPolygon(parts)
    shapely.prepare(out)
    return out
