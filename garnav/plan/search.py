"""A* search on the navigation graph with a heuristic that stays admissible across pieces.

Heuristic
---------
Let G be the goal set (points, each on one piece). The *portal graph* has the portals as nodes,
joins every two portals on the same piece by their straight-line distance, joins partner portals by
the seam's crossing cost, and joins each portal to a virtual goal node by its straight distance to
the nearest goal on its piece. ``LB(q)`` is the Dijkstra distance from the virtual node to portal q
(scipy ``csgraph.dijkstra``). For a node n on piece P::

    h(n) = min( min_{g in G on P} |n − g| ,  min_{portals q on P} |n − q| + LB(q) )

(an empty min is +inf).

*Admissible.* Any route from n to a goal either stays on P and ends at some g on P, costing at
least |n − g| (a straight line is the shortest planar path and every edge cost is >= its length,
since soft-zone factors are >= 1 and crossing costs >= 0), or it first reaches some portal q on P,
costing at least |n − q| plus the true cost from q. The true cost from q is >= LB(q): the route
from q is a chain of in-piece stretches between portals (and finally a goal), each at least the
straight distance, and of crossings, each costing exactly the crossing cost — a path in the portal
graph. So h(n) <= true cost.

*Consistent* (h(n) <= w(n, m) + h(m) for every edge): for an in-piece edge, n and m lie on the same
piece P and w(n, m) >= |n − m|; every term |m − x| + c of h(m) gives |n − x| + c <= |n − m| +
|m − x| + c by the triangle inequality. For a crossing edge between partner portals n (on P) and m
(on P'), h(n) <= LB(n) (take q = n) <= w + LB(m) (Dijkstra distances obey the triangle inequality
along the portal-graph edge n–m), and LB(m) <= h(m) because the portal graph joins m to every
portal and goal on P' by straight distances. Hence A* with this h returns a least-cost path and
never re-opens a node (Hart, Nilsson & Raphael 1968).
"""

from __future__ import annotations

import heapq
import itertools
from typing import Callable, Iterable

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import dijkstra

from garnav.plan.navgraph import NavGraph

__all__ = ["astar", "portal_lower_bounds", "heuristic_values", "PortalGraph", "min_matrix", "NodePortalTable", "lazy_heuristic"]


class PortalGraph:
    """The portal graph of a navigation graph (see module docstring), built once."""

    def __init__(self, ng: NavGraph):
        self.ng = ng
        self.portals = np.nonzero(ng.portal_seam >= 0)[0]
        rows, cols, vals = [], [], []
        for _piece, nodes in ng.portal_nodes.items():
            if len(nodes) < 2:
                continue
            a, b = np.triu_indices(len(nodes), 1)
            d = np.linalg.norm(ng.xy[nodes[a]] - ng.xy[nodes[b]], axis=1)
            rows.append(np.searchsorted(self.portals, nodes[a]))
            cols.append(np.searchsorted(self.portals, nodes[b]))
            vals.append(d)
        g = ng.graph
        if np.any(g.crossing):
            rows.append(np.searchsorted(self.portals, g.i[g.crossing]))
            cols.append(np.searchsorted(self.portals, g.j[g.crossing]))
            vals.append(g.weight[g.crossing])
        p = len(self.portals)
        if rows:
            r = np.concatenate(rows)
            c = np.concatenate(cols)
            v = np.concatenate(vals)
        else:
            r = c = np.zeros(0, int)
            v = np.zeros(0)
        # zero weights are dropped by csgraph: store a tiny positive stand-in (still a lower bound
        # after subtracting, see portal_lower_bounds)
        self._eps = 1e-12
        self.matrix = min_matrix(r, c, v + self._eps, p + 1)


def min_matrix(r: np.ndarray, c: np.ndarray, v: np.ndarray, size: int) -> sp.csr_matrix:
    """Sparse (size, size) matrix keeping the SMALLEST value of duplicate (r, c) entries (scipy
    would add them), stored in the upper triangle."""
    lo, hi = np.minimum(r, c), np.maximum(r, c)
    order = np.lexsort((v, hi, lo))
    lo, hi, v = lo[order], hi[order], v[order]
    first = np.ones(len(lo), dtype=bool)
    first[1:] = (lo[1:] != lo[:-1]) | (hi[1:] != hi[:-1])
    return sp.csr_matrix((v[first], (lo[first], hi[first])), shape=(size, size))


def portal_lower_bounds(pg: PortalGraph, goals: list[tuple[int, np.ndarray]]) -> np.ndarray:
    """LB(q) for every portal (p,), given goals as (piece index, xy (2,)) pairs."""
    ng = pg.ng
    p = len(pg.portals)
    if p == 0:
        return np.zeros(0)
    link = np.full(p, np.inf)
    for pi, g in goals:
        on = ng.node_piece[pg.portals] == pi
        d = np.linalg.norm(ng.xy[pg.portals] - g, axis=1)
        link = np.where(on, np.minimum(link, d), link)
    fin = np.isfinite(link)
    extra = sp.csr_matrix((link[fin] + pg._eps, (np.nonzero(fin)[0], np.full(fin.sum(), p))), shape=(p + 1, p + 1))
    mat = pg.matrix + extra  # the goal column p is empty in pg.matrix: no duplicates
    dist = dijkstra(mat, directed=False, indices=p)[:p]
    # every path in the portal graph has at most p + 1 edges; remove the stand-ins conservatively
    return np.maximum(dist - (p + 1) * pg._eps, 0.0)


