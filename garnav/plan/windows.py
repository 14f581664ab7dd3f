"""Seam windows and the links of moving points: the pieces of the exact cross-seam search.

A *window* is a sub-interval ``[t0, t1]`` of a seam's free interval. The search
(:mod:`garnav.plan.exact`) stands for every crossing inside a window by one point per side, the
window's middle ``tm``, and corrects each link at that point by how far a crossing point of the
window can be from it. Such a point *moves*: every place of the window is represented by it.

For a moving point x of radius r (every point it stands for is within Euclidean distance r of x,
because a chord is never longer than its arc) and a link x–y of cost w, every real link from a
point x' of the window to y costs at least ``w − F·r`` (:func:`link_lower_bound`), where ``F`` is
the largest cost factor of the piece (length + soft surcharge ≤ F × length). The angle rule at a
crossing — the link must make at least ``α`` with the seam tangent — is widened for the window by
the most the direction of the link and the seam tangent can turn between x and x'
(:func:`widened_limit_deg`): ``asin(r/|y − x|)`` for the direction (the far end stays within a
disc of radius r seen from distance |y − x|) plus the turning of the run inside the window.

Moving points: window points (with a seam tangent and angle limit), approach ends of a window
(:func:`garnav.plan.portals.approach_points`: the straight run at the limit angle; radius
``r + ℓ·turning``), and fixed query points (radius 0).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from garnav.plan.freespace import PieceFreeSpace
from garnav.plan.navgraph import edge_costs
from garnav.plan.portals import angle_ok
from garnav.plan.visgraph import Corners, tangent_mask

__all__ = [
    "MovingPoints",
    "cost_factor",
    "corner_links",
    "pair_links",
    "run_turning",
    "widened_limit_deg",
    "link_lower_bound",
]


@dataclass(frozen=True)
class MovingPoints:
    """Points of one piece that stand for a small set of places (see module docstring).

    Attributes
    ----------
    xy : (m, 2) position, piece frame, mm
    tan : (m, 2) unit seam tangent (0 where there is no angle rule)
    alpha : (m,) smallest crossing angle at the point, deg (0 = none)
    r : (m,) Euclidean radius of the places the point stands for, mm
    turn : (m,) largest turning of the seam tangent over those places, rad
    """

    xy: np.ndarray
    tan: np.ndarray
    alpha: np.ndarray
    r: np.ndarray
    turn: np.ndarray

    def __len__(self) -> int:
        return len(self.xy)

    def take(self, idx: np.ndarray) -> "MovingPoints":
        return MovingPoints(self.xy[idx], self.tan[idx], self.alpha[idx], self.r[idx], self.turn[idx])


def cost_factor(fs: PieceFreeSpace) -> float:
    """Largest cost per mm on a piece (1 without soft zones)."""
    return max([1.0] + [float(z.cost_factor) for z in fs.soft])


def run_turning(pts: np.ndarray, s0: np.ndarray, s1: np.ndarray) -> np.ndarray:
    """Total absolute turning (rad) of a polyline (n, 2) between arc lengths s0 and s1 (each (m,)).

    A vertex at arc length s counts when s0 < s < s1; on a straight stretch this is 0.
    """
    d = np.diff(pts, axis=0)
    keep = np.hypot(d[:, 0], d[:, 1]) > 0
    d = d[keep]
    cum = np.concatenate([[0.0], np.cumsum(np.hypot(d[:, 0], d[:, 1]))])
    if len(d) < 2:
        return np.zeros(len(np.atleast_1d(s0)))
    ang = np.arctan2(d[:, 1], d[:, 0])
    turn = np.abs((np.diff(ang) + np.pi) % (2 * np.pi) - np.pi)  # at vertex k + 1 (arc cum[k + 1])
    at = cum[1:-1]
    csum = np.concatenate([[0.0], np.cumsum(turn)])
    lo = np.searchsorted(at, np.atleast_1d(s0), side="right")
    hi = np.searchsorted(at, np.atleast_1d(s1), side="left")
    return np.maximum(csum[hi] - csum[lo], 0.0)


def widened_limit_deg(alpha: np.ndarray, r_sum: np.ndarray, dist: np.ndarray, turn: np.ndarray) -> np.ndarray:
    """Angle limit (deg) that every link between the represented places can meet at least.

    ``alpha`` is the limit at the moving point, ``r_sum`` the sum of the radii of both ends, ``dist``
    the link length and ``turn`` the turning of the seam tangent (rad). Broadcasting arrays.
    """
    ratio = np.where(dist > 0, r_sum / np.maximum(dist, 1e-300), np.inf)
    spread = np.where(ratio >= 1.0, np.pi, np.arcsin(np.minimum(ratio, 1.0)))
    return np.where(alpha > 0, alpha - np.degrees(spread + turn), 0.0)


def link_lower_bound(cost: np.ndarray, factor: float, r_sum: np.ndarray, length: np.ndarray | None = None) -> np.ndarray:
    """``max(0, cost − F·r_sum, length − r_sum)``: a lower bound of every link between the
    represented places. Both terms bound the cost of a link x'–y' with |x' − x| + |y' − y| ≤ r_sum:
    its length is at least |x − y| − r_sum (triangle inequality) and its cost at least its length
    (factors ≥ 1); its cost changes by at most F per mm its ends move. With a soft zone (F > 1) the
    length term is the tighter one unless the zone's surcharge exceeds (F − 1)·r_sum."""
    out = np.maximum(cost - factor * r_sum, 0.0)
    if length is not None:
        out = np.maximum(out, length - r_sum)
    return out


