"""The station: links to its robots, their estimated poses, plans sent and tracked, the emergency stop.

One :class:`Station` holds one :class:`~garnav.link.session.LinkSession` per robot. :meth:`connect`
greets every robot (``hello`` → ``profile``); :meth:`poll` receives, updates each robot's
:class:`~garnav.station.estimate.PoseEstimate` from its telemetry and sends heartbeats;
:meth:`goto` plans from the estimated pose with the project's planner (:class:`garnav.plan.Planner`;
several robots at once go through the fleet planner, :class:`garnav.fleet.FleetPlanner`), refuses
a route that crosses a hard keep-out (:mod:`garnav.station.safety`), and sends the commands;
:meth:`emergency_stop` sends ``stop`` to every robot before anything else and repeats it until each
one acknowledges. Every message sent and received, and every event, goes into :attr:`Station.records`
(the ``--log`` JSONL file, docs/link.md).

A robot is *arrived* when it reported its plan done, a telemetry sample from after the plan's end
came in (so a lost last sample cannot cut the estimate short), and its estimated position is
within the arrival tolerance of the goal. A robot is *lost* when a reliable message to it is given up or it
is silent for :data:`LOST_AFTER_S`; the station then stops it (it stops itself too, on its
heartbeat timeout).
"""

from __future__ import annotations

import dataclasses
import json
import math
import time
from dataclasses import dataclass, field
from types import SimpleNamespace
from typing import Callable

import numpy as np

from garnav.atomic import write_text_atomic
from garnav.errors import GarnavError, QueryError
from garnav.export.commands import CommandList, Start, Turn, route_commands
from garnav.link.protocol import LinkError, commands_message
from garnav.link.session import LinkSession
from garnav.link.transport import Transport
from garnav.model import Garment, Robot
from garnav.plan import PiecePoint, Planner
from garnav.station.estimate import EncoderSettings, PoseEstimate
from garnav.station.safety import check_route
from garnav.uncertainty.model import OdometryModel
from garnav.uncertainty.plan_ops import compile_commands

__all__ = ["Station", "RobotLink", "HEARTBEAT_S", "LOST_AFTER_S", "ARRIVAL_TOLERANCE_MM"]

#: Heartbeat period of the station, wall s.
HEARTBEAT_S = 0.2
#: The heartbeat timeout the station asks its robots for, wall s (5 heartbeats).
HEARTBEAT_TIMEOUT_S = 1.0
#: Silence after which the station counts a robot as lost, wall s.
LOST_AFTER_S = 2.0
#: Estimated position within this distance of the goal counts as arrived, mm.
ARRIVAL_TOLERANCE_MM = 5.0


@dataclass
class RobotLink:
    """The station's view of one robot."""

    name: str
    session: LinkSession
    placed: tuple[str, float, float, float] | None = None
    profile: dict | None = None
    estimate: PoseEstimate | None = None
    state: str = "unknown"
    battery: float | None = None
    plan_id: int = 0
    commands: CommandList | None = None
    route: object | None = None
    goal: PiecePoint | None = None
    done: dict | None = None
    settled: bool = False
    errors: list[str] = field(default_factory=list)
    lost: str | None = None
    stop_seq: int | None = None
    stop_acked: bool = False
    robot: Robot | None = None

    @property
    def arrived_distance_mm(self) -> float:
        if self.estimate is None or self.goal is None:
            return math.inf
        p = self.estimate.pose
        return math.hypot(p[1] - self.goal.x, p[2] - self.goal.y) if p[0] == self.goal.piece else math.inf


