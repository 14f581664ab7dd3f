"""A route's waypoints: every leg point with its piece and heading (pure, piece frames, mm).

The waypoint list is the legs' points in order, legs concatenated. A seam crossing therefore shows
twice: as the last point of a leg (on the piece the robot leaves) and as the first point of the
next leg (on the piece it enters) — the same 3D point in two piece frames.

The heading at a waypoint is the route's own (``Route.headings_deg``, computed in
:mod:`garnav.plan.route`, the one place that defines the convention: degrees CCW from the piece's
+x axis in (−180, 180], the leaving direction, or the arriving one at a leg's last point).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from garnav.plan.route import ZERO_STEP_MM, wrap_deg

__all__ = ["Waypoint", "route_waypoints", "wrap_deg", "ZERO_STEP_MM"]

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


def route_waypoints(route) -> tuple[Waypoint, ...]:
    """The waypoints of a route (see the module notes for the conventions).

    Parameters
    ----------
    route : garnav.plan.Route
        Uses ``route.legs`` (each with ``piece`` and ``points`` (n, 2), mm) and
        ``route.headings_deg`` (one per leg point).

    Returns
    -------
    tuple of Waypoint
    """
    out: list[Waypoint] = []
    headings = np.asarray(route.headings_deg, dtype=float)
    for li, leg in enumerate(route.legs):
        pts = np.asarray(leg.points, dtype=float).reshape(-1, 2)
        for x, y in pts:
            h = float(headings[len(out)])
            out.append(Waypoint(len(out), li, leg.piece, float(x), float(y), h))
    return tuple(out)
