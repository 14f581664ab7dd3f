"""The Route object: legs inside pieces, crossings between them, turns and headings.

Turn angles are intrinsic. Inside a leg the turn at a vertex is the signed angle between the
incoming and outgoing segment directions (CCW positive, piece frames are seen from the garment's
outside); a rotation of the piece frame leaves it unchanged. At a seam crossing the outgoing
direction, given in the next piece's frame, is first carried into the previous piece's frame by the
seam correspondence (tangent onto tangent, the partner's inward normal onto the outward normal, see
:func:`garnav.plan.freespace.seam_transform`). That is the same as comparing the two headings
*relative to the seam tangent* on each side, so it does not depend on either frame.

``turns_deg`` has one entry per interior vertex of the route, a crossing counting once: its length
is ``len(waypoints()) − 2 − len(crossings)``.

Headings (the one convention of the project, computed here only: :func:`route_headings_deg`;
the export reads ``Route.headings_deg``): one entry per waypoint (the crossing point appears once
in each piece frame), degrees counter-clockwise from the piece's +x axis, in **(−180, 180]**. It is
the direction of the first step leaving the waypoint that is longer than :data:`ZERO_STEP_MM`, or,
where no such step follows on the leg, of the last such step arriving there. A leg with no such
step at all (the stub a route leaves in a piece it only touches at a corner where seams meet)
keeps the heading before it (0 at the very start).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
import shapely

from garnav.errors import QueryError
from garnav.model import SEAM_SIDES, Garment, Robot, Seam, SeamSide, other_side
from garnav.plan.freespace import run_frame, seam_transform
from garnav.plan.portals import crossing_angle_deg

__all__ = [
    "Leg",
    "Crossing",
    "Route",
    "make_route",
    "signed_angle_deg",
    "join_routes",
    "crossing_side",
    "seam_side_at",
    "as_side",
    "route_headings_deg",
    "wrap_deg",
    "ZERO_STEP_MM",
]

# Steps shorter than this (mm) are treated as no motion: repeated points, or the stub of a leg
# through a corner where several seams meet (a planner may leave one of ~1e-7 mm there).
ZERO_STEP_MM = 1e-6


@dataclass(frozen=True, eq=False)
class Leg:
    """A straight-line polyline inside one piece: ``points`` (n, 2), piece frame, mm, n >= 2."""

    piece: str
    points: np.ndarray

    @property
    def length_mm(self) -> float:
        return float(np.linalg.norm(np.diff(self.points, axis=0), axis=1).sum())


@dataclass(frozen=True, eq=False)
class Crossing:
    """A seam crossing between ``legs[i]`` and ``legs[i + 1]``.

    ``point_from`` (2,) ends legs[i] (frame of ``from_piece``); ``point_to`` (2,) starts legs[i+1]
    (frame of ``to_piece``), the same 3D point. ``fraction`` is the position along run a (0..1);
    ``angle_deg`` the angle between the route and the seam tangent (0..90), on the arriving side.
    ``from_side`` is the run the route leaves from ("a" or "b", :data:`garnav.model.SeamSide`);
    every planned crossing records it. A hand-made crossing may leave it None, and
    :func:`crossing_side` then finds it from the geometry.
    """

    seam: str
    from_piece: str
    to_piece: str
    point_from: np.ndarray
    point_to: np.ndarray
    fraction: float
    angle_deg: float
    from_side: SeamSide | None = None


@dataclass(frozen=True, eq=False)
class Route:
    """A planned route in pattern space. See the module docstring for turns and headings."""

    legs: tuple[Leg, ...]
    crossings: tuple[Crossing, ...]
    length_mm: float
    cost: float
    turns_deg: np.ndarray
    headings_deg: np.ndarray
    speed_mm_s: float = 20.0

    def waypoints(self) -> list[tuple[str, float, float, float]]:
        """Every leg point as (piece, x mm, y mm, heading_deg), in driving order."""
        out = []
        k = 0
        for leg in self.legs:
            for p in leg.points:
                out.append((leg.piece, float(p[0]), float(p[1]), float(self.headings_deg[k])))
                k += 1
        return out

    @property
    def time_s(self) -> float:
        """Driving time at the robot's cruise speed, s."""
        return self.length_mm / self.speed_mm_s if self.speed_mm_s > 0 else math.inf

    @property
    def seams_crossed(self) -> tuple[str, ...]:
        return tuple(c.seam for c in self.crossings)

    def turn_count(self, threshold_deg: float = 0.5) -> int:
        """Number of vertices where the robot turns by more than ``threshold_deg``."""
        return int(np.sum(np.abs(self.turns_deg) > threshold_deg))


