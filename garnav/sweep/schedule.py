"""Several robots on one sweep, scheduled so that no two ever come too close.

The sweep's route is cut into k stretches of balanced driving-plus-turning time
(:func:`garnav.sweep.split.split_sweep`); driven all at once from t = 0 the stretches can meet
(consecutive stretches of a boustrophedon lie side by side, and the joins between cells run
anywhere). Here each robot keeps its stretch — so together they still cover exactly what the one
sweep covers — and only its **timing** changes: robots are planned one after another
(prioritised planning; Erdmann & Lozano-Pérez 1987), each with the fleet's safe-interval search
(:func:`garnav.fleet.sipp.sipp`; Phillips & Likhachev 2011) over a roadmap that is its own
stretch as a chain of nodes. SIPP then finds the earliest arrival along that fixed path among the
timed moves of the robots planned before it, waiting at waypoints where it must; moves near a
seam are carried across it first (:class:`garnav.fleet.carry.MoveCarrier`). Each robot parks at
the end of its stretch for ever, as in the fleet planner. When a robot finds no schedule it is
moved to the front of the order and the planning starts again (Andreychuk & Yakovlev 2018), as
:class:`garnav.fleet.FleetPlanner` does.

A turn in place by θ takes |θ|·wheel_base/(2·speed) (Siegwart & Nourbakhsh §3.2); in the chain it
is an edge that stands still for that long, so the safe-interval search sees the robot standing
there while it turns. The schedule is checked independently by the fleet's 10 ms checker
(:func:`garnav.fleet.check_schedule`).

Time balance: :attr:`SweepSchedule.balance` is the makespan (the time the last robot finishes,
waits included) over the ideal ``total sweep time / k``; 1 is perfect.
"""

from __future__ import annotations

import itertools
import math
import time
from dataclasses import dataclass

import numpy as np

from garnav.errors import QueryError
from garnav.fleet.carry import MoveCarrier
from garnav.fleet.check import CheckReport, check_schedule
from garnav.fleet.motion import Move, MoveSet
from garnav.fleet.schedule import FleetPlanError, RobotPlan, Schedule
from garnav.fleet.sipp import SearchTimeout, SippProblem, sipp
from garnav.model import Garment, Robot
from garnav.plan import Route
from garnav.sweep.split import split_sweep

__all__ = ["SweepSchedule", "schedule_sweep", "stretch_chain", "DEFAULT_GAP_MM"]

# Kept between two robots beyond their radii, mm (the fleet tasks file's default).
DEFAULT_GAP_MM = 2.0
_ZERO_MM = 1e-9


@dataclass(frozen=True)
class _Chain:
    """A stretch as a chain of nodes: ``xy`` (n, 2) mm, ``piece`` (n,) names, ``length`` (n-1,)
    edge lengths (mm of driving; a turn's time × speed; 0 across a seam) and ``kind`` (n-1,)
    of each edge: "go", "turn" or "cross"."""

    xy: np.ndarray
    piece: tuple[str, ...]
    length: np.ndarray
    kind: tuple[str, ...]


def stretch_chain(route: Route, robot: Robot) -> _Chain:
    """The chain of a stretch: every straight step, every turn in place (as an edge that stands
    still for the turn's time) and every seam crossing (an edge of no length between the two
    frames of one fabric point). Turns at a crossing are left out, as in
    :func:`garnav.sweep.split.stretch_moves`."""
    xy: list[tuple[float, float]] = []
    piece: list[str] = []
    length: list[float] = []
    kind: list[str] = []

    def add(p: str, at: np.ndarray, edge: float | None, what: str) -> None:
        xy.append((float(at[0]), float(at[1])))
        piece.append(p)
        if edge is not None:
            length.append(float(edge))
            kind.append(what)

    for leg in route.legs:
        prev = None
        for k, p in enumerate(np.asarray(leg.points, dtype=float)):
            if not xy:
                add(leg.piece, p, None, "")
                continue
            if k == 0:
                add(leg.piece, p, 0.0, "cross")
                continue
            d = p - np.asarray(xy[-1])
            n = float(np.hypot(*d))
            if n <= _ZERO_MM:
                continue
            if prev is not None:
                ang = abs(math.atan2(prev[0] * d[1] - prev[1] * d[0], float(prev @ d)))
                if ang > 0:
                    add(leg.piece, np.asarray(xy[-1]), ang * robot.wheel_base_mm / 2.0, "turn")
            add(leg.piece, p, n, "go")
            prev = d
    return _Chain(np.array(xy), tuple(piece), np.array(length), tuple(kind))


