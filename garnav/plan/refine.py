"""Slide every seam crossing of a route to its locally shortest position.

Portals are a discrete sample of each seam. After the graph search, the crossings are improved one
at a time (coordinate descent). For crossing i at fraction t, with the route's other crossings
fixed, the exact cost of the two legs it joins is

    f(t) = D_in(a(t)) + D_out(b(t))

where a(t), b(t) are the crossing points on the two runs, ``D_in(x)`` the least in-piece cost from
the previous anchor (start or previous crossing) to x, and ``D_out(y)`` from y to the next anchor.
Both are evaluated exactly on the piece's visibility graph: one Dijkstra from the anchor over the
reduced visibility graph (scipy ``csgraph``), then ``D(x) = min_c D(c) + cost(c → x)`` over the
corners c that x sees with tangency at c (and the direct segment from the anchor), each segment
also keeping the seam's smallest crossing angle at x. f is minimised over the free interval of
the seam that holds t: a coarse sampling, a finer sampling around the best sample, then scipy's
bounded Brent method between its neighbours. Where the seam has a smallest crossing angle, a path
may also reach x over its straight approach (:func:`garnav.plan.portals.approach_points`), and
leave an anchor over the anchor's. The move is kept only if it lowers the cost, so the
loop ends; it stops when a full round gains less than 1e-9 mm. A crossing is placed again only when
one of its neighbours moved since it was last placed (otherwise its cost function is unchanged). The legs are then re-planned
(A* inside the piece) between their new ends.

On a straight seam with no obstacle or angle limit in the way, the optimum keeps the route's angle
to the seam tangent on both sides: unfolded, it is a straight line over the seam.
"""

from __future__ import annotations

import math

import numpy as np
import scipy.sparse as sp
from scipy.optimize import minimize_scalar
from scipy.sparse.csgraph import dijkstra

from garnav.plan.navgraph import edge_costs, point_pairs
from garnav.plan.points import PiecePoint
from garnav.plan.portals import angle_ok, approach_points
from garnav.plan.search import astar
from garnav.plan.visgraph import tangent_mask

__all__ = ["refine", "plan_legs", "piece_path", "legs_cost", "DistanceField", "Anchor"]

_MAX_ROUNDS = 30


class Anchor:
    """An end of a leg: a point, and when it is a crossing its seam tangent, inward normal and
    smallest crossing angle (deg)."""

    def __init__(self, xy, tangent=None, inward=None, min_angle: float = 0.0):
        self.xy = np.asarray(xy, dtype=float)
        self.tangent = None if tangent is None else np.asarray(tangent, dtype=float)
        self.inward = None if inward is None else np.asarray(inward, dtype=float)
        self.min_angle = float(min_angle) if tangent is not None else 0.0

    def approaches(self, approach_mm: float) -> np.ndarray:
        """(0..2, 2) ends of the straight approach at the angle limit (none without a limit)."""
        if self.min_angle <= 0 or approach_mm <= 0 or self.tangent is None or self.inward is None:
            return np.zeros((0, 2))
        ends = approach_points(self.xy[None], self.tangent[None], self.inward[None], self.min_angle, approach_mm)[0]
        return ends[:1] if self.min_angle >= 90.0 else ends


def _sources(planner, piece: str, anchor: Anchor) -> list[tuple[np.ndarray, float, Anchor]]:
    """Start points of in-piece paths from an anchor: the anchor itself (with its angle limit)
    and its approach ends (at the approach cost, no limit)."""
    fs = planner.free[piece]
    out = [(anchor.xy, 0.0, anchor)]
    ends = anchor.approaches(planner.nav.approach_mm)
    if len(ends):
        a = np.repeat(anchor.xy[None], len(ends), axis=0)
        ok = fs.segments_free(a, ends)
        cost = edge_costs(fs, a, ends)[1]
        out += [(e, float(c), Anchor(e)) for e, c, k in zip(ends, cost, ok, strict=False) if k]
    return out


