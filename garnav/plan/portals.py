"""Seam portals: the places along a crossable seam where the robot may cross, and the angle rule.

A portal is a fraction ``t`` of a seam at which the robot centre fits on BOTH sides: the point of
run ``a`` at ``t`` is free on piece a and the point of run ``b`` at ``t`` (the same 3D point) is
free on piece b. Portals are spread along every free interval of the seam, ``spacing_mm`` apart,
with at least one (its middle) on every interval, so that no passable stretch is missed. Each
crossing of a found route is afterwards slid along its seam to the locally shortest position
(:mod:`garnav.plan.refine`), so the spacing limits build size, not route length.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from garnav.model import Garment, Seam
from garnav.plan.freespace import FreeSpace
from garnav.polyline import cumulative_length, point_at_length, tangent_at

INSET_MM = 1e-7

#: Most portals one seam gets. Portals on a piece are linked pairwise by visibility, so the graph
#: grows with the square of a seam's length over the spacing: a 30 m seam at 20 mm was 1,500 portals
#: a side, 2.3 million edges, 1.7 GB and 20 s of build. Above ``MAX_PORTALS_PER_SEAM × spacing``
#: (5 m at the default 20 mm) the spacing grows with the seam instead (:func:`seam_spacing_mm`);
#: crossings are slid to their locally shortest place afterwards (:mod:`garnav.plan.refine`), so
#: this bounds the build, not the route length.
MAX_PORTALS_PER_SEAM = 250
#: Most samples of the fit test along one seam (:func:`free_intervals`): 0.5 mm steps up to 50 m.
MAX_FIT_SAMPLES = 100_000

__all__ = ["INSET_MM", "MAX_PORTALS_PER_SEAM", "MAX_FIT_SAMPLES", "SeamSides", "approach_points", "seam_sides",
           "free_intervals", "portal_fractions", "seam_spacing_mm", "angle_ok"]


def seam_spacing_mm(length_mm: float, spacing_mm: float, max_portals: int = MAX_PORTALS_PER_SEAM) -> float:
    """The portal spacing (mm) on a seam ``length_mm`` long: ``spacing_mm``, or wider on a seam so
    long that it would get more than ``max_portals`` portals.

    >>> seam_spacing_mm(800.0, 20.0), seam_spacing_mm(30000.0, 20.0)
    (20.0, 120.0)
    """
    return max(float(spacing_mm), float(length_mm) / int(max_portals))


@dataclass(frozen=True)
class SeamSides:
    """Sampled geometry of one seam: both runs at common fractions.

    Attributes
    ----------
    seam : Seam
    t : (m,) fractions, increasing from 0 to 1
    a_xy, b_xy : (m, 2) points of run a / run b (each in its own piece frame), mm
    a_tan, b_tan : (m, 2) unit tangents of run a / run b (travel direction)
    a_in, b_in : (m, 2) unit inward normals (into the run's own piece)
    length_a : float, mm
    """

    seam: Seam
    t: np.ndarray
    a_xy: np.ndarray
    b_xy: np.ndarray
    a_tan: np.ndarray
    b_tan: np.ndarray
    a_in: np.ndarray
    b_in: np.ndarray
    length_a: float

    def side(self, k: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """(points, tangents, inward normals) of run a (k = 0) or run b (k = 1)."""
        return (self.a_xy, self.a_tan, self.a_in) if k == 0 else (self.b_xy, self.b_tan, self.b_in)


def _tangents(pts: np.ndarray, t: np.ndarray) -> np.ndarray:
    """Unit tangents (m, 2) of the run ``pts`` at fractions ``t`` (m,) of its length."""
    return tangent_at(pts, np.clip(np.asarray(t, dtype=float), 0.0, 1.0) * cumulative_length(pts)[-1])


def seam_sides(
    garment: Garment,
    seam: Seam,
    t: np.ndarray,
    inset_mm: float = INSET_MM,
    runs: tuple[np.ndarray, np.ndarray] | None = None,
) -> SeamSides:
    """Points and tangents of both runs of ``seam`` at fractions ``t`` (m,).

    ``runs`` are the run polylines ``(garment.run_polyline(seam.a), garment.run_polyline(seam.b))``
    when the caller keeps them (the navigation graph does: :attr:`NavGraph.run_points`).

    Each point is moved ``inset_mm`` into its own piece along the inward normal: a point computed
    on a slanted or curved edge may otherwise land a rounding error outside the piece polygon, and
    exact predicates would then call it blocked. The two points of a crossing are therefore
    2 × ``inset_mm`` apart in 3D (2e-7 mm by default).
    """
    t = np.asarray(t, dtype=float)
    out = []
    if runs is None:
        runs = (garment.run_polyline(seam.a), garment.run_polyline(seam.b))
    for run, pts in zip((seam.a, seam.b), runs, strict=False):
        length = cumulative_length(pts)[-1]
        tan = _tangents(pts, t)
        inward = np.stack([-tan[:, 1], tan[:, 0]], axis=1) * (-1.0 if run.reverse else 1.0)
        xy = point_at_length(pts, t * length).reshape(-1, 2) + inset_mm * inward
        out.append((xy, tan, inward, float(length)))
    (a_xy, a_tan, a_in, la), (b_xy, b_tan, b_in, _) = out
    return SeamSides(seam, t, a_xy, b_xy, a_tan, b_tan, a_in, b_in, la)


def approach_points(
    xy: np.ndarray, tangent: np.ndarray, inward: np.ndarray, min_angle_deg: float | np.ndarray, length_mm: float
) -> np.ndarray:
    """The two ends of the straight approach to a crossing at the smallest allowed angle.

    A robot crossing a seam drives straight over it at an angle of at least ``min_angle_deg`` to
    the seam tangent for ``length_mm`` (the robot radius: the whole disc crosses the ridge on
    that straight); beyond, it may turn. If the next point is outside that cone, the shortest way
    leaves along one of its two edges for exactly ``length_mm`` (going further along a straight
    line that does not point at the target only adds length). Returns (m, 2, 2): for each crossing
    point (m, 2) the points at directions ``min_angle`` and ``180° − min_angle`` from the tangent,
    on the piece's side. For 90° both coincide. ``min_angle_deg`` may be a scalar or (m, 1).
    """
    a = np.radians(np.asarray(min_angle_deg, dtype=float))
    out = []
    for phi in (a, np.pi - a):
        u = np.cos(phi) * tangent + np.sin(phi) * inward
        out.append(xy + length_mm * u)
    return np.stack(out, axis=1)


def free_intervals(
    garment: Garment,
    seam: Seam,
    free: FreeSpace,
    step_mm: float = 0.5,
    runs: tuple[np.ndarray, np.ndarray] | None = None,
) -> list[tuple[float, float]]:
    """Fraction intervals ``[t0, t1]`` of ``seam`` where the robot fits on both sides.

    Sampled every ``step_mm`` along run a (at most :data:`MAX_FIT_SAMPLES` samples: on a seam
    longer than 50 m the step grows); all interval ends are then bisected together (one batched fit
    test per step, 40 steps: 1e-12 of the sample gap).
    """
    la = garment.run_length(seam.a)
    m = min(max(int(math.ceil(la / step_mm)) + 1, 3), MAX_FIT_SAMPLES)
    t = np.linspace(0.0, 1.0, m)
    ok = _fits(garment, seam, free, t, runs)
    if not ok.any():
        return []
    change = np.nonzero(ok[1:] != ok[:-1])[0]  # ok[k] != ok[k + 1]
    # every change is bracketed by (bad, good) sample fractions; bisect them all at once
    good = np.where(ok[change], t[change], t[change + 1])
    bad = np.where(ok[change], t[change + 1], t[change])
    for _ in range(40):
        if not len(change):
            break
        mid = 0.5 * (bad + good)
        fit = _fits(garment, seam, free, mid, runs)
        good = np.where(fit, mid, good)
        bad = np.where(fit, bad, mid)
    ends = dict(zip(change.tolist(), good.tolist(), strict=False))
    out = []
    k = 0
    while k < m:
        if not ok[k]:
            k += 1
            continue
        j = k
        while j + 1 < m and ok[j + 1]:
            j += 1
        lo = ends[k - 1] if k > 0 else float(t[k])
        hi = ends[j] if j < m - 1 else float(t[j])
        out.append((float(lo), float(hi)))
        k = j + 1
    return out


def _fits(garment: Garment, seam: Seam, free: FreeSpace, t: np.ndarray, runs=None) -> np.ndarray:
    sides = seam_sides(garment, seam, t, runs=runs)
    return free[seam.a.piece].covers(sides.a_xy) & free[seam.b.piece].covers(sides.b_xy)


def portal_fractions(intervals: list[tuple[float, float]], length_mm: float, spacing_mm: float) -> np.ndarray:
    """Portal fractions: every interval split into pieces at most ``spacing_mm`` long, both ends
    and the middle of each included. Sorted, unique; (p,) float.

    >>> portal_fractions([(0.0, 0.5), (0.8, 0.9)], 100.0, 25.0).tolist()
    [0.0, 0.25, 0.5, 0.8, 0.85, 0.9]
    """
    out = []
    for lo, hi in intervals:
        n = max(int(math.ceil((hi - lo) * length_mm / spacing_mm)), 1)
        out.extend(np.linspace(lo, hi, n + 1).tolist())
        out.append(0.5 * (lo + hi))
    return np.unique(np.round(np.array(out, dtype=float), 12))


def angle_ok(direction: np.ndarray, tangent: np.ndarray, min_angle_deg) -> np.ndarray:
    """Whether segments with ``direction`` (..., 2) make at least ``min_angle_deg`` (scalar or
    array broadcasting against (...)) with the seam ``tangent`` (..., 2, unit). Zero-length
    directions pass. Returns bool (...).
    """
    amin = np.asarray(min_angle_deg, dtype=float)
    dot = np.abs((direction * tangent).sum(-1))
    norm = np.linalg.norm(direction, axis=-1)
    return (amin <= 0) | (dot <= norm * np.cos(np.radians(amin)) + 1e-12 * norm)


def crossing_angle_deg(direction: np.ndarray, tangent: np.ndarray) -> float:
    """Angle (0..90°) between a route direction (2,) and a seam tangent (2,)."""
    n = float(np.linalg.norm(direction))
    if n == 0:
        return 90.0
    c = min(abs(float(np.dot(direction, tangent))) / n, 1.0)
    return math.degrees(math.acos(c))
