"""A route's waypoints: every leg point with its piece and heading (pure, piece frames, mm).

The waypoint list is the legs' points in order, legs concatenated. A seam crossing therefore shows
twice: as the last point of a leg (on the piece the robot leaves) and as the first point of the
next leg (on the piece it enters) — the same 3D point in two piece frames.

The heading at a waypoint is the direction the robot leaves it in (degrees CCW from the piece's +x
axis); at the last point of a leg, where nothing follows on that piece, it is the direction the robot
arrives in.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["Waypoint", "route_waypoints", "wrap_deg", "ZERO_STEP_MM"]

# Steps shorter than this (mm) are treated as no motion: repeated points, or the stub of a leg
# through a corner where several seams meet (a planner may leave one of ~1e-7 mm there).
ZERO_STEP_MM = 1e-6


@dataclass(frozen=True)
class Waypoint:
    """One waypoint of a route.

    Attributes
    ----------
    index : int
        Position in the route's waypoint list (legs' points concatenated).
    leg : int
        Index of the leg the point belongs to.
    piece : str
    x_mm, y_mm : float
        Position in the piece frame, mm.
    heading_deg : float
        Travel direction in the piece frame, degrees CCW from +x, in (-180, 180].
    """

    index: int
    leg: int
    piece: str
    x_mm: float
    y_mm: float
    heading_deg: float


def _leg_headings(points: np.ndarray) -> list[float | None]:
    """Heading (rad) at each point of one leg: leaving direction, or arriving at the end."""
    steps = np.diff(points, axis=0)
    lengths = np.hypot(steps[:, 0], steps[:, 1])
    n = len(points)
    out: list[float | None] = [None] * n
    following: float | None = None
    for k in range(n - 2, -1, -1):  # leaving direction: next non-zero step
        if lengths[k] > ZERO_STEP_MM:
            following = math.atan2(steps[k, 1], steps[k, 0])
        out[k] = following
    arriving: float | None = None
    for k in range(1, n):  # points with nothing after them: the last step in
        if lengths[k - 1] > ZERO_STEP_MM:
            arriving = math.atan2(steps[k - 1, 1], steps[k - 1, 0])
        if out[k] is None:
            out[k] = arriving
    return out


def route_waypoints(route) -> tuple[Waypoint, ...]:
    """The waypoints of a route (see the module notes for the conventions).

    Parameters
    ----------
    route : garnav.plan.Route
        Uses ``route.legs`` (each with ``piece`` and ``points`` (n, 2), mm).

    Returns
    -------
    tuple of Waypoint
    """
    out: list[Waypoint] = []
    last_heading = 0.0
    for li, leg in enumerate(route.legs):
        pts = np.asarray(leg.points, dtype=float).reshape(-1, 2)
        for (x, y), h in zip(pts, _leg_headings(pts)):
            # a leg of coincident points keeps the previous heading (no direction of its own)
            heading = last_heading if h is None else h
            last_heading = heading
            out.append(Waypoint(len(out), li, leg.piece, float(x), float(y), wrap_deg(heading)))
    return tuple(out)


def wrap_deg(angle_rad: float) -> float:
    """An angle in radians as degrees in (-180, 180]."""
    deg = math.degrees(math.remainder(angle_rad, 2.0 * math.pi))
    return 180.0 if deg == -180.0 else deg
