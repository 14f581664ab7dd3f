"""Routes the robot can drive: feasibility-aware planning on top of :class:`garnav.plan.Planner`.

:class:`PhysicsPlanner` answers a query in three steps:

1. the length-optimal route from the planner (exact, :mod:`garnav.plan`), lifted onto the drape
   and checked segment by segment (:func:`garnav.mechanics.evaluate.route_mechanics`); with
   ``cost="length"`` or ``"time"`` it is returned when every segment keeps its margins;
2. otherwise (and always for ``cost="energy"``) a search on the direction-aware lattice
   (:mod:`garnav.mechanics.lattice`): straight edges where the robot can drive them, switchback
   edges (Rowe & Ross 1990) where the direction is too steep but a zig-zag is not, no edge where
   the robot would slip or fall off; the lattice path is expanded into zig-zag legs, straightened
   where straight segments stay drivable, and assembled into a :class:`~garnav.plan.Route`;
3. the assembled route is lifted and checked again. Should any segment miss a margin (the
   lattice judges each edge at its ends, the drape is curved in between), the search is repeated
   with the requirements raised by 10 % each time; after the last try it raises
   :class:`~garnav.errors.NoRouteError` naming the limit that blocks the way.

So no route returned with a physics profile has a segment below its required margins in the
chosen posture. Without a profile, use :class:`garnav.plan.Planner` directly: its routes are
unchanged.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np

from garnav.drape.lift import lift_route
from garnav.errors import NoRouteError, QueryError
from garnav.mechanics.evaluate import RouteMechanics, route_mechanics
from garnav.mechanics.gravity import gravity_vector
from garnav.mechanics.lattice import NO, OK, ZIG, Lattice, build_lattice, edge_classes, node_terms, shortest
from garnav.mechanics.profile import RobotPhysics
from garnav.plan.route import Leg, Route, join_routes, make_route
from garnav.plan.visgraph import segments_free

__all__ = ["COSTS", "PhysicsPlanner", "PlannedRoute", "route_cost"]

COSTS = ("length", "time", "energy")
#: How far (pattern mm) a route point may lie outside the drape's triangles when it is lifted:
#: a curved outline is cut by the mesh's chords.
LIFT_SNAP_MM = 2.0
_RETRIES = 4


@dataclass(frozen=True, eq=False)
class PlannedRoute:
    """A route with its lift and mechanics.

    ``method``: ``"length-optimal"`` (the planner's route was drivable) or ``"lattice"`` (a
    detour or switchback search was needed). ``shortest``, ``shortest_route`` and
    ``shortest_lifted`` are the length-optimal route's mechanics, route and lift when it was
    refused as not drivable (to show why), else None.
    """

    route: Route
    lifted: object
    mechanics: RouteMechanics
    method: str
    shortest: RouteMechanics | None = None
    shortest_route: Route | None = None
    shortest_lifted: object = None


def route_cost(m: RouteMechanics, cost: str) -> float:
    """A checked route's cost: 3D length (mm), time (s) or energy (J)."""
    if cost == "energy":
        return m.total_energy_j
    if cost == "time":
        return m.total_time_s
    return float(m.length_mm.sum())


