"""The work of one study process: build once per (garment size, robot), answer many cases.

A :class:`Workbench` is a per-process object that keeps the built :class:`CaseContext` of the last
few (garment size, robot) pairs it has seen: the route planner (free space, navigation graph),
each pose's linked drape and 3D locator, one :class:`~garnav.mechanics.PhysicsPlanner` per (pose,
posture) and the Monte Carlo risk map. The serial run holds one in the driver; on Dask each worker
process holds one in a worker plugin (:mod:`garnav.study.cluster`). Nothing is kept at module
level, and each process builds its own shapely prepared geometries (they are not thread-safe,
GEOS issue 825, and do not survive pickling), so workers run one thread each.

:func:`measure_case` turns one case into one row (:mod:`garnav.study.results`); a case that
fails records its status, reason and — where the planner's explanation names one — what blocks it.
"""

from __future__ import annotations

import re
import zlib
from collections import OrderedDict
from dataclasses import dataclass

import numpy as np
import shapely

from garnav.errors import GarnavError, NoRouteError, QueryError
from garnav.model import Robot
from garnav.study.cases import Case, Chunk, GarmentInputs
from garnav.study.results import empty_row

__all__ = ["Settings", "CaseContext", "Workbench", "measure_case", "case_seed", "route_bends", "named_blockers"]

#: Labels the planner's explanations use for the things that block (garnav.plan.explain, freespace).
_LABEL_RE = re.compile(r"((?:keep-out|open edge|opening|seam) '[^']+')")


@dataclass(frozen=True)
class Settings:
    """What to measure: the study's measures, Monte Carlo runs and seed."""

    measures: tuple[str, ...]
    contact_runs: int = 200
    seed: int = 0

    @property
    def physics(self) -> bool:
        return "energy" in self.measures or "margins" in self.measures


class _Fail(Exception):
    def __init__(self, status: str, reason: str, blocker: str = ""):
        super().__init__(reason)
        self.status, self.reason, self.blocker = status, reason, blocker


def case_seed(seed: int, case: Case) -> int:
    """The Monte Carlo seed of a case: CRC-32 of the study seed and the case's key, so a case
    draws the same runs whichever process answers it."""
    return zlib.crc32(f"{seed}|{case.key}".encode())


def named_blockers(text: str) -> str:
    """The keep-outs, edges and seams an explanation names, in order, ';'-separated.

    >>> named_blockers("the gap between keep-out 'pocket' and keep-out 'placket' is 30.0 mm")
    "keep-out 'pocket';keep-out 'placket'"
    """
    out: list[str] = []
    for m in _LABEL_RE.findall(text):
        if m not in out:
            out.append(m)
    return ";".join(out)


def route_bends(route, free, tol_mm: float = 1e-6) -> list[str]:
    """Labels of the obstacles whose grown shape an inner route vertex lies on (the route wraps
    around them: shortest paths bend only at obstacle corners, Lozano-Pérez & Wesley 1979), sorted."""
    names: set[str] = set()
    for leg in route.legs:
        pts = np.asarray(leg.points, dtype=float)[1:-1]
        if not len(pts):
            continue
        geoms = shapely.points(pts)
        for o in free[leg.piece].obstacles:
            if np.any(shapely.distance(o.grown, geoms) <= tol_mm):
                names.add(o.label)
    return sorted(names)


def _unsafe_blocker(mech) -> str:
    """'piece NAME: margins' of the first unsafe segment of a route's mechanics."""
    i = mech.unsafe[0][0]
    p, b = mech.physics, mech.balance
    kinds = [k for k, low in (("hold", b.hold_margin[i] < p.safety_factor), ("grip", b.grip_margin[i] < p.safety_factor),
                              ("drive", b.drive_margin[i] < p.drive_safety_factor)) if low]
    return f"piece '{mech.piece_names[mech.piece_index[i]]}': {'+'.join(kinds)}"


def _finite(v: float) -> float | None:
    return float(v) if np.isfinite(v) else None