class DistanceField:
    """Least in-piece cost from one anchor to any point of the piece (see module docstring)."""

    def __init__(self, planner, piece: str, anchor: Anchor):
        self.planner = planner
        self.piece = piece
        self.fs = planner.free[piece]
        corners, off = planner.nav.corners[piece]
        self.corners = corners
        k = len(corners)
        self.sources = _sources(planner, piece, anchor)
        first = np.full(k, np.inf)
        for xy, c0, a in self.sources:
            for m, w in planner.links(PiecePoint(piece, *xy), tangent=a.tangent, min_angle_deg=a.min_angle, corners_only=True):
                first[m - off] = min(first[m - off], c0 + w)
        fin = np.isfinite(first)
        if fin.any():
            extra = sp.csr_matrix((first[fin] + 1e-300, (np.full(fin.sum(), k), np.nonzero(fin)[0])), shape=(k + 1, k + 1))
            full = sp.bmat([[planner.corner_matrix(piece), None], [None, sp.csr_matrix((1, 1))]]).tocsr() + extra
            self.dist = dijkstra(full, directed=False, indices=k)[:k]
        else:
            self.dist = np.full(k, np.inf)

    def _eval(self, x: np.ndarray, tangent: np.ndarray | None, min_angle: float) -> np.ndarray:
        m = len(x)
        best = np.full(m, np.inf)
        for xy, c0, a in self.sources:
            d = x - xy
            ok = np.ones(m, dtype=bool)
            if tangent is not None:
                ok &= angle_ok(d, tangent, min_angle)
            if a.tangent is not None:
                ok &= angle_ok(d, a.tangent, a.min_angle)
            idx = np.nonzero(ok)[0]
            if len(idx):
                src = np.repeat(xy[None], len(idx), axis=0)
                vis = self.fs.segments_free(src, x[idx])
                cost = c0 + edge_costs(self.fs, src[vis], x[idx[vis]])[1]
                best[idx[vis]] = np.minimum(best[idx[vis]], cost)
        c = self.corners
        ci = np.nonzero(np.isfinite(self.dist))[0]
        if len(ci) and m:
            ok = tangent_mask(c.xy[ci][None], c.prev[ci][None], c.next[ci][None], x[:, None, :])
            if tangent is not None:
                ok &= angle_ok(x[:, None, :] - c.xy[ci][None], tangent[:, None, :], min_angle)
            lower = self.dist[ci][None, :] + np.linalg.norm(x[:, None, :] - c.xy[ci][None], axis=2)
            ok &= lower < best[:, None]  # only pairs that could beat the best so far
            q, n = np.nonzero(ok)
            if len(q):
                # test the candidates of each point in order of their lower bound, a few at a time:
                # a candidate whose lower bound is not below the best found cannot improve it
                # (the cost of a segment is at least its length), so the minimum is unchanged
                lb = lower[q, n]
                order = np.lexsort((lb, q))
                q, n, lb = q[order], n[order], lb[order]
                rank = np.arange(len(q)) - np.searchsorted(q, q, side="left")
                remaining = np.ones(len(q), dtype=bool)
                k = 8
                while True:
                    remaining &= lb < best[q]
                    if not remaining.any():
                        break
                    sel = remaining & (rank < k)
                    if sel.any():
                        qs, ns = q[sel], n[sel]
                        vis = self.fs.segments_free(c.xy[ci[ns]], x[qs])
                        qs, ns = qs[vis], ns[vis]
                        np.minimum.at(best, qs, self.dist[ci[ns]] + edge_costs(self.fs, c.xy[ci[ns]], x[qs])[1])
                        remaining &= ~sel
                    k *= 4
        return best

    def __call__(self, x: np.ndarray, tangent: np.ndarray, inward: np.ndarray, min_angle: float) -> np.ndarray:
        """Least cost from the anchor to crossing points x (m, 2) with seam tangents and inward
        normals (m, 2): arriving at angle >= min_angle, directly or over the straight approach.
        (m,) float, inf where unreachable."""
        x = np.asarray(x, dtype=float).reshape(-1, 2)
        best = self._eval(x, tangent if min_angle > 0 else None, min_angle)
        if min_angle > 0 and self.planner.nav.approach_mm > 0:
            ends = approach_points(x, tangent, inward, min_angle, self.planner.nav.approach_mm)
            for k in range(1 if min_angle >= 90.0 else 2):
                y = ends[:, k, :]
                vis = self.fs.segments_free(y, x)
                if vis.any():
                    idx = np.nonzero(vis)[0]
                    cost = self._eval(y[idx], None, 0.0) + edge_costs(self.fs, y[idx], x[idx])[1]
                    best[idx] = np.minimum(best[idx], cost)
        return best


