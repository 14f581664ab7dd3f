"""The exact route through one seam sequence whose seams unfold rigidly.

A seam sequence (the seams a route crosses, in order, each at one free interval) fixes which
pieces the route visits. When every crossed seam joins two *straight* runs of *equal* length
(no ease), gluing the runs by arc length is an isometry of the plane: the pieces can be laid out
one after the other in the start piece's frame (each one reflected if its placement asks for it),
and the route becomes a path in that *unfolded corridor* that meets every crossing window — the
seam's free interval, laid out — once, in order. Its shortest form is a polyline that bends only
at corners of the pieces' free regions and at window ends (the ends of a free interval are
corners of the corridor although not of either piece); this is the unfolding argument for
geodesics across a chain of faces (Sharir & Schorr 1986; Mitchell, Mount & Papadimitriou 1987)
and the corridor of Lee & Preparata (1984), here with keep-outs inside the corridor.

The search is A* (Hart, Nilsson & Raphael 1968) over those nodes with the straight unfolded
distance to the goal as heuristic (a cost is at least a length, and a path of the corridor is a
path of the plane: admissible and consistent). Every node may link to every node of the same or a
later layer, so edges are *lazy* (the deferred evaluation of lazy A*/Lazy Theta*, Nash, Koenig &
Tovey 2010): a closed node's candidate links are sorted by their optimistic key (g + straight
length + h) and tested a batch at a time only when they come up; a tested link is pushed with its
true cost. A link is tested exactly: it must cross the windows between its ends in order, inside
each window, and each part must lie in its piece's free region (:meth:`PieceFreeSpace.segments_free`);
it costs what the planner charges in each piece (:func:`edge_costs`, soft zones included). Links
that are not tangent at a corner end are left out (a shortest path bends only tangentially, Lee
& Preparata 1984). The result is therefore the least-cost polyline of the sequence over the same
nodes the in-piece planner bends at — exact in the sense the single-piece visibility graph is.

Where it does not apply, :func:`solve_unfolded` returns None and the caller refines instead
(:mod:`garnav.plan.refine`): a curved run or ease (runs of unequal length: no isometry glues
them). A seam's smallest crossing angle is not part of the unfolded problem; the unconstrained
optimum is returned only when it keeps every crossed seam's angle limit (the constrained routes are
a subset, so it is then their optimum too), otherwise None. :func:`place_crossings` chooses
between the two for a route's crossings.

The same unfolding proves two dominance rules the sequence search uses (docs/planning.md §4c):
crossing straight back over the interval just crossed (:func:`dominated_returns`) and coming
back into a piece round a loop whose gluings compose to the identity (:class:`LoopRule`) are
never cheaper than staying in the piece, where the stretch between is free.
"""

from __future__ import annotations

import heapq
import math

import numpy as np
import shapely

from garnav.plan.navgraph import edge_costs
from garnav.plan.portals import INSET_MM
from garnav.plan.refine import legs_cost, refine
from garnav.plan.visgraph import tangent_mask

__all__ = ["solve_unfolded", "place_crossings", "dominated_returns", "LoopRule", "unfoldable", "shortcuts_across",
           "STRAIGHT_TOL_MM", "LENGTH_TOL"]

#: largest distance (mm) of a run's points from its chord for the run to count as straight
STRAIGHT_TOL_MM = 1e-6
#: largest relative difference of two run lengths for the seam to count as without ease
LENGTH_TOL = 1e-9
_BATCH = 8  # first batch of a node's candidate links; each later batch is 4× larger


def _straight(pts: np.ndarray) -> bool:
    pts = np.asarray(pts, dtype=float)
    chord = pts[-1] - pts[0]
    n = float(np.hypot(*chord))
    if n <= 0:
        return False
    d = pts - pts[0]
    off = np.abs(d[:, 0] * chord[1] - d[:, 1] * chord[0]) / n
    return bool(off.max() <= STRAIGHT_TOL_MM)


def unfoldable(planner, seam_index: int) -> bool:
    """Whether seam ``seam_index`` joins two straight runs of equal length (an isometry glues them)."""
    ng = planner.nav
    seam = ng.seams[seam_index]
    runs = ng.run_points.get(seam.name)
    if runs is None or not all(_straight(r) for r in runs):
        return False
    la, lb = (float(np.sum(np.linalg.norm(np.diff(np.asarray(r, float), axis=0), axis=1))) for r in runs)
    return abs(la - lb) <= LENGTH_TOL * max(la, lb, 1.0)


