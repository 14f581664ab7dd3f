"""Is a route document drawable on this garment? Checked before anything is drawn or driven.

:func:`read_route_document` checks a document's form; :func:`check_route_on_garment` checks its
values against the garment (and the 3D view) it is to be shown or replayed on: every waypoint and
crossing names a piece and seam of the garment, every number is finite, every waypoint lies on its
piece (within :data:`ON_PIECE_TOL_MM`) and every ``path3d`` point lies within the view — the
bounding box of the drape and body meshes grown by :data:`VIEW_MARGIN` of its diagonal. A route
that fails is refused with the file, the item and the reason; never drawn off-screen or silently
clipped.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np

from garnav.errors import QueryError, did_you_mean
from garnav.model import Garment

__all__ = ["check_route_on_garment", "view_bounds", "ON_PIECE_TOL_MM", "VIEW_MARGIN"]

#: How far outside its piece's outline a waypoint may lie (rounding of written coordinates, mm).
ON_PIECE_TOL_MM = 1.0
#: How far beyond the meshes' bounding box a 3D point may lie, as a fraction of its diagonal.
VIEW_MARGIN = 0.10


def view_bounds(meshes: Sequence[np.ndarray | None]) -> tuple[np.ndarray, np.ndarray] | None:
    """(low (3,), high (3,)) of the given (N, 3) vertex arrays (world mm), grown by
    :data:`VIEW_MARGIN` of the diagonal; None when there is no mesh."""
    arrays = [np.asarray(m, dtype=float).reshape(-1, 3) for m in meshes if m is not None and len(m)]
    if not arrays:
        return None
    pts = np.vstack(arrays)
    lo, hi = pts.min(axis=0), pts.max(axis=0)
    grow = VIEW_MARGIN * float(np.linalg.norm(hi - lo)) + 1.0
    return lo - grow, hi + grow


def _number(v) -> float | None:
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        return None
    try:
        f = float(v)
    except OverflowError:
        return None
    return f if math.isfinite(f) else None


def check_route_on_garment(doc: dict, garment: Garment, source: str,
                           view: tuple[np.ndarray, np.ndarray] | None = None) -> None:
    """Refuse a route document that is not on ``garment`` or not within ``view``.

    Parameters
    ----------
    doc : dict
        A document read by :func:`garnav.export.waypoints.read_route_document`.
    garment : Garment
    source : str
        The file, for messages.
    view : (low (3,), high (3,)), optional
        World-mm box the 3D points must lie in (:func:`view_bounds`).

    Raises
    ------
    QueryError
        ``"<source>: waypoint 3: piece 'slev' is not a piece of garment 'top'; did you mean 'sleeve'?"``,
        ``"... 'x' is not a finite number"``, ``"... lies 912.0 mm outside piece 'back'"`` or
        ``"... path3d point 17 at (...) mm is outside the 3D view (drape and body meshes)"``.
    """
    names = [p.name for p in garment.pieces]
    for i, w in enumerate(doc.get("waypoints") or []):
        piece = w.get("piece")
        if piece not in names:
            hint = did_you_mean(str(piece), names)
            raise QueryError(f"{source}: waypoint {i}: piece {piece!r} is not a piece of garment "
                             f"'{garment.name}'" + (f"; {hint}" if hint else ""))
        xy: list[float] = []
        for key in ("x", "y"):
            value = _number(w.get(key))
            if value is None:
                raise QueryError(f"{source}: waypoint {i}: '{key}' is not a finite number ({w.get(key)!r})")
            xy.append(value)
        ring = garment.piece(piece).outline
        away = _outside_mm(ring, xy[0], xy[1])
        if away > ON_PIECE_TOL_MM:
            raise QueryError(f"{source}: waypoint {i}: ({xy[0]:.1f}, {xy[1]:.1f}) mm lies {away:.1f} mm outside "
                             f"piece '{piece}' (the route was not planned on this garment, or was edited)")
        xyz = w.get("xyz")
        if xyz is not None:
            _check_point(xyz, f"{source}: waypoint {i}: 'xyz'", view)
    seams = {s.name for s in garment.seams}
    for j, c in enumerate(doc.get("crossings") or []):
        if c.get("seam") not in seams:
            hint = did_you_mean(str(c.get("seam")), seams)
            raise QueryError(f"{source}: crossing {j}: seam {c.get('seam')!r} is not a seam of garment "
                             f"'{garment.name}'" + (f"; {hint}" if hint else ""))
    for k, q in enumerate(doc.get("path3d") or []):
        _check_point(q, f"{source}: path3d point {k}", view)


def _check_point(q, what: str, view) -> None:
    vals = [_number(v) for v in q] if isinstance(q, list) and len(q) == 3 else None
    if vals is None or any(v is None for v in vals):
        raise QueryError(f"{what} is not three finite numbers ({q!r})")
    if view is not None:
        p = np.asarray(vals, dtype=float)
        lo, hi = view
        if np.any(p < lo) or np.any(p > hi):
            raise QueryError(f"{what} at ({p[0]:.1f}, {p[1]:.1f}, {p[2]:.1f}) mm is outside the 3D view "
                             f"(the drape and body meshes span ({lo[0]:.0f}..{hi[0]:.0f}, {lo[1]:.0f}..{hi[1]:.0f}, "
                             f"{lo[2]:.0f}..{hi[2]:.0f}) mm): the route is not on this garment's drape")


def _outside_mm(ring: np.ndarray, x: float, y: float) -> float:
    """Distance (mm) from (x, y) to the polygon ``ring`` when outside it; 0 inside."""
    from shapely import Point, Polygon

    poly = Polygon(ring)
    pt = Point(x, y)
    return 0.0 if poly.covers(pt) else float(poly.exterior.distance(pt))