def corner_links(fs: PieceFreeSpace, corners: Corners, pts: MovingPoints) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Links from moving points to corners: tangent at the corner, visible from the point, and
    within the widened angle limit at the point.

    Returns (point index, corner index, lower-bound cost) arrays, sorted by point then corner.
    """
    k, m = len(corners), len(pts)
    if not k or not m:
        return np.zeros(0, int), np.zeros(0, int), np.zeros(0)
    x = pts.xy[:, None, :]
    ok = tangent_mask(corners.xy[None], corners.prev[None], corners.next[None], x)
    lim = pts.alpha > 0
    if lim.any():
        d = corners.xy[None] - x
        dist = np.hypot(d[..., 0], d[..., 1])
        amin = widened_limit_deg(pts.alpha[:, None], pts.r[:, None], dist, pts.turn[:, None])
        ok &= angle_ok(d, pts.tan[:, None, :], amin)
    q, n = np.nonzero(ok)
    vis = fs.segments_free(pts.xy[q], corners.xy[n])  # the piece's own boundary index
    q, n = q[vis], n[vis]
    length, cost = edge_costs(fs, pts.xy[q], corners.xy[n])
    return q, n, link_lower_bound(cost, cost_factor(fs), pts.r[q], length)


def pair_links(
    fs: PieceFreeSpace, a: MovingPoints, b: MovingPoints, pairs: tuple[np.ndarray, np.ndarray] | None = None
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Links between moving points of ``a`` and of ``b`` (all pairs, or the given index pairs):
    visible, of positive length, within the widened angle limit at both ends.

    Returns (index into a, index into b, lower-bound cost).
    """
    if pairs is None:
        ga, gb = np.meshgrid(np.arange(len(a)), np.arange(len(b)), indexing="ij")
        ia, ib = ga.ravel(), gb.ravel()
    else:
        ia, ib = pairs
    if not len(ia):
        return np.zeros(0, int), np.zeros(0, int), np.zeros(0)
    d = b.xy[ib] - a.xy[ia]
    dist = np.hypot(d[:, 0], d[:, 1])
    rs = a.r[ia] + b.r[ib]
    ok = dist > 0
    ok &= angle_ok(d, a.tan[ia], widened_limit_deg(a.alpha[ia], rs, dist, a.turn[ia]))
    ok &= angle_ok(-d, b.tan[ib], widened_limit_deg(b.alpha[ib], rs, dist, b.turn[ib]))
    ia, ib = ia[ok], ib[ok]
    vis = fs.segments_free(a.xy[ia], b.xy[ib])
    ia, ib = ia[vis], ib[vis]
    length, cost = edge_costs(fs, a.xy[ia], b.xy[ib])
    return ia, ib, link_lower_bound(cost, cost_factor(fs), a.r[ia] + b.r[ib], length)


def arc_radius(half_width_frac: float, run_length_mm: float) -> float:
    """Euclidean radius (mm) of a window side: its half width along the run (a chord is never
    longer than its arc)."""
    return float(half_width_frac * run_length_mm) * (1.0 + 1e-12) + 1e-12

