"""Integrate distance and heading increments on the pattern, crossing seams as the robot would.

Sample i moves the robot by ``ds[i]`` (mm) along its heading at the middle of the interval and turns
it by ``dtheta[i]`` (rad, piece frame): midpoint integration of a unicycle, exact for an arc to
second order (error ds·dθ²/24 per sample). Positions are accumulated with a cumulative sum inside
one piece; at the first sample whose end leaves the piece, that one step is driven with
:func:`garnav.export.replay.replay_commands` (a single ``go``), which finds the seam run it crosses and
carries point and heading over through the seam's mapping — or reports a fall at an open edge —
and the cumulative sum carries on in the new piece. Cost: one vectorised pass per crossing.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np
import shapely

from garnav.errors import QueryError
from garnav.export.commands import CommandList, Go, Start
from garnav.export.replay import ReplayError, replay_commands
from garnav.model import Garment

__all__ = ["DrivenPath", "DriveCrossing", "drive_increments", "OffFabric"]


class OffFabric(QueryError):
    """The increments drive the robot off the fabric; ``sample`` is the step that leaves it."""

    def __init__(self, message: str, sample: int):
        super().__init__(message)
        self.sample = sample


@dataclass(frozen=True)
class DriveCrossing:
    """A seam crossed during step ``sample`` (between pose ``sample`` and ``sample + 1``)."""

    sample: int
    seam: str
    from_piece: str
    to_piece: str
    point_from: tuple[float, float]
    point_to: tuple[float, float]


@dataclass(frozen=True)
class DrivenPath:
    """Poses after every increment.

    Attributes
    ----------
    pieces : tuple of str
        The piece names in order of first visit.
    piece_index : (n + 1,) int array
        Index into ``pieces`` of each pose.
    xy : (n + 1, 2) array
        Positions, mm, in the frame of each pose's piece.
    heading : (n + 1,) array
        Headings, rad, same frames.
    crossings : tuple of DriveCrossing
    """

    pieces: tuple[str, ...]
    piece_index: np.ndarray
    xy: np.ndarray
    heading: np.ndarray
    crossings: tuple[DriveCrossing, ...]

    def piece_of(self, i: int) -> str:
        return self.pieces[int(self.piece_index[i])]

    def legs(self):
        """Route-shaped view (``legs`` with piece and points (m, 2), ``crossings``) for drawing and lifting."""
        from types import SimpleNamespace

        legs, crossings = [], []
        start, head = 0, []
        for c in self.crossings:
            body = self.xy[start:c.sample + 1]
            legs.append(SimpleNamespace(piece=c.from_piece, points=np.vstack(head + [body, np.asarray(c.point_from)[None]])))
            crossings.append(SimpleNamespace(seam=c.seam, from_piece=c.from_piece, to_piece=c.to_piece,
                                             point_from=np.asarray(c.point_from), point_to=np.asarray(c.point_to)))
            head, start = [np.asarray(c.point_to)[None]], max(start, c.sample + 1)
        legs.append(SimpleNamespace(piece=self.piece_of(len(self.xy) - 1), points=np.vstack(head + [self.xy[start:]])))
        return SimpleNamespace(legs=tuple(legs), crossings=tuple(crossings))


#: A crossing this close (mm) to a planned one on the same seam uses the planned crossing's mapping.
PLANNED_MATCH_MM = 2.0


def drive_increments(garment: Garment, start: tuple[str, float, float, float], ds: np.ndarray,
                     dtheta: np.ndarray, planned: Sequence = ()) -> DrivenPath:
    """Integrate ``(ds, dtheta)`` (n,) from ``start`` = (piece, x mm, y mm, heading rad).

    ``planned`` are crossing steps of a :class:`~garnav.uncertainty.plan_ops.MotionPlan` (seam,
    point_from, point_to, rotation). A crossing within :data:`PLANNED_MATCH_MM` of one of them, on the
    same seam and piece, is carried over by that crossing's linearised mapping (as the Monte Carlo
    does), not by the seam map at the hit point: the seam map's rotation jumps at the vertices of a
    seam polyline, and planned crossings often sit exactly on one, so a hit 1e-5 mm to the other side
    would turn the heading by the vertex angle.

    Raises
    ------
    OffFabric
        A step runs off an open edge (``.sample`` = its index), or the start is not on the piece.
    """
    ds = np.asarray(ds, dtype=float)
    dth = np.asarray(dtheta, dtype=float)
    n = len(ds)
    piece, x0, y0, h0 = start
    try:
        poly = garment.piece(piece).polygon
    except KeyError:
        raise OffFabric(f"start piece '{piece}' is not in garment '{garment.name}'", -1) from None
    if not shapely.intersects_xy(poly, x0, y0):
        raise OffFabric(f"start ({x0:.1f}, {y0:.1f}) mm is outside piece '{piece}'", -1)
    names: list[str] = [piece]
    pidx = np.zeros(n + 1, dtype=int)
    xy = np.zeros((n + 1, 2))
    th = np.zeros(n + 1)
    xy[0] = (x0, y0)
    th[0] = h0
    crossings: list[DriveCrossing] = []
    i0 = 0
    p0 = np.array([x0, y0], dtype=float)
    t0 = float(h0)
    while i0 < n:
        cur = names.index(piece) if piece in names else len(names)
        if piece not in names:
            names.append(piece)
        theta = t0 + np.cumsum(dth[i0:])
        mid = theta - 0.5 * dth[i0:]
        pts = p0 + np.cumsum(ds[i0:, None] * np.column_stack([np.cos(mid), np.sin(mid)]), axis=0)
        inside = shapely.intersects_xy(garment.piece(piece).polygon, pts[:, 0], pts[:, 1])
        out = np.flatnonzero(~inside)
        stop = len(pts) if len(out) == 0 else int(out[0])
        xy[i0 + 1:i0 + 1 + stop] = pts[:stop]
        th[i0 + 1:i0 + 1 + stop] = theta[:stop]
        pidx[i0 + 1:i0 + 1 + stop] = cur
        if len(out) == 0:
            break
        k = i0 + stop  # the step that leaves the piece
        prev = xy[k]
        step_h = float(mid[stop])
        length = float(ds[k])
        back = length < 0
        go_h = step_h + math.pi if back else step_h
        try:
            rep = replay_commands(garment, CommandList((Go(abs(length)),), "outside",
                                                       Start(piece, float(prev[0]), float(prev[1]), math.degrees(go_h))))
        except ReplayError as exc:
            raise OffFabric(f"step {k + 1}: {exc}", k) from None
        end = rep.end
        rot = math.remainder(math.radians(end.heading_deg) - go_h, 2 * math.pi)
        p_end = np.array([end.x_mm, end.y_mm])
        match = _planned(planned, rep.crossings) if len(rep.crossings) == 1 else None
        if match is not None:
            c = rep.crossings[0]
            cr, sr = math.cos(match.rotation_rad), math.sin(match.rotation_rad)
            q = prev + abs(length) * np.array([math.cos(go_h), math.sin(go_h)]) - np.array([match.x, match.y])
            p_end = np.asarray(match.point_to) + np.array([cr * q[0] - sr * q[1], sr * q[0] + cr * q[1]])
            landing = np.asarray(match.point_to) + np.array(
                [cr * (c.point_from[0] - match.x) - sr * (c.point_from[1] - match.y),
                 sr * (c.point_from[0] - match.x) + cr * (c.point_from[1] - match.y)])
            rot = match.rotation_rad
            crossings.append(DriveCrossing(k, c.seam, c.from_piece, c.to_piece, c.point_from,
                                           (float(landing[0]), float(landing[1]))))
        else:
            for c in rep.crossings:
                crossings.append(DriveCrossing(k, c.seam, c.from_piece, c.to_piece, c.point_from, c.point_to))
        piece = end.piece
        if piece not in names:
            names.append(piece)
        p0 = p_end
        t0 = float(theta[stop]) + rot
        xy[k + 1] = p0
        th[k + 1] = t0
        pidx[k + 1] = names.index(piece)
        i0 = k + 1
    return DrivenPath(tuple(names), pidx, xy, th, tuple(crossings))


def _planned(planned: Sequence, crossings):
    """The planned crossing step matching the single replay crossing, or None."""
    c = crossings[0]
    for st in planned:
        if st.seam == c.seam and st.piece == c.from_piece and \
                math.hypot(st.x - c.point_from[0], st.y - c.point_from[1]) <= PLANNED_MATCH_MM:
            return st
    return None
