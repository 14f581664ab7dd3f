"""A telemetry log back into a track on the pattern, and its error against a plan.

Distance comes from the wheel encoders (mean of the two wheels' unwrapped tick differences times
their travel per tick), heading from the gyro (rate × interval, the rate being the interval's mean),
integrated on the garment across seams (:func:`~garnav.telemetry.drive.drive_increments`): where the
robot believes it went — dead reckoning cannot see its own drift (compare with the simulator's
ground truth, or an external reference, for that).

Against a plan (a compiled command list): each track point is projected onto the plan's straight
runs on the same piece. Cross-track error is the signed distance to the nearest run (left of the
travel direction positive); along-track error is the plan's arc length at the projection minus the
distance the plan has driven at that time (track ahead of schedule: positive).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from garnav.model import Garment, Robot
from garnav.telemetry.drive import DrivenPath, OffFabric, drive_increments
from garnav.telemetry.logfile import TelemetryError, TelemetryLog, unwrap_ticks
from garnav.telemetry.simulate import commanded_profile, wheel_mm_per_tick
from garnav.uncertainty.model import OdometryModel
from garnav.uncertainty.plan_ops import MotionPlan

__all__ = ["Track", "PlanError", "track_log", "compare_to_plan", "MAX_SPEED_FACTOR"]

#: Tick differences implying more than this many times the robot's cruise speed (+ 100 mm/s) are refused.
MAX_SPEED_FACTOR = 10.0


@dataclass(frozen=True)
class Track:
    """A replayed log: ``time_s`` (n,) and the driven path (n poses)."""

    time_s: np.ndarray
    path: DrivenPath
    source: str


@dataclass(frozen=True)
class PlanError:
    """Track vs plan, per track point: along and cross (n,) mm (NaN on a piece the plan does not
    visit), the tolerance and the first time either leaves it (None: never)."""

    along_mm: np.ndarray
    cross_mm: np.ndarray
    tolerance_mm: float
    first_out_s: float | None

    @property
    def max_cross_mm(self) -> float:
        return float(np.nanmax(np.abs(self.cross_mm))) if np.isfinite(self.cross_mm).any() else math.nan

    @property
    def max_along_mm(self) -> float:
        return float(np.nanmax(np.abs(self.along_mm))) if np.isfinite(self.along_mm).any() else math.nan


def track_log(garment: Garment, robot: Robot, log: TelemetryLog, start: tuple[str, float, float],
              heading_deg: float, model: OdometryModel | None = None, plan: MotionPlan | None = None) -> Track:
    """Integrate ``log`` from ``start`` (piece, x mm, y mm) facing ``heading_deg`` (piece frame).

    With ``plan``, crossings near its planned ones use their mapping (see
    :func:`~garnav.telemetry.drive.drive_increments`).

    Raises
    ------
    TelemetryError
        Naming the log and the row: impossible tick jumps (wrap-around the counter width cannot
        explain), a start outside the fabric, or a track that leaves the fabric. No partial track.
    """
    model = model or robot.odometry or OdometryModel()
    dt = np.diff(log.time_s)
    kl, kr = wheel_mm_per_tick(model)
    max_step = (MAX_SPEED_FACTOR * robot.speed_mm_s + 100.0) * float(dt.max()) / min(kl, kr)
    dl = unwrap_ticks(log.left_ticks, model.encoder_bits, log.source, "left_ticks", max_step)
    dr = unwrap_ticks(log.right_ticks, model.encoder_bits, log.source, "right_ticks", max_step)
    ds = 0.5 * (dl * kl + dr * kr)
    sign = 1.0 if robot.side == "outside" else -1.0
    dth = sign * np.radians(log.gyro_z_deg_s[1:]) * dt
    piece, x, y = start
    try:
        planned = [st for st in plan.steps if st.kind == "cross"] if plan is not None else []
        path = drive_increments(garment, (piece, float(x), float(y), math.radians(heading_deg)), ds, dth, planned)
    except OffFabric as exc:
        if exc.sample < 0:
            raise TelemetryError(f"{log.source}: --start {piece}:{x:g},{y:g}: {exc}") from None
        n = exc.sample + 2
        raise TelemetryError(f"{log.source}: row {n} (line {n + 1}): the track leaves the fabric: {exc}; "
                             f"no track written") from None
    return Track(np.asarray(log.time_s, dtype=float), path, log.source)


def compare_to_plan(track: Track, plan: MotionPlan, tolerance_mm: float = 10.0) -> PlanError:
    """Along- and cross-track error of ``track`` against ``plan`` (see the module notes)."""
    runs = [st for st in plan.steps if st.kind == "go"]
    path = track.path
    n = len(path.xy)
    along = np.full(n, np.nan)
    cross = np.full(n, np.nan)
    tb, sb, _, _ = commanded_profile(plan)
    due = np.interp(track.time_s, tb, sb)
    for pi, name in enumerate(path.pieces):
        sel = np.flatnonzero(path.piece_index == pi)
        segs = [st for st in runs if st.piece == name]
        if not len(sel) or not segs:
            continue
        a = np.array([[st.x, st.y] for st in segs])
        u = np.array([[math.cos(st.heading), math.sin(st.heading)] for st in segs])
        L = np.array([st.length_mm for st in segs])
        s0 = np.array([st.travelled_mm for st in segs])
        q = path.xy[sel]
        rel = q[:, None, :] - a[None, :, :]
        t = np.clip(np.einsum("nmk,mk->nm", rel, u), 0.0, L[None, :])
        foot = a[None] + t[..., None] * u[None]
        dist = np.hypot(*(q[:, None, :] - foot).transpose(2, 0, 1))
        k = np.argmin(dist, axis=1)
        rows = np.arange(len(sel))
        cross[sel] = rel[rows, k, 1] * u[k, 0] - rel[rows, k, 0] * u[k, 1]
        cross[sel] = np.where(np.abs(cross[sel]) >= dist[rows, k] - 1e-9, cross[sel], np.sign(cross[sel] + 1e-300) * dist[rows, k])
        along[sel] = s0[k] + t[rows, k] - due[sel]
    out = ~(np.abs(cross) <= tolerance_mm) | ~(np.abs(along) <= tolerance_mm)
    first = np.flatnonzero(out)
    return PlanError(along, cross, float(tolerance_mm), float(track.time_s[first[0]]) if len(first) else None)
