"""Lower bounds of seam sequences for one query: the window graph with windows split on demand.

The window graph of :mod:`garnav.plan.sequences` (nodes ``pre(i)``, ``post(i)`` per window side,
in-piece costs ``M[i, j]`` from the piece's bound graph) is built once per planner on 20 mm
windows. Its first-order bound loses up to the window's width per crossing, so a seam sequence
whose routes all cost more than the best route U may still have a bound below U. This module
keeps, per query, a copy of that graph in which a window can be replaced by its four quarters
(:meth:`SequenceBound.split`): the children cover the parent's interval, so every route still
crosses some window of the graph and the bound stays admissible; a child's middle lies within
``r_parent − r_child`` of the parent's, so its shrunk links are at least the parent's (the
argument of docs/planning.md §4b) and the sequences through it get tighter bounds. Only the rows
``M[new, ·]`` of the new window sides are computed (a path of the bound graph never passes through
another window point, so the other rows do not change; ``M`` is symmetric, every link and the
approach edge costing the same both ways): one scipy ``csgraph`` Dijkstra per piece from the new
sides, over the piece's corners, the new sides' points and the active sides' points.

Splitting the windows of the bound paths that are still below U is the branch step of a branch
and bound (Land & Doig 1960) whose regions are seam windows, as the intervals of the continuous
Dijkstra of Mitchell, Mount & Papadimitriou (1987), with a Lipschitz bound in place of their exact
interval propagation. :class:`LabelSearch` pops the complete seam sequences of such a graph in
increasing order of bound (multi-label search, Martins 1984) with the exact distance to the goals
as heuristic (:func:`to_goals`).
"""

from __future__ import annotations

import heapq
import itertools
import math
from dataclasses import dataclass, field

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import dijkstra

from garnav.plan.points import PiecePoint
from garnav.plan.side_rows import SideRows
from garnav.plan.windows import MovingPoints, corner_links, pair_links

__all__ = ["SequenceBound", "Side", "LabelSearch", "to_goals", "min_directed", "SPLIT", "MIN_WINDOW_MM", "MAX_LABELS"]

#: A split window is replaced by this many equal children (as in :mod:`garnav.plan.exact`).
SPLIT = 4
#: Windows narrower than this (mm of arc on either side) are not split again.
MIN_WINDOW_MM = 0.01
#: Most labels the sequence search expands per round (bounded work; see :class:`LabelSearch`).
MAX_LABELS = 4000

_WIN = 0  # point kind of garnav.plan.exact (WIN)
_EPS = 1e-12  # csgraph drops explicit zeros: a tiny positive stand-in per edge, removed after


def min_directed(r: np.ndarray, c: np.ndarray, v: np.ndarray, size: int) -> sp.csr_matrix:
    """Directed (size, size) sparse matrix keeping the smallest value of duplicate entries."""
    if not len(r):
        return sp.csr_matrix((size, size))
    plain = sp.csr_matrix((v, (r, c)), shape=(size, size))  # sums duplicates: right when there are none
    if plain.nnz == len(v):
        return plain
    order = np.lexsort((v, c, r))
    r, c, v = r[order], c[order], v[order]
    first = np.ones(len(r), dtype=bool)
    first[1:] = (r[1:] != r[:-1]) | (c[1:] != c[:-1])
    return sp.csr_matrix((v[first], (r[first], c[first])), shape=(size, size))


def moving_of(pts) -> MovingPoints:
    """:class:`MovingPoints` of a list of seam-search points (``xy``, ``tan``, ``alpha``, ``r``, ``turn``)."""
    return MovingPoints(
        np.array([p.xy for p in pts], dtype=float).reshape(-1, 2),
        np.array([p.tan for p in pts], dtype=float).reshape(-1, 2),
        np.array([p.alpha for p in pts], dtype=float),
        np.array([p.r for p in pts], dtype=float),
        np.array([p.turn for p in pts], dtype=float),
    )


@dataclass
class Side:
    """One window side: its point and approach ends (seam-search points), where it lies, and the
    corner links of each of those points (local corner index (n,), lower-bound cost (n,))."""

    piece: int
    ends: list
    seam: int
    side: int
    interval: int
    cross: float
    links: list = field(default_factory=list)