class Station:
    """The base station (see the module notes).

    Parameters
    ----------
    garment : Garment
    transports : dict of name -> Transport
        One open transport per robot (:func:`garnav.link.transport.open_transport`).
    placements : dict of name -> (piece, x mm, y mm, heading deg), optional
        Where each robot was put down; overrides the ``placed`` of its profile.
    locate_3d : callable, optional
        World point → (piece, x, y), for ``xyz:`` points and picked points (needs a drape).
    cache_dir : path, optional
        Navigation-graph cache of the planner.
    tolerance_mm : float
        Arrival tolerance, mm.
    clock, wall : callables
        Monotonic seconds for timing; wall-clock seconds for the log.
    """

    def __init__(self, garment: Garment, transports: dict[str, Transport], *, placements: dict | None = None,
                 locate_3d: Callable | None = None, cache_dir=None, tolerance_mm: float = ARRIVAL_TOLERANCE_MM,
                 heartbeat_s: float = HEARTBEAT_S, heartbeat_timeout_s: float = HEARTBEAT_TIMEOUT_S,
                 clock: Callable[[], float] = time.monotonic, wall: Callable[[], float] = time.time):
        self.garment = garment
        self.locate_3d = locate_3d
        self.cache_dir = cache_dir
        self.tolerance_mm = float(tolerance_mm)
        self.heartbeat_s = float(heartbeat_s)
        self.heartbeat_timeout_s = float(heartbeat_timeout_s)
        self.clock, self.wall = clock, wall
        self.records: list[dict] = []
        self.planners: dict[tuple, Planner] = {}
        self.robots: dict[str, RobotLink] = {}
        self.next_plan = 1
        self.last_heartbeat = -math.inf
        placements = placements or {}
        for name, tr in transports.items():
            session = LinkSession(tr, name, clock=clock, log=self._logger(name))
            self.robots[name] = RobotLink(name, session, placed=placements.get(name))

    # ------------------------------------------------------------------ log

    def _logger(self, name: str):
        def log(direction: str, msg: dict) -> None:
            self.records.append({"wall_s": round(self.wall(), 6), "robot": name, "dir": direction, "msg": msg})
        return log

    def event(self, name: str | None, event: str, **fields) -> None:
        """Add an event record to the log."""
        self.records.append({"wall_s": round(self.wall(), 6), "robot": name, "event": event, **fields})

    def write_log(self, path) -> None:
        """Write every record as JSON lines (atomically)."""
        write_text_atomic(path, "".join(json.dumps(r, separators=(",", ":"), allow_nan=False) + "\n" for r in self.records))

    # ------------------------------------------------------------------ link

    def connect(self, timeout_s: float = 5.0) -> None:
        """Greet every robot and wait (at most ``timeout_s``) for all their profiles and a first
        telemetry sample each (the reference the estimate counts from: a plan sent before it would
        be dead-reckoned from a sample taken mid-motion).

        Raises
        ------
        LinkError
            Naming the robots that did not answer.
        """
        for r in self.robots.values():
            r.session.send("hello", station="garnav-station", heartbeat_timeout_s=self.heartbeat_timeout_s)
        end = self.clock() + timeout_s

        def ready(r: RobotLink) -> bool:  # a profile, and a first sample: the estimate's reference
            return r.profile is not None and r.estimate is not None and r.estimate.last is not None

        while self.clock() < end and not all(ready(r) for r in self.robots.values()):
            self.poll(0.02)
        missing = [f"'{r.name}' ({r.session.transport.description})" for r in self.robots.values() if not ready(r)]
        if missing:
            raise LinkError(f"no answer within {timeout_s:g} s from robot(s) {', '.join(missing)}: is it on, "
                            "in range, and is the URL right? (docs/link.md)")

    def poll(self, timeout_s: float = 0.0) -> None:
        """Receive from every robot (the first waits up to ``timeout_s``), update, heartbeat, resend."""
        now = self.clock()
        if now - self.last_heartbeat >= self.heartbeat_s:
            self.last_heartbeat = now
            for r in self.robots.values():
                if r.profile is not None:
                    r.session.send("heartbeat")
        wait = float(timeout_s) / max(1, len(self.robots))
        for r in self.robots.values():
            for msg in r.session.poll(wait):
                self._handle(r, msg)
            if r.stop_seq is not None and not r.stop_acked and r.session.acked(r.stop_seq) \
                    and not any(m["seq"] == r.stop_seq for m in r.session.given_up):
                r.stop_acked = True
                self.event(r.name, "stop_acked", seq=r.stop_seq)
            self._check_lost(r)

    def _handle(self, r: RobotLink, msg: dict) -> None:
        kind = msg["t"]
        if kind == "profile":
            r.profile = msg
            self._set_up(r)
        elif kind == "telemetry" and r.estimate is not None:
            r.state = msg["state"]
            r.battery = float(msg["battery_fraction"])
            r.estimate.update(msg)
            if int(msg["plan"]) == r.plan_id and msg["state"] in ("idle", "stopped"):
                r.settled = True  # a sample taken after the plan ended: the estimate has it all
            if r.estimate.off_fabric and r.lost is None:
                r.lost = r.estimate.off_fabric
                self.event(r.name, "off_fabric", text=r.estimate.off_fabric)
                self.stop_robot(r, "estimated pose off the fabric")
        elif kind == "battery":
            r.battery = float(msg["fraction"])
        elif kind == "done":
            if int(msg["plan"]) == r.plan_id:
                r.done = msg
                self.event(r.name, "plan_done", plan=r.plan_id, completed=msg["completed"],
                           pose=self.pose_record(r), distance_to_goal_mm=_finite(r.arrived_distance_mm))
        elif kind == "error":
            r.errors.append(f"{msg['code']}: {msg['text']}")

    def _set_up(self, r: RobotLink) -> None:
        p = r.profile
        assert p is not None
        placed = r.placed
        if placed is None:
            pl = p.get("placed")
            if not isinstance(pl, dict):
                raise LinkError(f"robot '{r.name}' does not say where it was put down: give --at {r.name}:POINT")
            placed = (str(pl["piece"]), float(pl["x_mm"]), float(pl["y_mm"]), float(pl.get("heading_deg", 0.0)))
        base = self.garment.robot or Robot()
        r.robot = dataclasses.replace(base, name=str(p["robot"]), radius_mm=float(p["radius_mm"]),
                                      wheel_base_mm=float(p["wheel_base_mm"]), speed_mm_s=float(p["speed_mm_s"]),
                                      side="inside" if p["side"] == "inside" else "outside")
        piece, x, y, h = placed
        try:
            self.garment.piece(piece)
        except KeyError:
            raise QueryError(f"robot '{r.name}' is placed on piece '{piece}', which garment '{self.garment.name}' does not have") from None
        r.estimate = PoseEstimate(self.garment, EncoderSettings.from_profile(p), (piece, x, y, math.radians(h)))
        self.event(r.name, "connected", profile=p["robot"], placed=list(placed))

    def _check_lost(self, r: RobotLink) -> None:
        if r.lost is None and r.session.given_up:
            kinds = sorted({m["t"] for m in r.session.given_up})
            r.lost = f"no acknowledgement for {', '.join(kinds)} after {r.session.max_tries} tries"
        elif r.lost is None and r.profile is not None and r.session.silent_for() > LOST_AFTER_S:
            r.lost = f"silent for {r.session.silent_for():.1f} s"
        else:
            return
        self.event(r.name, "lost", reason=r.lost)
        if r.stop_seq is None:
            self.stop_robot(r, f"link lost: {r.lost}")

    # ------------------------------------------------------------------ stop

    def stop_robot(self, r: RobotLink, reason: str) -> None:
        """Send ``stop`` to one robot (first, before anything queued; repeated until acked)."""
        msg = r.session.send("stop", reason=reason)
        r.stop_seq, r.stop_acked = int(msg["seq"]), False
        self.event(r.name, "stop_sent", seq=r.stop_seq, reason=reason)

    def emergency_stop(self, reason: str = "emergency stop") -> None:
        """Stop every robot: a ``stop`` to each one before any other message, resent until acked."""
        self.event(None, "emergency_stop", reason=reason)
        for r in self.robots.values():
            self.stop_robot(r, reason)

    def all_stopped(self) -> bool:
        """Every robot acknowledged its stop and reports ``stopped`` (or is lost)."""
        return all((r.stop_acked and r.state in ("stopped", "idle")) or r.lost for r in self.robots.values())

    # ------------------------------------------------------------------ plans

    def planner_for(self, robot: Robot | None = None) -> Planner:
        """The planner for a robot profile (built once per radius, edge margin and side; build it
        for the spec's robot before :meth:`connect`, so that no heartbeat waits on it)."""
        robot = robot or self.garment.robot or Robot()
        key = (robot.radius_mm, robot.edge_margin_mm, robot.side)
        if key not in self.planners:
            self.planners[key] = Planner(self.garment, robot, locate_3d=self.locate_3d, cache_dir=self.cache_dir)
        return self.planners[key]

    def start_point(self, r: RobotLink) -> PiecePoint:
        if r.estimate is None:
            raise LinkError(f"robot '{r.name}' has not connected yet")
        piece, x, y, _ = r.estimate.pose
        return PiecePoint(piece, x, y, label=f"robot '{r.name}' (estimated)")

    def goto(self, name: str, point) -> object:
        """Plan robot ``name`` from its estimated pose to ``point`` (landmark, ``PIECE:X,Y``,
        ``xyz:X,Y,Z`` or a PiecePoint), check and send the route. Returns the route."""
        r = self._robot(name)
        planner = self.planner_for(r.robot)
        goal = planner.point(point, role="goal")
        here = self.start_point(r)
        start = planner.point(here, snap=True, role="start")
        route: object = planner.route(start, goal)
        if math.hypot(start.x - here.x, start.y - here.y) > 1e-6:  # the estimate sat in a margin: drive out first
            legs: list = list(route.legs)  # type: ignore[attr-defined]
            legs[0] = SimpleNamespace(piece=legs[0].piece, points=np.vstack([[here.x, here.y], legs[0].points]))
            route = SimpleNamespace(legs=tuple(legs), crossings=tuple(route.crossings),  # type: ignore[attr-defined]
                                    length_mm=route.length_mm)  # type: ignore[attr-defined]
        commands = route_commands(route, self.garment, r.robot)
        self.send_plan(r, route, commands, goal)
        return route

    def goto_many(self, goals: dict, time_limit_s: float = 30.0) -> dict:
        """Several robots at once: a timed, conflict-free schedule from the fleet planner, each
        robot's commands (with waits) sent together. Returns the schedule's plans by name."""
        if len(goals) == 1:
            name, point = next(iter(goals.items()))
            return {name: self.goto(name, point)}
        from garnav.fleet import FleetPlanner, FleetTasks, Task
        from garnav.fleet.commands import plan_commands

        tasks = []
        for name, point in goals.items():
            r = self._robot(name)
            here = self.start_point(r)
            tasks.append(Task(name, r.robot or Robot(), f"{here.piece}:{here.x!r},{here.y!r}",
                              point if isinstance(point, str) else f"{point.piece}:{point.x!r},{point.y!r}"))
        planner = FleetPlanner(self.garment, FleetTasks(tuple(tasks), source="station"), locate_3d=self.locate_3d)
        schedule = planner.plan(time_limit_s=time_limit_s)
        out = {}
        for plan in schedule.plans:
            r = self._robot(plan.name)
            legs = tuple(SimpleNamespace(piece=m.piece, points=np.array([m.p0, m.p1], dtype=float)) for m in plan.moves)
            route = SimpleNamespace(legs=legs, crossings=(), length_mm=plan.length_mm)
            end = plan.moves[-1]
            goal = PiecePoint(end.piece, float(end.p1[0]), float(end.p1[1]), label=f"goal of '{plan.name}'")
            self.send_plan(r, route, plan_commands(self.garment, plan), goal)
            out[plan.name] = plan
        self.event(None, "fleet_schedule", makespan_s=schedule.makespan_s, order=list(schedule.order))
        return out

    def send_plan(self, r: RobotLink, route, commands: CommandList, goal: PiecePoint) -> int:
        """Check ``route`` for safety, turn the robot from its estimated heading onto the plan's
        start heading, and send the commands. Returns the plan id."""
        if r.lost:
            raise LinkError(f"robot '{r.name}': the link is lost ({r.lost}); not sending a plan")
        check_route(self.garment, route, r.name)
        est = r.estimate
        assert est is not None and r.robot is not None
        if est.last is None:
            raise LinkError(f"robot '{r.name}': no telemetry yet; connect first")
        piece, x, y, h = est.pose
        cmds = commands.commands
        if commands.start is not None:
            sign = 1.0 if r.robot.side == "outside" else -1.0
            turn = math.degrees(math.remainder(math.radians(commands.start.heading_deg) - h, 2 * math.pi))
            if abs(turn) > 1e-9:
                cmds = (Turn(sign * turn),) + cmds
        full = CommandList(cmds, side=r.robot.side, start=Start(piece, x, y, math.degrees(h)))
        plan = compile_commands(self.garment, full, r.robot)
        plan_id = self.next_plan
        self.next_plan += 1
        r.plan_id, r.commands, r.route, r.goal, r.done, r.settled = plan_id, full, route, goal, None, False
        r.stop_seq, r.stop_acked = None, False
        est.start_plan(plan)
        r.session.send_message(commands_message(r.session.take_seq(), plan_id, full))
        self.event(r.name, "plan_sent", plan=plan_id, goal=[goal.piece, goal.x, goal.y],
                   length_mm=float(plan.distance_mm), duration_s=float(plan.duration_s))
        return plan_id

    def replan(self, name: str) -> object:
        """Plan again from the estimated pose to the current goal (after a stop, or on request)."""
        r = self._robot(name)
        if r.goal is None:
            raise QueryError(f"robot '{name}' has no goal to re-plan to")
        return self.goto(name, r.goal)

    # ------------------------------------------------------------------ status

    def finished(self, name: str) -> bool:
        """The robot reported its plan done and a telemetry sample from after its end arrived."""
        r = self._robot(name)
        return r.done is not None and r.settled

    def arrived(self, name: str) -> bool:
        r = self._robot(name)
        return self.finished(name) and bool(r.done and r.done["completed"]) and r.arrived_distance_mm <= self.tolerance_mm

    def failed(self, name: str) -> str | None:
        """Why robot ``name`` can no longer arrive (lost, stopped, an error), or None."""
        r = self._robot(name)
        if r.lost:
            return f"link lost: {r.lost}"
        if r.errors:
            return r.errors[-1]
        if r.done and not r.done["completed"]:
            return f"plan {r.plan_id} ended early: {r.done.get('reason', 'stopped')}"
        if r.done and r.settled and r.arrived_distance_mm > self.tolerance_mm:
            return (f"plan done but the estimated position is {r.arrived_distance_mm:.1f} mm from the goal "
                    f"(tolerance {self.tolerance_mm:g} mm)")
        return None

    def pose_record(self, r: RobotLink) -> list | None:
        if r.estimate is None:
            return None
        piece, x, y, _ = r.estimate.pose
        return [piece, round(x, 4), round(y, 4), round(r.estimate.heading_deg, 4)]

    def status(self, name: str) -> dict:
        """The panel's figures of one robot: state, battery, progress, pose, 2σ ellipse, goal."""
        r = self._robot(name)
        model = (r.robot.odometry if r.robot is not None else None) or OdometryModel()
        est = r.estimate
        return {
            "robot": name, "state": r.state, "battery_fraction": r.battery,
            "progress": est.progress() if est is not None else 0.0,
            "pose": self.pose_record(r), "ellipse": est.ellipse(model) if est is not None else None,
            "goal": None if r.goal is None else [r.goal.piece, r.goal.x, r.goal.y],
            "distance_to_goal_mm": _finite(r.arrived_distance_mm), "lost": r.lost, "errors": list(r.errors[-3:]),
        }

    def _robot(self, name: str) -> RobotLink:
        try:
            return self.robots[name]
        except KeyError:
            raise QueryError(f"unknown robot '{name}' (known: {', '.join(self.robots)})") from None

    def close(self) -> None:
        for r in self.robots.values():
            try:
                r.session.close()
            except (OSError, GarnavError):
                pass


def _finite(v: float) -> float | None:
    return round(float(v), 4) if math.isfinite(v) else None