class PhysicsPlanner:
    """Feasibility-aware planner for one garment, drape, robot profile and posture.

    Parameters
    ----------
    planner : garnav.plan.Planner
        Built once for the garment and robot (its free space and length-optimal routes).
    drape : garnav.drape.Drape
        The drape the mechanics are read on.
    physics : RobotPhysics, optional
        Default: ``planner.robot.physics``; required one way or the other.
    gravity : (3,) array, optional
        Unit gravity direction in the body frame; default: that of ``posture``.
    posture : str
        Posture name (:mod:`garnav.mechanics.gravity`): the default gravity, and the label written
        into the results (pass ``"custom"`` with an explicit ``gravity``).
    cost : {"length", "time", "energy"}
    spacing_mm : float, optional
        Lattice step; default: the robot radius (at least 5 mm).
    """

    def __init__(
        self,
        planner,
        drape,
        physics: RobotPhysics | None = None,
        *,
        gravity=None,
        posture: str = "upright",
        cost: str = "length",
        spacing_mm: float | None = None,
    ):
        if cost not in COSTS:
            raise QueryError(f"unknown cost '{cost}'; costs: {', '.join(COSTS)}")
        self.planner = planner
        self.drape = drape
        self.garment = planner.garment
        self.robot = planner.robot
        self.physics = physics or self.robot.physics
        if self.physics is None:
            raise QueryError(f"robot '{self.robot.name}' has no physics profile ([robot.physics]); "
                             "plan with garnav.plan.Planner, or give one (docs/physics.md)")
        self.posture = posture
        g = gravity_vector(posture) if gravity is None else np.asarray(gravity, dtype=float)
        self.gravity = g / np.linalg.norm(g)
        self.cost = cost
        self.spacing_mm = float(spacing_mm or max(5.0, self.robot.radius_mm))
        self._lattice: Lattice | None = None

    # ------------------------------------------------------------------ checking

    def check(self, route: Route) -> tuple[object, RouteMechanics]:
        """Lift ``route`` and compute its mechanics in this planner's posture."""
        lifted = lift_route(self.drape, self.garment, route, snap_mm=LIFT_SNAP_MM)
        return lifted, self.mechanics(lifted)

    def mechanics(self, lifted) -> RouteMechanics:
        return route_mechanics(lifted, self.drape, self.physics, self.gravity,
                               speed_mm_s=self.robot.speed_mm_s, side=self.robot.side,
                               posture=self.posture)

    # ------------------------------------------------------------------ queries

    def route(self, start, goal, via: Sequence = (), *, snap: bool = False) -> PlannedRoute:
        """The cheapest drivable route from ``start`` through each ``via`` point to ``goal``."""
        stops = [self.planner.point(start, snap=snap, role="start")]
        stops += [self.planner.point(v, snap=snap, role="via point") for v in via]
        stops.append(self.planner.point(goal, snap=snap, role="goal"))
        parts = [self._between(a, b) for a, b in zip(stops[:-1], stops[1:], strict=True)]
        if len(parts) == 1:
            return parts[0]
        joined = join_routes(self.garment, self.robot, [p.route for p in parts])
        lifted, mech = self.check(joined)
        method = "lattice" if any(p.method == "lattice" for p in parts) else "length-optimal"
        return PlannedRoute(joined, lifted, mech, method)

    def _between(self, a, b) -> PlannedRoute:
        base = self.planner.route(a, b)
        lifted, mech = self.check(base)
        if mech.safe and self.cost != "energy":
            return PlannedRoute(base, lifted, mech, "length-optimal")
        best = None
        for attempt in range(_RETRIES):
            found = self._lattice_route(a, b, 1.0 + 0.1 * attempt)
            if found is None:
                break
            l_lift, l_mech = self.check(found)
            if l_mech.safe:
                best = PlannedRoute(found, l_lift, l_mech, "lattice", None if mech.safe else mech,
                                    None if mech.safe else base, None if mech.safe else lifted)
                break
        if mech.safe and (best is None or route_cost(mech, self.cost) <= route_cost(best.mechanics, self.cost)):
            return PlannedRoute(base, lifted, mech, "length-optimal")
        if best is None:
            first = mech.unsafe[0][1] if mech.unsafe else "no segment"
            raise NoRouteError(
                f"no drivable route from {a.label} to {b.label} in posture '{self.posture}': the "
                f"shortest route has {len(mech.unsafe)} unsafe segment"
                f"{'s' if len(mech.unsafe) != 1 else ''} ({first}), and no detour or switchback "
                "keeps every margin (docs/physics.md)"
            )
        return best

    def dock_check(self, planned: PlannedRoute, goal) -> dict | None:
        """Whether the robot can still reach the nearest dock after ``planned``.

        Docks are the landmarks named ``dock`` or ``dock_...``. Returns None when the garment has
        none or the route ends on one, else a dict: ``dock`` (name), ``reachable`` (bool),
        ``energy_j`` and ``length_mm`` of the drivable way there (None when there is none),
        ``charge_left_fraction`` after it, and ``reason`` when it is not reachable.
        """
        docks = [m.name for m in self.garment.landmarks if m.name == "dock" or m.name.startswith("dock_")]
        end = self.planner.point(goal, snap=True, role="goal")
        if not docks or any(np.allclose(self.planner.point(d).xy, end.xy) and self.planner.point(d).piece == end.piece
                            for d in docks):
            return None
        best = None
        for name in docks:
            try:
                back = self.route(end, name)
            except NoRouteError as exc:
                best = best or {"dock": name, "reason": str(exc)}
                continue
            if best is None or "energy_j" not in best or back.mechanics.total_energy_j < best["energy_j"]:
                best = {"dock": name, "energy_j": back.mechanics.total_energy_j,
                        "length_mm": float(back.mechanics.length_mm.sum())}
        assert best is not None
        left = planned.mechanics.charge_left_fraction
        reserve = 1.0 - self.physics.usable_fraction
        if "energy_j" not in best:
            return {"dock": best["dock"], "reachable": False, "energy_j": None, "length_mm": None,
                    "charge_left_fraction": left, "reason": best["reason"]}
        after = left - best["energy_j"] / self.physics.battery_j
        ok = after >= reserve - 1e-12
        out = {"dock": best["dock"], "reachable": bool(ok), "energy_j": round(best["energy_j"], 6),
               "length_mm": round(best["length_mm"], 6), "charge_left_fraction": round(after, 6)}
        if not ok:
            out["reason"] = (f"the way back needs {best['energy_j']:.1f} J but only "
                             f"{max(0.0, left - reserve) * self.physics.battery_j:.1f} J of usable charge is left")
        return out

    # ------------------------------------------------------------------ lattice

    def lattice(self) -> Lattice:
        """The lattice over every piece of the garment (built on first use, then kept)."""
        if self._lattice is None:
            self._lattice = build_lattice(self.garment, self.planner.free, self.drape,
                                          [p.name for p in self.garment.pieces], self.spacing_mm,
                                          self.robot)
        return self._lattice

    def _terms(self, face: np.ndarray, scale: float):
        return node_terms(self.drape, self.physics, self.gravity, face, self.drape.piece_names,
                          self.robot.side, scale)

    def _lattice_route(self, a, b, scale: float) -> Route | None:
        lat = self.lattice()
        n0 = len(lat.xy)
        # temporary nodes: start n0, goal n0 + 1, linked to grid nodes within reach
        ends = []
        for pp in (a, b):
            k = lat.pieces.index(pp.piece)
            hits = self.drape.locate(pp.piece, pp.xy[None], snap_mm=2.0 * self.spacing_mm)
            ends.append((k, int(hits.face[0])))
        xy = np.vstack([lat.xy, a.xy[None], b.xy[None]])
        piece = np.concatenate([lat.piece, [ends[0][0], ends[1][0]]])
        face = np.concatenate([lat.face, [ends[0][1], ends[1][1]]])
        extra = []
        reach = 2.5 * self.spacing_mm
        for node, pp, out in ((n0, a, True), (n0 + 1, b, False)):
            k = lat.pieces.index(pp.piece)
            cand = np.flatnonzero((lat.piece == k) & (lat.seam_node < 0)
                                  & (np.linalg.norm(lat.xy - pp.xy, axis=1) <= reach))
            if len(cand):
                ok = segments_free(self.planner.free[pp.piece].region, np.repeat(pp.xy[None], len(cand), 0), lat.xy[cand])
                cand = cand[ok]
            pairs = np.column_stack([np.full(len(cand), node), cand]) if out else np.column_stack([cand, np.full(len(cand), node)])
            extra.append(pairs)
        edges = np.vstack([lat.edges, *extra]).astype(np.int64)
        crossing = np.concatenate([lat.crossing, np.zeros(len(edges) - len(lat.edges), bool)])
        terms = self._terms(face, scale)
        ta = tuple(_take(t, edges[:, 0]) for t in terms)
        tb = tuple(_take(t, edges[:, 1]) for t in terms)
        costs = edge_classes(xy[edges[:, 0]], xy[edges[:, 1]], ta, tb, self.gravity, self.physics,
                             self.cost, self.robot.speed_mm_s)
        klass = costs.klass.copy()
        value = costs.cost.copy()
        cross_cost = np.array([self.garment.seam(lat.seam_info[lat.seam_node[u]][0]).crossing_cost_mm
                               for u in edges[crossing, 0]]) if crossing.any() else np.zeros(0)
        klass[crossing] = OK
        if self.cost == "energy":
            cross_cost = cross_cost * self.physics.power_w / self.robot.speed_mm_s
        elif self.cost == "time":
            cross_cost = cross_cost / self.robot.speed_mm_s
        value[crossing] = cross_cost
        use = klass != NO
        path, _ = shortest(len(xy), edges[use, 0], edges[use, 1], value[use], n0, [n0 + 1])
        if path is None:
            return None
        eidx = _path_edges(path, edges, use, value)
        return self._assemble(path, xy, piece, lat, eidx, costs, klass, crossing, scale)

    def _assemble(self, path, xy, piece, lat: Lattice, eidx, costs, klass, crossing, scale) -> Route:
        # runs of the path: ("cross", u), ("ok", [edges]) or ("zig", [edges]) in order
        legs: list[tuple[str, list[np.ndarray], list[bool]]] = []
        crossings = []
        cur = [xy[path[0]]]
        fixed = [True]  # vertices that straightening must keep (switchback corners)
        steps = list(zip(path[:-1], path[1:], strict=True))
        i = 0
        while i < len(steps):
            u, v = steps[i]
            e = eidx[(u, v)]
            if crossing[e]:
                legs.append((lat.pieces[piece[u]], cur, fixed))
                crossings.append(lat.seam_info[lat.seam_node[u]])
                cur, fixed = [xy[v]], [True]
                i += 1
                continue
            if klass[e] != ZIG:
                cur.append(xy[v])
                fixed.append(False)
                i += 1
                continue
            run = [e]
            j = i + 1
            while j < len(steps) and klass[eidx[steps[j]]] == ZIG and not crossing[eidx[steps[j]]] \
                    and np.sign(costs.zig_cos[eidx[steps[j]]]) == np.sign(costs.zig_cos[e]):
                run.append(eidx[steps[j]])
                j += 1
            name = lat.pieces[piece[u]]
            pts = self._switchback(name, xy, [steps[k] for k in range(i, j)], run, costs, scale)
            fixed[-1] = True
            cur.extend(pts[1:])
            fixed.extend([True] * (len(pts) - 1))
            i = j
        fixed[-1] = True
        legs.append((lat.pieces[piece[path[-1]]], cur, fixed))
        out_legs = []
        for name, pts, keep in legs:
            arr = np.array(pts, dtype=float)
            arr = self._straighten(name, arr, np.array(keep), scale)
            if len(arr) == 1:
                arr = np.vstack([arr, arr])
            out_legs.append(Leg(name, arr))
        data = [(name, t, side) for name, t, side in crossings]
        length = float(sum(leg.length_mm for leg in out_legs))
        return make_route(self.garment, self.robot, out_legs, data, length)

    def _switchback(self, piece: str, xy, steps, run, costs, scale) -> list[np.ndarray]:
        """Zig-zag points over a run of switchback edges: one switchback with as few turns as
        keep it in the free space and drivable (legs checked on the drape); else the run split in
        halves, down to single edges."""
        a, b = xy[steps[0][0]], xy[steps[-1][1]]
        zc = costs.zig_cos[run]
        c = float(zc[np.argmin(np.abs(zc))])  # the strictest limit of the run
        up = costs.uphill[run].sum(axis=0)
        region = self.planner.free[piece].region
        span = float(np.linalg.norm(b - a))
        n = 1
        while n == 1 or n * self.spacing_mm <= span + self.spacing_mm:
            pts = _zigzag(a, b, up, c, n)
            if len(pts) > 2 and self._legs_ok(piece, region, pts, scale):
                return pts
            n *= 2
        if len(run) > 1:
            mid = len(run) // 2
            first = self._switchback(piece, xy, steps[:mid], run[:mid], costs, scale)
            return first + self._switchback(piece, xy, steps[mid:], run[mid:], costs, scale)[1:]
        return _zigzag(a, b, up, c, max(1, int(math.ceil(span / self.spacing_mm))))

    def _legs_ok(self, piece: str, region, pts: list[np.ndarray], scale: float) -> bool:
        arr = np.array(pts)
        if not np.all(segments_free(region, arr[:-1], arr[1:])):
            return False
        return all(self._drivable(piece, p, q, scale) for p, q in zip(arr[:-1], arr[1:], strict=True))

    def _straighten(self, piece: str, pts: np.ndarray, keep: np.ndarray, scale: float) -> np.ndarray:
        """Greedy shortcuts (string pulling) between kept vertices: from each vertex the farthest
        later vertex reachable by a free segment that is drivable at samples every ~h/2."""
        if len(pts) <= 2:
            return pts
        region = self.planner.free[piece].region
        out = [0]
        i = 0
        n = len(pts)
        while i < n - 1:
            stop = i + 1
            while stop < n - 1 and not keep[stop]:
                stop += 1
            cand = np.arange(stop, i + 1, -1)  # farthest first, down to i + 2
            best = i + 1
            if len(cand):
                free = segments_free(region, np.repeat(pts[i][None], len(cand), 0), pts[cand])
                for j in cand[free]:
                    if self._drivable(piece, pts[i], pts[j], scale):
                        best = int(j)
                        break
            out.append(best)
            i = best
        return pts[out]

    def _drivable(self, piece: str, p: np.ndarray, q: np.ndarray, scale: float) -> bool:
        """Whether the straight segment p → q is drivable at samples every ~h/2."""
        length = float(np.linalg.norm(q - p))
        n = max(2, int(math.ceil(length / (0.5 * self.spacing_mm))) + 1)
        s = np.linspace(0.0, 1.0, n)[:, None]
        pts = p + s * (q - p)
        hits = self.drape.locate(piece, pts, snap_mm=2.0 * self.spacing_mm)
        t = self._terms(hits.face, scale)
        c = edge_classes(pts[:-1], pts[1:], tuple(_take(x, np.arange(n - 1)) for x in t),
                         tuple(_take(x, np.arange(1, n)) for x in t), self.gravity, self.physics,
                         self.cost, self.robot.speed_mm_s)
        return bool(np.all(c.klass == OK))


