"""Pure helpers on 2D/3D polylines: arc length, points at arc length, rigid motions.

All lengths in mm. A polyline is an array of shape (n, d), n >= 2.
"""

from __future__ import annotations

import numpy as np

__all__ = [
    "cumulative_length",
    "distance_to_polyline",
    "polyline_length",
    "point_at_length",
    "sub_polyline",
    "tangent_at",
    "rotation_matrix",
]


def cumulative_length(points: np.ndarray) -> np.ndarray:
    """Arc length at each vertex, shape (n,), starting at 0.

    >>> cumulative_length(np.array([[0.0, 0.0], [3.0, 4.0], [3.0, 5.0]])).tolist()
    [0.0, 5.0, 6.0]
    """
    points = np.asarray(points, dtype=float)
    steps = np.linalg.norm(np.diff(points, axis=0), axis=1)
    return np.concatenate([[0.0], np.cumsum(steps)])


def polyline_length(points: np.ndarray) -> float:
    """Total length of a polyline (n, d) in its units."""
    return float(cumulative_length(points)[-1])


def point_at_length(points: np.ndarray, s: np.ndarray | float) -> np.ndarray:
    """Points at arc lengths ``s`` along the polyline, linearly interpolated.

    Parameters
    ----------
    points : (n, d) array
    s : float or (m,) array
        Arc lengths, clipped to [0, length].

    Returns
    -------
    (d,) or (m, d) array
    """
    points = np.asarray(points, dtype=float)
    cum = cumulative_length(points)
    s_arr = np.clip(np.atleast_1d(np.asarray(s, dtype=float)), 0.0, cum[-1])
    seg = np.clip(np.searchsorted(cum, s_arr, side="right") - 1, 0, len(points) - 2)
    span = cum[seg + 1] - cum[seg]
    t = np.where(span > 0, (s_arr - cum[seg]) / np.where(span > 0, span, 1.0), 0.0)
    out = points[seg] + t[:, None] * (points[seg + 1] - points[seg])
    return out[0] if np.ndim(s) == 0 else out


def tangent_at(points: np.ndarray, s: np.ndarray | float) -> np.ndarray:
    """Unit tangent (travel direction) of the polyline at arc lengths ``s``.

    The tangent of the segment holding ``s`` (at a vertex: the segment leaving it; at the end: the
    last segment). Zero-length segments have no direction and are skipped: the next segment of
    some length is used, or the last one before when none follows. A polyline of coincident points
    has no tangent: zeros.

    Parameters
    ----------
    points : (n, d) array
    s : float or (m,) array
        Arc lengths, clipped to [0, length].

    Returns
    -------
    (d,) or (m, d) array

    >>> tangent_at(np.array([[0.0, 0.0], [3.0, 4.0], [3.0, 4.0], [3.0, 9.0]]), [0.0, 5.0, 10.0]).tolist()
    [[0.6, 0.8], [0.0, 1.0], [0.0, 1.0]]
    """
    points = np.asarray(points, dtype=float)
    cum = cumulative_length(points)
    s_arr = np.clip(np.atleast_1d(np.asarray(s, dtype=float)), 0.0, cum[-1])
    seg = np.clip(np.searchsorted(cum, s_arr, side="right") - 1, 0, len(points) - 2)
    d = np.diff(points, axis=0)
    norm = np.linalg.norm(d, axis=1)
    good = np.flatnonzero(norm > 0)
    if not len(good):
        out = np.zeros((len(s_arr), points.shape[1]))
    else:
        use = good[np.minimum(np.searchsorted(good, seg), len(good) - 1)]
        out = d[use] / norm[use, None]
    return out[0] if np.ndim(s) == 0 else out


def distance_to_polyline(point: np.ndarray, points: np.ndarray) -> float:
    """Euclidean distance from ``point`` (d,) to the polyline ``points`` (n, d), in its units.

    >>> distance_to_polyline(np.array([1.0, 2.0]), np.array([[0.0, 0.0], [3.0, 0.0], [3.0, 4.0]]))
    2.0
    """
    p = np.asarray(point, dtype=float)
    a = np.asarray(points, dtype=float)
    if len(a) == 1:
        return float(np.linalg.norm(p - a[0]))
    d = np.diff(a, axis=0)
    den = np.einsum("ij,ij->i", d, d)
    t = np.clip(np.einsum("ij,ij->i", p - a[:-1], d) / np.where(den > 0, den, 1.0), 0.0, 1.0)
    return float(np.min(np.linalg.norm(a[:-1] + t[:, None] * d - p, axis=1)))


def sub_polyline(points: np.ndarray, s0: float, s1: float) -> np.ndarray:
    """The part of a polyline between arc lengths ``s0 < s1``, with interior vertices kept.

    Returns an (m, d) array whose first point is at ``s0`` and last at ``s1``.
    """
    points = np.asarray(points, dtype=float)
    cum = cumulative_length(points)
    inner = (cum > s0) & (cum < s1)
    start = point_at_length(points, s0)
    end = point_at_length(points, s1)
    return np.vstack([start[None], points[inner], end[None]])


def rotation_matrix(angle_rad: float) -> np.ndarray:
    """2x2 counter-clockwise rotation matrix."""
    c, s = np.cos(angle_rad), np.sin(angle_rad)
    return np.array([[c, -s], [s, c]])