class CaseContext:
    """Everything built once for one (garment size, robot) in one process.

    The planner is built at construction; drapes, locators, physics planners and the risk map
    on first use, then kept here.
    """

    def __init__(self, inputs: GarmentInputs, robot: Robot):
        from garnav.plan import Planner

        self.inputs = inputs
        self.garment = inputs.garment
        self.robot = robot
        self.planner = Planner(inputs.garment, robot)
        self._drapes: dict = {}
        self._locators: dict = {}
        self._physics: dict = {}
        self._risk = None

    def drape(self, pose: str):
        if pose not in self._drapes:
            from garnav.drape.drape import link_drape

            mesh = self.inputs.mesh(pose)
            self._drapes[pose] = None if mesh is None else link_drape(self.garment, mesh)
        return self._drapes[pose]

    def locator(self, pose: str):
        if pose not in self._locators:
            from garnav.drape.inverse import pattern_locator

            d = self.drape(pose)
            self._locators[pose] = None if d is None else pattern_locator(d, self.garment)
        return self._locators[pose]

    def physics(self, pose: str, posture: str):
        key = (pose, posture)
        if key not in self._physics:
            from garnav.mechanics.planning import PhysicsPlanner

            self._physics[key] = PhysicsPlanner(self.planner, self.drape(pose), posture=posture)
        return self._physics[key]

    def risk(self):
        if self._risk is None:
            from garnav.uncertainty.montecarlo import RiskMap

            self._risk = RiskMap(self.garment, self.robot)
        return self._risk

    def point(self, text: str, pose: str, role: str):
        """A case's point (a base-size text) on this size, checked free; raises _Fail."""
        from garnav.plan.explain import check_free
        from garnav.plan.points import PiecePoint, parse_point, resolve_point

        kind, value = parse_point(text)
        spec: object = text
        if kind == "piece":
            f = self.inputs.factor(value[0])
            spec = PiecePoint(value[0], value[1] * f, value[2] * f, label=f"{role} '{text}'")
        pp = resolve_point(self.garment, spec, locate_3d=self.locator(pose))  # type: ignore[arg-type]
        fs = self.planner.free[pp.piece]
        if not fs.covers(pp.xy[None])[0]:
            hit = fs.blocking(pp.xy)
            try:
                check_free(self.planner.free, pp, role=role)
            except QueryError as exc:
                raise _Fail("bad_point", str(exc), hit[0].label if hit else "") from None
        return pp

    def drivable(self, a, b, pose: str, posture: str):
        """(route, lifted, mechanics, method, detour blocker) of the drivable route a → b."""
        base = self.planner.route(a, b)
        phys = self.physics(pose, posture)
        lifted, mech = phys.check(base)
        if mech.safe:
            return base, lifted, mech, "length-optimal", ""
        blocker = _unsafe_blocker(mech)
        try:
            planned = phys.route(a, b)
        except NoRouteError as exc:
            raise _Fail("not_drivable", str(exc), blocker) from None
        return planned.route, planned.lifted, planned.mechanics, planned.method, blocker


