"""Fleet planning: timed, conflict-free trajectories for several disc robots on one garment.

Method: **prioritised planning** (Erdmann, M. and Lozano-Pérez, T. (1987), "On multiple moving
objects", Algorithmica 2) — robots are planned one after another, each avoiding the timed
trajectories of those before it — with **safe-interval path planning** for each robot
(:mod:`garnav.fleet.sipp`; Phillips & Likhachev 2011) over a shared roadmap
(:mod:`garnav.fleet.roadmap`) that contains every robot's own shortest route
(:class:`garnav.plan.Planner`), a lattice to step aside on, and seam portals. When a robot finds no
path, the search starts again with that robot moved to the front of the order (the re-prioritisation
of Andreychuk, A. and Yakovlev, K. (2018), "Two techniques that enhance the performance of
multi-robot prioritized path planning", AAMAS 2018), until an order works, every order tried
repeats, or the time limit passes.

Guarantees: each robot's SIPP search is complete and earliest-arrival optimal *for its place in the
order* on the roadmap. Prioritised planning as a whole is neither complete nor optimal: a
solvable task set can fail for every order tried (robots that must make way for each other in
turn), and the makespan is an upper bound, compared in the benchmark with the sum and the largest
of the single-robot lower bounds. Robots not yet planned are obstacles at their starts until their
earliest start time; each planned robot stays at its goal for ever.

Robots on different pieces are compared in the pattern through the seam
(:mod:`garnav.fleet.unfold` says why): every move within reach of a seam is carried into the
partner piece's frame before the searches see it.
"""

from __future__ import annotations

import math
import time
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import dijkstra

from garnav.errors import GarnavError, NoRouteError, QueryError
from garnav.fleet.carry import CARRY_SEAM_STEP_MM, MoveCarrier
from garnav.fleet.motion import Move, MoveSet
from garnav.fleet.roadmap import Roadmap, build_roadmap
from garnav.fleet.schedule import FleetError, FleetPlanError, RobotPlan, Schedule
from garnav.fleet.sipp import SearchTimeout, SippProblem, sipp
from garnav.fleet.tasks import FleetTasks, Meeting, Task
from garnav.fleet.unfold import seam_sides, unfolded_distance
from garnav.model import Garment, Robot
from garnav.plan import PiecePoint, Planner, Route, resolve_point
from garnav.plan.route import crossing_side

__all__ = ["FleetPlanner", "plan_fleet", "CARRY_SEAM_STEP_MM"]



def _class_key(r: Robot) -> tuple:
    return (r.radius_mm, r.edge_margin_mm, r.side)


@dataclass
class _Agent:
    index: int
    task: Task
    cls: str
    start: PiecePoint
    goal: PiecePoint
    heading_deg: float | None
    route: Route | None = None
    lower_bound_s: float = 0.0
    start_node: int = -1
    goal_node: int = -1
    not_before_of: str | None = None  # dock: arrives after this robot
    meeting: str | None = None


