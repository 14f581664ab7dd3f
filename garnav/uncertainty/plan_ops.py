"""A command list compiled into the nominal motion on the pattern: turns, straight runs, crossings.

Both the linearised propagation (:mod:`~garnav.uncertainty.propagate`) and the Monte Carlo
(:mod:`~garnav.uncertainty.montecarlo`) walk this one list, so they share the nominal trajectory and
the frames. A straight run is a stretch of a ``go`` inside one piece; a crossing sits between two
runs wherever a ``cross`` notice announces a seam. At a crossing the piece frame changes through the
seam's mapping (:func:`garnav.export.seams.seam_transfer`), linearised at the nominal crossing point
as the rigid motion ``p ↦ R(rot)·(p − point_from) + point_to`` (exact for straight runs of equal
length; for a curved seam it is the mapping's first-order Taylor term there).

Turn time is ``|θ|·(wheel_base/2)/speed`` (wheels at cruise speed, spinning in place), as in the
route summary (docs/route-format.md).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Literal

import numpy as np

from garnav.errors import QueryError
from garnav.export.commands import CommandList, Cross, Go, Start, Turn
from garnav.export.seams import seam_transfer, snap_to_vertex
from garnav.plan.route import seam_side_at
from garnav.model import Garment, Robot

__all__ = ["Step", "MotionPlan", "compile_commands", "rigid_map"]


@dataclass(frozen=True)
class Step:
    """One nominal motion, piece frame of ``piece`` (mm, radians inside).

    Attributes
    ----------
    kind : {"turn", "go", "cross"}
    piece : str
        Piece the step starts on.
    x, y, heading : float
        Nominal pose at the start of the step (mm, mm, rad CCW from the piece's +x).
    length_mm : float
        Run length (go), else 0.
    angle_rad : float
        Piece-frame turn angle (turn), else 0.
    duration_s : float
    seam, to_piece : str
        Crossing only.
    point_to : (2,) array
        Crossing only: the nominal point on ``to_piece``.
    rotation_rad : float
        Crossing only: added to a heading on ``piece`` to get the heading on ``to_piece``.
    tangent : (2,) array
        Crossing only: unit seam tangent at the crossing, ``piece`` frame.
    travelled_mm : float
        Nominal distance driven before the step.
    """

    kind: Literal["turn", "go", "cross"]
    piece: str
    x: float
    y: float
    heading: float
    length_mm: float = 0.0
    angle_rad: float = 0.0
    duration_s: float = 0.0
    seam: str = ""
    to_piece: str = ""
    point_to: tuple[float, float] = (0.0, 0.0)
    rotation_rad: float = 0.0
    tangent: tuple[float, float] = (1.0, 0.0)
    travelled_mm: float = 0.0


@dataclass(frozen=True)
class MotionPlan:
    """The compiled commands: steps in order, the start and the end pose (piece, x, y, heading rad)."""

    steps: tuple[Step, ...]
    start: tuple[str, float, float, float]
    end: tuple[str, float, float, float]
    speed_mm_s: float
    side: str

    @property
    def duration_s(self) -> float:
        return float(sum(s.duration_s for s in self.steps))

    @property
    def distance_mm(self) -> float:
        return float(sum(s.length_mm for s in self.steps))


def rigid_map(step: Step) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """(R (2, 2), point_from (2,), point_to (2,)) of a crossing step's linearised seam mapping."""
    c, s = math.cos(step.rotation_rad), math.sin(step.rotation_rad)
    return np.array([[c, -s], [s, c]]), np.array([step.x, step.y]), np.asarray(step.point_to, dtype=float)


def compile_commands(garment: Garment, commands: CommandList, robot: Robot, start: Start | None = None) -> MotionPlan:
    """The nominal motion of ``commands`` from ``start`` (default: the list's own start).

    Parameters
    ----------
    garment : Garment
    commands : CommandList
    robot : Robot
        Speed and wheel base (turn time).
    start : Start, optional

    Returns
    -------
    MotionPlan

    Raises
    ------
    QueryError
        No start pose, an unknown start piece, or a notice whose seam does not lie on the piece
        the robot is on when it gets there.
    """
    start = start or commands.start
    if start is None:
        raise QueryError("the command list has no start pose")
    try:
        garment.piece(start.piece)
    except KeyError:
        raise QueryError(f"start piece '{start.piece}' is not in garment '{garment.name}'") from None
    sign = 1.0 if commands.side == "outside" else -1.0
    v = float(robot.speed_mm_s)
    half_base = float(robot.wheel_base_mm) / 2.0
    piece = start.piece
    p = np.array([start.x_mm, start.y_mm], dtype=float)
    th = math.radians(start.heading_deg)
    steps: list[Step] = []
    travelled = 0.0
    notices: list[Cross] = []

    def run(length: float) -> None:
        nonlocal p, travelled
        if length <= 0.0:
            return
        steps.append(Step("go", piece, float(p[0]), float(p[1]), th, length_mm=length, duration_s=length / v,
                          travelled_mm=travelled))
        p = p + length * np.array([math.cos(th), math.sin(th)])
        travelled += length

    for cmd in commands.commands:
        if isinstance(cmd, Turn):
            a = sign * math.radians(cmd.angle_deg)
            steps.append(Step("turn", piece, float(p[0]), float(p[1]), th, angle_rad=a,
                              duration_s=abs(a) * half_base / v, travelled_mm=travelled))
            th += a
        elif isinstance(cmd, Cross):
            notices.append(cmd)
        elif isinstance(cmd, Go):
            done = 0.0
            for n in sorted(notices, key=lambda c: c.at_mm):
                at = min(max(float(n.at_mm), done), float(cmd.distance_mm))
                run(at - done)
                done = at
                try:
                    seam = garment.seam(n.seam)
                    side = seam_side_at(garment, seam, piece, p)
                except KeyError:
                    raise QueryError(
                        f"'cross {n.seam}' after {travelled:.1f} mm: the robot is then on piece '{piece}', "
                        f"which seam '{n.seam}' does not touch"
                    ) from None
                tr = seam_transfer(garment, seam, side, snap_to_vertex(garment.run_polyline(seam.run(side)), p))
                steps.append(Step("cross", piece, float(p[0]), float(p[1]), th, seam=n.seam, to_piece=tr.to_piece,
                                  point_to=(float(tr.point_to[0]), float(tr.point_to[1])),
                                  rotation_rad=float(tr.rotation_rad),
                                  tangent=(float(tr.tangent_from[0]), float(tr.tangent_from[1])),
                                  travelled_mm=travelled))
                piece, p, th = tr.to_piece, np.asarray(tr.point_to, dtype=float).copy(), th + tr.rotation_rad
            notices = []
            run(float(cmd.distance_mm) - done)
    begin = (start.piece, float(start.x_mm), float(start.y_mm), math.radians(start.heading_deg))
    return MotionPlan(tuple(steps), begin, (piece, float(p[0]), float(p[1]), th), v, commands.side)