def measure_case(ctx: CaseContext, case: Case, settings: Settings, chunk: str = "") -> dict:
    """One case → one row (every column of :data:`garnav.study.results.COLUMNS`)."""
    gi = ctx.inputs
    row = empty_row()
    row.update(case=case.index, chunk=chunk, garment=gi.label, size=gi.size, scale=gi.scale, pose=case.pose,
               posture=case.posture, robot=case.robot, start=case.start, goal=case.goal)
    want = set(settings.measures)
    try:
        a = ctx.point(case.start, case.pose, "start")
        b = ctx.point(case.goal, case.pose, "goal")
        lifted = mech = None
        if settings.physics:
            route, lifted, mech, method, detour = ctx.drivable(a, b, case.pose, case.posture)
            row.update(method=method, detour_blocker=detour)
        else:
            route = ctx.planner.route(a, b)
            row["method"] = "planner"
            if "length_3d" in want:
                from garnav.drape.lift import lift_route
                from garnav.mechanics.planning import LIFT_SNAP_MM

                lifted = lift_route(ctx.drape(case.pose), ctx.garment, route, snap_mm=LIFT_SNAP_MM)
        row.update(length_mm=float(route.length_mm), cost_mm=float(route.cost), seams_crossed=len(route.crossings),
                   turns=int(route.turn_count()), bends=";".join(route_bends(route, ctx.planner.free)))
        if "time" in want:
            row["time_s"] = mech.total_time_s if mech is not None else float(route.time_s)
        if lifted is not None:
            row.update(length_3d_mm=float(lifted.length_3d_mm), climb_up_mm=float(lifted.climb_up_mm))
        if mech is not None:
            if "energy" in want:
                row.update(energy_j=mech.total_energy_j, battery_used_fraction=mech.battery_used_fraction)
            if "margins" in want:
                row.update(min_grip_margin=_finite(mech.min_margin("grip")),
                           min_hold_margin=_finite(mech.min_margin("hold")),
                           min_drive_margin=_finite(mech.min_margin("drive")))
        if "contact" in want:
            _contact(ctx, route, case, settings, row)
        row["status"] = "ok"
    except _Fail as f:
        row.update(status=f.status, reason=f.reason, blocker=f.blocker)
    except QueryError as exc:
        row.update(status="bad_point", reason=str(exc), blocker=named_blockers(str(exc)))
    except NoRouteError as exc:
        row.update(status="no_route", reason=str(exc), blocker=named_blockers(str(exc)))
    except GarnavError as exc:
        row.update(status="failed", reason=str(exc), blocker=named_blockers(str(exc)))
    except Exception as exc:  # recorded, counted and reported by the run, never silently dropped
        row.update(status="error", reason=f"{type(exc).__name__}: {exc}")
    return row


def _contact(ctx: CaseContext, route, case: Case, settings: Settings, row: dict) -> None:
    from garnav.export.commands import route_commands
    from garnav.uncertainty.montecarlo import monte_carlo
    from garnav.uncertainty.plan_ops import compile_commands

    robot = ctx.robot
    assert robot.odometry is not None  # prepare_study refuses contact without [robot.odometry]
    plan = compile_commands(ctx.garment, route_commands(route, ctx.garment, robot), robot)
    mc = monte_carlo(plan, robot.odometry, ctx.risk(), runs=settings.contact_runs, seed=case_seed(settings.seed, case))
    row["contact_probability"] = mc.probability()
    probs = {name: mc.probability(name) for name in sorted(mc.contact)}
    worst = max(probs, key=lambda n: probs[n], default=None)
    row["contact_worst"] = worst if worst is not None and probs[worst] > 0 else ""


class Workbench:
    """Per-process cache of built contexts, the last ``max_contexts`` (garment size, robot) pairs.

    ``builds`` counts the contexts built (the scaling model's "build per worker").
    """

    def __init__(self, max_contexts: int = 4):
        self.max_contexts = int(max_contexts)
        self._contexts: OrderedDict = OrderedDict()
        self.builds = 0

    def context(self, inputs: GarmentInputs, robot_label: str, robot: Robot) -> CaseContext:
        key = (inputs.key, robot_label)
        ctx = self._contexts.get(key)
        if ctx is None:
            ctx = CaseContext(inputs, robot)
            self.builds += 1
            self._contexts[key] = ctx
            while len(self._contexts) > self.max_contexts:
                self._contexts.popitem(last=False)
        else:
            self._contexts.move_to_end(key)
        return ctx

    def run(self, inputs: GarmentInputs, chunk: Chunk, settings: Settings) -> list[dict]:
        """The rows of one chunk, in case order."""
        ctx = self.context(inputs, chunk.robot_label, chunk.robot)
        return [measure_case(ctx, case, settings, chunk.id) for case in chunk.cases]
