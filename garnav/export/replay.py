"""Replay a command list on the flat pattern: "what will my robot do?".

The robot starts at a pose in a piece frame. A :class:`~garnav.export.commands.Turn` changes its
heading (sign flipped for a robot on the inside, which sees the pieces mirrored); a
:class:`~garnav.export.commands.Go` moves it straight. When a go reaches the piece outline where a
seam run lies, the robot carries on from the partner point on the other run, its heading keeping its
angle to the seam tangent (:func:`garnav.export.seams.seam_transfer`). Reaching an open edge (hem,
cuff, neckline, opening) before the go is done is a fall: :class:`ReplayError`.

A go that ends exactly on a seam crosses it only if a ``cross`` notice announced the seam there;
otherwise the robot stops on this side (physically the same place, and a following turn is the same
rotation in either frame). Command lists are written to 0.01 mm and 0.01° (docs/commands.md), so
"exactly" allows for that rounding: see :data:`NOTICE_TOL_MM`.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import shapely

from garnav.errors import QueryError
from garnav.export.path import wrap_deg
from garnav.export.commands import CommandList, Cross, Go, Start, Turn, Wait
from garnav.export.steer import NOTICE_TOL_MM as STEER_NOTICE_TOL_MM
from garnav.export.seams import VERTEX_SNAP_MM, locate_on_run, seam_transfer, snap_to_vertex
from garnav.model import SEAM_SIDES, Garment, SeamSide

__all__ = ["Pose", "ReplayCrossing", "Replay", "ReplayError", "replay_commands", "MAX_CROSSINGS_PER_GO"]

# How close a seam hit must be to a go's end to count as "at the end" (mm).
END_TOL_MM = 1e-6
# How close a hit point must be to a seam run to lie on it (mm).
ON_RUN_TOL_MM = 1e-6
# How close a hit must be to a notice's announced distance to match it (mm): one unit of the
# written 0.01 mm; a go ending this close to an announced seam, short of it or past it, ends on it.
# An announced seam whose run passes within VERTEX_SNAP_MM of the hit (next to a corner) matches
# too, and a crossing that close to a run's vertex is carried over at the vertex.
NOTICE_TOL_MM = STEER_NOTICE_TOL_MM
# A hit is an exit when the point EXIT_PROBE_MM beyond it lies more than EXIT_DEPTH_MM outside the
# piece: a crossing at angle α puts it 0.01·sin α outside, so crossings steeper than 0.06° count,
# while a robot running along a seam edge, a hair (well under 1e-5 mm) off it, does not cross.
EXIT_PROBE_MM = 1e-2
EXIT_DEPTH_MM = 1e-5
# Crossings in a row without moving (a heading out of a corner where seams meet) before giving up.
_MAX_STALLS = 16
#: Most seam crossings one go may make. A go round and round a tube (a sleeve, a torso) crosses its
#: seam once a lap; each crossing costs about a millisecond, so without a bound a long go on a
#: thin tube is minutes of work. No route of a garment crosses seams this often in one straight go.
MAX_CROSSINGS_PER_GO = 1000


class ReplayError(QueryError):
    """The commands drive the robot off the fabric, or the start pose is not on the garment."""


@dataclass(frozen=True)
class Pose:
    """Where the robot is: piece, position (mm, piece frame), heading (deg CCW from piece +x)."""

    piece: str
    x_mm: float
    y_mm: float
    heading_deg: float


@dataclass(frozen=True)
class ReplayCrossing:
    """A seam the robot drove over during the replay."""

    seam: str
    from_piece: str
    to_piece: str
    point_from: tuple[float, float]
    point_to: tuple[float, float]
    travelled_mm: float
    announced: bool
    crossable: bool


@dataclass(frozen=True)
class Replay:
    """The result of a replay.

    Attributes
    ----------
    poses : tuple of Pose
        The start, then at every seam crossing the pose on each side, and the pose after every
        go. A turn updates the heading of the latest pose (so a pose's heading is the direction the
        robot leaves it in, as for route waypoints).
    crossings : tuple of ReplayCrossing
    distance_mm : float
        Total distance driven.
    unmatched_notices : tuple of Cross
        Notices whose seam the robot did not meet where announced.
    wait_s : float
        Total time of the ``wait`` commands, s (a wait leaves the pose as it is).
    """

    poses: tuple[Pose, ...]
    crossings: tuple[ReplayCrossing, ...]
    distance_mm: float
    unmatched_notices: tuple[Cross, ...]
    wait_s: float = 0.0

    @property
    def end(self) -> Pose:
        return self.poses[-1]


@dataclass(frozen=True)
class _Boundary:
    a: np.ndarray  # (m, 2) segment starts
    e: np.ndarray  # (m, 2) segment vectors, oriented so the fabric lies on their left
    label: tuple[str, ...]  # edge or opening name per segment
    runs: tuple[tuple[str, SeamSide, np.ndarray], ...]  # (seam, side, run polyline) on this piece
    polygon: shapely.Geometry  # the piece, openings as holes


def _boundaries(garment: Garment) -> dict[str, _Boundary]:
    out: dict[str, _Boundary] = {}
    for piece in garment.pieces:
        starts, vecs, labels = [], [], []
        for edge in piece.edges:
            pts = edge.array
            starts.append(pts[:-1])
            vecs.append(np.diff(pts, axis=0))
            labels += [f"edge '{edge.name}'"] * (len(pts) - 1)
        for opening in piece.openings:
            ring = opening.array
            x, y = ring[:, 0], ring[:, 1]
            area2 = float(np.sum(x * np.roll(y, -1) - np.roll(x, -1) * y))
            if area2 > 0:  # holes run clockwise so the fabric is on their left
                ring = ring[::-1]
            closed = np.vstack([ring, ring[:1]])
            starts.append(closed[:-1])
            vecs.append(np.diff(closed, axis=0))
            labels += [f"opening '{opening.name}'"] * len(ring)
        runs = []
        for seam in garment.seams:
            for side in SEAM_SIDES:
                if seam.run(side).piece == piece.name:
                    runs.append((seam.name, side, garment.run_polyline(seam.run(side))))
        out[piece.name] = _Boundary(np.vstack(starts), np.vstack(vecs), tuple(labels), tuple(runs), piece.polygon)
    return out


def _first_exit(bound: _Boundary, p: np.ndarray, u: np.ndarray, reach: float):
    """Smallest t in [-END_TOL, reach] where p + t·u leaves the piece; (t, segment) or None.

    A boundary segment only counts when the motion really goes outside there: the point
    ``EXIT_PROBE_MM`` beyond the hit must lie more than ``EXIT_DEPTH_MM`` outside the piece. So a
    route that touches an edge at a vertex, or runs along it, does not cross.
    """
    e = bound.e
    w = bound.a - p
    cross_ue = u[0] * e[:, 1] - u[1] * e[:, 0]
    elen = np.hypot(e[:, 0], e[:, 1])
    leaving = cross_ue > 1e-12 * np.maximum(elen, 1e-300)
    safe = np.where(leaving, cross_ue, 1.0)
    t = (w[:, 0] * e[:, 1] - w[:, 1] * e[:, 0]) / safe
    s = (w[:, 0] * u[1] - w[:, 1] * u[0]) / safe
    slack = END_TOL_MM / np.maximum(elen, 1e-300)  # segment ends get END_TOL_MM of slack (mm)
    ok = leaving & (s >= -slack) & (s <= 1.0 + slack) & (t >= -END_TOL_MM) & (t <= reach)
    idx = np.flatnonzero(ok)
    for k in idx[np.argsort(t[idx], kind="stable")]:
        probe = p + (max(float(t[k]), 0.0) + EXIT_PROBE_MM) * u
        if shapely.distance(bound.polygon, shapely.Point(probe[0], probe[1])) > EXIT_DEPTH_MM:
            return float(t[k]), int(k)
    return None


def _runs_under(bound: _Boundary, q: np.ndarray, tol: float = ON_RUN_TOL_MM) -> list[tuple[float, str, SeamSide]]:
    """Seam runs of the piece passing within ``tol`` (mm) of q: (distance, seam, side), nearest first."""
    out = []
    for seam_name, side, pts in bound.runs:
        _, dist = locate_on_run(pts, q)
        if dist <= tol:
            out.append((dist, seam_name, side))
    return sorted(out)


def _announced(runs, notices: list[Cross], at_mm: float):
    """The first of ``runs`` that a pending notice announces at ``at_mm``: (seam, side, notice)."""
    for _, seam_name, side in runs:
        for n in notices:
            if n.seam == seam_name and abs(n.at_mm - at_mm) <= NOTICE_TOL_MM:
                return seam_name, side, n
    return None


def replay_commands(garment: Garment, commands: CommandList, start: Start | None = None) -> Replay:
    """Integrate ``commands`` on the pattern from ``start`` (default: ``commands.start``).

    Parameters
    ----------
    garment : Garment
    commands : CommandList
        Its ``side`` sets the turn sign (inside: mirrored).
    start : Start, optional

    Returns
    -------
    Replay

    Raises
    ------
    ReplayError
        No start pose, an unknown start piece, or a go that runs off an open edge.
    """
    start = start or commands.start
    if start is None:
        raise ReplayError("replay needs a start pose: the command list has no 'start' line")
    bounds = _boundaries(garment)
    if start.piece not in bounds:
        raise ReplayError(f"start piece '{start.piece}' is not in garment '{garment.name}'")
    state = _Drive(garment, bounds, start, 1.0 if commands.side == "outside" else -1.0)
    waited = 0.0
    for cmd in commands.commands:
        if isinstance(cmd, Wait):
            waited += float(cmd.seconds)
        elif isinstance(cmd, Turn):
            state.turn(cmd)
        elif isinstance(cmd, Cross):
            state.notices.append(cmd)
        elif isinstance(cmd, Go):
            state.go(cmd)
        else:  # pragma: no cover - CommandList is typed
            raise TypeError(f"not a command: {cmd!r}")
    state.unmatched.extend(state.notices)
    return Replay(tuple(state.poses), tuple(state.crossings), state.travelled, tuple(state.unmatched), waited)


class _Drive:
    """The robot's state during one replay (local to :func:`replay_commands`): where it is, what it
    has done, and the crossing notices still pending. One method per phase of a command."""

    def __init__(self, garment: Garment, bounds: dict[str, _Boundary], start: Start, sign: float):
        self.garment = garment
        self.bounds = bounds
        self.crossable = {s.name: s.crossable for s in garment.seams}
        self.sign = sign  # +1 outside, -1 inside (mirrored turns)
        self.piece = start.piece
        self.p = np.array([start.x_mm, start.y_mm], dtype=float)
        self.heading = math.radians(start.heading_deg)
        self.poses: list[Pose] = [_pose(self.piece, self.p, self.heading)]
        self.crossings: list[ReplayCrossing] = []
        self.unmatched: list[Cross] = []
        self.notices: list[Cross] = []
        self.travelled = 0.0  # mm, over the finished goes

    def turn(self, cmd: Turn) -> None:
        """Turn in place: the last pose takes the new heading."""
        self.heading += self.sign * math.radians(cmd.angle_deg)
        last = self.poses[-1]
        self.poses[-1] = Pose(last.piece, last.x_mm, last.y_mm, wrap_deg(self.heading))

    def cross(self, match: tuple[str, SeamSide, Cross | None], done: float) -> None:
        """Carry the robot over seam ``match`` = (seam, side, announcing notice or None), ``done`` mm
        into the current go."""
        seam_name, side, notice = match
        if notice is not None:
            self.notices.remove(notice)
        seam = self.garment.seam(seam_name)
        tr = seam_transfer(self.garment, seam, side, snap_to_vertex(self.garment.run_polyline(seam.run(side)), self.p))
        piece, p = self.piece, self.p
        last = self.poses[-1]
        if last.piece != piece or math.hypot(last.x_mm - p[0], last.y_mm - p[1]) > END_TOL_MM:
            self.poses.append(_pose(piece, p, self.heading))
        self.crossings.append(
            ReplayCrossing(seam_name, piece, tr.to_piece, (float(p[0]), float(p[1])),
                           (float(tr.point_to[0]), float(tr.point_to[1])), self.travelled + done,
                           notice is not None, self.crossable.get(seam_name, True))
        )
        self.piece, self.p = tr.to_piece, tr.point_to.astype(float)
        self.heading = self.heading + tr.rotation_rad
        self.poses.append(_pose(self.piece, self.p, self.heading))

    def go(self, cmd: Go) -> None:
        """Drive straight ``cmd.distance_mm``, crossing seams where the line meets them."""
        remaining, done, ended_on_transfer = self._drive(float(cmd.distance_mm))
        if not ended_on_transfer:
            self.p = self.p + remaining * np.array([math.cos(self.heading), math.sin(self.heading)])
            done += remaining
            self.poses.append(_pose(self.piece, self.p, self.heading))
        self.travelled += done
        self.unmatched.extend(self.notices)
        self.notices = []

    def _drive(self, remaining: float) -> tuple[float, float, bool]:
        """Drive from exit to exit of the pieces until the go is used up or ends inside a piece:
        (distance still to drive on the last piece, distance done, whether the go ended exactly on
        a seam transfer)."""
        done = 0.0
        stalls = 0
        first = len(self.crossings)
        while True:
            if len(self.crossings) - first > MAX_CROSSINGS_PER_GO:
                raise ReplayError(
                    f"after {self.travelled + done:.3f} mm the robot has crossed seams {MAX_CROSSINGS_PER_GO} times "
                    f"in one go (last '{self.crossings[-1].seam}', now on piece '{self.piece}'), with "
                    f"{remaining:.3f} mm of it still to drive: the go laps the garment; replay stops at "
                    f"{MAX_CROSSINGS_PER_GO} crossings per go"
                )
            u = np.array([math.cos(self.heading), math.sin(self.heading)])
            bound = self.bounds[self.piece]
            hit = _first_exit(bound, self.p, u, remaining + (NOTICE_TOL_MM if self.notices else END_TOL_MM))
            if hit is None:
                return remaining, done, False
            t, seg = hit
            q = self.p + max(t, 0.0) * u
            at_end = t >= remaining - END_TOL_MM
            runs = _runs_under(bound, q)
            # an announced seam may be met a rounding away from where it ends (a corner of the piece)
            match = _announced(_runs_under(bound, q, VERTEX_SNAP_MM), self.notices, done + min(max(t, 0.0), remaining))
            if not runs and match is None:
                if at_end:
                    return remaining, done, False
                raise ReplayError(
                    f"after {self.travelled + done + t:.3f} mm the robot drives off piece '{self.piece}' "
                    f"through open {bound.label[seg]} at ({q[0]:.3f}, {q[1]:.3f}) mm"
                )
            step = min(max(t, 0.0), remaining)
            if match is None:
                if at_end:
                    return remaining, done, False
                match = (runs[0][1], runs[0][2], None)
            done += step
            remaining -= step
            self.p = q
            self.cross(match, done)
            # further crossings announced at the same place: seams meeting at a corner
            while (chained := _announced(_runs_under(self.bounds[self.piece], self.p, VERTEX_SNAP_MM), self.notices,
                                         done)) is not None:
                self.cross(chained, done)
            # a go ending within NOTICE_TOL_MM past an announced seam ends on it (its distance is rounded)
            if remaining <= (NOTICE_TOL_MM if match[2] is not None else END_TOL_MM):
                return 0.0, done, True
            stalls = stalls + 1 if step <= END_TOL_MM else 0
            if stalls > _MAX_STALLS:
                raise ReplayError(
                    f"after {self.travelled + done:.3f} mm the robot is at a point of piece '{self.piece}' "
                    f"({self.p[0]:.3f}, {self.p[1]:.3f}) mm where several seams meet, and its heading leads "
                    f"out across each of them in turn; no crossing there was announced"
                )


def _pose(piece: str, p: np.ndarray, heading: float) -> Pose:
    return Pose(piece, float(p[0]), float(p[1]), wrap_deg(heading))
