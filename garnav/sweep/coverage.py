"""Ground covered by a sensor strip carried across the robot (piece frame, mm; pure geometry).

A strip of width ``w`` across the robot, centred on the wheel axle, covers the path buffered by
``w/2`` with flat ends: driving straight it sweeps a rectangle, and turning in place it sweeps a
disc of radius ``w/2`` about the axle centre, which is the round join of the buffer.
"""

from __future__ import annotations

import numpy as np
import shapely

__all__ = ["footprint", "covered_area", "coverage_face_mask"]


def footprint(points: np.ndarray, swath_mm: float) -> shapely.Geometry:
    """Ground covered along a polyline (m, 2), piece frame, mm: buffer by w/2, flat caps, round joins."""
    pts = np.asarray(points, dtype=float).reshape(-1, 2)
    keep = np.r_[True, np.hypot(*np.diff(pts, axis=0).T) > 1e-9] if len(pts) > 1 else np.ones(len(pts), bool)
    pts = pts[keep]
    if len(pts) < 2:
        return shapely.Point(pts[0]).buffer(swath_mm / 2.0) if len(pts) else shapely.Polygon()
    return shapely.LineString(pts).buffer(swath_mm / 2.0, cap_style="flat", join_style="round")


def covered_area(route, swath_mm: float) -> dict[str, shapely.Geometry]:
    """Ground covered on each piece by a route's legs: piece → geometry (union of the legs'
    footprints), in order of first visit."""
    by_piece: dict[str, list[shapely.Geometry]] = {}
    for leg in route.legs:
        by_piece.setdefault(leg.piece, []).append(footprint(leg.points, swath_mm))
    return {p: shapely.union_all(parts) for p, parts in by_piece.items()}


def coverage_face_mask(drape, covered: dict[str, shapely.Geometry]) -> np.ndarray:
    """(F,) bool: drape triangles whose pattern centroid lies in the covered ground of its piece
    (for drawing the coverage in 3D)."""
    cent = np.asarray(drape.corner_pattern, dtype=float).mean(axis=1)
    face_piece = np.asarray(drape.face_piece)
    out = np.zeros(len(cent), dtype=bool)
    for pid, name in enumerate(drape.piece_names):
        geom = covered.get(name)
        if geom is None or geom.is_empty:
            continue
        sel = np.flatnonzero(face_piece == pid)
        out[sel] = shapely.covers(geom, shapely.points(cent[sel]))
    return out
