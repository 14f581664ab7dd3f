"""Static force balance of a magnet-held two-wheeled robot on an inclined surface.

The robot stands on a surface whose unit normal ``n`` points from the fabric to the robot, with
unit gravity direction ``ĝ`` and weight W = m g. θ is the angle between ``n`` and "up" (−ĝ), ψ the
heading of travel measured from the uphill direction in the surface. The balance is the statics
textbook's block on an inclined plane (e.g. Meriam & Kraige, *Engineering Mechanics: Statics*,
friction chapter) with the magnet's pull F added to the normal load, as the wall-climbing robot
literature models magnetic adhesion (e.g. Shen, Shi and Yin, *Design of a permanent magnetic
adhesion wall-climbing robot*; the friction-circle/hold conditions are the same as there):

* normal load          N = F + W cos θ                 (hold lost when N ≤ 0)
* along-track need     T = W sin θ cos ψ + C_rr N      (rolling resistance scales with N)
* side load            S = W sin θ |sin ψ|
* no slip while        √(T² + S²) ≤ μ N                 (friction circle)
* drive                |T| ≤ F_drive                     (the drive also brakes downhill)

At rest (the robot stops and turns in place at every waypoint, so it may face any heading) the
tyres must resist W sin θ (no slip while W sin θ ≤ μ N); the drive is assumed to hold the robot at
rest (a brake or a self-locking gear). Margins are available over needed force:
grip = min(μN/√(T²+S²), μN/(W sin θ)), hold = F / (W max(−cos θ, 0)) (only on an overhang),
drive = F_drive/|T|; ``inf`` when nothing is needed.

For a planner the same conditions read as limits on cos ψ (:func:`heading_limits`): a segment is
drivable when c_lo ≤ cos ψ ≤ c_hi, which is what makes switchbacks (Rowe & Ross 1990, see
:mod:`garnav.mechanics.planning`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Balance", "force_balance", "HeadingLimits", "heading_limits", "slope_terms"]


@dataclass(frozen=True, eq=False)
class Balance:
    """Per-segment forces (N) and margins (unitless, ``inf`` = nothing needed); all (k,) arrays.

    ``cos_theta``: cosine of the angle between the support normal and up; ``along``: sin θ cos ψ
    (positive climbing); ``side``: sin θ |sin ψ|.
    """

    cos_theta: np.ndarray
    along: np.ndarray
    side: np.ndarray
    normal_n: np.ndarray
    track_n: np.ndarray
    side_n: np.ndarray
    grip_margin: np.ndarray
    hold_margin: np.ndarray
    drive_margin: np.ndarray


def _ratio(avail: np.ndarray, need: np.ndarray) -> np.ndarray:
    need = np.abs(need)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = np.where(need > 1e-12, avail / np.where(need > 1e-12, need, 1.0), np.inf)
    return out


def slope_terms(normal: np.ndarray, tangent: np.ndarray, gravity: np.ndarray) -> tuple[np.ndarray, ...]:
    """cos θ, sin θ cos ψ (along, + climbing) and sin θ |sin ψ| (side) for (k, 3) unit normals and
    tangents and a (3,) unit gravity direction."""
    g = np.asarray(gravity, dtype=float)
    cos_t = -(normal @ g)
    along = -(tangent @ g)
    side = np.abs(np.cross(normal, tangent) @ g)
    return cos_t, along, side


def force_balance(
    normal: np.ndarray,
    tangent: np.ndarray,
    gravity: np.ndarray,
    weight_n: float,
    magnet_n: np.ndarray | float,
    mu: float,
    c_rr: float,
    drive_n: float,
) -> Balance:
    """The force balance of the module docstring for k segments.

    Parameters
    ----------
    normal, tangent : (k, 3) float arrays
        Unit support normal (fabric → robot) and unit travel direction, in one frame.
    gravity : (3,) float array
        Unit gravity direction in that frame.
    weight_n : float
        m g, N.
    magnet_n : float or (k,) array
        Magnet holding force, N.
    mu, c_rr : float
        Friction and rolling resistance coefficients.
    drive_n : float
        Largest tractive (and braking) force of the drive, N.
    """
    cos_t, along, side = slope_terms(normal, tangent, gravity)
    sin_t = np.sqrt(np.clip(1.0 - cos_t**2, 0.0, None))
    w = float(weight_n)
    f = np.broadcast_to(np.asarray(magnet_n, dtype=float), cos_t.shape)
    n = f + w * cos_t
    n_pos = np.clip(n, 0.0, None)
    t = w * along + c_rr * n_pos
    s = w * side
    friction = mu * n_pos
    grip = np.minimum(_ratio(friction, np.hypot(t, s)), _ratio(friction, w * sin_t))
    grip = np.where(n > 0, grip, 0.0)
    hold = _ratio(f, w * np.clip(-cos_t, 0.0, None))
    drive = _ratio(np.full_like(t, drive_n), t)
    return Balance(cos_t, along, side, n, t, s, grip, hold, drive)


@dataclass(frozen=True, eq=False)
class HeadingLimits:
    """Where a robot may drive on k surface patches.

    ``blocked`` (k,) bool: no heading is safe (hold lost, or the robot cannot stand there).
    ``c_lo``, ``c_hi`` (k,): a heading ψ from uphill is safe when c_lo ≤ cos ψ ≤ c_hi (clipped
    to [−1, 1]); ``sin_theta`` (k,): the surface slope's sine.
    """

    blocked: np.ndarray
    c_lo: np.ndarray
    c_hi: np.ndarray
    sin_theta: np.ndarray


def heading_limits(
    normal: np.ndarray,
    gravity: np.ndarray,
    weight_n: float,
    magnet_n: np.ndarray | float,
    mu: float,
    c_rr: float,
    drive_n: float,
    safety: float,
    drive_safety: float,
) -> HeadingLimits:
    """The safe headings on k patches of unit support normal ``normal`` (k, 3).

    With the margins required to be at least ``safety`` (grip, hold) and ``drive_safety``
    (drive), the conditions of the module docstring solved for c = cos ψ:

    * drive: (−F_d/s_d − C N)/(W sin θ) ≤ c ≤ (F_d/s_d − C N)/(W sin θ);
    * grip:  c ≤ ((μN/s)² − W² sin²θ − C²N²) / (2 W sin θ C N)  (no limit when C = 0);
    * rest:  W sin θ ≤ μ N / s; hold: F ≥ s W max(−cos θ, 0).
    """
    g = np.asarray(gravity, dtype=float)
    cos_t = -(normal @ g)
    sin_t = np.sqrt(np.clip(1.0 - cos_t**2, 0.0, None))
    w = float(weight_n)
    f = np.broadcast_to(np.asarray(magnet_n, dtype=float), cos_t.shape)
    n = f + w * cos_t
    fd = drive_n / drive_safety
    fric = mu * np.clip(n, 0.0, None) / safety
    cn = c_rr * np.clip(n, 0.0, None)
    ws = w * sin_t
    blocked = (n <= 0) | (f < safety * w * np.clip(-cos_t, 0.0, None) - 1e-12)
    blocked |= ws > fric * (1 + 1e-12)
    flat = ws <= 1e-12 * max(w, 1e-300)
    blocked |= flat & ((cn > fd) | (cn > fric))
    with np.errstate(divide="ignore", invalid="ignore"):
        safe_ws = np.where(flat, 1.0, ws)
        hi = (fd - cn) / safe_ws
        lo = (-fd - cn) / safe_ws
        denom = 2.0 * safe_ws * cn
        grip_hi = np.where(denom > 0, (fric**2 - ws**2 - cn**2) / np.where(denom > 0, denom, 1.0), np.inf)
    hi = np.minimum(hi, grip_hi)
    hi = np.where(flat, 1.0, np.clip(hi, -np.inf, 1.0))
    lo = np.where(flat, -1.0, np.clip(lo, -1.0, np.inf))
    blocked |= lo > hi
    return HeadingLimits(blocked, lo, hi, sin_t)
