"""Exact search across seams: best-first branch and bound over seam windows.

Every free interval of a crossable seam is cut into *windows* (at most ``spacing_mm`` long along
run a). The *bound graph* has the piece corners, one moving point per window side (its middle),
the approach ends of those points, and the query points; its links are lower bounds of every link
between the places the moving points stand for (:mod:`garnav.plan.windows`). A least-cost path in
it (A*) therefore costs at most as much as any route that crosses the same windows in the same
order, so its cost ``L`` is a lower bound of the optimum over *all* seam sequences and crossing
positions. The path's windows, evaluated at their middles with the exact rules (angle limit,
approach, soft zones: :func:`garnav.plan.refine.plan_legs`), give a route and an upper bound
``U``. While ``U − L`` exceeds the tolerance, the windows of the bound path are split in four and
the search repeats (branch and bound, Land & Doig 1960; the windows play the part of the
intervals of the continuous Dijkstra of Mitchell, Mount & Papadimitriou 1987 and of the interval
search of Polyanya, Cui, Harabor & Grastien 2017, with a Lipschitz bound in place of their exact
interval propagation, which ease — runs of different length — would break). The best route found
is finally polished by sliding its crossings (:func:`garnav.plan.refine.refine`), which only
lowers its cost. Proofs and the guarantee with angle limits: docs/planning.md, "Exact search
across seams".

In the bound graph a window point is entered from its piece and must then cross (state *pre*), or
is reached by crossing and then leaves into its piece (state *post*): a path never uses a window
as a free stepping stone inside a piece, which would let it gain the window's radius twice.
"""

from __future__ import annotations

import heapq
import itertools
import math
from dataclasses import dataclass, field
from typing import Sequence

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import dijkstra

from garnav.plan.points import PiecePoint
from garnav.plan.portals import approach_points, seam_sides, seam_spacing_mm
from garnav.plan.refine import plan_legs, refine
from garnav.plan.search import min_matrix
from garnav.plan.visgraph import segments_free
from garnav.plan.windows import MovingPoints, arc_radius, corner_links, cost_factor, pair_links, run_turning

__all__ = ["SeamSearch", "ExactResult", "MAX_SPLIT_WINDOWS"]

#: Most windows one query may add by splitting. Each split window brings points linked to every
#: other point of its pieces, so the work grows faster than the windows: on two empty 300 × 400 mm
#: panels a rel_tol of 1e-4 took more than 20 s and a 30 m seam ran out of 7.6 GB. At the limit the
#: search stops with the best route found and its lower bound (``ExactResult.limited``).
MAX_SPLIT_WINDOWS = 2000

WIN, APP, START, GOAL = 0, 1, 2, 3
_PRE, _POST = 0, 1
_SPLIT = 4


@dataclass
class _Point:
    piece: int
    kind: int
    window: int  # owning window (−1 for query points)
    side: int  # run of the window (0 = a, 1 = b), −1 for query points
    xy: np.ndarray
    tan: np.ndarray
    alpha: float
    r: float
    turn: float
    rh: float  # radius used by the heuristic (covers the point's approach ends)
    goal: int = -1
    run: int = -1  # 2 × seam index + side for window points, −1 otherwise


@dataclass
class _Window:
    seam: int
    t0: float
    t1: float
    points: list[int] = field(default_factory=list)  # side 0, side 1
    approach: list[list[int]] = field(default_factory=lambda: [[], []])

    @property
    def tm(self) -> float:
        return 0.5 * (self.t0 + self.t1)


@dataclass(frozen=True)
class ExactResult:
    """Outcome of one search: the route's legs and crossings, its cost and the certificate.

    ``lower_mm`` is the last lower bound (no route is cheaper), ``cost_mm`` the route's cost before
    polishing, ``rounds`` the number of branch-and-bound rounds. ``limited`` is True when the search
    stopped at :data:`MAX_SPLIT_WINDOWS` (or ``max_rounds``) before the bound met the tolerance: the
    route is then the best found, within ``cost_mm − lower_mm`` of the optimum.
    """

    legs: list
    crossings: list
    cost_mm: float
    lower_mm: float
    rounds: int
    goal: int
    limited: bool = False