def _path_edges(path, edges: np.ndarray, use: np.ndarray, value: np.ndarray) -> dict:
    """(u, v) → index of the cheapest usable edge u → v, for the steps of ``path``."""
    out = {}
    for u, v in zip(path[:-1], path[1:], strict=True):
        cand = np.flatnonzero(use & (edges[:, 0] == u) & (edges[:, 1] == v))
        out[(int(u), int(v))] = int(cand[np.argmin(value[cand])])
    return out


def _take(term, idx):
    """Index a :func:`node_terms` part (array or HeadingLimits) by ``idx``."""
    if isinstance(term, np.ndarray):
        return term[idx]
    from garnav.mechanics.balance import HeadingLimits

    return HeadingLimits(term.blocked[idx], term.c_lo[idx], term.c_hi[idx], term.sin_theta[idx])


def _zigzag(a: np.ndarray, b: np.ndarray, uphill: np.ndarray, zig_cos: float, pairs: int) -> list[np.ndarray]:
    """Points a, ..., b of a switchback of ``pairs`` pairs of legs heading at ±ψ* from the uphill
    direction (cos ψ* = ``zig_cos``, made 0.5 % less steep so rounding cannot cross the limit).
    [a, b] when b is not inside the cone the legs span."""
    c = float(np.clip(zig_cos, -1.0, 1.0)) * 0.995
    s = math.sqrt(max(0.0, 1.0 - c * c))
    f = uphill / max(float(np.linalg.norm(uphill)), 1e-12)
    left = np.array([-f[1], f[0]])
    e1 = c * f + s * left
    e2 = c * f - s * left
    try:
        alpha, beta = np.linalg.solve(np.column_stack([e1, e2]), b - a)
    except np.linalg.LinAlgError:
        return [a, b]
    if alpha < 0 or beta < 0:
        return [a, b]
    pts = [a]
    p = a.copy()
    for _ in range(pairs):
        p = p + (alpha / pairs) * e1
        pts.append(p.copy())
        p = p + (beta / pairs) * e2
        pts.append(p.copy())
    pts[-1] = b.copy()
    return pts