class _Layer:
    """One visited piece: its free space, its corners and its placement x ↦ A x + b in the unfolded plane."""

    def __init__(self, planner, piece: str, A: np.ndarray, b: np.ndarray):
        self.piece = piece
        self.fs = planner.free[piece]
        self.corners = planner.nav.corners[piece][0]
        self.A, self.b = A, b

    def out(self, xy: np.ndarray) -> np.ndarray:
        return np.asarray(xy, float) @ self.A.T + self.b

    def back(self, xy: np.ndarray) -> np.ndarray:
        return (np.asarray(xy, float) - self.b) @ self.A


class _Window:
    """A crossed free interval [lo, hi] of a seam, laid out: ends ``p0``, ``p1`` (unfolded, mm)."""

    def __init__(self, planner, seam_index: int, lo: float, hi: float, side: int, leaving: _Layer):
        self.planner, self.seam, self.lo, self.hi, self.side = planner, seam_index, lo, hi, side
        s = planner.nav.seam_sides(seam_index, np.array([lo, hi]))
        #: inset crossing points (2, 2) at lo and hi on the leaving and the arriving run
        self.leave_ends, self.arrive_ends = s.side(side)[0], s.side(1 - side)[0]
        # the window's ends on the seam line itself (the inset taken off), in the unfolded plane
        self.p0, self.p1 = leaving.out(self.leave_ends - INSET_MM * s.side(side)[2])

    def sides(self, t: np.ndarray):
        """Inset crossing points (m, 2) on the leaving and the arriving run, each in its piece
        frame: on a straight run the point moves linearly with the fraction."""
        t = np.asarray(t, dtype=float).reshape(-1, 1)
        u = (t - self.lo) / (self.hi - self.lo) if self.hi > self.lo else np.zeros_like(t)
        return (self.leave_ends[0] + u * (self.leave_ends[1] - self.leave_ends[0]),
                self.arrive_ends[0] + u * (self.arrive_ends[1] - self.arrive_ends[0]))


def _glue(planner, seam_index: int, side: int) -> tuple[np.ndarray, np.ndarray]:
    """The isometry x ↦ A x + b taking the arriving run's piece frame onto the leaving run's, the
    arriving piece on the far side of the seam line."""
    s = planner.nav.seam_sides(seam_index, np.array([0.0, 1.0]))
    (pf, _, nf), (pa, _, na) = s.side(side), s.side(1 - side)
    p0, p1 = pf[0] - INSET_MM * nf[0], pf[1] - INSET_MM * nf[1]
    q0, q1 = pa[0] - INSET_MM * na[0], pa[1] - INSET_MM * na[1]
    up = (p1 - p0) / np.linalg.norm(p1 - p0)
    uq = (q1 - q0) / np.linalg.norm(q1 - q0)
    fp = np.column_stack([up, np.array([-up[1], up[0]]) * np.sign(np.dot(nf[0], [-up[1], up[0]]) or 1.0)])
    fq = np.column_stack([uq, np.array([-uq[1], uq[0]]) * np.sign(np.dot(na[0], [-uq[1], uq[0]]) or 1.0)])
    A = fp @ np.diag([1.0, -1.0]) @ fq.T
    return A, p0 - A @ q0


def _angle_ok(d_in: np.ndarray, d_out: np.ndarray, tangent: np.ndarray, min_angle: float) -> bool:
    if min_angle <= 0:
        return True
    s = math.sin(math.radians(min(min_angle, 90.0))) - 1e-12
    for d in (d_in, d_out):
        n = float(np.hypot(*d))
        if n > 0 and abs(float(d[0] * tangent[1] - d[1] * tangent[0])) / n < s:
            return False
    return True


