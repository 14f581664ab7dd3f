"""Branch and bound over seam sequences: the cross-seam route of least cost over all sequences.

The seam windows and the bound links of :mod:`garnav.plan.exact` (a window side stands for every
crossing point of its window; a link from it is shortened by the window's radius, see
:mod:`garnav.plan.windows`) are condensed into a small *window graph*, built once per planner:

* nodes ``pre(i)`` and ``post(i)`` for every window side i (about to cross from side i; arrived on
  side i by crossing);
* ``pre(i) → post(partner(i))`` at the seam's crossing cost;
* ``post(i) → pre(j)`` for two sides on one piece at ``M[i, j]``, the least cost in the bound graph
  of the piece (corners, the window points, their approach ends; a path never passes another
  window point): one scipy ``csgraph`` Dijkstra per piece from all its window sides at once.

A query adds the start and the goals (exact links to the corners, bound links to window points),
so the window graph holds, for every route R, a path with the same seam sequence and no dearer
than R (docs/planning.md §4c). A label-setting best-first search over (node, seam sequence so far)
with the exact Dijkstra distance to the goals on the window graph as heuristic (consistent)
pops complete seam sequences in increasing order of their lower bound (the k shortest distinct
sequences; labels as in Martins 1984, the multi-label shortest path). Each popped sequence is
solved — legs planned at its bound path's windows, then its crossings slid to their best places
(:func:`garnav.plan.refine.refine`) — and the best cost U is kept; the search stops when the next
lower bound is not below U (branch and bound, Land & Doig 1960). Which popped sequences are
refined is decided on their portal routes (``ALTERNATIVE_MARGIN``, ``CROSSING_ALLOWANCE``), a
heuristic rule; a popped sequence below U that is not refined has the windows of its bound path
split (:mod:`garnav.plan.sequence_bound`: the branch step, windows as the intervals of Mitchell,
Mount & Papadimitriou 1987) and the label search runs again, until every sequence not refined
has a bound of at least ``U·(1 − CERT_TOL)`` (``certified``) or a budget is hit
(``max_sequences`` refined, ``MAX_CERTIFY_WINDOWS`` windows added, ``MAX_LABELS`` labels in a
round; ``reason`` says which). docs/planning.md §4c has the whole argument.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Sequence

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import dijkstra

from garnav.plan.layer_bound import LayerBound, PortalPairs
from garnav.plan.points import PiecePoint
from garnav.plan.refine import plan_legs, refine
from garnav.plan.restart import refine_from_windows
from garnav.plan.unfold import LoopRule, dominated_returns, place_crossings, solve_unfolded
from garnav.plan.side_rows import SideRows
from garnav.plan.sequence_bound import MAX_LABELS, SPLIT, LabelSearch, SequenceBound, Side, min_directed, to_goals
from garnav.plan.windows import MovingPoints, pair_links

__all__ = [
    "SequenceSearch",
    "SequenceResult",
    "WindowGraph",
    "LayerBound",
    "ALTERNATIVE_MARGIN",
    "CROSSING_ALLOWANCE",
    "MAX_CERTIFY_WINDOWS",
    "CERT_TOL",
    "MAX_LABELS",
]

#: A sequence's portal route is refined when its graph cost is at most the best cost plus twice
#: the largest gain of refinement seen in the query plus this fraction of its graph cost ...
ALTERNATIVE_MARGIN = 0.002
#: ... plus this fraction of the portal spacing per crossing: sliding a crossing by up to half a
#: portal gap may gain that much where the route is oblique to the seam (a measured allowance, no
#: source: on the demo garment a three-crossing sequence 3.0 mm dearer on the portals than the
#: best route was 3.6 mm cheaper after refinement, a gain of 2.2 mm per crossing at 20 mm portals).
CROSSING_ALLOWANCE = 0.1
#: Certificate tolerance: a sequence not refined whose bound is at least U·(1 − CERT_TOL) needs no
#: split (1e-4: 0.08 mm on an 800 mm route, below the 0.5 mm of the free-interval search).
CERT_TOL = 1e-4
#: Most windows one query may add by splitting (four per split window) to certify its route.
MAX_CERTIFY_WINDOWS = 400
#: Most windows split in one round of the certification (the bound paths popped first).
SPLITS_PER_ROUND = 24
#: Most popped sequences below U per query solved exactly in their unfolded corridor
#: (garnav/plan/unfold.py), which settles them whatever their windows' bound. Measured on the
#: ten-strip chain (6 queries): 0 → 6 certified and 2.9 → 2.3 s a query with 4; smaller budgets
#: were a little faster there, larger ones slower (each solve 0.1–0.4 s on that garment). A
#: trade-off, no source.
EXACT_BOUNDS = 4

_WIN, _APP = 0, 1  # point kinds of garnav.plan.exact (WIN, APP)


@dataclass(frozen=True)
class SequenceResult:
    """Outcome of one query.

    ``legs``, ``crossings`` and ``cost_mm`` are the best route; ``lower_mm`` a lower bound of every
    route (the window graph's least cost, after splitting); ``certified``: every seam sequence not
    refined has a lower bound at least ``cost_mm·(1 − cert_tol)`` (else ``reason`` says which
    budget stopped the search); ``solved`` the number of seam sequences refined; ``goal`` the
    index of the goal reached; ``windows_added`` the windows made by splitting, in ``rounds``
    rounds of the label search.
    """

    legs: list
    crossings: list
    cost_mm: float
    lower_mm: float
    certified: bool
    solved: int
    goal: int
    windows_added: int = 0
    rounds: int = 1
    reason: str = ""


class _PieceGraph:
    """The directed bound graph of one piece: corners [0, k), then for point j of ``ids`` an
    out-copy ``k + 2j`` (paths leave the point) and an in-copy ``k + 2j + 1`` (paths end there)."""

    def __init__(self, ss, piece: int):
        ng = ss.nav
        name = ng.pieces[piece]
        corners, off = ng.corners[name]
        self.k = k = len(corners)
        self.off = off
        tabs = ss.base
        self.ids = [i for i, p in enumerate(tabs.points) if p.piece == piece]
        self.slot = {pid: j for j, pid in enumerate(self.ids)}
        n = k + 2 * len(self.ids)
        self.size = n
        cm = ss.planner.corner_matrix(name).tocoo()
        rows = [cm.row, cm.col]
        cols = [cm.col, cm.row]
        vals = [cm.data, cm.data]
        r, c, v = [], [], []
        ell = ng.approach_mm
        for pid in self.ids:
            j = self.slot[pid]
            out_, in_ = k + 2 * j, k + 2 * j + 1
            for cn, w in tabs.pc.get(pid, {}).items():
                r += [out_, cn - off]
                c += [cn - off, in_]
                v += [w, w]
            for q, w in tabs.pp.get(pid, {}).items():
                r.append(out_)
                c.append(k + 2 * self.slot[q] + 1)
                v.append(w)
            p = tabs.points[pid]
            if p.kind == _WIN:
                for e in tabs.windows[p.window].approach[p.side]:
                    je = self.slot[e]
                    r += [out_, k + 2 * je + 1]
                    c += [k + 2 * je, in_]
                    v += [ell, ell]
        rows.append(np.array(r, dtype=int))
        cols.append(np.array(c, dtype=int))
        vals.append(np.array(v, dtype=float))
        self.eps = 1e-12  # csgraph drops explicit zeros: a tiny positive stand-in, removed below
        self.matrix = min_directed(np.concatenate(rows), np.concatenate(cols), np.concatenate(vals) + self.eps, n)
        self.win = [pid for pid in self.ids if tabs.points[pid].kind == _WIN]

    def out_node(self, pid: int) -> int:
        return self.k + 2 * self.slot[pid]

    def in_node(self, pid: int) -> int:
        return self.k + 2 * self.slot[pid] + 1

    def with_point(self, ss, pp: PiecePoint, reverse: bool) -> tuple[sp.csr_matrix, int]:
        """The piece graph plus a query point (last node): exact links to the corners, bound links
        to the points' in-copies (``reverse``: from their out-copies, for a goal)."""
        n = self.size
        r, c, v = [], [], []
        for m, w in ss.planner.links(pp, corners_only=True):
            r.append(n)
            c.append(m - self.off)
            v.append(w)
        fs = ss.planner.free[pp.piece]
        pts = ss.base.points
        mp = _moving([pts[i] for i in self.ids])
        one = MovingPoints(pp.xy[None], np.zeros((1, 2)), np.zeros(1), np.zeros(1), np.zeros(1))
        _, jb, w = pair_links(fs, one, mp)
        for j, wv in zip(jb.tolist(), w.tolist(), strict=True):
            r.append(n)
            c.append(self.k + 2 * j + (0 if reverse else 1))
            v.append(wv)
        extra = min_directed(np.array(r, dtype=int), np.array(c, dtype=int), np.array(v, dtype=float) + self.eps, n + 1)
        base = sp.bmat([[self.matrix, None], [None, sp.csr_matrix((1, 1))]]).tocsr()
        if reverse:
            return (base.T + extra).tocsr(), n  # edges reversed: Dijkstra from the goal backwards
        return (base + extra).tocsr(), n


def interval_index(ng, seam: int, t: float) -> int:
    """Index of the free interval of seam ``seam`` that holds fraction ``t`` (the nearest one)."""
    iv = ng.intervals[ng.seams[seam].name]
    gaps = [0.0 if lo - 1e-12 <= t <= hi + 1e-12 else min(abs(t - lo), abs(t - hi)) for lo, hi in iv]
    return int(np.argmin(gaps)) if gaps else -1


def sequence_key(ng, goal: int, crossings) -> tuple:
    """The seam sequence of a route: goal index and (seam, free interval, from side) per crossing.
    Crossing refinement (:func:`garnav.plan.refine.refine`) keeps each crossing in its interval, so
    two routes with different keys are different candidates of the search."""
    return (goal, tuple((int(s), interval_index(ng, int(s), float(t)), int(side)) for s, t, side in crossings))


def _moving(pts) -> MovingPoints:
    return MovingPoints(
        np.array([p.xy for p in pts], dtype=float).reshape(-1, 2),
        np.array([p.tan for p in pts], dtype=float).reshape(-1, 2),
        np.array([p.alpha for p in pts], dtype=float),
        np.array([p.r for p in pts], dtype=float),
        np.array([p.turn for p in pts], dtype=float),
    )


class WindowGraph:
    """The window graph of a planner (module docstring), built from the base windows of its
    :class:`garnav.plan.exact.SeamSearch`.

    Attributes
    ----------
    win : (w,) point ids of the window sides (base points of the seam search)
    piece : (w,) piece index of each side
    partner : (w,) index of the other side of the same window
    seam, side : (w,) seam index and side (0 = run a) of each window side
    t : (w,) middle fraction of each side's window
    cross : (w,) crossing cost, mm
    inner : dict piece → (indices into ``win`` (n,), (n, n) bound costs post(i) → pre(j), mm)
    """

    def __init__(self, ss):
        self.ss = ss
        ng = ss.nav
        for pi in range(len(ng.pieces)):
            ss.ensure_links(pi)
        pts = ss.base.points
        self.win = np.array([i for i, p in enumerate(pts) if p.kind == _WIN], dtype=int)
        index = {int(pid): k for k, pid in enumerate(self.win)}
        self.piece = np.array([pts[i].piece for i in self.win], dtype=int)
        self.side = np.array([pts[i].side for i in self.win], dtype=int)
        windows = ss.base.windows
        self.seam = np.array([windows[pts[i].window].seam for i in self.win], dtype=int)
        self.t = np.array([windows[pts[i].window].tm for i in self.win], dtype=float)
        self.interval = np.array([interval_index(ng, int(s), float(t)) for s, t in zip(self.seam, self.t, strict=True)], dtype=int)
        self.partner = np.array([index[windows[pts[i].window].points[1 - pts[i].side]] for i in self.win], dtype=int)
        self.cross = np.array([float(ng.seams[s].crossing_cost_mm) for s in self.seam], dtype=float)
        self.graphs: dict[int, _PieceGraph] = {}
        self._sides: list | None = None
        self.inner: dict[int, tuple[np.ndarray, np.ndarray]] = {}
        for pi in range(len(ng.pieces)):
            g = self.graphs[pi] = _PieceGraph(ss, pi)
            sel = np.nonzero(self.piece == pi)[0]
            if not len(sel):
                continue
            src = [g.out_node(int(self.win[k])) for k in sel]
            dst = [g.in_node(int(self.win[k])) for k in sel]
            d = dijkstra(g.matrix, directed=True, indices=src)[:, dst]
            d = np.maximum(d - g.size * g.eps, 0.0)
            np.fill_diagonal(d, np.inf)  # crossing back at the same window side gains nothing
            self.inner[pi] = (sel, d)

    def base_sides(self) -> list:
        """The window sides as :class:`~garnav.plan.sequence_bound.SequenceBound` holds them (its
        :class:`~garnav.plan.sequence_bound.Side`: points, seam, side, interval, crossing cost and the corner links of its point
        and approach ends); built on first use, kept, shared read-only by every query."""
        if self._sides is None:
            ss, ng = self.ss, self.ss.nav
            pts, windows = ss.base.points, ss.base.windows
            out = []
            for k, pid in enumerate(self.win.tolist()):
                p = pts[pid]
                off = ng.corners[ng.pieces[p.piece]][1]
                ends = [pid, *windows[p.window].approach[p.side]]
                links = []
                for e in ends:
                    d = ss.base.pc.get(e, {})
                    links.append((np.array(list(d), dtype=int) - off, np.array(list(d.values()), dtype=float)))
                out.append(Side(p.piece, [pts[e] for e in ends], int(self.seam[k]), int(self.side[k]), int(self.interval[k]),
                                float(self.cross[k]), links))
            self._sides = out
        return self._sides

    def ends(self, pp: PiecePoint, reverse: bool) -> tuple[np.ndarray, np.ndarray]:
        """Bound costs from a start point to pre(i) (``reverse``: from post(i) to a goal point),
        as (indices into ``win`` (n,), costs (n,)) for the window sides of the point's piece."""
        ss = self.ss
        pi = ss.nav.piece_index(pp.piece)
        g = self.graphs[pi]
        mat, q = g.with_point(ss, pp, reverse)
        d = dijkstra(mat, directed=True, indices=q)
        d = np.maximum(d - (g.size + 1) * g.eps, 0.0)
        sel = np.nonzero(self.piece == pi)[0]
        nodes = [(g.out_node if reverse else g.in_node)(int(self.win[k])) for k in sel]
        return sel, d[nodes]


class SequenceSearch:
    """The least-cost cross-seam route over all seam sequences (module docstring), for one planner.

    Parameters
    ----------
    planner : Planner
    rel_tol : float
        A sequence whose lower bound is at least ``U·(1 − rel_tol)`` is not solved.
    max_sequences : int
        Most sequences refined per query.
    cert_tol : float
        Certificate tolerance: the search ends certified when every sequence not refined has a
        bound of at least ``U·(1 − cert_tol)`` (:data:`CERT_TOL`).
    max_windows : int
        Most windows a query adds by splitting (:data:`MAX_CERTIFY_WINDOWS`).
    """

    def __init__(self, planner, rel_tol: float = 1e-9, max_sequences: int = 4, cert_tol: float = CERT_TOL,
                 max_windows: int = MAX_CERTIFY_WINDOWS):
        self.planner = planner
        self.rel_tol = float(rel_tol)
        self.cert_tol = float(cert_tol)
        self.max_sequences = int(max_sequences)
        self.max_windows = int(max_windows)
        self._graph: WindowGraph | None = None
        self._pairs: PortalPairs | None = None
        self._layers: dict[tuple, tuple] = {}
        #: bounds between split window sides, kept for later queries (garnav.plan.side_rows)
        self.side_rows = SideRows()
        self._returns: frozenset | None = None
        self._loops: LoopRule | None = None

    @property
    def graph(self) -> WindowGraph:
        if self._graph is None:
            self._graph = WindowGraph(self.planner.seam_search)
        return self._graph

    def search(self, start: PiecePoint, goals: Sequence[PiecePoint], best=None, gain: float = 0.0) -> SequenceResult | None:
        """Least-cost route from ``start`` to the cheapest goal; ``best`` = (legs, crossings, cost,
        goal index) of a known route (its cost is the first U), ``gain`` what refining it gained
        (mm). None when no goal is reachable."""
        wg = self.graph
        planner = self.planner
        upper = math.inf if best is None else float(best[2])
        ng = planner.nav
        tried: set = set()
        # crossings of each refined sequence, and the sequences refined again from a bound path
        solutions: dict[tuple, list] = {}
        restarted: set = set()
        if best is not None:
            tried.add(sequence_key(ng, best[3], best[1]))
            solutions[sequence_key(ng, best[3], best[1])] = best[1]
        self._solved = 0
        self._restarts = 0
        self._exact = 0
        self._gain = float(gain)
        self._edges: dict[int, list] = {}
        self._portal: dict[tuple, tuple | None] = {}
        self._layers = {}
        self._round = 1
        # the same-piece route (no crossing) is solved exactly by the in-piece search
        w = len(wg.win)
        s_idx, s_cost = wg.ends(start, reverse=False)
        to_pre = np.full(w, np.inf)
        to_pre[s_idx] = s_cost
        goal_post = []
        for g in goals:
            g_idx, g_cost = wg.ends(g, reverse=True)
            arr = np.full(w, np.inf)
            arr[g_idx] = g_cost
            goal_post.append(arr)
        no_seam = math.inf  # exact least cost of the routes that cross no seam
        for k, g in enumerate(goals):
            if g.piece == start.piece and (k, ()) not in tried:
                tried.add((k, ()))
                legs, cost = plan_legs(planner, start, g, [])
                self._solved += 1
                no_seam = min(no_seam, cost)
                if cost < upper:
                    upper, best = cost, (legs, [], cost, k)
        bound = SequenceBound(wg, start, list(goals), to_pre, goal_post, rows=self.side_rows)
        floor = -math.inf  # the best window-graph bound of the rounds (each is admissible)
        reason = ""
        rounds = 0
        once = False  # a round after the label budget: each (seam, interval, side) at most once
        while True:
            rounds += 1
            self._round = rounds
            h_pre, h_post = to_goals(bound)
            floor = max(floor, bound.floor(h_pre))
            # a refined sequence is popped once more, for its bound path (see _restart)
            if self._returns is None:
                self._returns = dominated_returns(planner)
                self._loops = LoopRule(planner)
            labels = LabelSearch(bound, bound.to_pre, bound.goal_post, h_pre, h_post, upper,
                                 tried - (set(solutions) - restarted), self.rel_tol, no_return=self._returns,
                                 once=once, loops=self._loops)
            pending: dict[int, None] = {}  # window sides on bound paths still below U(1 - cert_tol)
            stuck = False
            for lb, k, path in labels:  # complete seam sequences in increasing order of bound
                if k < 0:
                    break  # every sequence not popped costs at least U (branch and bound)
                seq = tuple((int(bound.seam[i]), int(bound.interval[i]), int(bound.side[i])) for i in path)
                key = (k, seq)
                found = None if key in solutions else self._solve(start, goals, k, seq, upper, force=False)
                if found is not None:
                    tried.add(key)
                    solutions[key] = found[1]
                    if found[2] < upper:
                        upper, best = found[2], (found[0], found[1], found[2], k)
                        labels.upper = upper
                if key in solutions:
                    again = self._restart(start, goals[k], key, path, bound, solutions, restarted, upper)
                    if again is not None and again[2] < upper:
                        upper, best = again[2], (again[0], again[1], again[2], k)
                        labels.upper = upper
                    continue
                if lb >= upper * (1.0 - self.cert_tol):
                    continue  # within the certificate's tolerance
                exact = self._exactly(start, goals[k], seq, upper)
                if exact is not None:  # solved in its unfolded corridor: its optimum, or at least U
                    tried.add(key)
                    if exact[2] < upper:
                        upper, best = exact[2], (exact[0], exact[1], exact[2], k)
                        labels.upper = upper
                    # its windows are split all the same: other sequences through them (going round a
                    # point where pieces meet, say) get their bounds raised too
                    pending.update(dict.fromkeys(bound.splittable(path)))
                    continue
                cut = bound.splittable(path)
                if not cut:  # the windows cannot shrink further: refine the sequence after all
                    found = self._solve(start, goals, k, seq, upper, force=True)
                    if found is None:
                        stuck = True
                        continue
                    tried.add((k, seq))
                    if found[2] < upper:
                        upper, best = found[2], (found[0], found[1], found[2], k)
                        labels.upper = upper
                    continue
                pending.update(dict.fromkeys(cut))
                if len(pending) >= SPLITS_PER_ROUND and rounds > 1:
                    break  # the first round pops on: its sequences are judged as without splitting
            if not pending and labels.exhausted and not once:
                # sequences that circle a point where pieces meet (crossings free) can fill the
                # budget before any sequence below U comes up: search once more without repeats
                once = True
                continue
            if not pending:
                if labels.exhausted:
                    reason = f"label budget: {MAX_LABELS} labels expanded in one round"
                elif once and labels.dropped:
                    reason = (f"label budget: {MAX_LABELS} labels expanded in one round; searched again with "
                              "each free interval crossed at most once each way")
                elif stuck:
                    reason = "a sequence below the route's cost at the smallest windows, not refined (sequence budget)"
                break
            todo = list(pending)[:SPLITS_PER_ROUND]
            if bound.added + SPLIT * len(todo) > self.max_windows:
                reason = f"window budget: {bound.added} windows added, sequences below the route's cost remain"
                break
            bound.split(todo)
        if best is None:
            return None
        legs, crossings, cost, k = best
        lower = min(floor, no_seam, cost)
        return SequenceResult(legs, crossings, cost, lower, not reason, self._solved, k, bound.added, rounds, reason)

    def _solve(self, start, goals, k: int, seq: tuple, upper: float, force: bool):
        """Refine seam sequence ``seq`` to goal ``k``: (legs, crossings, cost); or None when it is
        not refined: the sequence budget is spent (``max_sequences`` refined, or three times as
        many sequences judged on the portals in the first round, six times in all, unless
        ``force``), or its portal route is too dear
        to win after refinement (``ALTERNATIVE_MARGIN`` and ``CROSSING_ALLOWANCE``, unless
        ``force``). A sequence with no portal route at all gives an infinite cost (nothing to
        miss). The first round judges the sequences as the search without splitting did, in the
        same order; a sequence judged too dear is judged again in a later round (with the U and
        the gain of refinement of then), which can only add refinements: the route is never
        dearer than without splitting."""
        key = (k, seq)
        if self._solved >= self.max_sequences:
            return None
        planner = self.planner
        if key not in self._portal:
            # the sequence's best route through the portals (an upper bound of its optimum); the
            # layered bound skips the search when even it cannot reach the threshold below
            if self._pairs is None:
                self._pairs = PortalPairs(planner)
            if key not in self._layers:
                cap = 3 * self.max_sequences * (1 if self._round == 1 else 2)
                if len(self._layers) >= cap and not force:
                    return None  # bounded work: only so many sequences are judged on the portals
                layer = LayerBound(self._pairs, goals[k], seq)
                self._layers[key] = (layer, layer.start_bound(start))
            layer, floor_cost = self._layers[key]
            if not force and floor_cost > self._reach(upper, floor_cost, len(seq)):
                return None  # decided again when forced (the portal search is then run)
            if k not in self._edges:
                self._edges[k] = planner.query_edges(start, [goals[k]])
            nodes, graph_cost = planner.sequence_search(start, goals[k], seq, self._edges[k], layer)
            self._portal[key] = None if nodes is None else (nodes, graph_cost)
        got = self._portal[key]
        if got is None:
            return [], [], math.inf  # no route crosses exactly so
        nodes, graph_cost = got
        if not force and graph_cost > self._reach(upper, graph_cost, len(seq)):
            return None
        legs, crossings = planner.split_path(nodes, start, goals[k])
        self._solved += 1
        legs, crossings, cost = place_crossings(planner, legs, crossings, upper)
        self._gain = max(self._gain, graph_cost - cost)
        return legs, crossings, cost

    def _restart(self, start: PiecePoint, goal: PiecePoint, key: tuple, path: list[int], bound: SequenceBound,
                 solutions: dict, restarted: set, upper: float):
        """Sequence ``key`` refined once more from its bound path ``path``
        (:func:`garnav.plan.restart.refine_from_windows`), at most ``max_sequences`` times per
        query: (legs, crossings, cost) or None. The caller keeps the cheaper result."""
        if key in restarted or self._restarts >= self.max_sequences:
            return None
        restarted.add(key)
        got = refine_from_windows(self.planner, start, goal, solutions[key], path, bound, upper)
        if got is None:
            return None
        self._restarts += 1
        if got[1] is not None:
            solutions[key] = got[1][1]
        return got[1]

    def _exactly(self, start: PiecePoint, goal: PiecePoint, seq: tuple, upper: float):
        """A popped sequence below U that unfolds (:func:`garnav.plan.unfold.solve_unfolded`),
        solved exactly instead of splitting its windows, at most :data:`EXACT_BOUNDS` per query:
        (legs, crossings, cost) of its optimum when it beats ``upper``, else ([], [], c) with c at
        least ``upper`` (its optimum costs at least c); None when it does not unfold or the budget
        is spent."""
        planner = self.planner
        ng = planner.nav
        if self._exact >= EXACT_BOUNDS:
            return None
        crossings = [(s, 0.5 * sum(ng.intervals[ng.seams[s].name][i]), side) for s, i, side in seq]
        got = solve_unfolded(planner, start.xy, goal.xy, crossings, upper)
        if got is None:
            return None  # a seam that does not unfold, or an angle limit the optimum breaks: split as before
        self._exact += 1
        if got[0] is None or not math.isfinite(got[2]):
            return [], [], got[2]
        if any(planner.free[p].soft for p, _ in got[0]):
            return refine(planner, got[0], got[1])  # soft-zone edges (unfold.place_crossings)
        return got

    def _reach(self, upper: float, cost: float, crossings: int) -> float:
        """Largest portal-route cost still refined: U plus twice the largest gain of refinement in
        the query, ``CROSSING_ALLOWANCE`` × spacing per crossing and ``ALTERNATIVE_MARGIN``."""
        allowance = 2.0 * self._gain + CROSSING_ALLOWANCE * self.planner.nav.spacing_mm * crossings
        return upper + allowance + ALTERNATIVE_MARGIN * cost
