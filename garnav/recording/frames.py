"""garnav's frames and units as ROS messages expect them (ROS REP 103), pure functions.

REP 103 ("Standard Units of Measure and Coordinate Conventions") asks for SI units — metres and
radians — and right-handed frames with z up. garnav's world frame already is right-handed with
z up (y forward, where the wearer faces; x towards the wearer's right), so it is written as it is,
only in metres: frame :data:`WORLD_FRAME`. A second, fixed frame :data:`WEARER_FRAME` follows
REP 103's body convention (x forward, y left, z up); it is the world frame turned by +90° about z.

A pose on the garment is the robot's body frame (REP 103: x forward, y left, z up): x along the
direction of travel in the surface's tangent plane, z the outward surface normal, y = z × x.
Quaternions are written in the ROS order (x, y, z, w) — scipy's ``Rotation.as_quat`` order;
trimesh uses (w, x, y, z).

Pattern-space plans are written in one frame per piece (:func:`piece_frame`): the piece frame of
DEVELOPERS.md in metres (x across, y along the grainline, z out of the fabric's face side).
"""

from __future__ import annotations

import math
import re

import numpy as np

__all__ = [
    "MM_PER_M",
    "WORLD_FRAME",
    "WEARER_FRAME",
    "WEARER_IN_WORLD_XYZW",
    "piece_frame",
    "ros_name",
    "surface_frames",
    "quaternions_xyzw",
    "yaw_quaternion_xyzw",
    "path_times_s",
    "stamp",
]

MM_PER_M = 1000.0
WORLD_FRAME = "garnav_world"
WEARER_FRAME = "garnav_wearer"
# Rotation of the wearer frame in the world frame: +90° about z (wearer x = world y, wearer y =
# world -x), as a quaternion (x, y, z, w).
WEARER_IN_WORLD_XYZW = (0.0, 0.0, math.sin(math.pi / 4), math.cos(math.pi / 4))

_NOT_NAME = re.compile(r"[^A-Za-z0-9_]")


def ros_name(text: str) -> str:
    """``text`` as one ROS name token: letters, digits and ``_`` only (others become ``_``), not
    starting with a digit.

    >>> ros_name("front left")
    'front_left'
    >>> ros_name("2nd-sleeve")
    '_2nd_sleeve'
    """
    out = _NOT_NAME.sub("_", text) or "_"
    return "_" + out if out[0].isdigit() else out


def piece_frame(piece: str) -> str:
    """The frame id of a piece's pattern frame, e.g. ``garnav_piece_back``."""
    return f"garnav_piece_{ros_name(piece)}"


def surface_frames(points: np.ndarray, normals: np.ndarray, eps_mm: float = 1e-6) -> np.ndarray:
    """Body frames of a robot driving along a polyline on a surface.

    Parameters
    ----------
    points : (M, 3) float array
        Positions along the path, mm.
    normals : (M, 3) float array
        Outward surface normals at the points (any length > 0).
    eps_mm : float
        Steps shorter than this (mm) do not give a direction; the point takes the direction of the
        next longer step, else of the last one before it.

    Returns
    -------
    (M, 3, 3) float array
        Rotation matrices whose columns are the body axes in the world frame: x forward (the
        step direction projected onto the tangent plane), y left, z the unit normal.
    """
    pts = np.asarray(points, dtype=float).reshape(-1, 3)
    up = np.asarray(normals, dtype=float).reshape(-1, 3)
    up = up / np.linalg.norm(up, axis=1, keepdims=True)
    m = len(pts)
    step = np.diff(pts, axis=0)
    moving = np.linalg.norm(step, axis=1) > eps_mm
    direction = np.zeros((m, 3))
    # Each point looks ahead to the next real step; the tail looks back to the last one.
    nxt = None
    for i in range(m - 2, -1, -1):
        if moving[i]:
            nxt = step[i]
        if nxt is not None:
            direction[i] = nxt
    last = None
    for i in range(m):
        if i > 0 and moving[i - 1]:
            last = step[i - 1]
        if not direction[i].any() and last is not None:
            direction[i] = last
    frames = np.empty((m, 3, 3))
    for i in range(m):
        z = up[i]
        x = direction[i] - np.dot(direction[i], z) * z
        if np.linalg.norm(x) < 1e-9 * max(1.0, float(np.linalg.norm(direction[i]))):
            # No step, or a step along the normal: any tangent direction (the one nearest world x).
            helper = np.array([1.0, 0.0, 0.0]) if abs(z[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
            x = helper - np.dot(helper, z) * z
        x = x / np.linalg.norm(x)
        frames[i, :, 0] = x
        frames[i, :, 1] = np.cross(z, x)
        frames[i, :, 2] = z
    return frames


def quaternions_xyzw(frames: np.ndarray) -> np.ndarray:
    """(M, 4) unit quaternions (x, y, z, w) of (M, 3, 3) rotation matrices, with w ≥ 0."""
    from scipy.spatial.transform import Rotation

    q = Rotation.from_matrix(np.asarray(frames, dtype=float).reshape(-1, 3, 3)).as_quat()  # scalar-last
    return np.where(q[:, 3:4] < 0, -q, q)


def yaw_quaternion_xyzw(yaw_rad: np.ndarray) -> np.ndarray:
    """(M, 4) quaternions (x, y, z, w) = (0, 0, sin ψ/2, cos ψ/2) of rotations by ψ about z.

    >>> yaw_quaternion_xyzw(np.array([math.pi]))[0].round(6).tolist()
    [0.0, 0.0, 1.0, 0.0]
    """
    half = 0.5 * np.asarray(yaw_rad, dtype=float).reshape(-1)
    return np.stack([np.zeros_like(half), np.zeros_like(half), np.sin(half), np.cos(half)], axis=1)


def path_times_s(points: np.ndarray, speed_mm_s: float) -> np.ndarray:
    """(M,) time at each point of a path driven at ``speed_mm_s`` (mm/s) from t = 0, s: its 3D
    arc length over the speed (turns in place take no time here)."""
    pts = np.asarray(points, dtype=float).reshape(-1, 3)
    s = np.concatenate([[0.0], np.cumsum(np.linalg.norm(np.diff(pts, axis=0), axis=1))])
    return s / float(speed_mm_s)


def stamp(t_ns: int) -> tuple[int, int]:
    """(sec, nanosec) of a time in integer nanoseconds (builtin_interfaces/Time).

    >>> stamp(1_500_000_000)
    (1, 500000000)
    """
    sec, nsec = divmod(int(t_ns), 1_000_000_000)
    return sec, nsec