def signed_angle_deg(d0: np.ndarray, d1: np.ndarray) -> float:
    """Signed angle from direction d0 to d1 (2,), degrees in (−180, 180], CCW positive."""
    cross = d0[0] * d1[1] - d0[1] * d1[0]
    dot = d0[0] * d1[0] + d0[1] * d1[1]
    if cross == 0 and dot == 0:
        return 0.0
    return math.degrees(math.atan2(cross, dot))


def wrap_deg(angle_rad: float) -> float:
    """An angle in radians as degrees in (−180, 180].

    >>> wrap_deg(math.pi), wrap_deg(-math.pi), wrap_deg(1.5 * math.pi)
    (180.0, 180.0, -90.0)
    """
    deg = math.degrees(math.remainder(angle_rad, 2.0 * math.pi))
    return 180.0 if deg == -180.0 else deg


def _leg_headings(points: np.ndarray) -> list[float | None]:
    """Heading (rad) at each point of one leg (n, 2): the next step longer than ZERO_STEP_MM
    leaving it, else the last one arriving; None where the leg has no such step."""
    steps = np.diff(points, axis=0)
    lengths = np.hypot(steps[:, 0], steps[:, 1])
    n = len(points)
    out: list[float | None] = [None] * n
    following: float | None = None
    for k in range(n - 2, -1, -1):  # leaving direction: next step of some length
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


def route_headings_deg(legs) -> np.ndarray:
    """Headings at every waypoint of ``legs`` (each with ``points`` (n, 2), mm), degrees in
    (−180, 180]; shape (sum of n,). See the module docstring for the convention.

    >>> route_headings_deg([Leg("p", np.array([[0.0, 0.0], [0.0, 0.0], [-1.0, 0.0]]))]).tolist()
    [180.0, 180.0, 180.0]
    """
    out: list[float] = []
    last = 0.0
    for leg in legs:
        pts = np.asarray(leg.points, dtype=float).reshape(-1, 2)
        for h in _leg_headings(pts):
            last = last if h is None else h
            out.append(wrap_deg(last))
    return np.array(out, dtype=float)


def _directions(points: np.ndarray) -> list[np.ndarray]:
    """Non-zero segment directions of a polyline (zero-length steps skipped)."""
    d = np.diff(points, axis=0)
    return [v for v in d if v[0] != 0 or v[1] != 0]


def make_route(
    garment: Garment,
    robot: Robot,
    legs: list[Leg],
    crossing_data: Sequence[tuple[str, float, SeamSide | int]],
    cost: float,
) -> Route:
    """Assemble a Route from legs and crossings given as (seam name, fraction, from side).

    Parameters
    ----------
    crossing_data : sequence of (str, float, SeamSide)
        The side is "a" or "b" (an index 0/1 into :data:`garnav.model.SEAM_SIDES` is accepted
        from graph code that stores sides in integer arrays).
    cost : float
        Route cost (length + soft surcharges + crossing costs), computed by the caller.
    """
    data = [(name, float(t), as_side(side)) for name, t, side in crossing_data]
    crossings = []
    for i, (name, t, from_side) in enumerate(data):
        seam = garment.seam(name)
        run_in, run_out = seam.run(from_side), seam.run(other_side(from_side))
        d_in = legs[i].points[-1] - legs[i].points[-2] if len(legs[i].points) >= 2 else np.zeros(2)
        _, tan, _ = run_frame(garment, run_in, t)
        crossings.append(
            Crossing(
                seam=name,
                from_piece=run_in.piece,
                to_piece=run_out.piece,
                point_from=legs[i].points[-1].copy(),
                point_to=legs[i + 1].points[0].copy(),
                fraction=t,
                angle_deg=crossing_angle_deg(d_in, tan),
                from_side=from_side,
            )
        )

    # turns: vertices inside legs, then one per crossing
    turns = []
    for i, leg in enumerate(legs):
        dirs = _directions(leg.points)
        for k in range(1, len(leg.points) - 1):
            d0 = leg.points[k] - leg.points[k - 1]
            d1 = leg.points[k + 1] - leg.points[k]
            turns.append(signed_angle_deg(d0, d1) if (d0.any() and d1.any()) else 0.0)
        if i < len(data):
            name, t, from_side = data[i]
            seam = garment.seam(name)
            nxt = _directions(legs[i + 1].points)
            if dirs and nxt:
                mat = seam_transform(garment, seam, from_side, t)
                turns.append(signed_angle_deg(dirs[-1], mat[:2, :2] @ nxt[0]))
            else:
                turns.append(0.0)

    length = float(sum(leg.length_mm for leg in legs))
    return Route(
        legs=tuple(legs),
        crossings=tuple(crossings),
        length_mm=length,
        cost=float(cost),
        turns_deg=np.array(turns, dtype=float),
        headings_deg=route_headings_deg(legs),
        speed_mm_s=float(robot.speed_mm_s),
    )


