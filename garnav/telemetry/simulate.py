"""A simulated robot: drive a command list with sampled odometry errors on the garment and log what
its sensors report.

The robot's controller executes each command on its own sensors — a ``go`` until the encoders have
counted the distance while holding the gyro's heading, a ``turn`` until the gyro has turned by the
angle — so its sensors report the commanded motion (quantised to encoder ticks), while the true
motion carries the errors of :class:`~garnav.uncertainty.OdometryModel` (the same model the Monte
Carlo samples): distance scale and random walk, turn scale, gyro bias and angle random walk, and at
each planned crossing an unregistered heading jolt and slip. The true motion is integrated on a
fine time grid (``substeps`` per log interval) across seams through the garment's map
(:func:`~garnav.telemetry.drive.drive_increments`); the seam-bump flag marks the log interval in
which the true path crosses a seam. Commanded distance and heading are piecewise linear in time,
so their samples are exact (``numpy.interp`` over the phase boundaries).

Seam re-localisation is not simulated (the controller does not use the bump). If the true path
leaves the fabric, the log stops at the last interval before, and the result says so.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from garnav.export.commands import CommandList
from garnav.model import Garment, Robot
from garnav.telemetry.drive import OffFabric, drive_increments
from garnav.telemetry.logfile import TelemetryLog, Truth
from garnav.uncertainty.model import OdometryModel
from garnav.uncertainty.plan_ops import MotionPlan, compile_commands

__all__ = ["Simulation", "simulate_run", "commanded_profile", "wheel_mm_per_tick"]


@dataclass(frozen=True)
class Simulation:
    """A simulated run: the telemetry log, the ground truth at the log's rows, and what happened."""

    log: TelemetryLog
    truth: Truth
    plan: MotionPlan
    fell_off: str | None = None


def wheel_mm_per_tick(model: OdometryModel) -> tuple[float, float]:
    """(left, right) wheel travel per tick, mm: the nominal value split by the diameter ratio."""
    k, r = model.encoder_mm_per_tick, model.wheel_diameter_ratio
    return 2.0 * k / (1.0 + r), 2.0 * k * r / (1.0 + r)


def commanded_profile(plan: MotionPlan) -> tuple[np.ndarray, np.ndarray, np.ndarray, list[tuple[float, str]]]:
    """Phase boundaries: times (m,) s, cumulative distance (m,) mm, cumulative piece-frame heading
    change (m,) rad, and the crossings (time s, seam)."""
    t, s, h = [0.0], [0.0], [0.0]
    crossings = []
    for st in plan.steps:
        if st.kind == "cross":
            crossings.append((t[-1], st.seam))
            continue
        t.append(t[-1] + st.duration_s)
        s.append(s[-1] + st.length_mm)
        h.append(h[-1] + st.angle_rad)
    return np.array(t), np.array(s), np.array(h), crossings


def simulate_run(garment: Garment, robot: Robot, commands: CommandList, model: OdometryModel, *,
                 seed: int = 0, rate_hz: float = 10.0, substeps: int = 10, noise: bool = True) -> Simulation:
    """Simulate one run of ``commands`` (see the module notes).

    Parameters
    ----------
    garment, robot, commands
    model : OdometryModel
        The errors drawn (1σ) and the encoder settings.
    seed : int
    rate_hz : float
        Log rate (default 10 Hz).
    substeps : int
        Fine integration steps per log interval.
    noise : bool
        False: drive the plan exactly (for round-trip checks).

    Returns
    -------
    Simulation
    """
    plan = compile_commands(garment, commands, robot)
    rng = np.random.default_rng(seed)
    sign = 1.0 if plan.side == "outside" else -1.0
    tb, sb, hb, cross = commanded_profile(plan)
    duration = float(tb[-1])
    rows = max(2, int(math.ceil(duration * rate_hz - 1e-9)) + 1)
    dt = 1.0 / rate_hz
    t_log = np.arange(rows) * dt
    t_fine = np.arange((rows - 1) * substeps + 1) * (dt / substeps)
    S = np.interp(t_fine, tb, sb)
    H = np.interp(t_fine, tb, hb)
    ds_cmd, dh_cmd = np.diff(S), np.diff(H)
    fdt = dt / substeps
    piece, x0, y0, h0 = plan.start
    if noise:
        m = model
        es, et, b = (m.distance_scale_error * rng.standard_normal(), m.turn_scale_error * rng.standard_normal(),
                     m.gyro_bias_rad_s * rng.standard_normal())
        x0 += m.start_position_mm * rng.standard_normal()
        y0 += m.start_position_mm * rng.standard_normal()
        h0 += math.radians(m.start_heading_deg) * rng.standard_normal()
        ds = ds_cmd * (1.0 + es) + np.sqrt(m.distance_random_var_per_mm * np.abs(ds_cmd)) * rng.standard_normal(len(ds_cmd))
        dh = dh_cmd * (1.0 + et) - b * fdt - m.gyro_arw_rad_sqrt_s * math.sqrt(fdt) * rng.standard_normal(len(ds_cmd))
        for tc, _ in cross:  # unregistered jolt and slip at each planned crossing
            j = min(int(tc / fdt), len(ds) - 1)
            dh[j] += math.radians(m.seam_heading_deg) * rng.standard_normal()
            ds[j] += m.seam_distance_mm * rng.standard_normal()
    else:
        ds, dh = ds_cmd.copy(), dh_cmd.copy()
    planned = [st for st in plan.steps if st.kind == "cross"]
    fell = None
    try:
        path = drive_increments(garment, (piece, x0, y0, h0), ds, dh, planned)
        last = len(t_fine) - 1
    except OffFabric as exc:
        last = max(exc.sample, 0)
        fell = f"the simulated robot left the fabric at t = {t_fine[last]:.1f} s: {exc}"
        path = drive_increments(garment, (piece, x0, y0, h0), ds[:last], dh[:last], planned)
    keep_rows = last // substeps + 1
    idx = np.arange(keep_rows) * substeps
    # sensors: the commanded motion as the robot sees it (robot-view heading: sign flips inside)
    kl, kr = wheel_mm_per_tick(model)
    half_base = robot.wheel_base_mm / 2.0
    S_log, H_log = S[idx], sign * H[idx]
    left = np.round((S_log - half_base * H_log) / kl).astype(np.int64)
    right = np.round((S_log + half_base * H_log) / kr).astype(np.int64)
    full = 1 << int(model.encoder_bits)
    gyro = np.concatenate([[0.0], np.degrees(np.diff(H_log)) / dt])
    bump = np.zeros(keep_rows, dtype=bool)
    for c in path.crossings:
        r = int(math.ceil((c.sample + 1) / substeps))
        if r < keep_rows:
            bump[r] = True
    log = TelemetryLog(t_log[:keep_rows], left % full, right % full, gyro, bump, "<simulated>")
    truth = Truth(t_log[:keep_rows], tuple(path.piece_of(int(i)) for i in idx), path.xy[idx, 0], path.xy[idx, 1],
                  np.degrees(np.remainder(path.heading[idx] + math.pi, 2 * math.pi) - math.pi))
    return Simulation(log, truth, plan, fell)