def heuristic_values(pg: PortalGraph, goals: list[tuple[int, np.ndarray]], nodes_xy: np.ndarray, nodes_piece: np.ndarray) -> np.ndarray:
    """h(n) for nodes given by positions (k, 2) and piece indices (k,); (k,) float, may be inf."""
    ng = pg.ng
    lb = portal_lower_bounds(pg, goals)
    h = np.full(len(nodes_xy), np.inf)
    for pi in np.unique(nodes_piece):
        sel = np.nonzero(nodes_piece == pi)[0]
        xy = nodes_xy[sel]
        best = np.full(len(sel), np.inf)
        for gp, g in goals:
            if gp == pi:
                best = np.minimum(best, np.linalg.norm(xy - g, axis=1))
        on = np.nonzero(ng.node_piece[pg.portals] == pi)[0]
        for s in range(0, len(on), 256):
            blk = on[s : s + 256]
            q = ng.xy[pg.portals[blk]]
            d = np.linalg.norm(xy[:, None, :] - q[None, :, :], axis=2) + lb[blk][None, :]
            best = np.minimum(best, d.min(axis=1))
        h[sel] = best
    return h


class NodePortalTable:
    """Straight distances (mm) from the nodes of a piece to the portals of that piece, one
    (k, q) block per piece, computed when a query first needs the piece and kept (the heuristic's
    table). Nodes are numbered piece by piece, so a piece's nodes are one contiguous id range."""

    def __init__(self, pg: PortalGraph):
        self.pg = pg
        ng = pg.ng
        self.first = np.searchsorted(ng.node_piece, np.arange(len(ng.pieces) + 1))
        self.portal_piece = ng.node_piece[pg.portals] if len(pg.portals) else np.zeros(0, int)
        self._blocks: dict[int, tuple[np.ndarray, np.ndarray]] = {}

    def block(self, pi: int) -> tuple[np.ndarray, np.ndarray]:
        """(portal indices into ``pg.portals`` on piece ``pi`` (q,), distances (k, q))."""
        got = self._blocks.get(pi)
        if got is None:
            ng = self.pg.ng
            on = np.nonzero(self.portal_piece == pi)[0]
            xy = ng.xy[self.first[pi] : self.first[pi + 1]]
            q = ng.xy[self.pg.portals[on]]
            got = self._blocks[pi] = (on, np.linalg.norm(xy[:, None, :] - q[None, :, :], axis=2))
        return got


def lazy_heuristic(table: NodePortalTable, goals: list[tuple[int, np.ndarray]]) -> Callable[[int, int, np.ndarray], float]:
    """h(n) of the module docstring, evaluated per piece on first use.

    Returns ``h(node, piece index, xy)``: for a graph node (id below N) the value comes from its
    piece's block of the table (computed once per query and piece); for another point (id N or
    more, e.g. the start) it is computed from ``xy``. Same values as :func:`heuristic_values`, but
    a query touches only the pieces its search reaches (a same-piece query no longer pays for the
    whole garment)."""
    pg = table.pg
    ng = pg.ng
    n0 = len(ng.xy)
    lb = portal_lower_bounds(pg, goals)
    cache: dict[int, np.ndarray] = {}

    def piece_values(pi: int) -> np.ndarray:
        got = cache.get(pi)
        if got is None:
            xy = ng.xy[table.first[pi] : table.first[pi + 1]]
            best = np.full(len(xy), np.inf)
            for gp, g in goals:
                if gp == pi:
                    best = np.minimum(best, np.linalg.norm(xy - g, axis=1))
            on, dist = table.block(pi)
            if len(on):
                best = np.minimum(best, (dist + lb[on][None, :]).min(axis=1))
            got = cache[pi] = best
        return got

    def h(n: int, pi: int, xy: np.ndarray) -> float:
        if n < n0:
            return float(piece_values(pi)[n - table.first[pi]])
        best = np.inf
        for gp, g in goals:
            if gp == pi:
                best = min(best, float(np.linalg.norm(xy[None, :] - g, axis=1)[0]))
        on = np.nonzero(table.portal_piece == pi)[0]
        if len(on):
            q = ng.xy[pg.portals[on]]
            best = min(best, float((np.linalg.norm(xy[None, None, :] - q[None, :, :], axis=2) + lb[on][None, :]).min()))
        return best

    return h


def astar(
    neighbors: Callable[[int], Iterable[tuple[int, float]]],
    sources: dict[int, float],
    goals: set[int],
    h: Callable[[int], float],
) -> tuple[list[int], float] | None:
    """Least-cost path from any source (with its start cost) to any goal node.

    Deterministic: ties are broken by push order, and ``neighbors`` must yield in a fixed order.
    Returns (node path, cost) or None when no goal is reachable.
    """
    counter = itertools.count()
    heap: list[tuple[float, int, float, int]] = []
    best: dict[int, float] = {}
    parent: dict[int, int | None] = {}
    for s, c in sorted(sources.items()):
        if c < best.get(s, np.inf):
            best[s] = c
            parent[s] = None
            hs = h(s)
            if np.isfinite(hs):
                heapq.heappush(heap, (c + hs, next(counter), c, s))
    closed: set[int] = set()
    while heap:
        _, _, g, n = heapq.heappop(heap)
        if n in closed or g > best.get(n, np.inf):
            continue
        if n in goals:
            path = [n]
            while (up := parent[path[-1]]) is not None:
                path.append(up)
            return path[::-1], g
        closed.add(n)
        for m, w in neighbors(n):
            if m in closed:
                continue
            gm = g + w
            if gm < best.get(m, np.inf):
                hm = h(m)
                if not np.isfinite(hm):
                    continue
                best[m] = gm
                parent[m] = n
                heapq.heappush(heap, (gm + hm, next(counter), gm, m))
    return None
