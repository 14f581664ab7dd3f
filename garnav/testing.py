"""Helpers for testing code that plans or transforms routes (public, for garnav's tests and yours).

:func:`validate_route` checks the properties every planned route must have, whatever path the
planner chose among equally short ones — the way networkx's tests validate a path by its
endpoints and its recomputed cost rather than by one exact answer.
"""

from __future__ import annotations

import math

import numpy as np
import shapely

from garnav.model import Garment, other_side
from garnav.plan.freespace import FreeSpace
from garnav.plan.points import PiecePoint, PointLike, resolve_point
from garnav.plan.route import Route, crossing_side, route_headings_deg

__all__ = ["validate_route"]


def _fail(what: str) -> None:
    raise AssertionError(f"invalid route: {what}")


def _check_end(garment: Garment, spec: PointLike, piece: str, xy: np.ndarray, which: str, tol_mm: float) -> None:
    want = resolve_point(garment, spec) if not isinstance(spec, PiecePoint) else spec
    gap = math.hypot(xy[0] - want.x, xy[1] - want.y)
    if piece != want.piece or gap > tol_mm:
        _fail(f"{which} is ({xy[0]:.6f}, {xy[1]:.6f}) mm on '{piece}', not {want.describe()} "
              f"({gap:.3g} mm away)")


def validate_route(
    route: Route,
    garment: Garment,
    free: FreeSpace,
    *,
    start: PointLike | None = None,
    goal: PointLike | None = None,
    tol_mm: float = 1e-6,
    length_rtol: float = 1e-12,
) -> None:
    """Check that ``route`` is a valid route on ``garment`` for the free space ``free``.

    Checked: the route starts at ``start`` and ends at ``goal`` (when given: a PiecePoint, a
    (piece, x, y) tuple or a point text, see :func:`garnav.plan.points.resolve_point`); its
    ``length_mm`` equals the sum of its segment lengths; every segment of every leg lies in the
    free space of the leg's piece (within ``tol_mm``); consecutive legs are joined by their
    crossing, which lies on a crossable seam (``point_from`` on the run it leaves, ``point_to`` the
    partner point on the other run, within ``tol_mm``) and connects the legs' pieces; headings and
    turns have one entry per waypoint and per interior vertex, headings as the route module computes them.

    Parameters
    ----------
    route : Route
    garment : Garment
    free : FreeSpace
        The free space the route was planned in (``Planner.free``).
    tol_mm : float
        Distance tolerance, mm.
    length_rtol : float
        Relative tolerance of the recomputed length.

    Raises
    ------
    AssertionError
        Naming the first property that does not hold.
    """
    legs = route.legs
    if not legs:
        _fail("no legs")
    if len(route.crossings) != len(legs) - 1:
        _fail(f"{len(legs)} legs but {len(route.crossings)} crossings")
    for i, leg in enumerate(legs):
        pts = np.asarray(leg.points, dtype=float)
        if pts.ndim != 2 or pts.shape[1] != 2 or len(pts) < 2 or not np.all(np.isfinite(pts)):
            _fail(f"leg {i} points have shape {pts.shape} (need (n >= 2, 2), finite)")
    if start is not None:
        _check_end(garment, start, legs[0].piece, legs[0].points[0], "start", tol_mm)
    if goal is not None:
        _check_end(garment, goal, legs[-1].piece, legs[-1].points[-1], "goal", tol_mm)

    length = sum(float(np.sum(np.hypot(*np.diff(np.asarray(leg.points, float), axis=0).T))) for leg in legs)
    if not math.isclose(route.length_mm, length, rel_tol=length_rtol, abs_tol=1e-12):
        _fail(f"length_mm is {route.length_mm!r} but the segments add up to {length!r}")

    for i, leg in enumerate(legs):
        region = free[leg.piece].region
        near = region.buffer(tol_mm) if tol_mm > 0 else region
        pts = np.asarray(leg.points, dtype=float)
        segs = shapely.linestrings(np.stack([pts[:-1], pts[1:]], axis=1))
        bad = np.flatnonzero(~shapely.covers(near, segs))
        if len(bad):
            k = int(bad[0])
            _fail(f"leg {i} on '{leg.piece}' leaves the free space on segment {k} "
                  f"({pts[k][0]:.3f}, {pts[k][1]:.3f}) -> ({pts[k + 1][0]:.3f}, {pts[k + 1][1]:.3f}) mm")

    for i, c in enumerate(route.crossings):
        seam = garment.seam(c.seam)
        if not seam.crossable:
            _fail(f"crossing {i} is over seam '{c.seam}', which is not crossable")
        if (c.from_piece, c.to_piece) != (legs[i].piece, legs[i + 1].piece):
            _fail(f"crossing {i} joins '{c.from_piece}' -> '{c.to_piece}' but the legs are on "
                  f"'{legs[i].piece}' -> '{legs[i + 1].piece}'")
        if math.dist(legs[i].points[-1], c.point_from) > tol_mm or math.dist(legs[i + 1].points[0], c.point_to) > tol_mm:
            _fail(f"crossing {i} over '{c.seam}' is not where leg {i} ends and leg {i + 1} starts")
        side = crossing_side(garment, c)
        own = shapely.LineString(garment.run_polyline(seam.run(side)))
        gap = own.distance(shapely.Point(*c.point_from))
        if gap > tol_mm:
            _fail(f"crossing {i}: point_from is {gap:.3g} mm off run {side} of seam '{c.seam}'")
        t = own.project(shapely.Point(*c.point_from), normalized=True) if own.length > 0 else 0.0
        partner = garment.seam_partner(seam, side, np.array([t]))[0]
        if seam.run(other_side(side)).piece != c.to_piece or math.dist(partner, c.point_to) > tol_mm:
            _fail(f"crossing {i}: point_to is not the partner of point_from across seam '{c.seam}' "
                  f"({math.dist(partner, c.point_to):.3g} mm off)")

    n_wp = sum(len(leg.points) for leg in legs)
    if len(route.headings_deg) != n_wp:
        _fail(f"{len(route.headings_deg)} headings for {n_wp} waypoints")
    if not np.allclose(route.headings_deg, route_headings_deg(legs), rtol=0.0, atol=1e-9):
        _fail("headings differ from the route convention (garnav.plan.route.route_headings_deg)")
    if np.any(route.headings_deg <= -180.0) or np.any(route.headings_deg > 180.0):
        _fail("a heading is outside (-180, 180]")
    if len(route.turns_deg) != max(n_wp - 2 - len(route.crossings), 0):
        _fail(f"{len(route.turns_deg)} turns for {n_wp} waypoints and {len(route.crossings)} crossings")
