"""The result of fleet planning: one timed trajectory per robot, and what follows from it."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from garnav.fleet.motion import Move
from garnav.model import Robot

__all__ = ["RobotPlan", "Schedule", "FleetError", "FleetPlanError"]

from garnav.errors import GarnavError, NoRouteError


class FleetError(GarnavError):
    """A tasks file asks for something impossible before any planning: overlapping starts, a
    robot that does not fit its meeting slot, an unknown robot or landmark."""


class FleetPlanError(NoRouteError):
    """The tasks are valid but no conflict-free schedule was found (or not within the time
    limit); the message names the robots that conflict and where."""


@dataclass(frozen=True, eq=False)
class RobotPlan:
    """One robot's timed trajectory.

    Attributes
    ----------
    name : str
        The task's name (the physical robot).
    robot : Robot
        Its profile (radius, speed, side).
    moves : tuple of Move
        Time-ordered straight moves and waits; consecutive moves on different pieces meet at a
        seam (same fabric point, same time); the last move is the endless wait at the goal.
    final_heading_deg : float
        Heading at the goal, piece frame of the goal (a meeting's common heading, when in one).
    lower_bound_s : float
        Single-robot lower bound, s: earliest start plus the driving time of the shorter of the
        robot's own route (:meth:`garnav.plan.Planner.route`) and its shortest roadmap path
        (which ignores seam crossing costs, so it can be a little shorter).
    """

    name: str
    robot: Robot
    moves: tuple[Move, ...]
    final_heading_deg: float
    lower_bound_s: float

    @property
    def arrive_s(self) -> float:
        """Time the robot reaches its goal, s."""
        return self.moves[-1].t0

    @property
    def depart_s(self) -> float:
        for m in self.moves:
            if m.p0 != m.p1:
                return m.t0
        return self.arrive_s

    @property
    def driving_s(self) -> float:
        return float(sum(m.t1 - m.t0 for m in self.moves[:-1] if m.p0 != m.p1))

    @property
    def waiting_s(self) -> float:
        """Time spent standing between departure and arrival, s."""
        return max(0.0, self.arrive_s - self.depart_s - self.driving_s)

    @property
    def energy_j(self) -> float | None:
        """Electrical energy from time 0 to the arrival on level fabric, J, when the robot has a
        physics profile (docs/physics.md): driving at ``power_w``, standing at ``idle_power_w``.
        Climbs against gravity need the drape (:func:`garnav.mechanics.evaluate.route_mechanics`)."""
        phys = getattr(self.robot, "physics", None)
        if phys is None:
            return None
        return float(phys.power_w * self.driving_s + phys.idle_power_w * (self.arrive_s - self.driving_s))

    @property
    def length_mm(self) -> float:
        return float(sum(math.dist(m.p0, m.p1) for m in self.moves))

    def waypoints(self) -> list[tuple[float, str, float, float]]:
        """(t s, piece, x mm, y mm) at every move boundary; a seam crossing gives two waypoints at
        the same time on the two pieces; the last is the arrival at the goal."""
        out: list[tuple[float, str, float, float]] = []
        for m in self.moves:
            if not out or out[-1][1] != m.piece or out[-1][0] != m.t0 or (out[-1][2], out[-1][3]) != m.p0:
                out.append((m.t0, m.piece, m.p0[0], m.p0[1]))
            if math.isfinite(m.t1):
                out.append((m.t1, m.piece, m.p1[0], m.p1[1]))
        dedup = [out[0]]
        for w in out[1:]:
            if w != dedup[-1]:
                dedup.append(w)
        return dedup


@dataclass(frozen=True, eq=False)
class Schedule:
    """Conflict-free timed trajectories of every robot.

    Attributes
    ----------
    plans : tuple of RobotPlan
        In task order.
    gap_mm : float
        Distance kept between any two robots beyond their radii.
    order : tuple of str
        The priority order that succeeded (first = planned first).
    orders_tried : int
    planning_s : float
        Wall time of the planning, s.
    method : str
    """

    plans: tuple[RobotPlan, ...]
    gap_mm: float
    order: tuple[str, ...]
    orders_tried: int
    planning_s: float
    method: str = "prioritised planning with safe-interval path planning (SIPP)"

    @property
    def makespan_s(self) -> float:
        """Time by which every robot is at its goal, s."""
        return max(p.arrive_s for p in self.plans)

    @property
    def sum_driving_s(self) -> float:
        return float(sum(p.driving_s for p in self.plans))

    @property
    def lower_bound_s(self) -> float:
        """Largest single-robot lower bound (start time + own shortest route), s."""
        return max(p.lower_bound_s for p in self.plans)

    def plan(self, name: str) -> RobotPlan:
        for p in self.plans:
            if p.name == name:
                return p
        raise KeyError(name)

    def headings(self, plan: RobotPlan) -> np.ndarray:
        """Heading (deg) leaving each of ``plan.waypoints()`` (arriving one for the last)."""
        wps = plan.waypoints()
        out = []
        last = plan.final_heading_deg
        for i in range(len(wps) - 1, -1, -1):
            if i + 1 < len(wps) and wps[i + 1][1] == wps[i][1] and wps[i + 1][0] > wps[i][0]:
                dx, dy = wps[i + 1][2] - wps[i][2], wps[i + 1][3] - wps[i][3]
                if math.hypot(dx, dy) > 1e-9:
                    last = math.degrees(math.atan2(dy, dx)) % 360.0
            out.append(last)
        return np.array(out[::-1])