def solve_unfolded(planner, start_xy, goal_xy, crossings: list[tuple[int, float, int]], upper: float = math.inf):
    """The least-cost route from ``start_xy`` (start piece frame) to ``goal_xy`` (last piece's
    frame) through ``crossings`` [(seam index, t, from side)] — each crossing at any point of the
    free interval that holds its t. Returns (legs [(piece, (n, 2))], crossings, cost) in the form of
    :func:`garnav.plan.refine.refine`, (legs, crossings, inf) when the sequence has no route, or
    None when the method does not apply (module docstring). With ``upper`` (mm) the search stops
    once no route of the sequence can cost less (every open key is at least ``upper``): then
    (None, None, that least key)."""
    ng = planner.nav
    if not crossings or not all(unfoldable(planner, s) for s, _, _ in crossings):
        return None
    # ---- layers and windows in the unfolded plane
    first = ng.seams[crossings[0][0]]
    first_piece = (first.a if crossings[0][2] == 0 else first.b).piece
    layers = [_Layer(planner, first_piece, np.eye(2), np.zeros(2))]
    windows = []
    for s, t, side in crossings:
        seam = ng.seams[s]
        lo, hi = next(((a, b) for a, b in ng.intervals[seam.name] if a - 1e-12 <= t <= b + 1e-12), (t, t))
        prev = layers[-1]
        w = _Window(planner, s, lo, hi, side, prev)
        A, b = _glue(planner, s, side)
        layers.append(_Layer(planner, (seam.b if side == 0 else seam.a).piece, prev.A @ A, prev.A @ b + prev.b))
        windows.append(w)
    n = len(windows)
    # ---- nodes: code 2L = layer L (corners, start, goal), code 2m + 1 = an end of window m
    pos, code, corner, frac = [], [], [], []
    for L, lay in enumerate(layers):
        c = lay.corners
        pos.append(lay.out(c.xy))
        code += [2 * L] * len(c)
        corner += list(range(len(c)))
        frac += [np.nan] * len(c)
    for m, w in enumerate(windows):
        pos.append(np.array([w.p0, w.p1]))
        code += [2 * m + 1] * 2
        corner += [-1, -1]
        frac += [w.lo, w.hi]
    pos.append(layers[0].out(np.asarray(start_xy, float)[None]))
    pos.append(layers[-1].out(np.asarray(goal_xy, float)[None]))
    code += [0, 2 * n]
    corner += [-1, -1]
    frac += [np.nan, np.nan]
    P = np.vstack(pos)
    code_a, corner_a, frac_a = np.array(code), np.array(corner), np.array(frac)
    h = np.linalg.norm(P - P[-1], axis=1)
    if math.isfinite(upper):
        # a route through a node costs at least the straight way from the start to it and on to
        # the goal: nodes outside that ellipse cannot be on a route below ``upper``
        keep = np.linalg.norm(P - P[-2], axis=1) + h < upper
        keep[-2:] = True
        P, code_a, corner_a, frac_a, h = P[keep], code_a[keep], corner_a[keep], frac_a[keep], h[keep]
    N = len(P)
    src, dst = N - 2, N - 1
    solver = _Corridor(planner, layers, windows, P, code_a, corner_a, frac_a)
    found = solver.search(src, dst, h, upper)
    if found is None:
        return [], list(crossings), math.inf
    if isinstance(found, float):
        return None, None, found
    nodes, ts = found
    return solver.route(nodes, ts, crossings)