class _Tables:
    """Point and link tables: the base part is kept on the searcher, a query adds to a copy-free
    overlay (dicts keyed by point id)."""

    def __init__(self) -> None:
        self.points: list[_Point] = []
        self.windows: list[_Window] = []
        self.pc: dict[int, dict[int, float]] = {}  # point -> corner node -> cost
        self.cp: dict[int, dict[int, float]] = {}  # corner node -> point -> cost
        self.pp: dict[int, dict[int, float]] = {}  # point -> point -> cost


class SeamSearch:
    """Exact cross-seam search for one planner (built once, answers many queries).

    Parameters
    ----------
    planner : Planner
    spacing_mm : float
        Largest length of a first window along run a.
    rel_tol : float
        Stop when the route is within ``rel_tol`` × its cost (plus 1e-9 mm) of the lower bound.
    max_rounds : int
        Most branch-and-bound rounds per query.
    max_split_windows : int
        Most windows a query may add by splitting (:data:`MAX_SPLIT_WINDOWS`).
    """

    def __init__(self, planner, spacing_mm: float = 20.0, rel_tol: float = 1e-4, max_rounds: int = 40,
                 max_split_windows: int = MAX_SPLIT_WINDOWS):
        self.planner = planner
        self.nav = planner.nav
        self.rel_tol = float(rel_tol)
        self.max_rounds = int(max_rounds)
        self.max_split_windows = int(max_split_windows)
        #: ``progress(round, windows_added, lower_mm, upper_mm)`` after every round, or None (the CLI's bar)
        self.progress = None
        ng = self.nav
        self.n0 = ng.graph.number_of_nodes()
        self.factor = [cost_factor(planner.free[p]) for p in ng.pieces]
        self.run_pts = {
            s.name: (planner.garment.run_polyline(s.a), planner.garment.run_polyline(s.b)) for s in ng.seams
        }
        self.base = _Tables()
        for si, seam in enumerate(ng.seams):
            la = planner.garment.run_length(seam.a)
            step = seam_spacing_mm(la, spacing_mm)  # as the portals: wider on a very long seam
            for lo, hi in ng.intervals[seam.name]:
                n = max(int(math.ceil((hi - lo) * la / step)), 1)
                edges = np.linspace(lo, hi, n + 1)
                for t0, t1 in zip(edges[:-1], edges[1:], strict=False):
                    self._add_window(self.base, _Window(si, float(t0), float(t1)))
        self.n_base_points = len(self.base.points)
        self._linked: set[int] = set()  # pieces whose base links are computed
        self._corner_adj = [
            [(m, w) for m, w in ng.neighbours(n) if ng.is_corner(m)] if ng.is_corner(n) else [] for n in range(self.n0)
        ]
        self._hgraph = self._heuristic_graph()
        self._ptable: dict[int, tuple[np.ndarray, np.ndarray]] = {}

    # ------------------------------------------------------------------ windows and points

    def _add_window(self, tab: _Tables, w: _Window) -> int:
        ng, planner = self.nav, self.planner
        seam = ng.seams[w.seam]
        sides = seam_sides(planner.garment, seam, np.array([w.tm]), runs=self.run_pts[seam.name])
        wid = len(tab.windows)
        tab.windows.append(w)
        amin = float(seam.min_crossing_angle_deg)
        ell = ng.approach_mm if amin > 0 else 0.0
        for side, run in enumerate((seam.a, seam.b)):
            xy, tan, inward = (a[0] for a in sides.side(side))
            pts = self.run_pts[seam.name][side]
            length = float(planner.garment.run_length(run))
            r = arc_radius(0.5 * (w.t1 - w.t0), length)
            turn = float(run_turning(pts, np.array([w.t0 * length]), np.array([w.t1 * length]))[0])
            pi = ng.piece_index(run.piece)
            pid = len(tab.points)
            tab.points.append(_Point(pi, WIN, wid, side, xy, tan, amin, r, turn, r + ell * turn, run=2 * w.seam + side))
            w.points.append(pid)
            if ell > 0:
                ends = approach_points(xy[None], tan[None], inward[None], amin, ell)[0]
                ends = ends[:1] if amin >= 90.0 else ends
                ok = segments_free(planner.free[run.piece].region, np.repeat(xy[None], len(ends), axis=0), ends)
                for e in ends[ok]:
                    re = r + ell * turn
                    w.approach[side].append(len(tab.points))
                    tab.points.append(_Point(pi, APP, wid, side, e, np.zeros(2), 0.0, re, 0.0, re))
        return wid

    def add_window(self, tab, seam: int, t0: float, t1: float) -> int:
        """Append window [t0, t1] of seam index ``seam`` (its points, approach ends) to ``tab``, any
        object with ``points`` and ``windows`` lists; returns its index in ``tab.windows``."""
        return self._add_window(tab, _Window(int(seam), float(t0), float(t1)))

    def _link(self, tab: _Tables, points: list[_Point], new: list[int], old: list[int], piece: int) -> None:
        """Compute and store the links of points ``new`` to the piece's corners, to each other and
        to points ``old`` (all on piece index ``piece``)."""
        if not new:
            return
        ng = self.nav
        name = ng.pieces[piece]
        fs = self.planner.free[name]
        corners, off = ng.corners[name]
        q, n, w = corner_links(fs, corners, _moving(points, new))
        for qi, ni, wi in zip(q.tolist(), n.tolist(), w.tolist(), strict=True):
            a = new[qi]
            tab.pc.setdefault(a, {})[ni + off] = wi
            tab.cp.setdefault(ni + off, {})[a] = wi
        _store_pairs(tab, points, fs, new, old)

    def ensure_links(self, piece: int) -> None:
        """Compute the base links of piece index ``piece`` (once; kept on the searcher)."""
        self._ensure_base_links(piece)

    def _ensure_base_links(self, piece: int) -> None:
        if piece in self._linked:
            return
        ids = [i for i, p in enumerate(self.base.points) if p.piece == piece]
        self._link(self.base, self.base.points, ids, [], piece)
        self._linked.add(piece)

    # ------------------------------------------------------------------ heuristic

    def _heuristic_graph(self) -> sp.csr_matrix:
        """Euclidean bound graph over base window points (see :meth:`_h_values`)."""
        pts = self.base.points
        wp = [i for i, p in enumerate(pts) if p.kind == WIN]
        self._hidx = {pid: k for k, pid in enumerate(wp)}
        self._hpts = np.array(wp, dtype=int)
        rows, cols, vals = [], [], []
        piece = np.array([pts[i].piece for i in wp], dtype=int)
        xy = np.array([pts[i].xy for i in wp]).reshape(-1, 2)
        rh = np.array([pts[i].rh for i in wp], dtype=float)
        self._hpiece, self._hxy, self._hrh = piece, xy, rh
        for pi in np.unique(piece):
            sel = np.nonzero(piece == pi)[0]
            a, b = np.triu_indices(len(sel), 1)
            d = np.hypot(*(xy[sel[a]] - xy[sel[b]]).T) - (rh[sel[a]] + rh[sel[b]])  # straight: F not needed
            rows.append(sel[a])
            cols.append(sel[b])
            vals.append(np.maximum(d, 0.0))
        for w in self.base.windows:
            if len(w.points) == 2:
                rows.append(np.array([self._hidx[w.points[0]]]))
                cols.append(np.array([self._hidx[w.points[1]]]))
                vals.append(np.array([float(self.nav.seams[w.seam].crossing_cost_mm)]))
        p = len(wp)
        if rows:
            r, c, v = np.concatenate(rows), np.concatenate(cols), np.concatenate(vals)
        else:
            r = c = np.zeros(0, int)
            v = np.zeros(0)
        self._eps = 1e-12
        return min_matrix(r, c, v + self._eps, p + 1)

    def _h_values(self, goals: list[PiecePoint], limit: float) -> np.ndarray:
        """H(x) for the base window points: a lower bound of the bound-graph cost from any place of
        x's window to the nearest goal (Dijkstra on straight distances shrunk by the radii)."""
        ng = self.nav
        p = len(self._hpts)
        if p == 0:
            return np.zeros(0)
        link = np.full(p, np.inf)
        for g in goals:
            gi = ng.piece_index(g.piece)
            on = self._hpiece == gi
            d = np.maximum(np.hypot(*(self._hxy - g.xy).T) - self._hrh, 0.0)
            link = np.where(on, np.minimum(link, d), link)
        fin = np.isfinite(link)
        extra = sp.csr_matrix((link[fin] + self._eps, (np.nonzero(fin)[0], np.full(fin.sum(), p))), shape=(p + 1, p + 1))
        dist = dijkstra(self._hgraph + extra, directed=False, indices=p, limit=limit)[:p]
        dist = np.maximum(dist - (p + 1) * self._eps, 0.0)
        return np.where(np.isfinite(dist), dist, limit)

    # ------------------------------------------------------------------ query

    def search(self, start: PiecePoint, goals: Sequence[PiecePoint], upper: float = math.inf) -> ExactResult | None:
        """Least-cost route from ``start`` to the cheapest goal over all seam sequences and crossing
        positions; None when no goal is reachable. ``upper`` is a known route cost (or inf)."""
        q = _Query(self, start, list(goals), upper)
        return q.run()


