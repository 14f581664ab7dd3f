"""The layered portal graph: a lower bound of a fixed seam sequence's navigation-graph cost.

Used by the sequence search (:mod:`garnav.plan.sequences`, docs/planning.md §4c) to skip the
constrained A* of a sequence that cannot reach the refinement threshold, and as that A*'s
heuristic.
"""

from __future__ import annotations

import math

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import dijkstra

from garnav.plan.points import PiecePoint

__all__ = ["LayerBound", "PortalPairs"]


class LayerBound:
    """Lower bound of the navigation-graph cost of a route that still has to cross
    ``sequence[j:]``, from any point: the *layered portal graph* (the portal graph of
    :mod:`garnav.plan.search` copied once per number of crossings done, its crossing edges only
    from layer j to j + 1 and only for the portals of step j) searched backwards from the goal
    (scipy ``csgraph``). An in-piece stretch between portals is at least the straight distance and
    a crossing costs exactly the crossing cost, so every such route is a path of the layered graph
    no dearer than it: the bound is admissible, and consistent as in :mod:`garnav.plan.search`.

    ``start_bound(start)`` bounds the whole sequence's graph cost, so a sequence whose bound is
    already above the refinement threshold is skipped without searching it (same decision as
    after the search, which can only cost more).
    """

    def __init__(self, pre: "PortalPairs", goal: PiecePoint, sequence: tuple):
        ng = pre.ng
        P = pre.p
        K = len(sequence)
        self.pre, self.K, self.goal = pre, K, goal
        gi = ng.piece_index(goal.piece)
        rows, cols, vals = [], [], []
        for j, step in enumerate(sequence):  # reversed edges: a -> b is stored as b -> a
            sel = pre.by_step.get(step, np.zeros(0, int))
            rows.append(pre.c_to[sel] + (j + 1) * P)
            cols.append(pre.c_from[sel] + j * P)
            vals.append(pre.c_w[sel])
        on = np.nonzero(pre.piece == gi)[0]
        rows.append(np.full(len(on), (K + 1) * P))
        cols.append(on + K * P)
        vals.append(np.hypot(*(pre.xy[on] - goal.xy).T))
        eps = pre.eps
        size = (K + 1) * P + 1
        # in-piece edges are symmetric: the same block on the diagonal for every layer
        inner = sp.block_diag([pre.inner] * (K + 1) + [sp.csr_matrix((1, 1))], format="csr")
        extra = sp.csr_matrix((np.concatenate(vals) + eps, (np.concatenate(rows), np.concatenate(cols))), shape=(size, size))
        mat = inner + extra  # no entry in both: crossing and goal edges join different layers or the goal
        d = dijkstra(mat, directed=True, indices=size - 1)[: size - 1]
        self.lb = np.maximum(d - size * eps, 0.0).reshape(K + 1, P)
        self.goal_piece = gi
        self._cache: dict[tuple[int, int], np.ndarray] = {}

    def __call__(self, n: int, j: int, pi: int, xy: np.ndarray) -> float:
        pre = self.pre
        ng = pre.ng
        best = math.inf
        if j == self.K and pi == self.goal_piece:
            best = float(np.hypot(*(xy - self.goal.xy)))
        if n < len(ng.xy):
            vals = self._cache.get((pi, j))
            if vals is None:
                on, dist = pre.table.block(pi)
                vals = (dist + self.lb[j][on][None, :]).min(axis=1) if len(on) else np.full(len(dist), math.inf)
                self._cache[(pi, j)] = vals
            return min(best, float(vals[n - pre.table.first[pi]]))
        on = pre.on_piece[pi]
        if len(on):
            best = min(best, float((np.hypot(*(pre.xy[on] - xy).T) + self.lb[j][on]).min()))
        return best

    def start_bound(self, start: PiecePoint) -> float:
        pi = self.pre.ng.piece_index(start.piece)
        return self(len(self.pre.ng.xy), 0, pi, start.xy)


class PortalPairs:
    """The pieces of the layered portal graph that do not depend on the sequence (built once)."""

    def __init__(self, planner):
        ng = planner.nav
        pg = planner.portal_graph
        self.ng = ng
        self.table = planner.node_portal_table
        portals = pg.portals
        self.p = len(portals)
        self.xy = ng.xy[portals]
        self.piece = ng.node_piece[portals]
        self.on_piece = {pi: np.nonzero(self.piece == pi)[0] for pi in range(len(ng.pieces))}
        ia, ib, d = [], [], []
        for on in self.on_piece.values():
            a, b = np.triu_indices(len(on), 1)
            dist = np.hypot(*(self.xy[on[a]] - self.xy[on[b]]).T)
            ia += [on[a], on[b]]
            ib += [on[b], on[a]]
            d += [dist, dist]
        self.eps = 1e-12  # csgraph drops explicit zeros: tiny positive stand-ins, removed after
        ra = np.concatenate(ia) if ia else np.zeros(0, int)
        rb = np.concatenate(ib) if ib else np.zeros(0, int)
        self.inner = sp.csr_matrix(((np.concatenate(d) if d else np.zeros(0)) + self.eps, (ra, rb)), shape=(self.p, self.p))
        iv = planner.portal_intervals()
        cf, ct, cw, steps = [], [], [], []
        for n, m, data in ng.graph.edges(data=True):
            if data["crossing"]:
                for u, v in ((n, m), (m, n)):
                    cf.append(int(np.searchsorted(portals, u)))
                    ct.append(int(np.searchsorted(portals, v)))
                    cw.append(float(data["weight"]))
                    steps.append((int(ng.portal_seam[u]), int(iv[u]), int(ng.portal_side[u])))
        self.c_from = np.array(cf, dtype=int)
        self.c_to = np.array(ct, dtype=int)
        self.c_w = np.array(cw, dtype=float)
        by_step: dict[tuple, list[int]] = {}
        for k, step in enumerate(steps):
            by_step.setdefault(step, []).append(k)
        self.by_step = {step: np.array(ks, dtype=int) for step, ks in by_step.items()}
