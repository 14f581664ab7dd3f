"""An independent check of a schedule: sample every robot every 10 ms and measure.

The checker does not use the planner's interval arithmetic. It interpolates each robot's timed
waypoints on its own, and at every sample measures

* the **gap** between every two robots: centre distance minus both radii, in the pattern through
  a seam where they are on two pieces joined by one: the shortest two straight pieces meeting at
  one seam point (:func:`garnav.fleet.unfold.through_seam_distance`, for robots within reach of
  the seam),
* the **keep-out margin** of every robot: distance from its centre to every hard keep-out of its
  piece (exact shape) minus its radius and the keep-out's clearance.

A schedule passes when no gap and no margin is below ``-tol_mm``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import shapely

from garnav.fleet.motion import Move
from garnav.fleet.schedule import RobotPlan, Schedule
from garnav.fleet.unfold import carry_points, seam_sides, through_seam_distance
from garnav.model import Garment

__all__ = ["CheckReport", "check_schedule", "sample_positions", "first_conflict", "DEFAULT_STEP_S"]

DEFAULT_STEP_S = 0.01


@dataclass(frozen=True)
class CheckReport:
    """Smallest distances found by :func:`check_schedule` (mm; times in s)."""

    step_s: float
    samples: int
    min_gap_mm: float
    gap_pair: tuple[str, str] | None
    gap_at_s: float | None
    min_keepout_margin_mm: float
    keepout: tuple[str, str] | None  # (robot, keep-out)
    keepout_at_s: float | None
    tol_mm: float = 1e-6

    @property
    def ok(self) -> bool:
        return self.min_gap_mm >= -self.tol_mm and self.min_keepout_margin_mm >= -self.tol_mm

    def text(self) -> str:
        pair = f" ({self.gap_pair[0]}–{self.gap_pair[1]} at {self.gap_at_s:.2f} s)" if self.gap_pair else ""
        ko = f" ({self.keepout[0]} at '{self.keepout[1]}', {self.keepout_at_s:.2f} s)" if self.keepout else ""
        return (f"check every {self.step_s * 1000:g} ms ({self.samples} samples): smallest gap between robots "
                f"{_mm(self.min_gap_mm)}{pair}; smallest keep-out margin {_mm(self.min_keepout_margin_mm)}{ko}: "
                + ("pass" if self.ok else "FAIL"))


def _mm(v: float) -> str:
    return "none (one robot)" if math.isinf(v) else f"{v:.2f} mm"


def sample_positions(plan: RobotPlan, times: np.ndarray) -> tuple[list[str], np.ndarray]:
    """Piece (per sample) and position (m, 2) of a robot at ``times`` from its waypoints alone."""
    wps = plan.waypoints()
    tw = np.array([w[0] for w in wps])
    xy = np.array([[w[2], w[3]] for w in wps])
    pieces = [w[1] for w in wps]
    k = np.clip(np.searchsorted(tw, times, side="right") - 1, 0, len(wps) - 1)
    out = xy[k].copy()
    nxt = np.minimum(k + 1, len(wps) - 1)
    same = np.array([pieces[a] == pieces[b] for a, b in zip(k, nxt, strict=False)]) & (nxt > k)
    dt = tw[nxt] - tw[k]
    move = same & (dt > 0)
    f = np.where(move, (times - tw[k]) / np.where(dt > 0, dt, 1.0), 0.0)
    f = np.clip(f, 0.0, 1.0)
    out[move] = xy[k[move]] + f[move, None] * (xy[nxt[move]] - xy[k[move]])
    return [pieces[i] for i in k], out


def _pair_distance(garment, sides, pa, xa, pb, xb, band) -> np.ndarray:
    """Fabric distance (m,) of two robots sampled at the same times."""
    pa_arr, pb_arr = np.array(pa), np.array(pb)
    out = np.where(pa_arr == pb_arr, np.hypot(*(xa - xb).T), np.inf)
    for first, second, x1, x2, _p1, p2 in ((pa_arr, pb_arr, xa, xb, pa, pb), (pb_arr, pa_arr, xb, xa, pb, pa)):
        for piece in set(p2):
            for sd in sides.get(piece, ()):
                sel = np.flatnonzero((second == piece) & (first == sd.to_piece))
                if not len(sel):
                    continue
                _, _, dist = carry_points(sd, x2[sel])
                near = sel[dist <= band]
                if len(near):
                    d = through_seam_distance(sd, garment, x2[near], x1[near])
                    out[near] = np.minimum(out[near], d)
    return out


def check_schedule(garment: Garment, schedule: Schedule, step_s: float = DEFAULT_STEP_S,
                   tol_mm: float = 1e-6) -> CheckReport:
    """Sample ``schedule`` every ``step_s`` from 0 to one step past the makespan and report the
    smallest robot–robot gap and keep-out margin."""
    plans = schedule.plans
    end = schedule.makespan_s + step_s
    times = np.arange(0.0, end + 0.5 * step_s, step_s)
    sampled = [sample_positions(p, times) for p in plans]
    sides = seam_sides(garment)
    best: tuple[float, tuple[str, str] | None, float | None] = (math.inf, None, None)
    for i in range(len(plans)):
        for j in range(i + 1, len(plans)):
            ri, rj = plans[i].robot.radius_mm, plans[j].robot.radius_mm
            band = ri + rj + 4 * schedule.gap_mm + 5.0
            d = _pair_distance(garment, sides, sampled[i][0], sampled[i][1], sampled[j][0], sampled[j][1], band)
            gap = d - ri - rj
            k = int(np.argmin(gap))
            if gap[k] < best[0]:
                best = (float(gap[k]), (plans[i].name, plans[j].name), float(times[k]))
    ko: tuple[float, tuple[str, str] | None, float | None] = (math.inf, None, None)
    hard = [k for k in garment.keepouts if k.hard]
    for p, (pieces, xy) in zip(plans, sampled, strict=False):
        pts = shapely.points(xy)
        parr = np.array(pieces)
        for ko_item in hard:
            sel = parr == ko_item.piece
            if not sel.any():
                continue
            dist = shapely.distance(ko_item.shape.exact_geometry(), pts[sel])
            margin = dist - p.robot.radius_mm - ko_item.clearance_mm
            m = int(np.argmin(margin))
            if margin[m] < ko[0]:
                ko = (float(margin[m]), (p.name, ko_item.name), float(times[sel][m]))
    return CheckReport(step_s, len(times), best[0], best[1], best[2], ko[0], ko[1], ko[2], tol_mm)


def first_conflict(garment: Garment, moves: list[Move], radius_mm: float, plans: list[RobotPlan],
                   gap_mm: float, step_s: float = 0.05):
    """First time a robot driving ``moves`` comes within ``gap_mm`` of one of ``plans``:
    (other robot, t s, piece, (2,) xy) or None."""
    from garnav.model import Robot

    probe = RobotPlan("probe", Robot(radius_mm=radius_mm), tuple(moves), 0.0, 0.0)
    end = max([probe.arrive_s] + [p.arrive_s for p in plans]) + step_s
    times = np.arange(0.0, end, step_s)
    pieces, xy = sample_positions(probe, times)
    sides = seam_sides(garment)
    first = None
    for p in plans:
        op, oxy = sample_positions(p, times)
        band = radius_mm + p.robot.radius_mm + 4 * gap_mm + 5.0
        d = _pair_distance(garment, sides, pieces, xy, op, oxy, band) - radius_mm - p.robot.radius_mm
        hit = np.flatnonzero(d < gap_mm)
        if len(hit) and (first is None or times[hit[0]] < first[1]):
            first = (p.name, float(times[hit[0]]), pieces[hit[0]], xy[hit[0]])
    return first
