"""Pure helpers on closed outline rings: cleaning, corners, snapping marks, splitting into edges.

A ring is an (n, 2) float array (mm), first point not repeated. No I/O, no garnav objects.
"""

from __future__ import annotations

import math

import numpy as np

__all__ = [
    "signed_area",
    "drop_repeats",
    "turning_angles_deg",
    "project_to_ring",
    "insert_on_ring",
    "rotate_points",
]


def signed_area(ring: np.ndarray) -> float:
    """Shoelace area (mm²): positive for a counter-clockwise ring (y up)."""
    x, y = ring[:, 0], ring[:, 1]
    return 0.5 * float(np.dot(x, np.roll(y, -1)) - np.dot(np.roll(x, -1), y))


def drop_repeats(ring: np.ndarray, kinds: np.ndarray, tol: float) -> tuple[np.ndarray, np.ndarray]:
    """Remove points closer than ``tol`` (mm) to the previous kept point (the ring wraps).

    A removed point passes its ``kinds`` flag (original vertex) on to the point kept.
    """
    keep_pts: list[np.ndarray] = []
    keep_kind: list[bool] = []
    for p, k in zip(ring, kinds, strict=True):
        if keep_pts and float(np.hypot(*(p - keep_pts[-1]))) <= tol:
            keep_kind[-1] = keep_kind[-1] or bool(k)
            continue
        keep_pts.append(p)
        keep_kind.append(bool(k))
    while len(keep_pts) > 1 and float(np.hypot(*(keep_pts[-1] - keep_pts[0]))) <= tol:
        keep_kind[0] = keep_kind[0] or keep_kind[-1]
        keep_pts.pop()
        keep_kind.pop()
    return np.array(keep_pts, dtype=float).reshape(-1, 2), np.array(keep_kind, dtype=bool)


def turning_angles_deg(ring: np.ndarray) -> np.ndarray:
    """Absolute turning angle (degrees, 0..180) of the ring at each vertex, shape (n,)."""
    d_in = ring - np.roll(ring, 1, axis=0)
    d_out = np.roll(ring, -1, axis=0) - ring
    cross = d_in[:, 0] * d_out[:, 1] - d_in[:, 1] * d_out[:, 0]
    dot = np.einsum("ij,ij->i", d_in, d_out)
    return np.degrees(np.abs(np.arctan2(cross, dot)))


def project_to_ring(ring: np.ndarray, point) -> tuple[int, float, np.ndarray, float]:
    """Closest point of the ring to ``point``.

    Returns
    -------
    segment : int
        Index i of the closest segment ring[i] → ring[i+1] (wrapping).
    t : float
        Parameter along that segment, 0..1.
    closest : (2,) array
    distance : float
        mm.
    """
    p = np.asarray(point, dtype=float)
    a = ring
    b = np.roll(ring, -1, axis=0)
    ab = b - a
    denom = np.einsum("ij,ij->i", ab, ab)
    t = np.where(denom > 0, np.einsum("ij,ij->i", p - a, ab) / np.where(denom > 0, denom, 1), 0)
    t = np.clip(t, 0.0, 1.0)
    closest = a + t[:, None] * ab
    dist = np.hypot(*(closest - p).T)
    i = int(np.argmin(dist))
    return i, float(t[i]), closest[i], float(dist[i])


def insert_on_ring(
    ring: np.ndarray, kinds: np.ndarray, point, snap: float
) -> tuple[np.ndarray, np.ndarray, int, float]:
    """Put ``point``'s projection on the ring as a vertex; reuse a vertex within ``snap`` mm.

    Returns the new ring and kinds, the index of the vertex that stands for the point, and the
    point's distance from the ring (mm).
    """
    i, t, closest, dist = project_to_ring(ring, point)
    n = len(ring)
    j = (i + 1) % n
    if float(np.hypot(*(closest - ring[i]))) <= snap:
        return ring, kinds, i, dist
    if float(np.hypot(*(closest - ring[j]))) <= snap:
        return ring, kinds, j, dist
    ring = np.insert(ring, i + 1, closest, axis=0)
    kinds = np.insert(kinds, i + 1, True)
    return ring, kinds, i + 1, dist


def rotate_points(points, angle_rad: float) -> np.ndarray:
    """Points (..., 2) rotated counter-clockwise by ``angle_rad`` about the origin."""
    c, s = math.cos(angle_rad), math.sin(angle_rad)
    pts = np.asarray(points, dtype=float)
    return pts @ np.array([[c, s], [-s, c]])