class _Windows:
    """Holder of the children's points and windows (what ``SeamSearch.add_window`` appends to)."""

    def __init__(self) -> None:
        self.points: list = []
        self.windows: list = []


class SequenceBound:
    """The window graph of one query, with windows split on demand (module docstring).

    Attributes read by :class:`LabelSearch`: ``partner``, ``seam``, ``side``, ``interval``,
    ``cross``, ``piece`` (each (w,) over every side ever made, split parents included), ``inner``
    (piece → (active side indices (n,), (n, n) costs post(i) → pre(j), mm)), ``to_pre`` (w,) and
    ``goal_post`` (one (w,) per goal); inactive sides have infinite ends and no inner entries.
    ``added`` counts the windows made by splitting.
    """

    def __init__(self, wg, start: PiecePoint, goals: list[PiecePoint], to_pre: np.ndarray, goal_post: list[np.ndarray],
                 rows: SideRows | None = None):
        self.ss = wg.ss
        self.rows = rows
        self.start, self.goals = start, list(goals)
        # the planner's window sides, shared (a split appends new sides, it never changes these)
        self._sides = list(wg.base_sides())
        self._partner = wg.partner.tolist()
        self._cols = {"seam": wg.seam, "side": wg.side, "interval": wg.interval, "cross": wg.cross, "piece": wg.piece}
        self.active = np.ones(len(self._sides), dtype=bool)
        # the planner's matrices, shared: a split replaces a piece's entry, never writes into one
        self._mats = dict(wg.inner)
        self._to_pre = to_pre.copy()
        self._goal_post = [a.copy() for a in goal_post]
        self._holder = _Windows()
        self._spans: dict[int, tuple[float, float]] = {}  # side -> (t0, t1) of a child's window
        self.added = 0
        self._refresh()

    # ------------------------------------------------------------------ views

    def _refresh(self) -> None:
        s = self._sides
        self.partner = np.array(self._partner, dtype=int)
        have = len(self._cols["seam"])
        if have < len(s):  # columns of the sides added since
            more = s[have:]
            self._cols = {name: np.concatenate([col, np.array([getattr(x, name) for x in more], dtype=col.dtype)])
                          for name, col in self._cols.items()}
        self.seam, self.side, self.interval = self._cols["seam"], self._cols["side"], self._cols["interval"]
        self.cross, self.piece = self._cols["cross"], self._cols["piece"]
        self.win = np.arange(len(s))
        off = ~self.active
        self.to_pre = np.where(off, np.inf, self._to_pre)
        self.goal_post = [np.where(off, np.inf, a) for a in self._goal_post]
        self.inner = {}
        for pi, (ids, d) in self._mats.items():
            on = np.nonzero(self.active[ids])[0]
            if len(on) == len(ids):
                self.inner[pi] = (ids, d)
            elif len(on):
                self.inner[pi] = (ids[on], d[np.ix_(on, on)])

    def width_mm(self, i: int) -> float:
        """Arc length (mm) of side ``i``'s window on that side."""
        return 2.0 * float(self._sides[i].ends[0].r)

    def floor(self, h_pre: np.ndarray) -> float:
        """The least bound of any route over seams: min over sides of start → pre(i) + h(pre(i))."""
        return float(np.min(self.to_pre + h_pre)) if len(h_pre) else math.inf

    def splittable(self, path: list[int]) -> list[int]:
        """The sides of ``path`` whose windows can still be split (active, wider than MIN_WINDOW_MM)."""
        return [i for i in path if self.active[i] and min(self.width_mm(i), self.width_mm(self._partner[i])) > MIN_WINDOW_MM]

    # ------------------------------------------------------------------ splitting

    def split(self, sides: list[int]) -> int:
        """Replace the windows of ``sides`` by their SPLIT children; returns the windows added."""
        ss = self.ss
        done: set[int] = set()
        fresh: dict[int, list[int]] = {}
        made = 0
        for i in sides:
            j = self._partner[i]
            if min(i, j) in done or not self.active[i]:
                continue
            done.add(min(i, j))
            a = i if self._sides[i].side == 0 else j  # the run-a side carries the window's fractions
            t0, t1 = self._span(a)
            for lo, hi in zip(np.linspace(t0, t1, SPLIT + 1)[:-1], np.linspace(t0, t1, SPLIT + 1)[1:], strict=True):
                wid = ss.add_window(self._holder, self._sides[a].seam, float(lo), float(hi))
                win = self._holder.windows[wid]
                ids = []
                for side, pid in enumerate(win.points):
                    p = self._holder.points[pid]
                    ends = [p] + [self._holder.points[e] for e in win.approach[side]]
                    parent = self._sides[a if side == 0 else self._partner[a]]
                    ids.append(len(self._sides))
                    self._sides.append(Side(p.piece, ends, parent.seam, side, parent.interval, parent.cross))
                    self._partner.append(-1)
                    fresh.setdefault(p.piece, []).append(ids[-1])
                self._partner[ids[0]], self._partner[ids[1]] = ids[1], ids[0]
                self._spans[ids[0]] = self._spans[ids[1]] = (float(lo), float(hi))
                made += 1
            self.active[i] = self.active[j] = False
        grow = len(self._sides) - len(self.active)
        self.active = np.concatenate([self.active, np.ones(grow, dtype=bool)])
        self._to_pre = np.concatenate([self._to_pre, np.full(grow, np.inf)])
        self._goal_post = [np.concatenate([a, np.full(grow, np.inf)]) for a in self._goal_post]
        self._refresh()
        for pi in sorted(fresh):
            self._rows(pi, fresh[pi])
        self.added += made
        self._refresh()
        return made

    def span(self, i: int) -> tuple[float, float]:
        """Seam fractions (t0, t1) of side ``i``'s window (both sides of a window share them)."""
        return self._span(i if self._sides[i].side == 0 else self._partner[i])

    def _span(self, a: int) -> tuple[float, float]:
        got = self._spans.get(a)
        if got is None:
            w = self.ss.base.windows[self._sides[a].ends[0].window]
            got = self._spans[a] = (float(w.t0), float(w.t1))
        return got

    def _name(self, i: int) -> tuple:
        """Side ``i`` named as :class:`~garnav.plan.side_rows.SideRows` names it: (seam, side, t0, t1)."""
        a = i if self._sides[i].side == 0 else self._partner[i]
        return (self._sides[i].seam, self._sides[i].side, *self._span(a))

    def _rows(self, pi: int, new: list[int]) -> None:
        """Costs M[i, j] between the new sides ``new`` of piece ``pi`` and every active side of it
        (and the query ends on it): one Dijkstra from the new sides' out-copies, for the pairs the
        planner's :class:`~garnav.plan.side_rows.SideRows` does not hold yet."""
        ss = self.ss
        ng, planner = ss.nav, ss.planner
        name = ng.pieces[pi]
        corners, _ = ng.corners[name]
        pts, of, _ = self._points(new)  # corner links of every new point in one batch
        q, n, w = corner_links(planner.free[name], corners, moving_of(pts))
        for i in new:
            self._sides[i].links = []
        for a in range(len(pts)):
            self._sides[of[a]].links.append((n[q == a], w[q == a]))
        ids, old = self._mats.get(pi, (np.zeros(0, dtype=int), np.zeros((0, 0))))
        targets = np.nonzero(self.active & (self.piece == pi))[0].tolist()
        q_ends = [(m, pp) for m, pp in enumerate([self.start, *self.goals]) if pp.piece == name]
        # the pairs (new side, target side) already known to the planner; a side to itself is inf
        if self.rows is not None:
            id_new = self.rows.ids([self._name(i) for i in new])
            id_tgt = self.rows.ids([self._name(j) for j in targets])
            tgt = self.rows.get(id_new, id_tgt)
        else:
            tgt = np.full((len(new), len(targets)), np.nan)
        tgt[np.array(new)[:, None] == np.array(targets, dtype=int)[None, :]] = np.inf
        miss = np.isnan(tgt)
        src_sides = [a for a in range(len(new)) if q_ends or miss[a].any()]
        dst_sides = [b for b in range(len(targets)) if miss[src_sides, b].any()] if src_sides else []
        if src_sides:
            d, heads_cols, end_cols = self._dijkstra(pi, [new[a] for a in src_sides], [targets[b] for b in dst_sides],
                                                     miss[np.ix_(src_sides, dst_sides)], q_ends)
            got = d[:, heads_cols]  # (src sides, dst sides)
            sub = tgt[np.ix_(src_sides, dst_sides)]
            fill = np.isnan(sub)
            sub[fill] = got[fill]
            tgt[np.ix_(src_sides, dst_sides)] = sub
            if self.rows is not None and fill.any():
                ra, rb = np.nonzero(fill)
                self.rows.put(id_new[np.array(src_sides)[ra]], id_tgt[np.array(dst_sides)[rb]], sub[ra, rb])
            src_new = [new[a] for a in src_sides]
            for m, (g, _) in enumerate(q_ends):
                col = d[:, end_cols[m]]
                if g == 0:
                    self._to_pre[src_new] = col  # start → pre(i) = post(i) → start, reversed
                else:
                    self._goal_post[g - 1][src_new] = col
        # grow the piece's matrix: old sides keep their rows, the new ones get theirs (symmetric)
        pos = {t: x for x, t in enumerate(targets)}
        all_ids = np.concatenate([ids, np.array(new, dtype=int)])
        n_old = len(ids)
        big = np.full((len(all_ids), len(all_ids)), np.inf)
        big[:n_old, :n_old] = old
        tcols = np.array([pos.get(int(t), -1) for t in all_ids])
        have = tcols >= 0
        rows = np.full((len(new), len(all_ids)), np.inf)
        rows[:, have] = tgt[:, tcols[have]]
        rows[:, n_old:] = np.minimum(rows[:, n_old:], rows[:, n_old:].T)
        big[n_old:, :] = rows
        big[:, n_old:] = rows.T
        np.fill_diagonal(big, np.inf)  # crossing back at the same window side gains nothing
        self._mats[pi] = (all_ids, big)

    def _dijkstra(self, pi: int, src: list[int], dst: list[int], need: np.ndarray, q_ends: list):
        """Distances from the window points of sides ``src`` over piece ``pi``'s corners to the
        window points of sides ``dst`` and to the query ends ``q_ends`` ([(index, PiecePoint)]).
        Direct links are tested only between sides ``src[a]``, ``dst[b]`` with ``need[a, b]``.
        Returns (d (len(src), size), the columns of dst's window points, the columns of the ends)."""
        ss = self.ss
        ng, planner = ss.nav, ss.planner
        name = ng.pieces[pi]
        fs = planner.free[name]
        corners, off = ng.corners[name]
        k = len(corners)
        ell = ng.approach_mm
        # nodes: corners, out-copies of the sources' points, in-copies of the targets' points, query ends
        src_pts, src_of, src_end = self._points(src)
        dst_pts, dst_of, dst_end = self._points(dst)
        ns, nt = len(src_pts), len(dst_pts)
        size = k + ns + nt + len(q_ends)
        cm = planner.corner_matrix(name).tocoo()
        r, c, v = [cm.row, cm.col], [cm.col, cm.row], [cm.data, cm.data]
        for a in range(ns):  # out(point) -> corner, out(window point) -> out(its approach end)
            n, w = self._sides[src_of[a]].links[src_end[a]]
            r.append(np.full(len(n), k + a))
            c.append(n)
            v.append(w)
            if src_end[a] > 0:
                r.append(np.array([k + a - src_end[a]]))
                c.append(np.array([k + a]))
                v.append(np.array([ell]))
        for b in range(nt):  # corner -> in(point), in(approach end) -> in(its window point)
            n, w = self._sides[dst_of[b]].links[dst_end[b]]
            r.append(n)
            c.append(np.full(len(n), k + ns + b))
            v.append(w)
            if dst_end[b] > 0:
                r.append(np.array([k + ns + b]))
                c.append(np.array([k + ns + b - dst_end[b]]))
                v.append(np.array([ell]))
        src_slot = {side: x for x, side in enumerate(src)}
        dst_slot = {side: x for x, side in enumerate(dst)}
        sa = np.array([src_slot[i] for i in src_of], dtype=int)
        db = np.array([dst_slot[j] for j in dst_of], dtype=int)
        ga = np.repeat(np.arange(ns), nt)
        gb = np.tile(np.arange(nt), ns)
        so, do = np.array(src_of, dtype=int)[ga], np.array(dst_of, dtype=int)[gb]
        se, de = np.array(src_end)[ga], np.array(dst_end)[gb]
        run_s = self.seam[so] * 2 + self.side[so] if len(so) else so
        run_d = self.seam[do] * 2 + self.side[do] if len(do) else do
        # as garnav.plan.exact: no link between a side's own points, nor between two window points of one run
        keep = (so != do) & ~((se == 0) & (de == 0) & (run_s == run_d))
        if len(ga):
            keep &= need[sa[ga], db[gb]]
        ia, ib, w = pair_links(fs, moving_of(src_pts), moving_of(dst_pts), (ga[keep], gb[keep]))
        r.append(k + ia)
        c.append(k + ns + ib)
        v.append(w)
        for m, (_, pp) in enumerate(q_ends):  # query ends: exact corner links, bound links to points
            node = k + ns + nt + m
            got = planner.links(pp, corners_only=True)
            r.append(np.array([g - off for g, _ in got], dtype=int))
            c.append(np.full(len(got), node))
            v.append(np.array([x for _, x in got], dtype=float))
            one = MovingPoints(pp.xy[None], np.zeros((1, 2)), np.zeros(1), np.zeros(1), np.zeros(1))
            _, jb, w = pair_links(fs, one, moving_of(src_pts))
            r.append(k + jb)
            c.append(np.full(len(jb), node))
            v.append(w)
        mat = min_directed(np.concatenate(r).astype(int), np.concatenate(c).astype(int), np.concatenate(v) + _EPS, size)
        heads = [k + a for a in range(ns) if src_end[a] == 0]
        d = dijkstra(mat, directed=True, indices=heads)
        d = np.maximum(d - size * _EPS, 0.0)
        cols = [k + ns + b for b in range(nt) if dst_end[b] == 0]
        return d, cols, [k + ns + nt + m for m in range(len(q_ends))]

    def _points(self, sides: list[int]) -> tuple[list, list[int], list[int]]:
        pts, of, end = [], [], []
        for i in sides:
            for e, p in enumerate(self._sides[i].ends):
                pts.append(p)
                of.append(i)
                end.append(e)
        return pts, of, end


