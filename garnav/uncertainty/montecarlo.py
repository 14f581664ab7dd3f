"""Seeded, vectorised Monte Carlo of the odometry error model, and contact risk.

Each run draws the robot's constant errors (distance scale, turn scale, gyro bias) once, then drives
the compiled commands (:mod:`~garnav.uncertainty.plan_ops`) in sub-steps of at most ``step_mm``
with fresh random-walk increments, all runs at once as numpy arrays (one array element per run).
The model is the one :mod:`~garnav.uncertainty.propagate` linearises, but driven without
linearising: a heading error turns the whole remaining run, which bends the spread into the
"banana" that linear propagation misses (Thrun, Burgard & Fox, *Probabilistic Robotics*, §5.4,
fig. 5.3).

Contact: after every sub-step each run's disc (radius ``robot.radius_mm``) is tested against each
keep-out of the piece it is on (the zone itself, not its planning clearance: the disc touches it when
its centre is within the radius), against keep-outs just across a seam (mapped over by the seam's
linearised mapping, :meth:`RiskMap._across_seams`) and against the piece's open edges (hems, cuffs, necklines,
openings: the disc reaches the edge when its centre is within the radius of it). A run counts as
touching once. Sub-steps of 5 mm against a 20 mm disc miss only grazes shallower than about
0.2 mm (the sagitta of a 5 mm chord of a 20 mm circle, 5²/(8·20) mm).

Probabilities come with a 95 % Wilson score interval (Wilson, *JASA* 22, 1927; Brown, Cai &
DasGupta, *Statistical Science* 16(2), 2001).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import shapely
import shapely.affinity

from garnav.model import Garment, Robot
from garnav.export.seams import seam_transfer
from garnav.polyline import sub_polyline
from garnav.uncertainty.model import OdometryModel
from garnav.uncertainty.plan_ops import MotionPlan, rigid_map

__all__ = ["RiskMap", "MonteCarlo", "monte_carlo", "wilson_interval", "DEFAULT_STEP_MM"]

DEFAULT_STEP_MM = 5.0
OPEN_EDGE = "open edge"


@dataclass(frozen=True)
class _Region:
    name: str
    hard: bool
    geom: shapely.Geometry
    bounds: tuple[float, float, float, float]


class RiskMap:
    """Per piece, the places where a robot's centre means contact: keep-outs and open edges grown by
    the radius. Built once per (garment, robot); holds prepared geometries."""

    def __init__(self, garment: Garment, robot: Robot, quad_segs: int = 16):
        r = float(robot.radius_mm)
        # buffer undercuts the round offset by r·(1 − cos(π/(4q))): grow by r / cos (DESIGN.md)
        grow = r / math.cos(math.pi / (4 * quad_segs))
        self.regions: dict[str, list[_Region]] = {p.name: [] for p in garment.pieces}
        for k in garment.keepouts:
            g = k.shape.exact_geometry().buffer(grow, quad_segs=quad_segs)
            shapely.prepare(g)
            self.regions[k.piece].append(_Region(k.name, k.hard, g, tuple(g.bounds)))
        self._across_seams(garment, grow, quad_segs)
        lines: dict[str, list] = {p.name: [] for p in garment.pieces}
        for run in garment.open_runs():
            pts = sub_polyline(garment.piece(run.piece).edge(run.edge).array, run.from_mm, run.to_mm)
            lines[run.piece].append(shapely.LineString(pts))
        for p in garment.pieces:
            for o in p.openings:
                lines[p.name].append(shapely.LinearRing(o.array))
            if lines[p.name]:
                g = shapely.union_all(lines[p.name]).buffer(grow, quad_segs=quad_segs)
                shapely.prepare(g)
                self.regions[p.name].append(_Region(OPEN_EDGE, True, g, tuple(g.bounds)))
        self.names = tuple(sorted({reg.name for regs in self.regions.values() for reg in regs}))

    def _across_seams(self, garment: Garment, grow: float, quad_segs: int) -> None:
        """Keep-outs within reach of a seam, mapped into the piece on its other side.

        A disc near a seam can touch a zone just across it. The part of the zone (grown by the
        radius) within reach of each run segment is carried over by the seam's mapping linearised at
        that segment's point nearest to the zone (the rigid motion of
        :func:`garnav.export.seams.seam_transfer`), and added to the other piece's regions under its
        own name.
        """
        for seam in garment.seams:
            for side, run in (("a", seam.a), ("b", seam.b)):
                other = seam.b if side == "a" else seam.a
                if other.piece == run.piece:
                    continue
                pts = garment.run_polyline(run)
                line = shapely.LineString(pts)
                for k in garment.keepouts_on(run.piece):
                    zone = k.shape.exact_geometry()
                    if shapely.distance(zone, line) >= grow:
                        continue
                    grown = zone.buffer(grow, quad_segs=quad_segs)
                    parts = []
                    # segment by segment: the seam's mapping, linearised at the segment's point
                    # nearest the zone, holds near that segment — not across a whole large zone
                    # (a body zone can span a panel and reach a curved armhole along its length)
                    for a, b in zip(pts[:-1], pts[1:], strict=True):
                        seg = shapely.LineString([a, b])
                        if shapely.distance(zone, seg) >= grow:
                            continue
                        q = shapely.get_coordinates(shapely.shortest_line(seg, zone))[0]
                        tr = seam_transfer(garment, seam, side, q)  # type: ignore[arg-type]
                        c, s_ = math.cos(tr.rotation_rad), math.sin(tr.rotation_rad)
                        px, py = float(tr.point_from[0]), float(tr.point_from[1])
                        tx, ty = float(tr.point_to[0]), float(tr.point_to[1])
                        # p ↦ R(p − from) + to, as shapely's [a, b, d, e, xoff, yoff]
                        mat = [c, -s_, s_, c, tx - (c * px - s_ * py), ty - (s_ * px + c * py)]
                        near = grown.intersection(seg.buffer(grow, quad_segs=quad_segs))
                        parts.append(shapely.affinity.affine_transform(near, mat))
                    if not parts:
                        continue
                    g = shapely.union_all(parts)
                    shapely.prepare(g)
                    self.regions[tr.to_piece].append(_Region(k.name, k.hard, g, tuple(g.bounds)))

    def touch(self, piece: str, x: np.ndarray, y: np.ndarray, hits: dict[str, np.ndarray]) -> None:
        """OR into ``hits[name]`` (N,) bool whether each centre (x, y) (N,) mm is in contact."""
        if not len(x):
            return
        x0, x1, y0, y1 = float(x.min()), float(x.max()), float(y.min()), float(y.max())
        for reg in self.regions.get(piece, ()):
            b = reg.bounds
            if x1 < b[0] or x0 > b[2] or y1 < b[1] or y0 > b[3]:
                continue
            hits[reg.name] |= shapely.contains_xy(reg.geom, x, y)


def wilson_interval(hits: int, n: int, z: float = 1.959963984540054) -> tuple[float, float]:
    """95 % Wilson score interval of a binomial proportion.

    >>> lo, hi = wilson_interval(0, 10000); round(hi, 6)
    0.000384
    """
    if n <= 0:
        return 0.0, 1.0
    p = hits / n
    den = 1.0 + z * z / n
    mid = (p + z * z / (2 * n)) / den
    half = z * math.sqrt(p * (1 - p) / n + z * z / (4 * n * n)) / den
    return max(0.0, mid - half), min(1.0, mid + half)


@dataclass(frozen=True)
class MonteCarlo:
    """Result of :func:`monte_carlo`.

    Attributes
    ----------
    end : (N, 3) array
        End pose of every run: x mm, y mm, heading rad (end piece frame).
    contact : dict name -> (N,) bool
        Per keep-out (and ``"open edge"``), which runs touched it.
    hard : dict name -> bool
        Whether the zone is hard (open edges are).
    cross_track_sigma_mm : float
        Largest 1σ spread of the runs across the nominal travel direction along the route, mm.
    runs, seed : int
    """

    end: np.ndarray
    contact: dict[str, np.ndarray]
    hard: dict[str, bool]
    cross_track_sigma_mm: float
    runs: int
    seed: int

    @property
    def end_covariance(self) -> np.ndarray:
        """(3, 3) sample covariance of the end pose."""
        return np.cov(self.end.T)

    @property
    def any_contact(self) -> np.ndarray:
        """(N,) bool: the run touched a hard keep-out or an open edge."""
        out = np.zeros(self.runs, dtype=bool)
        for name, hit in self.contact.items():
            if self.hard[name]:
                out |= hit
        return out

    def probability(self, name: str | None = None) -> float:
        """Contact probability of one zone, or overall (None: any hard zone or open edge)."""
        hit = self.any_contact if name is None else self.contact[name]
        return float(np.count_nonzero(hit)) / self.runs

    def interval(self, name: str | None = None) -> tuple[float, float]:
        hit = self.any_contact if name is None else self.contact[name]
        return wilson_interval(int(np.count_nonzero(hit)), self.runs)


def monte_carlo(
    plan: MotionPlan,
    model: OdometryModel,
    risk: RiskMap | None = None,
    *,
    runs: int = 10_000,
    seed: int = 0,
    step_mm: float = DEFAULT_STEP_MM,
    relocalise: bool | None = None,
) -> MonteCarlo:
    """Drive ``plan`` ``runs`` times with sampled errors.

    Parameters
    ----------
    plan : MotionPlan
    model : OdometryModel
    risk : RiskMap, optional
        Without it no contacts are computed.
    runs : int
    seed : int
        Seed of ``numpy.random.default_rng``: equal seeds give equal results.
    step_mm : float
        Longest sub-step of a straight run, mm.
    relocalise : bool, optional
        Override ``model.seam_relocalise``.

    Returns
    -------
    MonteCarlo
    """
    if runs < 2:
        raise ValueError("runs must be at least 2")
    reloc = model.seam_relocalise if relocalise is None else relocalise
    rng = np.random.default_rng(seed)
    n = int(runs)
    _, x0, y0, h0 = plan.start
    x = x0 + model.start_position_mm * rng.standard_normal(n)
    y = y0 + model.start_position_mm * rng.standard_normal(n)
    th = h0 + math.radians(model.start_heading_deg) * rng.standard_normal(n)
    es = model.distance_scale_error * rng.standard_normal(n)
    et = model.turn_scale_error * rng.standard_normal(n)
    b = model.gyro_bias_rad_s * rng.standard_normal(n)
    arw = model.gyro_arw_rad_sqrt_s
    qd = model.distance_random_var_per_mm
    names = risk.names if risk is not None else ()
    hits = {name: np.zeros(n, dtype=bool) for name in names}
    hard = {name: True for name in names}
    if risk is not None:
        for regs in risk.regions.values():
            for reg in regs:
                hard[reg.name] = reg.hard
        risk.touch(plan.start[0], x, y, hits)
    spread = 0.0
    for st in plan.steps:
        if st.kind == "go":
            k = max(1, math.ceil(st.length_mm / step_mm))
            h = st.length_mm / k
            dt = st.duration_s / k
            c, s = math.cos(st.heading), math.sin(st.heading)
            sd_ds = math.sqrt(qd * h)
            sd_dth = arw * math.sqrt(dt)
            for j in range(k):
                dth = -b * dt
                if sd_dth > 0:
                    dth = dth - sd_dth * rng.standard_normal(n)
                ds = h * (1.0 + es)
                if sd_ds > 0:
                    ds = ds + sd_ds * rng.standard_normal(n)
                mid = th + 0.5 * dth
                x = x + ds * np.cos(mid)
                y = y + ds * np.sin(mid)
                th = th + dth
                if risk is not None:
                    risk.touch(st.piece, x, y, hits)
                nx, ny = st.x + (j + 1) * h * c, st.y + (j + 1) * h * s
                spread = max(spread, float(np.std(-(x - nx) * s + (y - ny) * c)))
        elif st.kind == "turn":
            th = th + st.angle_rad * (1.0 + et) - b * st.duration_s
            if arw > 0 and st.duration_s > 0:
                th = th - arw * math.sqrt(st.duration_s) * rng.standard_normal(n)
        else:
            if model.seam_distance_mm > 0:
                slip = model.seam_distance_mm * rng.standard_normal(n)
                x, y = x + slip * np.cos(th), y + slip * np.sin(th)
            if model.seam_heading_deg > 0:
                th = th + math.radians(model.seam_heading_deg) * rng.standard_normal(n)
            if reloc:
                t = st.tangent
                nrm = (-t[1], t[0])
                ux, uy = np.cos(th), np.sin(th)
                un = ux * nrm[0] + uy * nrm[1]
                ok = np.abs(un) > 1e-9
                tt = np.where(ok, ((st.x - x) * nrm[0] + (st.y - y) * nrm[1]) / np.where(ok, un, 1.0), 0.0)
                x, y = x + tt * ux, y + tt * uy
            R, pf, pt = rigid_map(st)
            dx, dy = x - pf[0], y - pf[1]
            x = R[0, 0] * dx + R[0, 1] * dy + pt[0]
            y = R[1, 0] * dx + R[1, 1] * dy + pt[1]
            th = th + st.rotation_rad
    end = np.column_stack([x, y, th])
    return MonteCarlo(end, hits, hard, spread, n, int(seed))