def piece_path(planner, piece: str, start: Anchor, end: Anchor):
    """Least-cost path between two anchors inside one piece (corners and the anchors' approach
    points; no crossing). Returns ((n, 2) points, cost) or (None, inf)."""
    ng = planner.nav
    fs = planner.free[piece]
    n0 = ng.graph.number_of_nodes()
    corners, off = ng.corners[piece]
    lo, hi = off, off + len(corners)
    # temporary nodes: n0 = start, n0 + 1 = end, then approach ends of start and of end
    temps: list[tuple[np.ndarray, Anchor]] = [(start.xy, start), (end.xy, end)]
    own: list[tuple[int, int, float]] = []
    for k, a in ((0, start), (1, end)):
        for xy, c0, sub in _sources(planner, piece, a)[1:]:
            temps.append((xy, sub))
            own.append((n0 + k, n0 + len(temps) - 1, c0))
    extra: dict[int, list[tuple[int, float]]] = {}

    def link(u: int, v: int, w: float) -> None:
        extra.setdefault(u, []).append((v, w))
        extra.setdefault(v, []).append((u, w))

    for k, (xy, a) in enumerate(temps):
        for m, w in planner.links(PiecePoint(piece, *xy), tangent=a.tangent, min_angle_deg=a.min_angle, corners_only=True):
            link(n0 + k, m, w)
    xy = np.array([t[0] for t in temps])
    tans = np.array([t[1].tangent if t[1].tangent is not None else (0.0, 0.0) for t in temps])
    amin = np.array([t[1].min_angle for t in temps])
    pa, pb = point_pairs(fs, xy, tans, amin)
    if len(pa):
        w = edge_costs(fs, xy[pa], xy[pb])[1]
        for i, j, c in zip(pa.tolist(), pb.tolist(), w.tolist(), strict=False):
            link(n0 + i, n0 + j, c)
    for u, v, c in own:
        link(u, v, c)

    def neighbors(n: int):
        base = [(m, w) for m, w in ng.neighbours(n) if lo <= m < hi] if n < n0 else []
        return base + sorted(extra.get(n, []))

    def pos(n: int) -> np.ndarray:
        return temps[n - n0][0] if n >= n0 else ng.xy[n]

    found = astar(neighbors, {n0: 0.0}, {n0 + 1}, lambda n: float(np.linalg.norm(pos(n) - end.xy)))
    if found is None:
        return None, math.inf
    path, cost = found
    return np.array([pos(n) for n in path], dtype=float), cost


def _seam_geometry(planner, seam_index: int, t, from_side: int):
    """Crossing points, tangents and inward normals on the leaving (from) and arriving side."""
    seam = planner.nav.seams[seam_index]
    sides = planner.nav.seam_sides(seam_index, np.atleast_1d(np.asarray(t, dtype=float)))
    return sides.side(from_side), sides.side(1 - from_side), seam.min_crossing_angle_deg


def _move_crossing(
    planner, seam_index: int, t0: float, from_side: int, field_in: DistanceField, field_out: DistanceField
) -> tuple[float, float]:
    """Best fraction for one crossing with the others fixed, and the cost it gains: (t, gain)."""
    ng = planner.nav
    seam = ng.seams[seam_index]
    lo, hi = next(((a, b) for a, b in ng.intervals[seam.name] if a - 1e-12 <= t0 <= b + 1e-12), (t0, t0))
    if hi <= lo:
        return t0, 0.0

    def f(t: np.ndarray) -> np.ndarray:
        (a_xy, a_tan, a_in), (b_xy, b_tan, b_in), amin = _seam_geometry(planner, seam_index, t, from_side)
        return field_in(a_xy, a_tan, a_in, amin) + field_out(b_xy, b_tan, b_in, amin)

    f0 = float(f(np.array([t0]))[0])
    length = planner.garment.run_length(seam.a)
    t = np.unique(np.concatenate([np.linspace(lo, hi, int(min(max((hi - lo) * length / 4.0, 8), 200)) + 1), [t0]]))
    for _ in range(2):  # coarse, then fine around the best sample
        v = f(t)
        k = int(np.argmin(v))
        left, right = t[max(k - 1, 0)], t[min(k + 1, len(t) - 1)]
        best_t, best_v = float(t[k]), float(v[k])
        t = np.linspace(left, right, 41)
    if right > left:
        res = minimize_scalar(lambda x: float(f(np.array([x]))[0]), bounds=(left, right), method="bounded", options={"xatol": 1e-10})
        if np.isfinite(res.fun) and res.fun < best_v:
            best_t, best_v = float(res.x), float(res.fun)
    return (best_t, f0 - best_v) if best_v < f0 - 1e-12 else (t0, 0.0)