class _Corridor:
    """Lazy A* over the corridor's nodes (module docstring)."""

    def __init__(self, planner, layers, windows, P, code, corner, frac):
        self.planner, self.layers, self.windows = planner, layers, windows
        self.P, self.code, self.corner, self.frac = P, code, corner, frac
        self.W0 = np.array([w.p0 for w in windows])
        self.W1 = np.array([w.p1 for w in windows])
        self.lo = np.array([w.lo for w in windows])
        self.hi = np.array([w.hi for w in windows])
        self.L0 = np.array([w.leave_ends[0] for w in windows])
        self.L1 = np.array([w.leave_ends[1] for w in windows])
        self.A0 = np.array([w.arrive_ends[0] for w in windows])
        self.A1 = np.array([w.arrive_ends[1] for w in windows])
        self.prev, self.next = P.copy(), P.copy()
        self.Q = np.full_like(P, np.nan)  # corner, start and goal nodes in their piece frame
        for L, lay in enumerate(layers):
            sel = np.nonzero((code == 2 * L) & (corner >= 0))[0]
            self.prev[sel] = lay.out(lay.corners.prev[corner[sel]])
            self.next[sel] = lay.out(lay.corners.next[corner[sel]])
            mine = np.nonzero(code == 2 * L)[0]
            self.Q[mine] = lay.back(P[mine])
            self.Q[sel] = lay.corners.xy[corner[sel]]

    def _tangent(self, at: np.ndarray, toward: np.ndarray) -> np.ndarray:
        """Whether the links from nodes ``at`` toward nodes ``toward`` are tangent at ``at`` (True at
        nodes that are not corners: their ring neighbours are the node itself). An isometry keeps
        the test (a reflection flips both sides alike)."""
        return tangent_mask(self.P[at], self.prev[at], self.next[at], self.P[toward])

    def candidates(self, u: int, g: float, h: np.ndarray, closed: np.ndarray, upper: float = math.inf):
        """Candidate links of node u with an optimistic key below ``upper``: (targets, keys) sorted
        by key."""
        cu = self.code[u]
        ok = ~closed & (self.code >= cu)
        if cu % 2:
            ok &= self.code > cu  # not along the window
        ok[u] = False
        v = np.nonzero(ok)[0]
        if not len(v):
            return v, np.zeros(0)
        uu = np.full(len(v), u)
        keep = self._tangent(uu, v) & self._tangent(v, uu)
        v = v[keep]
        key = g + np.linalg.norm(self.P[v] - self.P[u], axis=1) + h[v]
        below = key < upper
        v, key = v[below], key[below]
        order = np.argsort(key, kind="stable")
        return v[order], key[order]

    def _xy(self, node: int, L: int) -> np.ndarray:
        """A corner, start or goal node in its layer's piece frame."""
        lay = self.layers[L]
        k = int(self.corner[node])
        return lay.corners.xy[k] if k >= 0 else lay.back(self.P[node][None])[0]

    def _window_points(self, m: np.ndarray, t: np.ndarray, arriving: bool) -> np.ndarray:
        """Inset points (k, 2) at fractions t (k,) of windows m (k,), on the leaving or arriving run."""
        e0, e1 = (self.A0, self.A1) if arriving else (self.L0, self.L1)
        span = self.hi[m] - self.lo[m]
        u = np.where(span > 0, (t - self.lo[m]) / np.where(span > 0, span, 1.0), 0.0)[:, None]
        return e0[m] + u * (e1[m] - e0[m])

    def test(self, u: int, vs: np.ndarray):
        """Exact costs (k,) of the links u → vs (inf where blocked) and their crossing fractions
        (n windows, k) — NaN for a window the link does not meet."""
        n, k = len(self.windows), len(vs)
        pu, cu = self.P[u], int(self.code[u])
        cv = self.code[vs]
        wc = 2 * np.arange(n)[:, None] + 1
        between = (wc > cu) & (wc < cv[None, :])  # (n, k): windows strictly between the ends
        d = self.P[vs] - pu  # (k, 2)
        e = (self.W1 - self.W0)[:, None, :]  # (n, 1, 2)
        r = (self.W0 - pu)[:, None, :]
        den = d[None, :, 0] * e[..., 1] - d[None, :, 1] * e[..., 0]
        with np.errstate(divide="ignore", invalid="ignore"):
            s = (r[..., 0] * e[..., 1] - r[..., 1] * e[..., 0]) / den
            w = (r[..., 0] * d[None, :, 1] - r[..., 1] * d[None, :, 0]) / den
        good = np.abs(den) > 1e-12 * np.hypot(d[:, 0], d[:, 1])[None, :] * np.hypot(e[..., 0], e[..., 1])
        good &= (s > -1e-12) & (s < 1 + 1e-12) & (w > -1e-9) & (w < 1 + 1e-9)
        alive = np.all(good | ~between, axis=0)
        if n > 1:  # windows met in order along the link
            both = between[1:] & between[:-1]
            alive &= ~np.any(both & ~(np.diff(np.where(between & good, s, 0.0), axis=0) >= -1e-12), axis=0)
        frac = np.where(between, self.lo[:, None] + np.clip(w, 0.0, 1.0) * (self.hi - self.lo)[:, None], np.nan)
        if cu % 2:
            frac[cu // 2, :] = self.frac[u]
        odd = np.nonzero(cv % 2)[0]
        frac[cv[odd] // 2, odd] = self.frac[vs[odd]]
        # one part per layer each link runs through
        first = cu // 2 + (cu % 2)
        idx = np.nonzero(alive)[0]
        last = cv[idx] // 2
        count = last - first + 1
        link = np.repeat(idx, count)
        layer = first + (np.arange(count.sum()) - np.repeat(np.cumsum(count) - count, count))
        at_u = (layer == first) & (cu % 2 == 0)
        at_v = (layer == cv[link] // 2) & (cv[link] % 2 == 0)
        a = np.empty((len(link), 2))
        b = np.empty((len(link), 2))
        if at_u.any():
            a[at_u] = self._xy(u, first)
        if (~at_u).any():
            m = layer[~at_u] - 1
            a[~at_u] = self._window_points(m, frac[m, link[~at_u]], arriving=True)
        if at_v.any():
            b[at_v] = self.Q[vs[link[at_v]]]
        if (~at_v).any():
            m = layer[~at_v]
            b[~at_v] = self._window_points(m, frac[m, link[~at_v]], arriving=False)
        cost = np.full(k, np.inf)
        cost[idx] = 0.0
        part_cost = np.full(len(link), np.inf)
        for L in np.unique(layer).tolist():
            sel = np.nonzero(layer == L)[0]
            fs = self.layers[L].fs
            free = fs.segments_free(a[sel], b[sel])
            if free.any():
                part_cost[sel[free]] = edge_costs(fs, a[sel[free]], b[sel[free]])[1]
        np.add.at(cost, link, part_cost)
        return cost, frac

    def search(self, src: int, dst: int, h: np.ndarray, upper: float = math.inf):
        """A* with lazy links: (node path, the crossing fractions of each node's incoming link),
        None when the goal cannot be reached, or the least open key (a float) once it is at least
        ``upper``."""
        N = len(self.P)
        closed = np.zeros(N, dtype=bool)
        g = np.full(N, np.inf)
        g[src] = 0.0
        parent = np.full(N, -1)
        into: dict[int, np.ndarray] = {}
        cand: dict[int, tuple[np.ndarray, np.ndarray, int, int]] = {}
        # entries (key, kind, tie, node, parent, g, fractions): kind 0 = arrival at node over a
        # tested link (key = g + h), kind 1 = node's next untested candidate links (key = their
        # optimistic least); tie keeps the order total
        tie = 0
        heap: list = [(float(h[src]), 0, tie, src, -1, 0.0, None)]
        while heap:
            key, kind, _, u, par, gu, fr = heapq.heappop(heap)
            if key >= upper:
                return float(key)  # every route of the sequence costs at least this
            if kind == 0:
                if closed[u]:
                    continue
                closed[u] = True
                parent[u] = par
                if fr is not None:
                    into[u] = fr
                if u == dst:
                    path = [u]
                    while parent[path[-1]] >= 0:
                        path.append(int(parent[path[-1]]))
                    path.reverse()
                    return path, [into[x] for x in path if x in into]
                vs, keys = self.candidates(u, gu, h, closed, upper)
                if len(vs):
                    cand[u] = (vs, keys, 0, _BATCH)
                    tie += 1
                    heapq.heappush(heap, (float(keys[0]), 1, tie, u, -1, 0.0, None))
                continue
            vs, keys, at, size = cand[u]
            batch = vs[at:at + size]
            batch = batch[~closed[batch]]
            if len(batch):
                cost, frs = self.test(u, batch)
                for j, (v, c) in enumerate(zip(batch.tolist(), cost.tolist(), strict=True)):
                    gv = float(g[u]) + c
                    if gv < g[v]:
                        g[v] = gv
                        tie += 1
                        heapq.heappush(heap, (gv + float(h[v]), 0, tie, v, u, gv, frs[:, j]))
            at += size
            if at < len(vs):
                cand[u] = (vs, keys, at, size * 4)
                tie += 1
                heapq.heappush(heap, (float(keys[at]), 1, tie, u, -1, 0.0, None))
        # links with a key of at least ``upper`` were never queued: no route below it
        return float(upper) if math.isfinite(upper) else None

    def route(self, nodes: list[int], fracs: list[np.ndarray], crossings):
        """Legs and crossings of the node path (refine's form) and its cost; None when a crossing
        breaks its seam's smallest angle."""
        t_of: dict[int, float] = {}
        for f in fracs:
            t_of.update({m: float(x) for m, x in enumerate(f) if np.isfinite(x)})
        n = len(self.windows)
        new_cross = [(s, float(t_of[m]), side) for m, (s, _, side) in enumerate(crossings)]
        # the final points from the runs themselves (as refinement places them)
        sides = []
        for s, t, side in new_cross:
            ss = self.planner.nav.seam_sides(s, np.array([t]))
            sides.append((ss.side(side)[0], ss.side(1 - side)[0]))
        legs = []
        for L, lay in enumerate(self.layers):
            pts = [sides[L - 1][1][0]] if L > 0 else []
            pts += [self._xy(x, L) for x in nodes if int(self.code[x]) == 2 * L]
            if L < n:
                pts.append(sides[L][0][0])
            legs.append((lay.piece, np.array(pts, dtype=float)))
        for i, (s, t, side) in enumerate(new_cross):
            min_angle = float(self.planner.nav.seams[s].min_crossing_angle_deg)
            if min_angle > 0:
                tan = self.planner.nav.seam_sides(s, np.array([t])).side(side)[1][0]
                d_in = legs[i][1][-1] - legs[i][1][-2]
                # leaving direction: arriving frame -> unfolded -> leaving frame (linear parts)
                d_out = ((legs[i + 1][1][1] - legs[i + 1][1][0]) @ self.layers[i + 1].A.T) @ self.layers[i].A
                if not _angle_ok(d_in, d_out, tan, min_angle):
                    return None
        return legs, new_cross, legs_cost(self.planner, legs, new_cross)


def place_crossings(planner, legs: list[tuple[str, np.ndarray]], crossings: list[tuple[int, float, int]],
                    upper: float = math.inf):
    """Place the crossings of a route given as legs [(piece, (n, 2))] and crossings [(seam index,
    t, from side)]: exactly when its seam sequence unfolds (:func:`solve_unfolded`), otherwise by
    refinement (:func:`garnav.plan.refine.refine`). Returns (legs, crossings, cost). With
    ``upper`` (mm, the best route known) an unfolding sequence that cannot beat it is not placed:
    the route is returned as given, costed (it costs at least the sequence's optimum, so at least
    ``upper``); the given route's own cost bounds the search the same way (when nothing beats it,
    it is returned).

    Where a visited piece has a soft zone, the exact placement is refined once more: a route that
    runs along a zone's edge (where driving costs nothing extra) crosses the seam where that edge
    does, and a crossing point a rounding error off the edge would put a whole part of the route
    inside the zone (the cost jumps by the zone's factor); refinement's search along the seam
    lands on the edge. It only moves a crossing when that lowers the cost."""
    if crossings and all(unfoldable(planner, s) for s, _, _ in crossings):
        # the given route bounds its sequence's optimum: links that cannot beat it are not tested
        given = legs_cost(planner, legs, crossings)
        got = solve_unfolded(planner, legs[0][1][0], legs[-1][1][-1], crossings,
                             min(upper, given + 1e-9 * max(given, 1.0)) if math.isfinite(given) else upper)
        if got is not None and got[0] is None:
            return legs, list(crossings), given
        if got is not None and math.isfinite(got[2]):
            if any(planner.free[p].soft for p, _ in got[0]):
                return refine(planner, got[0], got[1])
            return got
    return refine(planner, legs, crossings)


def shortcuts_across(planner, seam_index: int) -> bool:
    """Whether the dominance rules may use seam ``seam_index``: it unfolds and its crossing cost is
    not negative (so leaving crossings out never makes a route dearer)."""
    return float(planner.nav.seams[seam_index].crossing_cost_mm) >= 0 and unfoldable(planner, seam_index)


def dominated_returns(planner) -> frozenset[tuple[int, int, int]]:
    """Crossings (seam index, free interval index, from side) that never need to follow the same
    seam's crossing over the same interval the other way: crossing from piece P to Q at x and
    straight back at y. When the seam unfolds (straight runs of equal length), the part in Q is at
    least |x' − y'| = |x − y| long (its ends lie on Q's straight run at the same fractions), so
    driving from x to y along P's side of the run is no dearer — provided that stretch of the run
    is free in P (checked exactly over the whole interval, 1e-7 mm inside, as crossing points are)
    and meets no soft zone of P — and it saves both crossing costs (seams with a negative crossing
    cost are left alone). Every route therefore has a route no dearer without such a pair, and a
    search over seam sequences may leave them out."""
    ng = planner.nav
    out = set()
    for s, seam in enumerate(ng.seams):
        if not seam.crossable or not shortcuts_across(planner, s):
            continue
        for k, (lo, hi) in enumerate(ng.intervals.get(seam.name, [])):
            if hi <= lo:
                continue
            sides = ng.seam_sides(s, np.array([lo, hi]))
            for p_side in (0, 1):  # P: the piece the route leaves and comes back to
                fs = planner.free[(seam.a if p_side == 0 else seam.b).piece]
                a, b = sides.side(p_side)[0]
                if not fs.segments_free(a[None], b[None])[0]:
                    continue
                if fs.soft:
                    line = shapely.linestrings([a, b])
                    if any(shapely.intersects(z.grown, line) for z in fs.soft):
                        continue
                out.add((s, k, 1 - p_side))  # the way back crosses from Q's side
    return frozenset(out)


class LoopRule:
    """Whether a label of the sequence search that comes back into a piece it left closes a
    *dominated loop* — the generalisation of :func:`dominated_returns` to loops through several
    pieces (round a point where pieces meet, say).

    A route leaves piece P over window W_out at x, crosses only seams that unfold, and comes back
    into P over window W_in at y. When the gluings along the loop compose to the identity (laid out
    one after the other, the last copy of P falls on P itself: the pieces close up flat round the
    loop), the part of the route between x and y is a path of the plane from x to y, so at least
    |x − y| long; when the convex hull of W_out's and W_in's stretches on P's side lies in P's
    free region and meets no soft zone of P, driving straight from x to y inside P is no dearer, and
    saves the loop's crossing costs (none negative). Every route with such a loop has one no dearer
    without it, so the search may leave the label out. Results are kept per window pair and loop
    (windows do not depend on the query)."""

    def __init__(self, planner):
        self.planner = planner
        self._memo: dict[tuple, bool] = {}
        self._glue: dict[tuple[int, int], tuple[np.ndarray, np.ndarray]] = {}
        self._unfolds: dict[int, bool] = {}

    def unfolds(self, seam: int) -> bool:
        """:func:`shortcuts_across` for seam index ``seam``, kept."""
        got = self._unfolds.get(seam)
        if got is None:
            got = self._unfolds[seam] = shortcuts_across(self.planner, seam)
        return got

    def __call__(self, g, entry: int, path) -> bool:
        """``g`` the window graph (seam, side, partner, piece arrays and ``span``), ``entry`` the
        window side crossed back into a piece, ``path()`` the label's window sides crossed so far
        (the last one ``entry``), asked for only when the entry's seam unfolds."""
        if not self.unfolds(int(g.seam[entry])):
            return False
        path = path()
        home = int(g.piece[int(g.partner[entry])])
        start = None
        for k in range(len(path) - 2, -1, -1):
            if int(g.piece[path[k]]) == home:
                start = k
                break
        if start is None:
            return False
        loop = path[start:]
        key = tuple((int(g.seam[i]), int(g.side[i]), *g.span(i)) for i in loop)
        got = self._memo.get(key)
        if got is None:
            got = self._memo[key] = self._dominated(key, home)
        return got

    def _dominated(self, key: tuple, home: int) -> bool:
        planner = self.planner
        ng = planner.nav
        if not all(self.unfolds(s) for s, _, _, _ in key):
            return False
        A, b = np.eye(2), np.zeros(2)
        for s, side, _, _ in key:
            got = self._glue.get((s, side))
            if got is None:
                got = self._glue[(s, side)] = _glue(planner, s, side)
            A, b = A @ got[0], A @ got[1] + b
        if np.abs(A - np.eye(2)).max() > 1e-9 or np.abs(b).max() > 1e-6:
            return False  # the loop does not close up flat
        (s0, side0, a0, a1), (s1, side1, b0, b1) = key[0], key[-1]
        out = ng.seam_sides(s0, np.array([a0, a1])).side(side0)[0]
        back = ng.seam_sides(s1, np.array([b0, b1])).side(1 - side1)[0]
        hull = shapely.MultiPoint(np.vstack([out, back])).convex_hull
        fs = planner.free[ng.pieces[home]]
        if not shapely.covers(fs.region, hull):
            return False
        return not any(shapely.intersects(z.grown, hull) for z in fs.soft)
