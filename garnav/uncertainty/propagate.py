"""Linearised propagation of the pose covariance along a command list.

The error state is ``[δx, δy, δθ, e_s, e_t, b]``: the pose error in the current piece frame (mm, mm,
rad) and the robot's constant errors — distance scale e_s, turn scale e_t (fractions) and gyro bias b
(rad/s) — carried as extra states so that their effect stays correlated along the route (the
augmented-state treatment of systematic odometry errors: Kelly, *Linearized error propagation in
odometry*, IJRR 23(2), 2004, §3–4; Chong & Kleeman, *Accurate odometry and error modelling for a
mobile robot*, ICRA 1997). Each motion maps the covariance as ``P ← F P Fᵀ + Q`` (Siegwart &
Nourbakhsh, *Introduction to Autonomous Mobile Robots*, §5.2.4).

A straight run of length L at heading θ₀ (u = (cos θ₀, sin θ₀), w = (−sin θ₀, cos θ₀)), time T = L/v,
linearised about the nominal run, integrated in closed form:

* along-track: δa = e_s·L + random walk of variance σ_d²·L (``distance_random_var_per_mm``);
* heading: δθ(L) = δθ₀ − b·T − W(T), W an angle random walk of variance N²·T;
* cross-track: δc = ∫δθ ds = δθ₀·L − b·L·T/2 − ∫W, with var(∫W) = N²·T·L²/3 and
  cov(∫W, W(T)) = N²·L·T/2 (integrated Brownian motion).

A turn θ: δθ ← δθ + θ·e_t − b·t − W(t). A crossing: jolt (along-track slip and heading step), then
the optional re-localisation (position error projected onto the seam line along the travel
direction: ``δp ← (I − u nᵀ/(n·u)) δp``, n the seam normal), then the seam's rigid map into the next
piece's frame.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from garnav.uncertainty.model import OdometryModel
from garnav.uncertainty.plan_ops import MotionPlan, rigid_map

__all__ = ["Propagation", "propagate_covariance", "initial_covariance", "ellipse_2sigma"]

STATE = ("x_mm", "y_mm", "heading_rad", "distance_scale", "turn_scale", "gyro_bias_rad_s")


@dataclass(frozen=True)
class Propagation:
    """Covariances after every step of a :class:`MotionPlan`.

    Attributes
    ----------
    covariances : (k + 1, 6, 6) array
        ``[0]`` at the start, ``[i + 1]`` after step i, in the frame of the piece the robot is on.
    cross_track_sigma_mm : (k + 1,) array
        1σ position spread across the current travel direction after each step, mm.
    """

    covariances: np.ndarray
    cross_track_sigma_mm: np.ndarray

    @property
    def end(self) -> np.ndarray:
        """(3, 3) covariance of the end pose (x mm, y mm, heading rad), end piece frame."""
        return self.covariances[-1, :3, :3]


def initial_covariance(model: OdometryModel) -> np.ndarray:
    """(6, 6) start covariance: start pose and the constant errors' priors."""
    return np.diag([
        model.start_position_mm**2,
        model.start_position_mm**2,
        math.radians(model.start_heading_deg) ** 2,
        model.distance_scale_error**2,
        model.turn_scale_error**2,
        model.gyro_bias_rad_s**2,
    ])


def propagate_covariance(plan: MotionPlan, model: OdometryModel, relocalise: bool | None = None) -> Propagation:
    """Propagate the start covariance along ``plan``.

    Parameters
    ----------
    plan : MotionPlan
    model : OdometryModel
    relocalise : bool, optional
        Override ``model.seam_relocalise``.

    Returns
    -------
    Propagation
    """
    reloc = model.seam_relocalise if relocalise is None else relocalise
    n2 = model.gyro_arw_rad_sqrt_s**2
    qd = model.distance_random_var_per_mm
    jolt_h = math.radians(model.seam_heading_deg) ** 2
    jolt_d = model.seam_distance_mm**2
    P = initial_covariance(model)
    out = [P]
    sig = [0.0]
    F = np.eye(6)
    for st in plan.steps:
        c, s = math.cos(st.heading), math.sin(st.heading)
        u, w = np.array([c, s]), np.array([-s, c])
        if st.kind == "go":
            L, T = st.length_mm, st.duration_s
            F = np.eye(6)
            F[0:2, 2] = w * L
            F[0:2, 3] = u * L
            F[0:2, 5] = -w * L * T / 2.0
            F[2, 5] = -T
            Q = np.zeros((6, 6))
            Q[0:2, 0:2] = qd * L * np.outer(u, u) + n2 * T * L * L / 3.0 * np.outer(w, w)
            Q[0:2, 2] = Q[2, 0:2] = n2 * L * T / 2.0 * w
            Q[2, 2] = n2 * T
            P = F @ P @ F.T + Q
            heading_after = st.heading
        elif st.kind == "turn":
            F = np.eye(6)
            F[2, 4] = st.angle_rad
            F[2, 5] = -st.duration_s
            P = F @ P @ F.T
            P[2, 2] += n2 * st.duration_s
            heading_after = st.heading + st.angle_rad
        else:
            P = P.copy()
            P[0:2, 0:2] += jolt_d * np.outer(u, u)
            P[2, 2] += jolt_h
            if reloc:
                t = np.asarray(st.tangent)
                n = np.array([-t[1], t[0]])
                un = float(u @ n)
                if abs(un) > 1e-9:
                    T6 = np.eye(6)
                    T6[0:2, 0:2] -= np.outer(u, n) / un
                    P = T6 @ P @ T6.T
            R, _, _ = rigid_map(st)
            J = np.eye(6)
            J[0:2, 0:2] = R
            P = J @ P @ J.T
            heading_after = st.heading + st.rotation_rad
        P = 0.5 * (P + P.T)
        out.append(P)
        wa = np.array([-math.sin(heading_after), math.cos(heading_after)])
        sig.append(math.sqrt(max(float(wa @ P[0:2, 0:2] @ wa), 0.0)))
    return Propagation(np.array(out), np.array(sig))


def ellipse_2sigma(cov2: np.ndarray) -> dict:
    """The 2σ ellipse of a (2, 2) position covariance (mm²): semi-axes (mm) and major-axis angle (deg).

    >>> e = ellipse_2sigma(np.diag([4.0, 1.0]))
    >>> e["semi_major_mm"], e["semi_minor_mm"], e["angle_deg"]
    (4.0, 2.0, 0.0)
    """
    vals, vecs = np.linalg.eigh(np.asarray(cov2, dtype=float))
    vals = np.clip(vals, 0.0, None)
    major = vecs[:, 1]
    angle = math.degrees(math.atan2(major[1], major[0]))
    angle = (angle + 90.0) % 180.0 - 90.0
    return {
        "semi_major_mm": float(2.0 * math.sqrt(vals[1])),
        "semi_minor_mm": float(2.0 * math.sqrt(vals[0])),
        "angle_deg": float(angle) + 0.0,
    }
