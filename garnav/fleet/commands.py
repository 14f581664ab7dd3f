"""A robot's timed trajectory as ``garnav-commands``: turn, go, cross and ``wait``.

The driving part (every move that changes position) goes through
:func:`garnav.export.commands.route_commands` as one path; each stop of the schedule is then put
back as a :class:`~garnav.export.commands.Wait` at the distance where it happens (a ``go`` is split
there, its seam notices following the part they belong to). A meeting's common heading ends the
list with a turn in place.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from garnav.errors import QueryError
from garnav.export.commands import Command, CommandList, Cross, Go, Turn, Wait, route_commands
from garnav.export.seams import locate_on_run, seam_transfer
from garnav.export.steer import round_deg, round_mm, round_s
from garnav.fleet.schedule import RobotPlan
from garnav.model import Garment
from garnav.plan import Crossing, Leg

__all__ = ["plan_commands"]

_TOL_MM = 1e-6


@dataclass(frozen=True)
class _Path:
    legs: tuple[Leg, ...]
    crossings: tuple[Crossing, ...]


def _seam_between(garment: Garment, pa: str, xa: np.ndarray, pb: str, xb: np.ndarray) -> tuple[str, float]:
    for s in garment.seams:
        for side, run in (("a", s.a), ("b", s.b)):
            if run.piece != pa:
                continue
            poly = garment.run_polyline(run)
            at, dist = locate_on_run(poly, xa)
            if dist > _TOL_MM:
                continue
            tr = seam_transfer(garment, s, side, xa)  # type: ignore[arg-type]
            if tr.to_piece == pb and float(np.hypot(*(tr.point_to - xb))) <= _TOL_MM:
                return s.name, tr.fraction
    raise QueryError(f"no seam joins {pa} ({xa[0]:.3f}, {xa[1]:.3f}) mm to {pb} ({xb[0]:.3f}, {xb[1]:.3f}) mm")


def _path(garment: Garment, plan: RobotPlan) -> tuple[_Path, list[tuple[float, float]]]:
    """The driven path and the stops (distance mm, duration s)."""
    legs: list[tuple[str, list[np.ndarray]]] = []
    crossings: list[Crossing] = []
    stops: list[tuple[float, float]] = []
    travelled = 0.0
    for m in plan.moves:
        p0, p1 = np.asarray(m.p0, float), np.asarray(m.p1, float)
        if not legs:
            legs.append((m.piece, [p0]))
        elif legs[-1][0] != m.piece or float(np.hypot(*(legs[-1][1][-1] - p0))) > _TOL_MM:
            # a seam crossing (on a seam joining a piece to itself only the position jumps)
            prev = legs[-1][1][-1]
            seam, frac = _seam_between(garment, legs[-1][0], prev, m.piece, p0)
            crossings.append(Crossing(seam, legs[-1][0], m.piece, prev.copy(), p0.copy(), frac, 0.0))
            legs.append((m.piece, [p0]))
        if m.p0 == m.p1:
            if math.isfinite(m.t1) and m.t1 > m.t0:
                stops.append((travelled, m.t1 - m.t0))
            continue
        legs[-1][1].append(p1)
        travelled += float(np.hypot(*(p1 - p0)))
    out_legs = tuple(Leg(piece, np.array(pts if len(pts) > 1 else pts * 2)) for piece, pts in legs)
    return _Path(out_legs, tuple(crossings)), stops


def _insert_waits(commands: list[Command], stops: list[tuple[float, float]]) -> list[Command]:
    out: list[Command] = []
    stops = sorted(stops)
    k = 0
    done = 0.0  # distance driven before the current command
    pending: list[Cross] = []
    for c in commands:
        if isinstance(c, Cross):
            pending.append(c)
            continue
        if isinstance(c, Go):
            start, rest = done, c.distance_mm
            while k < len(stops) and stops[k][0] < start + rest - _TOL_MM:
                cut = max(stops[k][0] - start, 0.0)
                if cut > _TOL_MM or pending:
                    first = [n for n in pending if n.at_mm <= cut + _TOL_MM]
                    out.extend(first)
                    cut = round_mm(cut)
                    out.append(Go(cut))
                    pending = [Cross(n.seam, round_mm(n.at_mm - cut), n.angle_deg, n.lead, n.lead_mm)
                               for n in pending if n.at_mm > cut + _TOL_MM]
                    start, rest = start + cut, round_mm(rest - cut)
                out.append(Wait(round_s(stops[k][1])))
                k += 1
            out.extend(pending)
            pending = []
            out.append(Go(rest))
            done = start + rest
            continue
        while k < len(stops) and stops[k][0] <= done + _TOL_MM:
            out.append(Wait(round_s(stops[k][1])))
            k += 1
        out.append(c)
    out.extend(pending)
    out.extend(Wait(round_s(s[1])) for s in stops[k:])
    return out


def plan_commands(garment: Garment, plan: RobotPlan) -> CommandList:
    """Commands that drive ``plan`` (waits included) and end facing ``plan.final_heading_deg``."""
    path, stops = _path(garment, plan)
    base = route_commands(path, garment, plan.robot, tolerance_mm=0.0)  # timed: every vertex kept
    cmds = _insert_waits(list(base.commands), stops)
    # the final heading: the last step's direction in the goal piece's frame
    last = path.legs[-1]
    steps = np.diff(last.points, axis=0)
    moving = [d for d in steps if np.hypot(*d) > _TOL_MM]
    sign = 1.0 if plan.robot.side == "outside" else -1.0
    if moving:
        now = math.atan2(moving[-1][1], moving[-1][0])
    elif base.start is not None and len(path.legs) == 1:
        now = math.radians(base.start.heading_deg)
    else:
        now = None
    if now is not None:
        turn = math.degrees(math.remainder(math.radians(plan.final_heading_deg) - now, 2 * math.pi))
        if round_deg(turn) != 0.0:
            cmds.append(Turn(sign * round_deg(turn)))
    return CommandList(tuple(cmds), side=base.side, start=base.start)
