"""Slide every seam crossing of a route to its locally shortest position.

Portals are a discrete sample of each seam. After the graph search, each crossing at fraction t is
moved along its seam by a 1-D minimisation of

    f(t) = cost(prev → a(t)) + cost(b(t) → next)

where prev / next are the neighbouring waypoints of the route (fixed during the move), a(t) and b(t)
the crossing point on each run. Only positions where both segments lie in free space and keep the
seam's smallest crossing angle are allowed; the feasible interval around the current t is found by
sampling every ~1 mm and bisecting its ends, then f is minimised on it (scipy's bounded Brent
method near the best sample). Then each leg is re-planned between its (new) end points on the
piece's visibility graph, and both steps repeat until the cost stops falling. Each step never
raises the cost, so the loop ends; at the end no single crossing can move to lower the cost.

On a straight seam with no obstacle or angle limit in the way, the optimum satisfies Snell's law
with equal "speeds": the route keeps its angle to the seam tangent on both sides, i.e. it drives
straight over the seam.
"""

from __future__ import annotations

import math

import numpy as np
from scipy.optimize import minimize_scalar

from garnav.plan.navgraph import edge_costs
from garnav.plan.points import PiecePoint
from garnav.plan.portals import angle_ok, seam_sides
from garnav.plan.search import astar
from garnav.plan.visgraph import segments_free

__all__ = ["refine", "piece_path", "crossing_cost_at"]

_MAX_ROUNDS = 60


def piece_path(planner, piece: str, p: np.ndarray, q: np.ndarray, end_tangents=(None, None), end_angles=(0.0, 0.0)):
    """Least-cost path p → q inside one piece (corners only, no crossing), with optional seam-angle
    limits at either end. Returns ((n, 2) points, cost) or (None, inf)."""
    ng = planner.nav
    n0 = ng.graph.number_of_nodes()
    pp, qq = PiecePoint(piece, *p), PiecePoint(piece, *q)
    corners, off = ng.corners[piece]
    lo, hi = off, off + len(corners)
    extra: dict[int, list[tuple[int, float]]] = {}
    for src, pt, tan, amin in ((n0, pp, end_tangents[0], end_angles[0]), (n0 + 1, qq, end_tangents[1], end_angles[1])):
        for m, w in planner.links(pt, tangent=tan, min_angle_deg=amin, corners_only=True):
            extra.setdefault(src, []).append((m, w))
            extra.setdefault(m, []).append((src, w))
    d = q - p
    direct_ok = all(
        t is None or bool(angle_ok(d, t, a)) for t, a in zip(end_tangents, end_angles)
    )
    if direct_ok:
        w = planner.direct(pp, qq)
        if w is not None:
            extra.setdefault(n0, []).append((n0 + 1, w))

    def neighbors(n: int):
        base = [(m, w) for m, w in planner._adj[n] if lo <= m < hi] if n < n0 else []
        return base + sorted(extra.get(n, []))

    def h(n: int) -> float:
        xy = p if n == n0 else (q if n == n0 + 1 else ng.xy[n])
        return float(np.linalg.norm(xy - q))

    found = astar(neighbors, {n0: 0.0}, {n0 + 1}, h)
    if found is None:
        return None, math.inf
    path, cost = found
    pts = np.array([p if n == n0 else (q if n == n0 + 1 else ng.xy[n]) for n in path], dtype=float)
    return pts, cost


def crossing_cost_at(planner, seam_index: int, from_side: int, t: np.ndarray, prev: np.ndarray, nxt: np.ndarray):
    """f(t) and feasibility for crossings of a seam at fractions t (m,), see module docstring.

    Returns (cost (m,), feasible (m,) bool).
    """
    ng = planner.nav
    seam = ng.seams[seam_index]
    runs = (seam.a, seam.b)
    sides = seam_sides(planner.garment, seam, np.atleast_1d(t))
    pts = (sides.a_xy, sides.b_xy)
    tans = (sides.a_tan, sides.b_tan)
    fa, fb = from_side, 1 - from_side
    fs_a, fs_b = planner.free[runs[fa].piece], planner.free[runs[fb].piece]
    m = len(sides.t)
    pv = np.repeat(prev[None], m, axis=0)
    nx = np.repeat(nxt[None], m, axis=0)
    amin = seam.min_crossing_angle_deg
    ok = angle_ok(pts[fa] - pv, tans[fa], amin) & angle_ok(nx - pts[fb], tans[fb], amin)
    ok &= segments_free(fs_a.region, pv, pts[fa]) & segments_free(fs_b.region, pts[fb], nx)
    cost = edge_costs(fs_a, pv, pts[fa])[1] + edge_costs(fs_b, pts[fb], nx)[1]
    return cost, ok


