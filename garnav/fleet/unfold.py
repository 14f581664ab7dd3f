"""Distances between robots on different pieces, measured in the pattern through the seam.

The distance of two points a, b on pieces joined by a seam is the shortest path of two straight
pieces meeting at one seam point σ: min over σ of |a − σ_a| + |σ_b − b|
(:func:`through_seam_distance`). For planning, B's moves are carried into A's frame with the seam
correspondence (:func:`garnav.plan.freespace.seam_transform`: run tangent onto run tangent, B's
fabric continuing beyond A's seam edge) at a seam point; a rigid map at σ never over-states the
distance through σ (triangle inequality). This is the distance *on the fabric*: a disc robot's
footprint lies on the fabric, fabric barely stretches, and on the body's convex surfaces two
robots tilt apart, so the drape's 3D chord (shorter than the fabric distance by about d³κ²/24 on a
surface of curvature κ) would report touching robots that do not touch. The 3D distance also
depends on the pose, the fabric distance does not. Concave folds (the armpit) are the exception;
docs/fleet.md says so.

The carried picture is first-order on curved seams and is used only within ``band_mm`` of the
seam; like the free space (:mod:`garnav.plan.freespace`) it carries over one seam, not over two
seams meeting at a corner.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from garnav.export.seams import locate_on_run
from garnav.model import Garment
from garnav.plan.freespace import seam_transform
from garnav.polyline import cumulative_length, point_at_length

__all__ = ["SeamSide", "seam_sides", "carry_matrix", "carry_points", "side_maps", "through_seam_distance",
           "unfolded_distance"]


@dataclass(frozen=True, eq=False)
class SeamSide:
    """One run of a crossable seam as seen from its piece: carrying a point near it into the
    partner piece ``to_piece`` uses side ``to_side``'s frame."""

    seam: str
    piece: str
    side: str
    to_piece: str
    to_side: str
    polyline: np.ndarray
    length: float
    reverse: bool
    partner: np.ndarray
    partner_reverse: bool


def seam_sides(garment: Garment) -> dict[str, list[SeamSide]]:
    """Piece name → the runs of crossable seams on it (a seam joining a piece to itself appears
    twice on that piece)."""
    out: dict[str, list[SeamSide]] = {p.name: [] for p in garment.pieces}
    for s in garment.seams:
        if not s.crossable:
            continue
        for side, run, other, oside in (("a", s.a, s.b, "b"), ("b", s.b, s.a, "a")):
            pts = garment.run_polyline(run)
            out[run.piece].append(SeamSide(s.name, run.piece, side, other.piece, oside, pts,
                                           float(cumulative_length(pts)[-1]), run.reverse,
                                           garment.run_polyline(other), other.reverse))
    return out


def carry_matrix(garment: Garment, side: SeamSide, point: np.ndarray) -> tuple[np.ndarray, float]:
    """Affine map (3, 3) carrying points of ``side.piece`` near ``point`` (2,) into
    ``side.to_piece``'s frame, and the distance of ``point`` from the seam run, mm."""
    s, dist = locate_on_run(side.polyline, point)
    frac = s / side.length if side.length > 0 else 0.0
    return seam_transform(garment, garment.seam(side.seam), side.to_side, frac), dist


def unfolded_distance(
    garment: Garment,
    sides: dict[str, list[SeamSide]],
    piece_a: str,
    xy_a: np.ndarray,
    piece_b: str,
    xy_b: np.ndarray,
    band_mm: float,
) -> float:
    """Fabric distance between two points (mm): direct on one piece, else through one seam run
    within ``band_mm`` of point b (the smallest of the candidates; inf when none)."""
    best = float(np.hypot(*(xy_a - xy_b))) if piece_a == piece_b else np.inf
    for sd in sides.get(piece_b, ()):
        if sd.to_piece != piece_a:
            continue
        mat, dist = carry_matrix(garment, sd, xy_b)
        if dist > band_mm:
            continue
        q = mat[:2, :2] @ xy_b + mat[:2, 2]
        best = min(best, float(np.hypot(*(xy_a - q))))
    return best


def _frames(poly: np.ndarray, reverse: bool, frac: np.ndarray):
    """Point, unit tangent and inward normal (each (m, 2)) of a run polyline at fractions (m,),
    as :func:`garnav.plan.freespace.run_frame` computes them one at a time."""
    cum = cumulative_length(poly)
    s = np.clip(frac, 0.0, 1.0) * cum[-1]
    seg = np.clip(np.searchsorted(cum, s, side="right") - 1, 0, len(poly) - 2)
    d = poly[1:] - poly[:-1]
    nd = np.linalg.norm(d, axis=1)
    # zero-length segments take the next non-zero one
    good = np.flatnonzero(nd > 0)
    seg = good[np.clip(np.searchsorted(good, seg), 0, len(good) - 1)]
    t = d[seg] / nd[seg][:, None]
    point = poly[seg] + (s - cum[seg])[:, None] * t
    left = np.column_stack([-t[:, 1], t[:, 0]])
    return point, t, (-left if reverse else left)