def join_routes(garment: Garment, robot: Robot, parts: list[Route]) -> Route:
    """Join routes end to start (the via points) into one; the joint becomes an ordinary vertex."""
    legs: list[Leg] = []
    data: list[tuple[str, float, SeamSide | int]] = []
    cost = 0.0
    for r in parts:
        if legs:
            last = legs.pop()
            first = r.legs[0]
            legs.append(Leg(last.piece, np.vstack([last.points, first.points[1:]])))
            legs.extend(r.legs[1:])
        else:
            legs.extend(r.legs)
        data.extend((c.seam, c.fraction, crossing_side(garment, c)) for c in r.crossings)
        cost += r.cost
    return make_route(garment, robot, legs, data, cost)


def as_side(side: SeamSide | int) -> SeamSide:
    """A seam side from "a"/"b" or its index 0/1 into :data:`garnav.model.SEAM_SIDES`.

    >>> as_side(1), as_side("a")
    ('b', 'a')
    """
    if isinstance(side, str):
        if side not in SEAM_SIDES:
            raise ValueError(f"seam side must be 'a' or 'b', not {side!r}")
        return side
    return SEAM_SIDES[int(side)]


def crossing_side(garment: Garment, c: Crossing) -> SeamSide:
    """The run ("a" or "b") crossing ``c`` leaves from: its recorded ``from_side``, or for a
    hand-made crossing the run on ``from_piece`` nearest to ``point_from`` (the pieces alone do
    not tell when both runs lie on one piece).

    Raises
    ------
    QueryError
        When ``from_piece`` is on neither run of the seam (or not on the recorded one).
    """
    seam = garment.seam(c.seam)
    recorded = getattr(c, "from_side", None)  # crossings read back from a file may not carry it
    if recorded is not None:
        if seam.run(recorded).piece != c.from_piece:
            raise QueryError(f"route crossing at seam '{c.seam}': piece '{c.from_piece}' is not on "
                             f"its run {recorded}")
        return recorded
    try:
        return seam_side_at(garment, seam, c.from_piece, c.point_from)
    except KeyError:
        raise QueryError(
            f"route crossing at seam '{c.seam}': piece '{c.from_piece}' is on neither run of the seam"
        ) from None


def seam_side_at(garment: Garment, seam: Seam, piece: str, point: np.ndarray) -> SeamSide:
    """The run of ``seam`` on ``piece`` that passes nearest to ``point`` (2,), piece frame, mm
    (run a on a tie); the pieces alone do not tell when both runs lie on one piece.

    Raises
    ------
    KeyError
        When neither run lies on ``piece``.
    """
    sides = [s for s in SEAM_SIDES if seam.run(s).piece == piece]
    if not sides:
        raise KeyError(piece)
    if len(sides) == 1:
        return sides[0]
    p = shapely.Point(float(point[0]), float(point[1]))
    return min(sides, key=lambda s: shapely.LineString(garment.run_polyline(seam.run(s))).distance(p))