def to_goals(g, eps: float = _EPS) -> tuple[np.ndarray, np.ndarray]:
    """Exact least window-graph cost from pre(i) and post(i) to any goal, (w,) and (w,): one
    reverse Dijkstra (nodes pre(i) = i, post(i) = w + i, the goal 2w)."""
    w = len(g.partner)
    r, c, v = [g.partner + w], [np.arange(w)], [g.cross]  # reversed pre(i) -> post(partner i)
    for sel, d in g.inner.values():
        a, b = np.nonzero(np.isfinite(d))
        r.append(sel[b])  # reversed post(sel a) -> pre(sel b)
        c.append(sel[a] + w)
        v.append(d[a, b])
    tg = np.min(np.vstack(g.goal_post), axis=0) if g.goal_post else np.full(w, np.inf)
    fin = np.nonzero(np.isfinite(tg))[0]
    r.append(np.full(len(fin), 2 * w))
    c.append(fin + w)
    v.append(tg[fin])
    mat = min_directed(np.concatenate(r), np.concatenate(c), np.concatenate(v) + eps, 2 * w + 1)
    d = dijkstra(mat, directed=True, indices=2 * w)
    d = np.maximum(d - (2 * w + 1) * eps, 0.0)
    return d[:w], d[w : 2 * w]