def carry_points(side: SeamSide, xy: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Carry points (m, 2) of ``side.piece`` into ``side.to_piece``'s frame through the seam, each
    at its own nearest seam point. Returns carried points (m, 2), the rotation matrices (m, 2, 2)
    (for velocities) and the distances from the run (m,), mm."""
    xy = np.asarray(xy, float).reshape(-1, 2)
    poly = side.polyline
    a, b = poly[:-1], poly[1:]
    d = b - a
    dd = np.einsum("ij,ij->i", d, d)
    rel = xy[:, None, :] - a[None]
    t = np.clip(np.einsum("mkj,kj->mk", rel, d) / np.where(dd > 0, dd, 1.0), 0.0, 1.0)
    foot = a[None] + t[..., None] * d[None]
    dist = np.linalg.norm(xy[:, None, :] - foot, axis=2)
    k = np.argmin(dist, axis=1)
    cum = cumulative_length(poly)
    s = cum[k] + t[np.arange(len(xy)), k] * np.sqrt(dd[k])
    frac = s / side.length if side.length > 0 else np.zeros(len(xy))
    # seam_transform(to_side): partner (this piece) frame -> to_side frame; tangent onto tangent,
    # this run's inward normal onto the to_side run's outward normal
    pa, ta, na = _frames(side.partner, side.partner_reverse, frac)
    pb, tb, nb = _frames(poly, side.reverse, frac)
    lin = np.einsum("mi,mj->mij", ta, tb) - np.einsum("mi,mj->mij", na, nb)
    off = pa - np.einsum("mij,mj->mi", lin, pb)
    carried = np.einsum("mij,mj->mi", lin, xy) + off
    return carried, lin, dist[np.arange(len(xy)), k]


def side_maps(side: SeamSide, step_mm: float) -> tuple[np.ndarray, np.ndarray, np.ndarray, float]:
    """Carry maps of ``side`` at seam points every ``step_mm``: seam points (K, 2) on this piece,
    linear parts (K, 2, 2), offsets (K, 2), and a bound (mm per mm of distance from the seam) on how
    much the map turns between two neighbouring samples (the run's largest turning per step)."""
    k = max(int(np.ceil(side.length / step_mm)), 1)
    frac = np.linspace(0.0, 1.0, k + 1)
    pa, ta, na = _frames(side.partner, side.partner_reverse, frac)
    pb, tb, nb = _frames(side.polyline, side.reverse, frac)
    lin = np.einsum("mi,mj->mij", ta, tb) - np.einsum("mi,mj->mij", na, nb)
    off = pa - np.einsum("mij,mj->mi", lin, pb)
    turn = 0.0
    for t in (ta, tb):
        if len(t) > 1:
            turn = max(turn, float(np.max(np.arccos(np.clip(np.einsum("ij,ij->i", t[1:], t[:-1]), -1, 1)))))
    return pb, lin, off, 2.0 * turn


def through_seam_distance(side: SeamSide, garment: Garment, xy_b: np.ndarray, xy_a: np.ndarray,
                          step_mm: float = 0.5) -> np.ndarray:
    """Pattern distance through the seam (m,) from points ``xy_b`` (m, 2) on ``side.piece`` to
    points ``xy_a`` (m, 2) on ``side.to_piece``: the shortest two straight pieces meeting at one
    seam point, min over seam points σ of |b − σ_b| + |σ_a − a| (seam sampled every ``step_mm``)."""
    k = max(int(np.ceil(side.length / step_mm)), 1)
    frac = np.linspace(0.0, 1.0, k + 1)
    sb = point_at_length(side.polyline, frac * side.length)
    sa = point_at_length(side.partner, frac * float(cumulative_length(side.partner)[-1]))
    db = np.linalg.norm(xy_b[:, None, :] - sb[None], axis=2)
    da = np.linalg.norm(xy_a[:, None, :] - sa[None], axis=2)
    best = np.argmin(db + da, axis=1)
    # refine around the best sample (the sum is smooth there): 41 points over its two neighbours
    lo = frac[np.maximum(best - 1, 0)]
    hi = frac[np.minimum(best + 1, k)]
    u = np.linspace(0.0, 1.0, 41)
    fr = (lo[:, None] + (hi - lo)[:, None] * u[None]).ravel()
    lb = float(cumulative_length(side.partner)[-1])
    fb = point_at_length(side.polyline, fr * side.length).reshape(len(xy_b), len(u), 2)
    fa = point_at_length(side.partner, fr * lb).reshape(len(xy_b), len(u), 2)
    tot = np.linalg.norm(xy_b[:, None, :] - fb, axis=2) + np.linalg.norm(xy_a[:, None, :] - fa, axis=2)
    return np.min(tot, axis=1)