@dataclass(frozen=True, eq=False)
class SweepSchedule:
    """k robots' stretches of one sweep with a conflict-free timing.

    Attributes
    ----------
    routes : tuple of Route
        Robot j's stretch (the paths are those of :func:`split_sweep`, unchanged).
    times_s : tuple of float
        Each stretch's driving-plus-turning time without waits, s (its chain,
        :func:`stretch_chain`).
    schedule : garnav.fleet.Schedule
        Timed trajectories (robots named ``robot_1`` …), turns shown as standing time.
    check : garnav.fleet.CheckReport
        The fleet checker's smallest gap and keep-out margin of ``schedule``.
    """

    routes: tuple[Route, ...]
    times_s: tuple[float, ...]
    schedule: Schedule
    check: CheckReport
    _command_plans: tuple[RobotPlan, ...]

    @property
    def makespan_s(self) -> float:
        """Time by which every robot has finished, s."""
        return self.schedule.makespan_s

    @property
    def balance(self) -> float:
        """Makespan over the ideal ``sum(times_s) / k`` (1 = perfectly balanced)."""
        ideal = sum(self.times_s) / len(self.times_s)
        return self.makespan_s / ideal if ideal > 0 else 1.0

    @property
    def waits_s(self) -> tuple[float, ...]:
        """Each robot's time spent waiting for others, s."""
        return tuple(max(0.0, p.arrive_s - t) for p, t in zip(self.schedule.plans, self.times_s, strict=True))

    def commands(self, garment: Garment, j: int):
        """Robot ``j``'s (0-based) commands: its stretch with ``wait`` where the schedule stops it
        (:func:`garnav.fleet.commands.plan_commands`)."""
        from garnav.fleet.commands import plan_commands

        return plan_commands(garment, self._command_plans[j])

    def lines(self) -> list[str]:
        """A short summary: per robot time, waits and finish; the balance; the check."""
        out = [f"robot {j + 1}: {t:.0f} s driving and turning, waits {w:.1f} s, done at {p.arrive_s:.0f} s"
               for j, (t, w, p) in enumerate(zip(self.times_s, self.waits_s, self.schedule.plans, strict=True))]
        out.append(f"makespan {self.makespan_s:.0f} s = {self.balance:.3f} x the ideal {sum(self.times_s) / len(self.times_s):.0f} s "
                   f"(priority order {', '.join(self.schedule.order)})")
        out.append(self.check.text())
        return out


def schedule_sweep(garment: Garment, sweep, k: int, robot: Robot | None = None, *, gap_mm: float = DEFAULT_GAP_MM,
                   time_limit_s: float = 60.0, max_orders: int = 20) -> SweepSchedule:
    """Split a sweep among ``k`` robots (balanced time) and time them so that they never meet.

    Parameters
    ----------
    garment : Garment
    sweep : garnav.sweep.Sweep
    k : int
        Number of robots (>= 1), all with the same profile, all starting at t = 0 at the start of
        their stretch.
    robot : Robot, optional
        Defaults to ``garment.robot`` or ``Robot()``.
    gap_mm : float
        Distance kept between two robots beyond their radii, mm.
    time_limit_s, max_orders :
        Bounds of the search: wall time, s, and priority orders tried. With ``k! <= max_orders``
        every order is tried and the one with the smallest makespan kept; with more robots the
        first order that works (after moving each robot that fails to the front).

    Raises
    ------
    QueryError
        Two stretches start closer than two radii plus the gap (fewer robots, or another split).
    garnav.fleet.FleetPlanError
        No order gave every robot a schedule within the bounds.
    """
    robot = robot or garment.robot or Robot()
    if not (math.isfinite(gap_mm) and gap_mm >= 0):
        raise QueryError(f"the gap between robots must be zero or more mm, got {gap_mm!r}")
    reach = robot.radius_mm + gap_mm
    split = split_sweep(garment, sweep, k, robot, separate_starts_mm=robot.radius_mm + reach)
    chains = [stretch_chain(r, robot) for r in split.routes]
    starts = [(c.piece[0], c.xy[0]) for c in chains]
    for i in range(k):
        for j in range(i + 1, k):
            if starts[i][0] == starts[j][0] and float(np.hypot(*(starts[i][1] - starts[j][1]))) < robot.radius_mm + reach:
                raise QueryError(f"sweep split among {k} robots: stretches {i + 1} and {j + 1} start "
                                 f"{float(np.hypot(*(starts[i][1] - starts[j][1]))):.1f} mm apart on '{starts[i][0]}', "
                                 f"closer than two robots fit ({robot.radius_mm + reach:.1f} mm): use fewer robots")
    pieces = tuple(p.name for p in garment.pieces)
    carrier = MoveCarrier(garment, pieces, robot.radius_mm)
    t_start = time.perf_counter()
    deadline = t_start + time_limit_s
    tried: set[tuple[int, ...]] = set()
    best = None  # (makespan, order, plans)
    failed = None
    if math.factorial(k) <= max_orders:
        candidates = iter(itertools.permutations(range(k)))  # few robots: every order, keep the best
    else:
        candidates = None  # many: re-prioritise on failure, keep the first that works
    order = tuple(range(k))
    while len(tried) < max_orders:
        if candidates is not None:
            nxt = next(candidates, None)
            if nxt is None:
                break
            order = nxt
        elif order in tried:
            break
        tried.add(order)
        try:
            plans, failed = _plan_order(chains, order, robot, reach, carrier, pieces, deadline)
        except SearchTimeout:
            if best is not None:
                break
            raise FleetPlanError(f"sweep split among {k} robots: no conflict-free timing found within "
                                 f"{time_limit_s:g} s ({len(tried)} priority orders tried)") from None
        if failed is None:
            makespan = max(p[0].arrive_s for p in plans.values())
            if best is None or makespan < best[0] - 1e-9:
                best = (makespan, order, plans)
            if candidates is None:
                break
        elif candidates is None:
            order = (failed, *(i for i in order if i != failed))
    if best is None:
        raise FleetPlanError(f"sweep split among {k} robots: robot_{(failed or 0) + 1} finds no conflict-free "
                             f"timing along its stretch in any of {len(tried)} priority orders tried: use fewer robots")
    _, order, plans = best
    full = tuple(plans[j][0] for j in range(k))
    commands = tuple(plans[j][1] for j in range(k))
    schedule = Schedule(full, gap_mm, tuple(f"robot_{j + 1}" for j in order), len(tried),
                        time.perf_counter() - t_start,
                        "sweep stretches timed by prioritised planning with SIPP along each stretch")
    times = tuple(float(c.length.sum()) / robot.speed_mm_s for c in chains)
    return SweepSchedule(split.routes, times, schedule, check_schedule(garment, schedule), commands)


