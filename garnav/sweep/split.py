"""Several robots on one sweep: the sweep's route cut into k stretches of balanced time.

The sweep is planned once (:func:`garnav.sweep.plan_sweep`); its route is cut at waypoints into k
consecutive stretches whose driving-plus-turning times are as equal as the waypoints allow, and
robot j drives stretch j, all starting at once. Together they cover exactly what the one route
covers. Consecutive stretches of a boustrophedon lie side by side, so robots work in neighbouring
areas: :func:`stretch_moves` gives each stretch as timed moves, and the caller may check them
against each other (the command line uses the fleet planner's checker,
:func:`garnav.fleet.check_schedule`, every robot starting at t = 0); the report says how close two
robots come. The split itself does not keep them apart; :func:`garnav.sweep.schedule.schedule_sweep`
times the stretches so that they never meet (what ``garnav sweep --robots K`` does).

Times: a straight go of d mm takes d / speed; a turn in place by θ takes |θ|·wheel_base/(2·speed)
(Siegwart & Nourbakhsh §3.2), spent standing at the vertex.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

import numpy as np

from garnav.errors import QueryError
from garnav.model import Garment, Robot
from garnav.plan import Leg, Route
from garnav.plan.route import crossing_side, make_route

__all__ = ["SweepSplit", "split_sweep", "stretch_moves"]


@dataclass(frozen=True, eq=False)
class SweepSplit:
    """k robots' stretches of one sweep.

    Attributes
    ----------
    routes : tuple of Route
        Robot j's stretch, in driving order along the sweep.
    times_s : tuple of float
        Each stretch's driving-plus-turning time, s.
    check : garnav.fleet.CheckReport or None
        Closest approach of the robots when all start at t = 0 (None when the fleet package is
        not available).
    """

    routes: tuple[Route, ...]
    times_s: tuple[float, ...]
    check: Any = None

    @property
    def balance(self) -> float:
        """Longest stretch time over the mean (1 = perfectly balanced)."""
        mean = sum(self.times_s) / len(self.times_s)
        return max(self.times_s) / mean if mean > 0 else 1.0


def _vertex_times(route: Route, robot: Robot) -> tuple[list[tuple[int, int]], np.ndarray]:
    """(leg, point) of every waypoint (a crossing's arrival point skipped) and the time (s) at
    which the robot leaves it."""
    v = float(robot.speed_mm_s)
    ids: list[tuple[int, int]] = []
    pts: list[np.ndarray] = []
    for li, leg in enumerate(route.legs):
        for k in range(len(leg.points)):
            if li > 0 and k == 0:
                continue  # the same place as the previous leg's last point
            ids.append((li, k))
            pts.append(np.asarray(leg.points[k], dtype=float))
    xy = np.array(pts)
    step = np.hypot(*np.diff(xy, axis=0).T)
    # across a crossing the two frames differ: take the in-leg steps only
    for j in range(1, len(ids)):
        if ids[j][0] != ids[j - 1][0]:
            leg = route.legs[ids[j][0]]
            step[j - 1] = float(np.hypot(*(leg.points[ids[j][1]] - leg.points[0])))
    turn = np.zeros(len(ids))
    for j in range(1, len(ids) - 1):
        a, b, c = xy[j - 1], xy[j], xy[j + 1]
        if ids[j - 1][0] == ids[j][0] == ids[j + 1][0]:
            d0, d1 = b - a, c - b
            if np.hypot(*d0) > 1e-9 and np.hypot(*d1) > 1e-9:
                ang = math.atan2(d0[0] * d1[1] - d0[1] * d1[0], float(d0 @ d1))
                turn[j] = abs(ang) * robot.wheel_base_mm / (2.0 * v)
    t = np.concatenate([[0.0], np.cumsum(step / v)]) + np.cumsum(turn)
    return ids, t


def _stretch(garment: Garment, robot: Robot, route: Route, a: tuple[int, int], b: tuple[int, int]) -> Route:
    """The part of ``route`` from waypoint ``a`` to waypoint ``b`` (each (leg, point))."""
    legs = []
    for li in range(a[0], b[0] + 1):
        pts = route.legs[li].points
        lo = a[1] if li == a[0] else 0
        hi = b[1] + 1 if li == b[0] else len(pts)
        legs.append(Leg(route.legs[li].piece, np.asarray(pts[lo:hi], dtype=float)))
    data = [(c.seam, c.fraction, crossing_side(garment, c)) for c in route.crossings[a[0]:b[0]]]
    length = float(sum(leg.length_mm for leg in legs))
    return make_route(garment, robot, legs, data, length)


def split_sweep(garment: Garment, sweep, k: int, robot: Robot | None = None, *, check=None,
                separate_starts_mm: float = 0.0) -> SweepSplit:
    """Cut a planned sweep into ``k`` stretches of balanced time, one per robot.

    Parameters
    ----------
    garment : Garment
    sweep : garnav.sweep.Sweep
    k : int
        Number of robots (>= 1), all with the same profile.
    robot : Robot, optional
        Defaults to ``garment.robot`` or ``Robot()``.
    check : callable, optional
        ``check(garment, robot, routes) -> report``: checks the stretches against each other, all
        starting at t = 0 (the command line passes the fleet planner's checker, see
        ``garnav.cli.sweep.check_stretches``; this package sits below the fleet and does not
        import it).
    separate_starts_mm : float
        Keep every stretch's start at least this far (mm, same piece) from the starts before it:
        a cut that would fall closer moves to the nearest waypoint that does not (a sweep that ends
        where it began, or lanes side by side, would otherwise start two robots on one spot).
    """
    robot = robot or garment.robot or Robot()
    if not (isinstance(k, int) and k >= 1):
        raise QueryError(f"the number of robots must be a whole number >= 1, got {k!r}")
    route = sweep.route
    ids, t = _vertex_times(route, robot)
    if k > len(ids) - 1:
        raise QueryError(f"a sweep with {len(ids)} waypoints cannot be split among {k} robots")
    cuts = [0]
    for j in range(1, k):
        c = int(np.argmin(np.abs(t - t[-1] * j / k)))
        cuts.append(min(max(c, cuts[-1] + 1), len(ids) - 1 - (k - j)))
    cuts.append(len(ids) - 1)
    if separate_starts_mm > 0:
        cuts = _separate_starts(route, ids, cuts, separate_starts_mm)
    routes = tuple(_stretch(garment, robot, route, ids[cuts[j]], ids[cuts[j + 1]]) for j in range(k))
    times = tuple(float(t[cuts[j + 1]] - t[cuts[j]]) for j in range(k))
    report = check(garment, robot, routes) if check is not None and k > 1 else None
    return SweepSplit(routes, times, report)


def _separate_starts(route: Route, ids: list[tuple[int, int]], cuts: list[int], gap_mm: float) -> list[int]:
    """Move each inner cut to the nearest waypoint index (between its neighbours) at least
    ``gap_mm`` from the starts of the stretches before it; a cut with no such index stays."""
    def where(i: int) -> tuple[str, np.ndarray]:
        li, pk = ids[i]
        return route.legs[li].piece, np.asarray(route.legs[li].points[pk], dtype=float)

    out = list(cuts)
    k = len(cuts) - 1
    for j in range(1, k):
        lo, hi = out[j - 1] + 1, len(ids) - 1 - (k - j)
        starts = [where(out[i]) for i in range(j)]

        def clear(i: int, starts=starts) -> bool:
            piece, xy = where(i)
            return all(p != piece or float(np.hypot(*(xy - q))) >= gap_mm for p, q in starts)

        for step in range(len(ids)):
            hit = next((i for i in (out[j] - step, out[j] + step) if lo <= i <= hi and clear(i)), None)
            if hit is not None:
                out[j] = hit
                break
            if out[j] - step < lo and out[j] + step > hi:
                break
    return out


def stretch_moves(route: Route, robot: Robot) -> list[tuple[str, float, float, tuple[float, float], tuple[float, float]]]:
    """A stretch as timed straight moves (piece, t0 s, t1 s, p0 mm, p1 mm) from t = 0: each segment
    at the cruise speed, each turn in place as a wait at its vertex, and a last endless wait at the
    end (``t1 = inf``) — the trajectory form of the fleet planner (:class:`garnav.fleet.Move`). The
    turn at a seam crossing (a change of frame) is left out; it is small."""
    moves: list[tuple[str, float, float, tuple[float, float], tuple[float, float]]] = []
    now = 0.0
    for leg in route.legs:
        pts = np.asarray(leg.points, dtype=float)
        prev = None
        for a, b in zip(pts[:-1], pts[1:], strict=True):
            d = b - a
            n = float(np.hypot(*d))
            if n <= 1e-9:
                continue
            pa, pb = (float(a[0]), float(a[1])), (float(b[0]), float(b[1]))
            if prev is not None:
                ang = abs(math.atan2(prev[0] * d[1] - prev[1] * d[0], float(prev @ d)))
                wait = ang * robot.wheel_base_mm / (2.0 * robot.speed_mm_s)
                if wait > 0:
                    moves.append((leg.piece, now, now + wait, pa, pa))
                    now += wait
            dt = n / robot.speed_mm_s
            moves.append((leg.piece, now, now + dt, pa, pb))
            now += dt
            prev = d
    end = route.legs[-1].points[-1]
    pe = (float(end[0]), float(end[1]))
    moves.append((route.legs[-1].piece, now, math.inf, pe, pe))
    return moves