class LabelSearch:
    """Iterator over (bound, goal index, window sides crossed) of complete seam sequences in
    increasing order of bound; labels are (node, sequence) pairs, pruned at the current U.

    ``g`` is a window graph (:class:`SequenceBound` or the planner's ``WindowGraph`` with the
    query's ``to_pre`` and ``goal_post``). After ``max_labels`` expansions it stops (``exhausted``):
    with crossings of cost 0 the number of sequences below U (going back and forth over a seam)
    has no limit. A crossing in ``no_return`` (seam, interval, side) is not taken straight after
    the same seam and interval was crossed the other way (such sequences are dominated:
    :func:`garnav.plan.unfold.dominated_returns`). With ``once``, no sequence crosses one
    (seam, interval, side) twice (``dropped`` says whether that left a label out: the search is
    then not exhaustive). ``loops`` (a :class:`garnav.plan.unfold.LoopRule`) leaves out labels
    that come back into a piece round a dominated loop.
    """

    def __init__(self, g, to_pre, goal_post, h_pre, h_post, upper, tried, rel_tol, max_labels: int = MAX_LABELS,
                 no_return: frozenset = frozenset(), once: bool = False, loops=None):
        self.wg = g
        self.no_return = no_return
        self.loops = loops
        self.once = bool(once)
        self.dropped = False  # a label was not extended because of ``once``
        self.pops = 0
        self.max_labels = int(max_labels)
        self.exhausted = False
        self.goal_post = goal_post
        self.h_pre, self.h_post = h_pre, h_post
        self.upper = upper
        self.rel_tol = rel_tol
        self.tried = set(tried)
        self.counter = itertools.count()
        self.heap: list = []
        self.best: dict = {}
        self.parent: dict = {}
        self.inner_of = {}
        for pi, (sel, d) in g.inner.items():
            pos = {int(i): k for k, i in enumerate(sel)}
            self.inner_of[pi] = (sel, d, pos)
        for i in np.nonzero(np.isfinite(to_pre))[0].tolist():
            self._push(("pre", i, ()), float(to_pre[i]), None)

    def _limit(self) -> float:
        return self.upper - (self.rel_tol * self.upper if math.isfinite(self.upper) else 0.0)

    def _h(self, state) -> float:
        kind, i, _ = state
        if kind == "pre":
            return float(self.h_pre[i])
        if kind == "post":
            return float(self.h_post[i])
        return 0.0

    def _push(self, state, g: float, parent) -> None:
        if g >= self.best.get(state, math.inf):
            return
        f = g + self._h(state)
        if not math.isfinite(f) or f >= self._limit():
            return
        self.best[state] = g
        self.parent[state] = parent
        heapq.heappush(self.heap, (f, next(self.counter), g, state))

    def __iter__(self):
        return self

    def __next__(self):
        wg = self.wg
        while self.heap:
            f, _, g, state = heapq.heappop(self.heap)
            if g > self.best.get(state, math.inf):
                continue
            self.pops += 1
            if self.pops > self.max_labels:
                self.exhausted = True
                self.heap.clear()
                raise StopIteration
            if f >= self._limit():
                self.heap.clear()
                return (f, -1, [])
            kind, i, seq = state
            if kind == "goal":
                key = (i, seq)
                if key in self.tried:
                    continue
                self.tried.add(key)
                return (g, i, self._path(state))
            if kind == "pre":
                j = int(wg.partner[i])
                step = (int(wg.seam[i]), int(wg.interval[i]), int(wg.side[i]))
                if seq and step in self.no_return and seq[-1] == (step[0], step[1], 1 - step[2]):
                    continue  # straight back over the same interval: dominated (unfold.dominated_returns)
                if self.once and step in seq:
                    self.dropped = True
                    continue
                if self.loops is not None and seq and self.loops(wg, i, lambda: self._path(state)):  # noqa: B023
                    continue  # back into a piece round a loop that closes up flat (unfold.LoopRule)
                self._push(("post", j, seq + (step,)), g + float(wg.cross[i]), state)
                continue
            for k, arr in enumerate(self.goal_post):
                if math.isfinite(arr[i]):
                    self._push(("goal", k, seq), g + float(arr[i]), state)
            got = self.inner_of.get(int(wg.piece[i]))
            if got is None:
                continue
            sel, d, pos = got
            row = d[pos[i]]
            h = self.h_pre[sel]
            ok = np.nonzero(g + row + h < self._limit())[0]
            for k in ok.tolist():
                self._push(("pre", int(sel[k]), seq), g + float(row[k]), state)
        return (math.inf, -1, [])

    def _path(self, state) -> list[int]:
        """Window sides (pre states) crossed on the label's path, in order."""
        out = []
        s = state
        while s is not None:
            if s[0] == "pre":
                out.append(s[1])
            s = self.parent[s]
        return out[::-1]
