"""From 3D to the pattern: closest surface point, its barycentric UV, then sheet → piece frame.

Closest points are exact: a k-d tree over triangle centroids gives a first candidate, whose
distance bounds the search; every triangle whose centroid lies within that bound plus the largest
centroid-to-corner radius is then tested with the closest-point-on-triangle routine of Ericson,
*Real-Time Collision Detection* (2005), §5.1.5 (``trimesh.triangles.closest_point``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from garnav.drape.drape import Drape
from garnav.errors import QueryError
from garnav.model import Garment

__all__ = ["SurfaceHits", "closest_surface_points", "surface_to_pattern", "locate_3d", "pattern_locator", "distance_text"]

#: Default largest snap distance from a 3D point to the garment surface, mm.
DEFAULT_MAX_SNAP_MM = 10.0


def distance_text(distance_mm: float, limit_mm: float) -> str:
    """A distance in mm with one decimal, or more when one decimal would hide which side of
    ``limit_mm`` it lies on (10.04 beyond a 10 mm limit prints as "10.04", not "10.0")."""
    for digits in range(1, 5):
        text = f"{distance_mm:.{digits}f}"
        if np.sign(float(text) - limit_mm) == np.sign(distance_mm - limit_mm):
            return text
    return f"{distance_mm:.6g}"



@dataclass(frozen=True)
class SurfaceHits:
    """Closest surface points of query points.

    Attributes
    ----------
    point : (n, 3) float array
        Closest point on the drape, world mm.
    distance : (n,) float array
        Distance from the query to it, mm.
    face : (n,) int array
    bary : (n, 3) float array
    piece : tuple of str
        Piece of each closest point.
    pattern : (n, 2) float array
        Closest point in its piece's frame, mm.
    """

    point: np.ndarray
    distance: np.ndarray
    face: np.ndarray
    bary: np.ndarray
    piece: tuple[str, ...]
    pattern: np.ndarray


def closest_surface_points(drape: Drape, xyz: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Exact closest points on the drape.

    Parameters
    ----------
    drape : Drape
    xyz : (n, 3) float array, world mm

    Returns
    -------
    point : (n, 3) float array
    distance : (n,) float array
    face : (n,) int array
    """
    from trimesh.triangles import closest_point  # trimesh loads slowly: only when 3D points are asked

    pts = np.asarray(xyz, dtype=float).reshape(-1, 3)
    idx = drape.surface_index
    _, first = idx.tree.query(pts)
    first_pt = closest_point(idx.tri[first], pts)
    bound = np.linalg.norm(first_pt - pts, axis=1)
    cands = idx.tree.query_ball_point(pts, bound + idx.rmax + 1e-9)
    counts = np.array([len(c) for c in cands])
    pid = np.repeat(np.arange(len(pts)), counts)
    fid = np.concatenate([np.asarray(c, dtype=np.int64) for c in cands]) if len(pts) else np.zeros(0, int)
    q = closest_point(idx.tri[fid], pts[pid])
    d = np.linalg.norm(q - pts[pid], axis=1)
    order = np.lexsort((fid, d, pid))  # per point: nearest first, ties by lowest face
    firsts = order[np.r_[True, pid[order][1:] != pid[order][:-1]]]
    return q[firsts], d[firsts], fid[firsts]


def surface_to_pattern(drape: Drape, xyz: np.ndarray) -> SurfaceHits:
    """Closest drape points of 3D points (n, 3), with their piece and piece-frame position."""
    from trimesh.triangles import points_to_barycentric

    point, dist, face = closest_surface_points(drape, xyz)
    bary = points_to_barycentric(drape.positions[drape.faces[face]], point)
    bary = np.clip(bary, 0.0, None)
    bary /= bary.sum(axis=1, keepdims=True)
    return SurfaceHits(
        point=point,
        distance=dist,
        face=face,
        bary=bary,
        piece=tuple(drape.piece_names[i] for i in drape.face_piece[face]),
        pattern=drape.to_pattern(face, bary),
    )


def locate_3d(
    drape: Drape,
    garment: Garment,
    xyz,
    max_snap_mm: float = DEFAULT_MAX_SNAP_MM,
    what: str = "point",
) -> tuple[str, float, float, float]:
    """Snap one 3D point to the garment: (piece, x, y, distance).

    Parameters
    ----------
    drape : Drape
    garment : Garment
        The garment the drape was linked to.
    xyz : sequence of 3 floats
        World mm.
    max_snap_mm : float
        Largest allowed distance from the point to the surface.
    what : str
        How to name the point in messages, e.g. ``"landmark 'cervicale'"``.

    Returns
    -------
    piece : str
    x, y : float
        Piece frame, mm.
    distance : float
        From the point to the surface, mm.

    Raises
    ------
    QueryError
        The point is farther than ``max_snap_mm`` from the garment, or the drape belongs to
        another garment.
    """
    if tuple(p.name for p in garment.pieces) != drape.piece_names:
        raise QueryError(f"{drape.source}: the drape was linked to another garment's pieces")
    p = np.asarray(xyz, dtype=float).reshape(-1)
    if p.shape != (3,) or not np.all(np.isfinite(p)):
        raise QueryError(f"{what}: expected three finite coordinates x, y, z in mm, got {xyz!r}")
    hits = surface_to_pattern(drape, p[None])
    d = float(hits.distance[0])
    if d > max_snap_mm:
        raise QueryError(
            f"{what} ({p[0]:.1f}, {p[1]:.1f}, {p[2]:.1f}) is {distance_text(d, max_snap_mm)} mm from the garment; "
            f"the largest snap distance is {max_snap_mm:g} mm"
        )
    return hits.piece[0], float(hits.pattern[0, 0]), float(hits.pattern[0, 1]), d


def pattern_locator(drape: Drape, garment: Garment, max_snap_mm: float = DEFAULT_MAX_SNAP_MM):
    """A ``locate_3d(xyz) -> (piece, x, y)`` callable for the planner's world points.

    Wraps :func:`locate_3d` with this drape, garment and snap limit (the planner's ``xyz:X,Y,Z``
    points and body landmarks go through it).
    """

    def locate(xyz) -> tuple[str, float, float]:
        piece, x, y, _ = locate_3d(drape, garment, xyz, max_snap_mm)
        return piece, x, y

    return locate