def _plan_order(chains, order, robot, reach, carrier, pieces, deadline):
    """Plan the robots in ``order``; returns ({index: (plan, command plan)}, None) or
    (partial, index of the robot that found no timing)."""
    index = {p: i for i, p in enumerate(pieces)}
    plans: dict[int, tuple[RobotPlan, RobotPlan]] = {}
    obstacles: dict[int, list[MoveSet]] = {}
    for j in order:
        c = chains[j]
        n = len(c.xy)
        adj = [[(i + 1, float(c.length[i]))] for i in range(n - 1)] + [[]]
        rest = np.concatenate([np.cumsum(c.length[::-1])[::-1], [0.0]]) if n > 1 else np.zeros(1)
        pb = SippProblem(
            adj=adj, xy=c.xy, node_piece=np.array([index[p] for p in c.piece]),
            moves={p: MoveSet.concat(lst) for p, lst in obstacles.items()},
            radius_mm=robot.radius_mm, speed_mm_s=robot.speed_mm_s, start=0, goal=n - 1,
            depart_s=0.0, goal_not_before_s=0.0, h=rest / robot.speed_mm_s, deadline=deadline,
        )
        res = sipp(pb)
        if res is None:
            return plans, j
        plans[j] = _robot_plans(f"robot_{j + 1}", robot, c, res)
        for p, lst in carrier.carry(j, list(plans[j][0].moves), reach).items():
            obstacles.setdefault(p, []).extend(lst)
    return plans, None


def _robot_plans(name: str, robot: Robot, c: _Chain, res) -> tuple[RobotPlan, RobotPlan]:
    """The timed trajectory of a SIPP result along a chain, and the same without the turns'
    standing time (what the commands' ``wait`` s are made of: the turn itself takes that time)."""
    moves: list[Move] = []
    command_moves: list[Move] = []
    for i, node in enumerate(res.nodes):
        p = (float(c.xy[node, 0]), float(c.xy[node, 1]))
        arrive = res.arrive[i] if i else 0.0
        depart = res.depart[i]
        if depart > arrive or not math.isfinite(depart):
            m = Move(c.piece[node], arrive, depart, p, p)
            moves.append(m)
            command_moves.append(m)
        if i + 1 < len(res.nodes):
            kind = c.kind[node]
            nxt = res.nodes[i + 1]
            q = (float(c.xy[nxt, 0]), float(c.xy[nxt, 1]))
            if kind == "go":
                m = Move(c.piece[node], depart, res.arrive[i + 1], p, q)
                moves.append(m)
                command_moves.append(m)
            elif kind == "turn":
                moves.append(Move(c.piece[node], depart, res.arrive[i + 1], p, p))
    heading = 0.0
    for m in reversed(moves):
        if m.p0 != m.p1:
            heading = math.degrees(math.atan2(m.p1[1] - m.p0[1], m.p1[0] - m.p0[0])) % 360.0
            break
    driving = float(c.length.sum()) / robot.speed_mm_s
    return (RobotPlan(name, robot, tuple(moves), heading, driving),
            RobotPlan(name, robot, tuple(command_moves), heading, driving))