def _moving(points: list[_Point], ids: Sequence[int]) -> MovingPoints:
    pts = [points[i] for i in ids]
    return MovingPoints(
        np.array([p.xy for p in pts], dtype=float).reshape(-1, 2),
        np.array([p.tan for p in pts], dtype=float).reshape(-1, 2),
        np.array([p.alpha for p in pts], dtype=float),
        np.array([p.r for p in pts], dtype=float),
        np.array([p.turn for p in pts], dtype=float),
    )


def _store_pairs(tab: _Tables, points: list[_Point], fs, new: list[int], old: list[int]) -> None:
    """Links among points ``new`` and from them to points ``old`` (one piece), into ``tab.pp``.

    Not linked: a window side's own point and approach ends (the search joins them by the
    approach edge), and two window points of the same run. A straight link between two places of
    one run runs along the seam; with shrunk ends a chain of such links would move along the seam
    for nothing (each window's radius counted twice), and the bound would never close. Routes
    that cross a seam and come straight back over it are therefore not searched (see
    docs/planning.md)."""
    if not new:
        return
    mp = _moving(points, new)
    ia, ib = np.triu_indices(len(new), 1)
    sets = [(mp, mp, ia, ib, new, new)]
    if old:
        ja, jb = np.meshgrid(np.arange(len(new)), np.arange(len(old)), indexing="ij")
        sets.append((mp, _moving(points, old), ja.ravel(), jb.ravel(), new, old))
    for a_pts, b_pts, xa, xb, ids_a, ids_b in sets:
        if not len(xa):
            continue
        wa = np.array([points[ids_a[i]].window for i in xa.tolist()])
        wb = np.array([points[ids_b[j]].window for j in xb.tolist()])
        sa = np.array([points[ids_a[i]].side for i in xa.tolist()])
        sb = np.array([points[ids_b[j]].side for j in xb.tolist()])
        ra_ = np.array([points[ids_a[i]].run for i in xa.tolist()])
        rb_ = np.array([points[ids_b[j]].run for j in xb.tolist()])
        keep = ~((wa == wb) & (sa == sb) & (wa >= 0)) & ~((ra_ == rb_) & (ra_ >= 0))
        ra, rb, wv = pair_links(fs, a_pts, b_pts, (xa[keep], xb[keep]))
        for i, j, c in zip(ra.tolist(), rb.tolist(), wv.tolist(), strict=True):
            u, v = ids_a[i], ids_b[j]
            if c < tab.pp.get(u, {}).get(v, math.inf):
                tab.pp.setdefault(u, {})[v] = c
                tab.pp.setdefault(v, {})[u] = c


