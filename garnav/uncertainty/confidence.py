"""Planning to a required confidence: grow the clearances where the spread is large and re-plan
until the Monte Carlo contact probability is within bound.

A chance constraint P(contact) ≤ δ is turned into deterministic clearances by tightening each
obstacle constraint by a Gaussian quantile of the position spread, with the risk split evenly over
the zones by Boole's inequality (Blackmore, Ono & Williams, *Chance-constrained optimal path planning
with obstacles*, IEEE T-RO 27(6), 2011, §III–IV). Here: each hard keep-out the route passes within
reach of gets its clearance grown by z·σ_k, σ_k the largest 1σ position spread (linearised
propagation) on that keep-out's piece, z = Φ⁻¹(1 − δ/m) for m hard zones; the open-edge margin grows
by z·σ only when the Monte Carlo sees open-edge contacts. Growth never covers a stop (start, via,
goal): it is capped 0.5 mm short of it. Linearisation and the caps are approximations, so each plan
is checked with the Monte Carlo (the 95 % Wilson upper bound must be ≤ δ); if it fails, z grows by a
quarter and the route is planned again, through the public :class:`~garnav.plan.Planner` API.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from statistics import NormalDist
from typing import Callable, Sequence

import numpy as np
import shapely

from garnav.errors import NoRouteError, QueryError
from garnav.export.commands import DEFAULT_TOLERANCE_MM, route_commands
from garnav.model import Garment, Robot
from garnav.plan import Planner, Route
from garnav.uncertainty.model import OdometryModel
from garnav.polyline import sub_polyline
from garnav.uncertainty.montecarlo import OPEN_EDGE, MonteCarlo, RiskMap, monte_carlo
from garnav.uncertainty.plan_ops import compile_commands
from garnav.uncertainty.propagate import propagate_covariance

__all__ = ["ConfidentRoute", "route_risk", "confident_route", "runs_for"]


@dataclass(frozen=True)
class ConfidentRoute:
    """A route whose Monte Carlo contact probability (95 % upper bound) is at most 1 − confidence.

    Attributes
    ----------
    route : Route
    planner : Planner
        The planner it came from (grown clearances).
    confidence : float
    grown_mm : dict
        Clearance added per keep-out name (and ``"open edge"`` for the edge margin), mm.
    probability, upper : float
        Estimated overall contact probability and its 95 % upper bound.
    runs : int
    rounds : int
        Plans made.
    """

    route: Route
    planner: Planner
    confidence: float
    grown_mm: dict
    probability: float
    upper: float
    runs: int
    rounds: int

    def lines(self) -> list[str]:
        return [
            f"confidence  {self.confidence:g}: contact probability {self.probability:.4f} "
            f"(95 % upper bound {self.upper:.4f} <= {1 - self.confidence:.4g}, {self.runs} Monte Carlo runs)",
            "clearance   " + (", ".join(f"+{v:.1f} mm {k}" for k, v in sorted(self.grown_mm.items()) if v > 0)
                              or "as planned") + f" ({self.rounds} plan{'s' if self.rounds != 1 else ''})",
        ]


def runs_for(confidence: float) -> int:
    """Monte Carlo runs enough to show a bound of 1 − confidence: 30 / δ, at least 2000, at most 200 000."""
    return int(min(200_000, max(2000, math.ceil(30.0 / (1.0 - confidence)))))


def route_risk(garment: Garment, robot: Robot, route: Route, model: OdometryModel, risk: RiskMap,
               runs: int, seed: int, command_tolerance_mm: float = DEFAULT_TOLERANCE_MM,
               ) -> tuple[MonteCarlo, dict[str, float]]:
    """Monte Carlo of a planned route, and per piece the largest 1σ position spread on it (mm,
    linearised: the largest semi-axis of the position covariance before or after any step there).
    The route is driven by its command list merged within ``command_tolerance_mm``."""
    plan = compile_commands(garment, route_commands(route, garment, robot, tolerance_mm=command_tolerance_mm), robot)
    prop = propagate_covariance(plan, model)
    sigma: dict[str, float] = {}
    for i, st in enumerate(plan.steps):
        for P in (prop.covariances[i], prop.covariances[i + 1]):
            s = float(np.sqrt(max(np.linalg.eigvalsh(P[:2, :2])[-1], 0.0)))
            sigma[st.piece] = max(sigma.get(st.piece, 0.0), s)
    return monte_carlo(plan, model, risk, runs=runs, seed=seed), sigma


def confident_route(
    garment: Garment,
    robot: Robot,
    stops: Sequence,
    confidence: float,
    *,
    model: OdometryModel | None = None,
    base_clearance_mm: float = 0.0,
    locate_3d: Callable | None = None,
    runs: int | None = None,
    seed: int = 0,
    max_rounds: int = 8,
    first: tuple[Planner, Route] | None = None,
    command_tolerance_mm: float = DEFAULT_TOLERANCE_MM,
) -> ConfidentRoute:
    """Plan from ``stops[0]`` via ``stops[1:-1]`` to ``stops[-1]`` with P(contact) ≤ 1 − confidence.

    Parameters
    ----------
    garment, robot
    stops : sequence of points (landmark names, ``PIECE:X,Y``, PiecePoint)
    confidence : float
        In (0, 1).
    model : OdometryModel, optional
        Defaults to ``robot.odometry`` or the demo defaults.
    base_clearance_mm : float
        The user's own extra clearance.
    locate_3d : callable, optional
        For world points (see :class:`Planner`).
    runs : int, optional
        Monte Carlo runs per check (default :func:`runs_for`).
    seed : int
    max_rounds : int
    first : (Planner, Route), optional
        An already planned route at the base clearance (saves the first plan).
    command_tolerance_mm : float
        Merge tolerance of the command list whose drift is checked (the one that will be written).

    Raises
    ------
    QueryError
        A confidence outside (0, 1), or a stop that the grown clearance covers.
    NoRouteError
        No route meets the bound within ``max_rounds`` plans.
    """
    if not 0.0 < confidence < 1.0:
        raise QueryError(f"--confidence must be between 0 and 1 (e.g. 0.99), got {confidence:g}")
    model = model or robot.odometry or OdometryModel()
    delta = 1.0 - confidence
    runs = runs or runs_for(confidence)
    risk = RiskMap(garment, robot)
    zones = sum(1 for k in garment.keepouts if k.hard) + len({r.piece for r in garment.open_runs()})
    z = NormalDist().inv_cdf(1.0 - delta / max(zones, 1))
    grow: dict[str, float] = {}
    edge_extra = 0.0
    planner, route = first if first is not None else (None, None)
    if planner is None:
        planner = Planner(garment, robot, extra_clearance_mm=base_clearance_mm, locate_3d=locate_3d)
    points = [planner.point(p, role=r) for p, r in zip(stops, ["start"] + ["via point"] * (len(stops) - 2) + ["goal"], strict=True)]
    prev_grow: dict[str, float] = {}
    prev_edge = 0.0
    backoffs = 0
    rnd = 0
    while rnd < max_rounds:
        if route is None:
            g2 = dataclasses.replace(garment, keepouts=tuple(
                dataclasses.replace(k, clearance_mm=k.clearance_mm + grow.get(k.name, 0.0)) for k in garment.keepouts))
            r2 = dataclasses.replace(robot, edge_margin_mm=robot.edge_margin_mm + edge_extra)
            planner = Planner(g2, r2, extra_clearance_mm=base_clearance_mm, locate_3d=locate_3d)
            try:
                route = planner.route(points[0], points[-1], via=points[1:-1])
            except (QueryError, NoRouteError) as exc:  # a stop covered (e.g. across a seam): back off
                if backoffs >= 4:
                    raise type(exc)(
                        f"{exc} (with clearances grown to reach confidence {confidence:g}: the stops "
                        f"themselves lie too close to a zone for this confidence)") from None
                backoffs += 1
                grow = {k: prev_grow.get(k, 0.0) + 0.5 * (v - prev_grow.get(k, 0.0)) for k, v in grow.items()}
                edge_extra = prev_edge + 0.5 * (edge_extra - prev_edge)
                continue
        rnd += 1
        mc, sigma = route_risk(garment, robot, route, model, risk, runs, seed, command_tolerance_mm)
        lo, hi = mc.interval()
        if hi <= delta:
            grown = dict(grow)
            if edge_extra > 0:
                grown[OPEN_EDGE] = edge_extra
            return ConfidentRoute(route, planner, confidence, grown, mc.probability(), hi, runs, rnd)
        zz = z * 1.25 ** (rnd - 1)
        prev_grow, prev_edge = dict(grow), edge_extra
        for k in garment.keepouts:
            s_k = sigma.get(k.piece, 0.0)
            want = zz * s_k
            if not k.hard or want <= grow.get(k.name, 0.0):
                continue
            reach = _route_distance(route, k) - robot.radius_mm - k.clearance_mm - base_clearance_mm
            if reach > want + 1.0 and mc.probability(k.name) == 0.0:
                continue  # far enough already
            cap = _stop_room(points, k, robot, base_clearance_mm)
            grow[k.name] = max(grow.get(k.name, 0.0), min(want, cap))
        if OPEN_EDGE in mc.contact and mc.probability(OPEN_EDGE) > 0.0:
            want = zz * max(sigma.values(), default=0.0)
            edge_extra = max(edge_extra, min(want, _edge_room(garment, points, robot)))
        route = None
    raise NoRouteError(
        f"no route with contact probability <= {delta:.4g} found in {max_rounds} plans; lower "
        f"--confidence, reduce the robot's odometry errors, or switch on seam re-localisation"
    )


def _route_distance(route: Route, keepout) -> float:
    """Distance (mm) from the route's legs on the keep-out's piece to the keep-out zone."""
    geom = keepout.shape.exact_geometry()
    best = math.inf
    for leg in route.legs:
        if leg.piece == keepout.piece:
            pts = np.asarray(leg.points, dtype=float).reshape(-1, 2)
            line = shapely.LineString(pts) if len(pts) > 1 else shapely.Point(pts[0])
            best = min(best, float(shapely.distance(line, geom)))
    return best


def _stop_room(points, keepout, robot: Robot, base: float) -> float:
    """How much the keep-out's clearance may grow before it covers a stop on its piece (mm)."""
    geom = keepout.shape.exact_geometry()
    room = math.inf
    for p in points:
        if p.piece == keepout.piece:
            d = float(shapely.distance(shapely.Point(p.x, p.y), geom))
            room = min(room, d - robot.radius_mm - keepout.clearance_mm - base - 0.5)
    return max(room, 0.0)


def _edge_room(garment: Garment, points, robot: Robot) -> float:
    """How much the open-edge margin may grow before it covers a stop (mm)."""
    room = math.inf
    for p in points:
        piece = garment.piece(p.piece)
        lines = [shapely.LineString(sub_polyline(piece.edge(r.edge).array, r.from_mm, r.to_mm))
                 for r in garment.open_runs() if r.piece == p.piece]
        lines += [shapely.LinearRing(o.array) for o in piece.openings]
        if lines:
            d = float(shapely.distance(shapely.Point(p.x, p.y), shapely.union_all(lines)))
            room = min(room, d - robot.radius_mm - robot.edge_margin_mm - 0.5)
    return max(room, 0.0)