def legs_cost(planner, legs, crossings) -> float:
    """Cost (mm) of a route given as legs [(piece, (n, 2))] and crossings [(seam index, t, from
    side)]: each leg's segments as the planner charges them, plus each crossing's cost."""
    cost = 0.0
    for piece, pts in legs:
        cost += float(edge_costs(planner.free[piece], pts[:-1], pts[1:])[1].sum())
    for s, _, _ in crossings:
        cost += float(planner.nav.seams[s].crossing_cost_mm)
    return cost


def _anchor(planner, legs, crossings, i: int, end: str) -> Anchor:
    """Anchor of leg i at its start ('start') or end ('end')."""
    piece, pts = legs[i]
    if end == "start":
        if i == 0:
            return Anchor(pts[0])
        s, t, side = crossings[i - 1]
        _, (xy, tan, inward), amin = _seam_geometry(planner, s, t, side)
    else:
        if i == len(legs) - 1:
            return Anchor(pts[-1])
        s, t, side = crossings[i]
        (xy, tan, inward), _, amin = _seam_geometry(planner, s, t, side)
    return Anchor(xy[0], tan[0], inward[0], amin)


def refine(planner, legs: list[tuple[str, np.ndarray]], crossings: list[tuple[int, float, int]], max_rounds: int = _MAX_ROUNDS):
    """Refine the crossings of a route given as legs [(piece, (n, 2))] and crossings
    [(seam index, t, from side)], in at most ``max_rounds`` rounds. Returns (legs, crossings, cost)."""
    legs = [(p, np.array(pts, dtype=float)) for p, pts in legs]
    crossings = list(crossings)
    if crossings:
        # stale[i]: an anchor of crossing i (crossing i - 1 or i + 1) moved since i was last placed;
        # a crossing whose neighbours did not move has the same cost function as when it was
        # placed, so placing it again cannot gain (skipped: the result is unchanged)
        stale = [True] * len(crossings)
        for _ in range(max_rounds):
            gain = 0.0
            for i, (s, t, side) in enumerate(crossings):
                if not stale[i]:
                    continue
                stale[i] = False
                f_in = DistanceField(planner, legs[i][0], _anchor(planner, legs, crossings, i, "start"))
                f_out = DistanceField(planner, legs[i + 1][0], _anchor(planner, legs, crossings, i + 1, "end"))
                t_new, g = _move_crossing(planner, s, t, side, f_in, f_out)
                gain += g
                if t_new != t:
                    for j in (i - 1, i + 1):
                        if 0 <= j < len(crossings):
                            stale[j] = True
                crossings[i] = (s, t_new, side)
            if gain < 1e-9 or not any(stale):
                break
        # re-plan every leg between its (new) ends
        for i, (piece, pts) in enumerate(legs):
            a0 = _anchor(planner, legs, crossings, i, "start")
            a1 = _anchor(planner, legs, crossings, i, "end")
            new_pts, _ = piece_path(planner, piece, a0, a1)
            if new_pts is None:
                # only when no move was made here (an accepted move keeps both legs finite) and the
                # searched leg passed a portal point on its way: keep it as it was
                new_pts = np.vstack([a0.xy, pts[1:-1], a1.xy])
            legs[i] = (piece, new_pts)
    return legs, crossings, legs_cost(planner, legs, crossings)


def plan_legs(planner, start: PiecePoint, goal: PiecePoint, crossings: list[tuple[int, float, int]]):
    """Legs of the least-cost route from ``start`` to ``goal`` that crosses exactly at
    ``crossings`` [(seam index, t, from side)], each leg planned inside its piece with the angle
    rules (:func:`piece_path`). Returns (legs [(piece, (n, 2))], cost); cost is inf when a leg has
    no path."""
    ng = planner.nav
    pieces = [start.piece]
    for s, _, side in crossings:
        seam = ng.seams[s]
        pieces.append((seam.b if side == 0 else seam.a).piece)
    stub = [(p, np.zeros((2, 2))) for p in pieces]
    stub[0] = (start.piece, np.array([start.xy, start.xy]))
    stub[-1] = (pieces[-1], np.array([goal.xy, goal.xy]))
    legs = []
    for i, piece in enumerate(pieces):
        a0 = _anchor(planner, stub, crossings, i, "start") if i else Anchor(start.xy)
        a1 = _anchor(planner, stub, crossings, i, "end") if i < len(pieces) - 1 else Anchor(goal.xy)
        pts, _ = piece_path(planner, piece, a0, a1)
        if pts is None:
            return [], math.inf
        legs.append((piece, pts))
    return legs, legs_cost(planner, legs, crossings)