def _move_crossing(planner, seam_index: int, t0: float, from_side: int, prev: np.ndarray, nxt: np.ndarray) -> float:
    ng = planner.nav
    seam = ng.seams[seam_index]
    ivs = ng.intervals[seam.name]
    lo, hi = next(((a, b) for a, b in ivs if a - 1e-12 <= t0 <= b + 1e-12), (t0, t0))
    if hi <= lo:
        return t0
    length = planner.garment.run_length(seam.a)
    m = int(min(max(math.ceil((hi - lo) * length), 8), 4000))
    t = np.unique(np.concatenate([np.linspace(lo, hi, m + 1), [t0]]))
    cost, ok = crossing_cost_at(planner, seam_index, from_side, t, prev, nxt)
    k0 = int(np.searchsorted(t, t0))
    if not ok[k0]:
        return t0
    a = k0
    while a > 0 and ok[a - 1]:
        a -= 1
    b = k0
    while b < len(t) - 1 and ok[b + 1]:
        b += 1

    def feasible(x: float) -> bool:
        return bool(crossing_cost_at(planner, seam_index, from_side, np.array([x]), prev, nxt)[1][0])

    def bisect(bad: float, good: float) -> float:
        for _ in range(50):
            mid = 0.5 * (bad + good)
            if feasible(mid):
                good = mid
            else:
                bad = mid
        return good

    t_lo = bisect(t[a - 1], t[a]) if a > 0 else t[a]
    t_hi = bisect(t[b + 1], t[b]) if b < len(t) - 1 else t[b]
    cand_t = np.concatenate([t[a : b + 1], [t_lo, t_hi]])
    cand_c = crossing_cost_at(planner, seam_index, from_side, cand_t, prev, nxt)[0]
    order = np.argsort(cand_t)
    cand_t, cand_c = cand_t[order], cand_c[order]
    k = int(np.argmin(cand_c))
    left, right = cand_t[max(k - 1, 0)], cand_t[min(k + 1, len(cand_t) - 1)]
    best_t, best_c = float(cand_t[k]), float(cand_c[k])
    if right > left:
        res = minimize_scalar(
            lambda x: float(crossing_cost_at(planner, seam_index, from_side, np.array([x]), prev, nxt)[0][0]),
            bounds=(left, right),
            method="bounded",
            options={"xatol": 1e-10},
        )
        if res.fun < best_c and feasible(float(res.x)):
            best_t, best_c = float(res.x), float(res.fun)
    cur = float(crossing_cost_at(planner, seam_index, from_side, np.array([t0]), prev, nxt)[0][0])
    return best_t if best_c < cur else t0


def _crossing_points(planner, c):
    seam = planner.nav.seams[c[0]]
    sides = seam_sides(planner.garment, seam, np.array([c[1]]))
    pts = (sides.a_xy[0], sides.b_xy[0])
    tans = (sides.a_tan[0], sides.b_tan[0])
    return pts[c[2]], pts[1 - c[2]], tans[c[2]], tans[1 - c[2]], seam.min_crossing_angle_deg


def _total(planner, legs, crossings) -> float:
    cost = 0.0
    for piece, pts in legs:
        cost += float(edge_costs(planner.free[piece], pts[:-1], pts[1:])[1].sum())
    for s, _, _ in crossings:
        cost += float(planner.nav.seams[s].crossing_cost_mm)
    return cost


def refine(planner, legs: list[tuple[str, np.ndarray]], crossings: list[tuple[int, float, int]]):
    """Refine the crossings of a route given as legs [(piece, (n, 2))] and crossings
    [(seam index, t, from side)]. Returns (legs, crossings, cost)."""
    legs = [(p, np.array(pts, dtype=float)) for p, pts in legs]
    crossings = list(crossings)
    cost = _total(planner, legs, crossings)
    if not crossings:
        return legs, crossings, cost
    for _ in range(_MAX_ROUNDS):
        before = cost
        # 1. move each crossing with its neighbours fixed
        for i, (s, t, side) in enumerate(crossings):
            prev = legs[i][1][-2]
            nxt = legs[i + 1][1][1]
            t_new = _move_crossing(planner, s, t, side, prev, nxt)
            if t_new != t:
                crossings[i] = (s, t_new, side)
                a_pt, b_pt, _, _, _ = _crossing_points(planner, crossings[i])
                legs[i] = (legs[i][0], np.vstack([legs[i][1][:-1], a_pt]))
                legs[i + 1] = (legs[i + 1][0], np.vstack([b_pt, legs[i + 1][1][1:]]))
        # 2. re-plan each leg between its end points
        for i, (piece, pts) in enumerate(legs):
            tans, angs = [None, None], [0.0, 0.0]
            if i > 0:
                _, _, _, tb, amin = _crossing_points(planner, crossings[i - 1])
                tans[0], angs[0] = tb, amin
            if i < len(crossings):
                _, _, ta, _, amin = _crossing_points(planner, crossings[i])
                tans[1], angs[1] = ta, amin
            new_pts, new_cost = piece_path(planner, piece, pts[0], pts[-1], tuple(tans), tuple(angs))
            old_cost = float(edge_costs(planner.free[piece], pts[:-1], pts[1:])[1].sum())
            if new_pts is not None and new_cost < old_cost - 1e-12:
                legs[i] = (piece, new_pts)
        cost = _total(planner, legs, crossings)
        if before - cost <= 1e-10 * max(1.0, cost):
            break
    return legs, crossings, cost
