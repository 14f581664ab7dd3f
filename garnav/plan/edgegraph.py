"""The edges of a navigation graph as arrays, read through the part of the networkx graph
interface the planner uses.

:class:`EdgeGraph` holds every edge once, as ``(i, j)`` with ``i < j`` in sorted order, with its
length (mm), its cost (``weight``, mm) and whether it is a seam crossing. It answers like the
``networkx.Graph`` built by adding the same nodes ``0..N-1`` and then these edges in this order
(what the planner held before): :meth:`EdgeGraph.edges` yields them in sorted order, and each
node's neighbours come in ascending order (networkx keeps insertion order; sorted insertion gives
ascending neighbours), so a search visits them in the same order and returns the same path.

Keeping arrays instead of a dict per edge makes a graph read from the on-disk cache
(:mod:`garnav.plan.cache`) a few array copies, and keeps networkx out of ``garnav route``:
networkx is imported only by :meth:`EdgeGraph.to_networkx` (tests compare the planner's searches
with networkx's Dijkstra on it).
"""

from __future__ import annotations

from collections.abc import Iterator
from typing import TYPE_CHECKING, Any

import numpy as np

if TYPE_CHECKING:
    import networkx as nx

__all__ = ["EdgeGraph"]


def _frozen(a: np.ndarray, dtype) -> np.ndarray:
    a = np.ascontiguousarray(a, dtype=dtype)
    a.flags.writeable = False
    return a


class EdgeGraph:
    """An undirected graph on nodes ``0..n_nodes-1`` with edge arrays (module docstring).

    Parameters
    ----------
    n_nodes : int
    i, j : (E,) int arrays
        Edge ends, ``i < j``, sorted by (i, j), each pair once.
    length, weight : (E,) float arrays
        Edge length and cost, mm.
    crossing : (E,) bool array
        True for the edges that cross a seam.
    """

    def __init__(self, n_nodes: int, i, j, length, weight, crossing):
        self.n_nodes = int(n_nodes)
        self.i = _frozen(i, np.int64)
        self.j = _frozen(j, np.int64)
        self.length = _frozen(length, float)
        self.weight = _frozen(weight, float)
        self.crossing = _frozen(crossing, bool)
        e = len(self.i)
        if not all(len(a) == e for a in (self.j, self.length, self.weight, self.crossing)):
            raise ValueError("edge arrays of different lengths")
        if e and (self.i.min() < 0 or self.j.max() >= self.n_nodes or np.any(self.i >= self.j)):
            raise ValueError("edges must join two different nodes of the graph, smaller end first")
        if e > 1 and np.any((self.i[1:] < self.i[:-1]) | ((self.i[1:] == self.i[:-1]) & (self.j[1:] <= self.j[:-1]))):
            raise ValueError("edges must be sorted by (i, j), each pair once")
        self._adjacency: list[list[tuple[int, float]]] | None = None
        self._crossing_pairs: set[tuple[int, int]] | None = None

    @classmethod
    def from_edges(cls, n_nodes: int, edges: list[tuple[int, int, float, float, bool]]) -> EdgeGraph:
        """From ``(i, j, length, weight, crossing)`` tuples, already sorted, ``i < j``."""
        if not edges:
            return cls(n_nodes, np.zeros(0, np.int64), np.zeros(0, np.int64), np.zeros(0), np.zeros(0),
                       np.zeros(0, bool))
        i, j, ln, w, c = zip(*edges, strict=True)
        return cls(n_nodes, np.array(i, np.int64), np.array(j, np.int64), np.array(ln, float),
                   np.array(w, float), np.array(c, bool))

    # ------------------------------------------------------------------ networkx-like reading

    def number_of_nodes(self) -> int:
        return self.n_nodes

    def number_of_edges(self) -> int:
        return int(len(self.i))

    def edges(self, data: bool = False) -> Iterator[Any]:
        """``(i, j)`` pairs, or ``(i, j, {"length", "weight", "crossing"})`` with ``data``, in
        sorted order (as networkx's ``Graph.edges`` of the same graph)."""
        i, j = self.i.tolist(), self.j.tolist()
        if not data:
            return zip(i, j)
        return ((a, b, {"length": ln, "weight": w, "crossing": c})
                for a, b, ln, w, c in zip(i, j, self.length.tolist(), self.weight.tolist(),
                                          self.crossing.tolist()))

    def adjacency(self) -> list[list[tuple[int, float]]]:
        """Per node, its ``(neighbour, weight)`` pairs in ascending neighbour order (built once,
        kept by this graph)."""
        if self._adjacency is None:
            src = np.concatenate([self.i, self.j])
            dst = np.concatenate([self.j, self.i])
            order = np.lexsort((dst, src))
            pairs = list(zip(dst[order].tolist(), np.concatenate([self.weight, self.weight])[order].tolist()))
            ends = np.cumsum(np.bincount(src, minlength=self.n_nodes)).tolist()
            starts = [0, *ends[:-1]]
            self._adjacency = [pairs[a:b] for a, b in zip(starts, ends)]
        return self._adjacency

    def neighbors(self, node: int) -> Iterator[int]:
        """The neighbours of ``node``, ascending."""
        return (m for m, _ in self.adjacency()[node])

    def is_crossing(self, n: int, m: int) -> bool:
        """Whether the edge n–m exists and crosses a seam."""
        if self._crossing_pairs is None:
            a, b = self.i[self.crossing].tolist(), self.j[self.crossing].tolist()
            self._crossing_pairs = set(zip(a, b)) | set(zip(b, a))
        return (n, m) in self._crossing_pairs

    def __getitem__(self, node: int) -> dict[int, dict[str, Any]]:
        """``{neighbour: {"length", "weight", "crossing"}}`` of ``node`` (a new dict: reading only)."""
        mine = np.nonzero((self.i == node) | (self.j == node))[0]
        other = np.where(self.i[mine] == node, self.j[mine], self.i[mine])
        order = np.argsort(other, kind="stable")
        return {int(other[k]): {"length": float(self.length[e]), "weight": float(self.weight[e]),
                                "crossing": bool(self.crossing[e])}
                for k, e in zip(order.tolist(), mine[order].tolist())}

    def to_networkx(self) -> nx.Graph:
        """The same graph as a ``networkx.Graph`` (nodes, then edges in sorted order)."""
        import networkx as nx

        g = nx.Graph()
        g.add_nodes_from(range(self.n_nodes))
        g.add_edges_from((a, b, d) for a, b, d in self.edges(data=True))
        return g

    def copy(self) -> nx.Graph:
        """An independent ``networkx.Graph`` of this graph (:meth:`to_networkx`)."""
        return self.to_networkx()