class _Query:
    def __init__(self, ss: SeamSearch, start: PiecePoint, goals: list[PiecePoint], upper: float):
        self.ss = ss
        self.nav = ss.nav
        self.start, self.goals = start, goals
        self.points: list[_Point] = list(ss.base.points)
        self.windows: list[_Window] = list(ss.base.windows)
        self.over = _Tables()
        self.inactive: set[int] = set()
        ng = self.nav
        for k, p in enumerate([start] + goals):
            pi = ng.piece_index(p.piece)
            kind = START if k == 0 else GOAL
            self.points.append(_Point(pi, kind, -1, -1, p.xy, np.zeros(2), 0.0, 0.0, 0.0, 0.0, k - 1))
        self.start_id = ss.n_base_points
        self.goal_ids = list(range(ss.n_base_points + 1, ss.n_base_points + 1 + len(goals)))
        pieces = {self.points[i].piece for i in [self.start_id, *self.goal_ids]}
        for pi in sorted(pieces):
            ss._ensure_base_links(pi)
        # query points: corners through the planner's links, other points by the pair rule
        for pid in [self.start_id, *self.goal_ids]:
            pp = start if pid == self.start_id else goals[pid - self.start_id - 1]
            for m, w in ss.planner.links(pp, corners_only=True):
                self.over.pc.setdefault(pid, {})[m] = w
                self.over.cp.setdefault(m, {})[pid] = w
        for pi in sorted(pieces):
            new = [i for i in [self.start_id, *self.goal_ids] if self.points[i].piece == pi]
            old = [i for i, p in enumerate(ss.base.points) if p.piece == pi]
            self._pairs(new, old, pi)
        self.upper = upper
        h_limit = upper if math.isfinite(upper) else math.inf
        self.H = ss._h_values(goals, h_limit)
        self.h_cache: dict[int, float] = {}

    def _pairs(self, new: list[int], old: list[int], piece: int) -> None:
        fs = self.ss.planner.free[self.nav.pieces[piece]]
        _store_pairs(self.over, self.points, fs, new, old)

    # ------------------------------------------------------------------ splitting

    def _split(self, wids: list[int]) -> None:
        """Replace each window by its four quarters (links computed in one batch per piece)."""
        ss = self.ss
        tab = _Tables()
        tab.points, tab.windows = self.points, self.windows
        new_by_piece: dict[int, list[int]] = {}
        for wid in wids:
            w = self.windows[wid]
            edges = np.linspace(w.t0, w.t1, _SPLIT + 1)
            for t0, t1 in zip(edges[:-1], edges[1:], strict=True):
                first = len(self.points)
                ss._add_window(tab, _Window(w.seam, float(t0), float(t1)))
                for pid in range(first, len(self.points)):
                    new_by_piece.setdefault(self.points[pid].piece, []).append(pid)
            self.inactive.update(w.points)
            for side in w.approach:
                self.inactive.update(side)
        for pi, new in sorted(new_by_piece.items()):
            self.new_links(pi, new)

    def new_links(self, piece: int, new: list[int]) -> None:
        ss = self.ss
        ss._ensure_base_links(piece)
        ng = self.nav
        name = ng.pieces[piece]
        fs = ss.planner.free[name]
        corners, off = ng.corners[name]
        mp = _moving(self.points, new)
        q, n, w = corner_links(fs, corners, mp)
        for qi, ni, wi in zip(q.tolist(), n.tolist(), w.tolist(), strict=False):
            a = new[qi]
            self.over.pc.setdefault(a, {})[ni + off] = wi
            self.over.cp.setdefault(ni + off, {})[a] = wi
        newset = set(new)
        old = [i for i, p in enumerate(self.points) if p.piece == piece and i not in self.inactive and i not in newset]
        self._pairs(new, old, piece)

    # ------------------------------------------------------------------ graph

    def _node(self, pid: int, state: int) -> int:
        return self.ss.n0 + 2 * pid + state

    def neighbours(self, node: int):
        ss = self.ss
        out: list[tuple[int, float]] = []
        if node < ss.n0:
            out.extend(ss._corner_adj[node])
            for tab in (ss.base, self.over):
                for pid, w in tab.cp.get(node, {}).items():
                    if pid not in self.inactive and self.points[pid].kind != START:
                        out.append((self._node(pid, _PRE), w))
            return out
        pid, state = divmod(node - ss.n0, 2)
        p = self.points[pid]
        if state == _PRE:
            if p.kind == WIN:
                win = self.windows[p.window]
                other = win.points[1 - p.side]
                out.append((self._node(other, _POST), float(self.nav.seams[win.seam].crossing_cost_mm)))
            elif p.kind == APP:
                own = self.windows[p.window].points[p.side]
                out.append((self._node(own, _PRE), self.nav.approach_mm))
            return out
        ss._ensure_base_links(p.piece)
        for tab in (ss.base, self.over):
            out.extend(tab.pc.get(pid, {}).items())
            for q, w in tab.pp.get(pid, {}).items():
                if q not in self.inactive and self.points[q].kind != START:
                    out.append((self._node(q, _PRE), w))
        if p.kind == WIN:
            for e in self.windows[p.window].approach[p.side]:
                out.append((self._node(e, _POST), self.nav.approach_mm))
        return out

    def h(self, node: int) -> float:
        got = self.h_cache.get(node)
        if got is not None:
            return got
        ss = self.ss
        if node < ss.n0:
            val = self._h_at(int(self.nav.node_piece[node]), self.nav.xy[node], 0.0)
        else:
            pid, state = divmod(node - ss.n0, 2)
            p = self.points[pid]
            if p.kind == GOAL:
                val = 0.0
            elif state == _PRE and p.kind == WIN:
                win = self.windows[p.window]
                val = float(self.nav.seams[win.seam].crossing_cost_mm) + self.h(self._node(win.points[1 - p.side], _POST))
            elif state == _PRE and p.kind == APP:
                val = self.nav.approach_mm + self.h(self._node(self.windows[p.window].points[p.side], _PRE))
            else:
                val = self._h_at(p.piece, p.xy, p.rh)
        self.h_cache[node] = val
        return val

    def _h_at(self, piece: int, xy: np.ndarray, r: float) -> float:
        ss = self.ss
        f = 1.0  # straight distances: shrinking by the radius alone is a lower bound of the length
        best = math.inf
        for g in self.goals:
            if self.nav.piece_index(g.piece) == piece:
                best = min(best, max(float(np.hypot(*(xy - g.xy))) - f * r, 0.0))
        sel = ss._ptable.get(piece)
        if sel is None:
            idx = np.nonzero(ss._hpiece == piece)[0]
            sel = ss._ptable[piece] = (idx, ss._hxy[idx])
        idx, pxy = sel
        if len(idx):
            d = np.maximum(np.hypot(pxy[:, 0] - xy[0], pxy[:, 1] - xy[1]) - f * (r + ss._hrh[idx]), 0.0) + self.H[idx]
            best = min(best, float(d.min()))
        return best

    def astar(self, margin: float) -> tuple[list[int], float, list[int]] | None:
        """A* with re-opening (the heuristic is admissible; after splits it may be inconsistent).

        Returns the least-cost path to a goal, its cost L, and every window whose *pre* state was
        expanded with ``g + h < U − margin`` (U: the best route so far): the windows that may hold a
        cheaper route. The search goes on past the first goal until that threshold."""
        src = self._node(self.start_id, _POST)
        goals = {self._node(g, _PRE) for g in self.goal_ids}
        counter = itertools.count()
        best = {src: 0.0}
        parent: dict[int, int | None] = {src: None}
        heap = [(self.h(src), next(counter), 0.0, src)]
        found: tuple[list[int], float] | None = None
        wins: dict[int, None] = {}
        n0 = self.ss.n0
        while heap:
            f, _, g, n = heapq.heappop(heap)
            if g > best.get(n, math.inf):
                continue
            if f >= self.upper - margin and (found is not None or f > self.upper * (1 + 1e-12)):
                break
            if n in goals:
                if found is None:
                    path = [n]
                    while parent[path[-1]] is not None:
                        path.append(parent[path[-1]])  # type: ignore[arg-type]
                    found = (path[::-1], g)
                    if not math.isfinite(self.upper):
                        break
                continue
            if n >= n0 and (n - n0) % 2 == _PRE:
                p = self.points[(n - n0) // 2]
                if p.kind == WIN:
                    wins[p.window] = None
            for m, w in self.neighbours(n):
                gm = g + w
                if gm < best.get(m, math.inf):
                    hm = self.h(m)
                    if not math.isfinite(hm):
                        continue
                    best[m] = gm
                    parent[m] = n
                    heapq.heappush(heap, (gm + hm, next(counter), gm, m))
        if found is None:
            return None
        return found[0], found[1], list(wins)

    def crossings_of(self, path: list[int]) -> tuple[list[tuple[int, float, int]], list[int], int]:
        """Crossings (seam index, t, from side), windows crossed, and goal index of a bound path."""
        ss = self.ss
        out, wins = [], []
        for u, v in zip(path[:-1], path[1:], strict=False):
            if u >= ss.n0 and v >= ss.n0:
                pu, su = divmod(u - ss.n0, 2)
                pv, sv = divmod(v - ss.n0, 2)
                a, b = self.points[pu], self.points[pv]
                if su == _PRE and sv == _POST and a.kind == WIN and b.kind == WIN and a.window == b.window:
                    win = self.windows[a.window]
                    out.append((win.seam, win.tm, a.side))
                    wins.append(a.window)
        last = (path[-1] - ss.n0) // 2
        return out, wins, self.points[last].goal

    def run(self) -> ExactResult | None:
        ss = self.ss
        best: tuple | None = None
        upper = self.upper
        lower = 0.0
        rounds = 0
        seen: set = set()
        limited = True  # until the bound meets the tolerance
        while rounds < ss.max_rounds:
            rounds += 1
            margin = ss.rel_tol * upper + 1e-9 if math.isfinite(upper) else 0.0
            found = self.astar(margin)
            if found is None:  # nothing below the best route found: it is optimal
                lower, limited = upper, False
                break
            path, lower, wins = found
            crossings, path_wins, k = self.crossings_of(path)
            legs, cost = plan_legs(ss.planner, self.start, self.goals[k], crossings)
            sequence = (k, tuple((s, side) for s, _, side in crossings))
            if math.isfinite(cost) and sequence not in seen:
                # a new seam sequence: slide its crossings to their best places first
                seen.add(sequence)
                legs, crossings, cost = refine(ss.planner, legs, crossings)
            if cost < upper:
                upper = cost
                self.upper = cost
                best = (legs, crossings, cost, k)
            if ss.progress is not None:
                ss.progress(rounds, len(self.windows) - len(ss.base.windows), lower, upper)
            if lower >= upper - (ss.rel_tol * upper + 1e-9):
                limited = False
                break
            if rounds == 1 or not wins:
                wins = path_wins
            split = [w for w in dict.fromkeys(wins) if (self.windows[w].t1 - self.windows[w].t0) > 1e-12]
            if not split:
                limited = False
                break
            added = len(self.windows) - len(ss.base.windows)
            if added + _SPLIT * len(split) > ss.max_split_windows:
                break  # bounded work: the best route so far, with its gap to the lower bound
            self._split(split)
        if best is None:
            return None
        legs, crossings, cost, k = best
        return ExactResult(legs, crossings, cost, min(lower, cost), rounds, k, limited)