class FleetPlanner:
    """Plans a :class:`~garnav.fleet.tasks.FleetTasks` on one garment.

    Parameters
    ----------
    garment : Garment
    tasks : FleetTasks
    spacing_mm : float, optional
        Roadmap lattice spacing (default ``tasks.spacing_mm`` or the smallest robot radius).
    seed_routes : bool
        Put every robot's own shortest route (:class:`garnav.plan.Planner`) into the roadmap.
    locate_3d : callable, optional
        For ``xyz:`` points (see :class:`garnav.plan.Planner`).
    planners : dict, optional
        Ready planners by robot profile key ``(radius_mm, edge_margin_mm, side)``, reused.
    """

    def __init__(self, garment: Garment, tasks: FleetTasks, *, spacing_mm: float | None = None,
                 seed_routes: bool = True, locate_3d=None, planners: dict | None = None):
        self.garment = garment
        self.tasks = tasks
        self.src = tasks.source
        self.gap = float(tasks.gap_mm)
        radii = [t.robot.radius_mm for t in tasks.tasks]
        self.spacing = float(spacing_mm or tasks.spacing_mm or min(radii))
        self.planners: dict[str, Planner] = {}
        self._cls_of: dict[tuple, str] = {}
        planners = planners or {}
        for t in tasks.tasks:
            key = _class_key(t.robot)
            if key not in self._cls_of:
                name = f"r{key[0]:g}_m{key[1]:g}_{key[2]}"
                self._cls_of[key] = name
                self.planners[name] = planners.get(key) or Planner(garment, t.robot, locate_3d=locate_3d)
        self.seed_routes = seed_routes
        self.agents = self._resolve()
        self._check_overlaps()
        self._carrier: MoveCarrier | None = None
        self.rmax = max(radii)
        self._route_seeds()
        self._build_roadmap()

    # ------------------------------------------------------------------ input

    def _fail(self, item: str, reason: str) -> FleetError:
        return FleetError(f"{self.src}: {item}: {reason}")

    def _point(self, t: Task, spec, role: str) -> PiecePoint:
        pl = self.planners[self._cls_of[_class_key(t.robot)]]
        try:
            return pl.point(spec, role=role)
        except GarnavError as exc:
            raise self._fail(f"task '{t.name}'", f"{role}: {exc}") from None

    def _resolve(self) -> list[_Agent]:
        agents = []
        slots: dict[str, tuple[PiecePoint, float, str | None]] = {}
        meeting_of: dict[str, str] = {}
        for m in self.tasks.meetings:
            slots.update(self._meeting_slots(m))
            meeting_of.update({n: m.name for n in m.robots})
        for i, t in enumerate(self.tasks.tasks):
            start = self._point(t, t.start, "start")
            if t.goal is not None:
                goal, heading, after = self._point(t, t.goal, "goal"), t.heading_deg, None
            else:
                goal, heading, after = slots[t.name]
            agents.append(_Agent(i, t, self._cls_of[_class_key(t.robot)], start, goal, heading, not_before_of=after,
                                 meeting=meeting_of.get(t.name)))
        return agents

    def _meeting_slots(self, m: Meeting) -> dict[str, tuple[PiecePoint, float, str | None]]:
        item = f"meeting '{m.name}'"
        try:
            at = resolve_point(self.garment, m.at)
        except QueryError as exc:
            raise self._fail(item, f"'at': {exc}") from None
        robots = [self.tasks.task(n) for n in m.robots]
        for a, b in zip(robots[:-1], robots[1:], strict=False):
            need = a.robot.radius_mm + b.robot.radius_mm + self.gap
            if m.spacing_mm < need - 1e-9:
                raise self._fail(item, f"spacing {m.spacing_mm:g} mm is too small for robots '{a.name}' and "
                                 f"'{b.name}' next to each other: they need at least {need:g} mm "
                                 f"(radii {a.robot.radius_mm:g} + {b.robot.radius_mm:g} mm + gap {self.gap:g} mm)")
        h = math.radians(m.heading_deg)
        fwd = np.array([math.cos(h), math.sin(h)])
        right = np.array([fwd[1], -fwd[0]])
        n = len(robots)
        out = {}
        for k, t in enumerate(robots):
            if m.kind == "side_by_side":
                xy = at.xy + (k - (n - 1) / 2) * m.spacing_mm * right
                after = None
            else:
                xy = at.xy - k * m.spacing_mm * fwd
                after = robots[k - 1].name if k else None
            pl = self.planners[self._cls_of[_class_key(t.robot)]]
            try:
                pp = pl.point(PiecePoint(at.piece, float(xy[0]), float(xy[1]), f"slot {k + 1} of meeting '{m.name}'"),
                              role="meeting slot")
            except GarnavError as exc:
                raise self._fail(item, f"robot '{t.name}' (radius {t.robot.radius_mm:g} mm) does not fit at "
                                 f"its slot {k + 1} on {at.piece} ({xy[0]:.1f}, {xy[1]:.1f}) mm: {exc}") from None
            out[t.name] = (pp, m.heading_deg, after)
        return out

    def _check_overlaps(self) -> None:
        ag = self.agents
        band = 2 * max(a.task.robot.radius_mm for a in ag) + self.gap
        sides = seam_sides(self.garment)
        for what in ("start", "goal"):
            for i in range(len(ag)):
                for j in range(i + 1, len(ag)):
                    a, b = ag[i], ag[j]
                    pa, pb = getattr(a, what), getattr(b, what)
                    d = unfolded_distance(self.garment, sides, pa.piece, pa.xy, pb.piece, pb.xy, band)
                    need = a.task.robot.radius_mm + b.task.robot.radius_mm + (self.gap if what == "goal" else 0.0)
                    if d < need - 1e-9:
                        hint = ("; to put robots next to each other, name them in a [[meeting]]" if what == "goal" else "")
                        raise self._fail(f"tasks '{a.task.name}' and '{b.task.name}'",
                                         f"{what}s overlap: centres {d:.1f} mm apart, need at least {need:g} mm{hint}")

    # ------------------------------------------------------------------ roadmap

    def _route_seeds(self) -> None:
        for a in self.agents:
            pl = self.planners[a.cls]
            try:
                route = pl.route(a.start, a.goal)
            except NoRouteError as exc:
                if a.meeting is not None:
                    raise self._fail(f"meeting '{a.meeting}'", f"robot '{a.task.name}' cannot reach its slot even "
                                     f"alone: {exc}") from None
                raise self._fail(f"task '{a.task.name}'", f"no route from start to goal even alone: {exc}") from None
            a.route = route
            a.lower_bound_s = a.task.start_s + route.length_mm / a.task.robot.speed_mm_s

    def _build_roadmap(self) -> None:
        seeds: list[tuple[str, np.ndarray]] = []
        crossings: list[tuple] = []
        ends: list[tuple[int, int]] = []
        for a in self.agents:
            ends.append((len(seeds), len(seeds) + 1))
            seeds.append((a.start.piece, a.start.xy[None]))
            seeds.append((a.goal.piece, a.goal.xy[None]))
            if self.seed_routes and a.route is not None:
                seeds.extend((leg.piece, leg.points) for leg in a.route.legs)
                for c in a.route.crossings:
                    side = crossing_side(self.garment, c)
                    crossings.append((c.seam, side, c.fraction, c.from_piece, c.point_from, c.to_piece, c.point_to))
        free = {name: pl.free for name, pl in self.planners.items()}
        self.roadmap: Roadmap = build_roadmap(self.garment, free, seeds, crossings, self.spacing)
        for (i_start, i_goal), a in zip(ends, self.agents, strict=False):
            a.start_node = int(self.roadmap.seed_nodes[i_start][0])
            a.goal_node = int(self.roadmap.seed_nodes[i_goal][0])
        self._csr = {}
        for name, cg in self.roadmap.classes.items():
            rows, cols, vals = [], [], []
            for u, lst in enumerate(cg.adj):
                for v, w in lst:
                    rows.append(u)
                    cols.append(v)
                    vals.append(max(w, 1e-9))
            n = len(self.roadmap.xy)
            self._csr[name] = sp.csr_matrix((vals, (rows, cols)), shape=(n, n))
        self._h: dict[tuple[str, int], np.ndarray] = {}
        for a in self.agents:
            dist = self._dist(a.cls, a.goal_node)
            if not np.isfinite(dist[a.start_node]):
                raise self._fail(f"task '{a.task.name}'", "the fleet roadmap does not join its start to its goal "
                                 f"(try a smaller spacing_mm than {self.spacing:g})")
            # the roadmap ignores seam crossing costs, so its shortest path can beat the route's
            own = dist[a.start_node] / a.task.robot.speed_mm_s
            a.lower_bound_s = a.task.start_s + (own if not self.seed_routes else
                                                min(own, a.lower_bound_s - a.task.start_s))

    def _dist(self, cls: str, goal: int) -> np.ndarray:
        key = (cls, goal)
        if key not in self._h:
            self._h[key] = dijkstra(self._csr[cls], directed=False, indices=goal)
        return self._h[key]

    # ------------------------------------------------------------------ moves of others

    def _carry(self, owner: int, moves: list[Move], reach: float) -> dict[int, list[MoveSet]]:
        """Moves as MoveSets per piece index, with copies carried over nearby seams
        (:class:`garnav.fleet.carry.MoveCarrier`)."""
        if self._carrier is None:
            self._carrier = MoveCarrier(self.garment, self.roadmap.pieces, self.rmax, CARRY_SEAM_STEP_MM)
        return self._carrier.carry(owner, moves, reach)

    # ------------------------------------------------------------------ search

    def plan(self, time_limit_s: float | None = None, max_orders: int = 50) -> Schedule:
        """Plan all robots; raise :class:`FleetPlanError` when no order works in time."""
        t_start = time.perf_counter()
        limit = self.tasks.time_limit_s if time_limit_s is None else time_limit_s
        deadline = t_start + limit
        order = sorted(self.agents, key=lambda a: (-a.task.priority, a.index))
        tried: set[tuple[int, ...]] = set()
        last_fail = None
        rng = np.random.default_rng(0)
        while len(tried) < max_orders:
            order = self._dock_consistent(order)
            key = tuple(a.index for a in order)
            if key in tried:
                perm = rng.permutation(len(order))
                order = self._dock_consistent([order[i] for i in perm])
                key = tuple(a.index for a in order)
                if key in tried:
                    if math.factorial(len(order)) <= len(tried):
                        break
                    continue
            tried.add(key)
            try:
                if time.perf_counter() > deadline:
                    raise SearchTimeout()
                plans, failed = self._plan_order(order, deadline)
            except SearchTimeout:
                raise FleetPlanError(self._fail_text(last_fail, len(tried), time.perf_counter() - t_start,
                                                     timed_out=True)) from None
            if failed is None:
                plans.sort(key=lambda p: [a.task.name for a in self.agents].index(p.name))
                return Schedule(tuple(plans), self.gap, tuple(a.task.name for a in order), len(tried),
                                time.perf_counter() - t_start)
            last_fail = (failed, plans, order)
            order = [failed[0]] + [a for a in order if a is not failed[0]]
        raise FleetPlanError(self._fail_text(last_fail, len(tried), time.perf_counter() - t_start, timed_out=False))

    def _dock_consistent(self, order: list[_Agent]) -> list[_Agent]:
        """Keep dock robots in their meeting's arrival order (their positions in ``order`` are
        reused in that order)."""
        order = list(order)
        for m in self.tasks.meetings:
            if m.kind != "dock":
                continue
            pos = sorted(i for i, a in enumerate(order) if a.task.name in m.robots)
            members = sorted((a for a in order if a.task.name in m.robots), key=lambda a: m.robots.index(a.task.name))
            for i, a in zip(pos, members, strict=False):
                order[i] = a
        return order

    def _plan_order(self, order: list[_Agent], deadline: float):
        plans: list[RobotPlan] = []
        done: dict[str, RobotPlan] = {}
        carried: list[dict[int, list[MoveSet]]] = []
        for k, a in enumerate(order):
            r = a.task.robot
            moves: dict[int, list[MoveSet]] = {}
            for c in carried:
                for p, lst in c.items():
                    moves.setdefault(p, []).extend(lst)
            # robots planned later sit at their starts until they may leave
            for b in order[k + 1:]:
                hold = [Move(b.start.piece, 0.0, b.task.start_s, tuple(b.start.xy), tuple(b.start.xy))]
                for p, lst in self._carry(b.index, hold, b.task.robot.radius_mm + self.gap).items():
                    moves.setdefault(p, []).extend(lst)
            not_before = done[a.not_before_of].arrive_s if a.not_before_of else 0.0
            cg = self.roadmap.classes[a.cls]
            pb = SippProblem(
                adj=cg.adj, xy=self.roadmap.xy, node_piece=self.roadmap.node_piece,
                moves={p: MoveSet.concat(lst) for p, lst in moves.items()},
                radius_mm=r.radius_mm, speed_mm_s=r.speed_mm_s, start=a.start_node, goal=a.goal_node,
                depart_s=a.task.start_s, goal_not_before_s=not_before,
                h=self._dist(a.cls, a.goal_node) / r.speed_mm_s, deadline=deadline,
            )
            res = sipp(pb)
            if res is None:
                return plans, (a, "finds no conflict-free path")
            plan = self._robot_plan(a, res)
            if a.task.arrive_by_s is not None and plan.arrive_s > a.task.arrive_by_s + 1e-9:
                return plans, (a, f"arrives at {plan.arrive_s:.1f} s, after its arrive_by_s {a.task.arrive_by_s:g} s")
            plans.append(plan)
            done[a.task.name] = plan
            carried.append(self._carry(a.index, list(plan.moves), r.radius_mm + self.gap))
        return plans, None

    def _robot_plan(self, a: _Agent, res) -> RobotPlan:
        rm = self.roadmap
        moves: list[Move] = []

        def pt(n: int) -> tuple[float, float]:
            return (float(rm.xy[n, 0]), float(rm.xy[n, 1]))

        for i, n in enumerate(res.nodes):
            piece = rm.piece_of(n)
            arrive = res.arrive[i] if i else 0.0
            depart = res.depart[i]
            if depart > arrive or not math.isfinite(depart):
                moves.append(Move(piece, arrive, depart, pt(n), pt(n)))
            if i + 1 < len(res.nodes):
                m = res.nodes[i + 1]
                if (n, m) not in rm.crossing and (rm.xy[m] != rm.xy[n]).any():
                    moves.append(Move(piece, depart, res.arrive[i + 1], pt(n), pt(m)))
        heading = a.heading_deg
        if heading is None:
            heading = 0.0
            for m in reversed(moves):
                if m.p0 != m.p1:
                    heading = math.degrees(math.atan2(m.p1[1] - m.p0[1], m.p1[0] - m.p0[0])) % 360.0
                    break
        return RobotPlan(a.task.name, a.task.robot, tuple(moves), float(heading), float(a.lower_bound_s))

    def _fail_text(self, last_fail, tried: int, elapsed: float, timed_out: bool) -> str:
        head = (f"{self.src}: no conflict-free schedule found within the time limit "
                f"({elapsed:.1f} s, {tried} priority order{'s' if tried != 1 else ''} tried)" if timed_out else
                f"{self.src}: no conflict-free schedule found: every priority order tried fails "
                f"({tried} order{'s' if tried != 1 else ''}, {elapsed:.1f} s)")
        if last_fail is None:
            return head
        (agent, why), plans, order = last_fail
        blame = self._blame(agent, plans)
        place = f"; {blame}" if blame else ""
        return f"{head}; last try: robot '{agent.task.name}' {why} after {', '.join(repr(p.name) for p in plans) or 'nobody'}{place}"

    def _blame(self, agent: _Agent, plans: list[RobotPlan]) -> str:
        """Where the robot's own shortest path, driven without waiting, first meets a planned robot."""
        if not plans:
            return ""
        from garnav.fleet.check import first_conflict

        naive = self._naive_moves(agent)
        hit = first_conflict(self.garment, naive, agent.task.robot.radius_mm, plans, self.gap)
        if hit is None:
            return "its goal or start is cut off by robots parked at theirs"
        other, t, piece, xy = hit
        return (f"driving its own route it meets robot '{other}' on {piece} near "
                f"({xy[0]:.0f}, {xy[1]:.0f}) mm at t = {t:.1f} s")

    def _naive_moves(self, a: _Agent) -> list[Move]:
        dist = self._dist(a.cls, a.goal_node)
        rm = self.roadmap
        adj = self.roadmap.classes[a.cls].adj
        n, t = a.start_node, a.task.start_s
        moves = [Move(rm.piece_of(n), 0.0, t, tuple(rm.xy[n]), tuple(rm.xy[n]))]
        guard = 0
        while n != a.goal_node and guard < 100000:
            guard += 1
            v, w = min(adj[n], key=lambda e: e[1] + dist[e[0]])
            d = w / a.task.robot.speed_mm_s
            if (n, v) not in rm.crossing:
                moves.append(Move(rm.piece_of(n), t, t + d, tuple(rm.xy[n]), tuple(rm.xy[v])))
            n, t = v, t + d
        moves.append(Move(rm.piece_of(n), t, math.inf, tuple(rm.xy[n]), tuple(rm.xy[n])))
        return moves


def plan_fleet(garment: Garment, tasks: FleetTasks, **options) -> Schedule:
    """One call: build a :class:`FleetPlanner` and plan (``time_limit_s`` and ``max_orders`` go
    to :meth:`FleetPlanner.plan`, the rest to the constructor)."""
    plan_opts = {k: options.pop(k) for k in ("time_limit_s", "max_orders") if k in options}
    return FleetPlanner(garment, tasks, **options).plan(**plan_opts)
