"""The in-piece bounds between split window sides, kept across the queries of one planner.

:class:`garnav.plan.sequence_bound.SequenceBound` splits seam windows per query and computes, for
every new window side, the bound cost ``M[i, j]`` to every other active side of its piece (one
Dijkstra over the piece's corners, plus the direct links tested for visibility — the bulk of a
certified query's time). A child window is the same for every query (a quarter of its parent's
fraction interval, from the planner's fixed 20 mm windows) and ``M[i, j]`` depends on the two
sides and the piece alone: a path of that Dijkstra never passes through a third window point
(window points are its sources and sinks). So the values computed for one query hold for every
later query on the same planner, and :class:`SideRows` keeps them.

Sides are named by ``(seam index, side, t0, t1)`` — the seam, run (0 = a) and the window's
fraction interval — and numbered on first sight; a pair ``{i, j}`` is stored once under the
64-bit key ``min(i, j) << 32 | max(i, j)``. The store is a sorted key array and a small sorted
array of recent additions, merged when the recent one reaches a twentieth of the main one (so
each key is copied O(log n) times over a study), searched with ``numpy.searchsorted``. At most
:data:`MAX_PAIRS` pairs are kept (16 bytes each: ~100 MB); beyond that new values are still
computed and used but no longer kept.

Values agree with a recomputation to about ``size × 1e-12`` mm (the per-edge stand-in of the
Dijkstra, subtracted afterwards, depends on the size of the graph it ran on), far below the
certificate's tolerance.
"""

from __future__ import annotations

import numpy as np

__all__ = ["SideRows", "MAX_PAIRS"]

#: Most side pairs kept per planner (16 bytes each).
MAX_PAIRS = 6_000_000


def _contains(sorted_keys: np.ndarray, keys: np.ndarray) -> np.ndarray:
    """Whether each of ``keys`` is in the sorted array ``sorted_keys``; bool (len(keys),)."""
    if not len(sorted_keys):
        return np.zeros(len(keys), dtype=bool)
    pos = np.minimum(np.searchsorted(sorted_keys, keys), len(sorted_keys) - 1)
    return sorted_keys[pos] == keys


class SideRows:
    """Bound costs between window sides of one planner, shared by its queries (module docstring)."""

    def __init__(self, max_pairs: int = MAX_PAIRS) -> None:
        self.max_pairs = int(max_pairs)
        self._ids: dict[tuple, int] = {}
        self._keys = np.zeros(0, dtype=np.int64)
        self._vals = np.zeros(0, dtype=float)
        self._new_keys = np.zeros(0, dtype=np.int64)
        self._new_vals = np.zeros(0, dtype=float)
        self.hits = 0
        self.misses = 0

    def __len__(self) -> int:
        return len(self._keys) + len(self._new_keys)

    def ids(self, names: list[tuple]) -> np.ndarray:
        """Numbers (n,) of sides named ``(seam, side, t0, t1)``, assigned on first sight."""
        out = np.empty(len(names), dtype=np.int64)
        for k, name in enumerate(names):
            got = self._ids.get(name)
            if got is None:
                got = self._ids[name] = len(self._ids)
            out[k] = got
        return out

    @staticmethod
    def _pair_keys(a: np.ndarray, b: np.ndarray) -> np.ndarray:
        lo, hi = np.minimum(a, b), np.maximum(a, b)
        return (lo << 32) | hi

    def get(self, a: np.ndarray, b: np.ndarray) -> np.ndarray:
        """Stored values (len(a), len(b)) for every pair of side numbers; nan where none."""
        keys = self._pair_keys(a[:, None], b[None, :]).ravel()
        out = np.full(len(keys), np.nan)
        for store_k, store_v in ((self._keys, self._vals), (self._new_keys, self._new_vals)):
            if not len(store_k):
                continue
            pos = np.minimum(np.searchsorted(store_k, keys), len(store_k) - 1)
            hit = store_k[pos] == keys
            out[hit] = store_v[pos[hit]]
        found = int(np.count_nonzero(~np.isnan(out)))
        self.hits += found
        self.misses += len(out) - found
        return out.reshape(len(a), len(b))

    def put(self, a: np.ndarray, b: np.ndarray, values: np.ndarray) -> None:
        """Keep ``values[k]`` for the pair (a[k], b[k]) (flat arrays; pairs already kept are left)."""
        room = self.max_pairs - len(self)
        if room <= 0 or not len(a):
            return
        keys = self._pair_keys(np.asarray(a, dtype=np.int64), np.asarray(b, dtype=np.int64))
        keys, first = np.unique(keys, return_index=True)
        vals = np.asarray(values, dtype=float)[first]
        known = _contains(self._keys, keys) | _contains(self._new_keys, keys)
        keys, vals = keys[~known][:room], vals[~known][:room]
        if not len(keys):
            return
        merged = np.concatenate([self._new_keys, keys])
        order = np.argsort(merged, kind="stable")
        self._new_keys = merged[order]
        self._new_vals = np.concatenate([self._new_vals, vals])[order]
        if len(self._new_keys) * 20 >= len(self._keys):
            merged = np.concatenate([self._keys, self._new_keys])
            order = np.argsort(merged, kind="stable")
            self._keys = merged[order]
            self._vals = np.concatenate([self._vals, self._new_vals])[order]
            self._new_keys = np.zeros(0, dtype=np.int64)
            self._new_vals = np.zeros(0, dtype=float)
