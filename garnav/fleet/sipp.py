"""Safe-interval path planning (SIPP) for one disc robot among the timed moves of others.

Phillips, M. and Likhachev, M. (2011), "SIPP: Safe Interval Path Planning for Dynamic
Environments", ICRA 2011. Each roadmap node's time line is cut into *safe intervals* (times when a
robot parked there touches nobody); a search state is (node, safe interval) and its value the
earliest arrival time in that interval. With waiting allowed at nodes this loses no solution:
SIPP is complete and optimal (earliest arrival) for the given roadmap and the given moves of the
others. Moves are continuous in time and any-angle along the roadmap's straight edges, as in
AA-SIPP (Yakovlev, K. and Andreychuk, A. (2017), "Any-Angle Pathfinding for Multiple Agents Based
on SIPP Algorithm", ICAPS 2017).

Edges are checked in continuous time: for a departure time τ the distance to each other move is
the closed-form closest approach of two constant-velocity discs
(:func:`garnav.fleet.motion.edge_min_distance`). The smallest distance as a function of τ is convex
(a partial minimum of a convex function over a convex set), so the departures that collide with one
move form one interval; its end is found by bisection and the search jumps past it.
"""

from __future__ import annotations

import heapq
import math
import time
from dataclasses import dataclass

import numpy as np

from garnav.fleet.motion import MoveSet, closest_approach, unsafe_point_intervals

__all__ = ["SippProblem", "SippResult", "SearchTimeout", "sipp"]

# Departures are moved this far past the end of a colliding window (s): 10 µs at 25 mm/s is 0.25 µm.
STEP_S = 1e-5
_BISECT = 30


class SearchTimeout(Exception):
    """The search ran past its time limit."""


@dataclass
class SippProblem:
    """One robot's query.

    Attributes
    ----------
    adj : list of list of (node, length mm)
    xy : (n, 2) float
        Node positions, mm (frame of each node's piece).
    node_piece : (n,) int
    moves : dict
        Piece index → :class:`MoveSet` of the others' moves in that piece's frame (carried copies
        included).
    radius_mm, speed_mm_s : float
    start, goal : int
        Nodes.
    depart_s : float
        Earliest departure from the start (the robot sits at its start before it).
    goal_not_before_s : float
        The goal node counts as unsafe before this time (dock order).
    h : (n,) float
        Admissible heuristic: shortest time to the goal ignoring the others, s.
    deadline : float
        ``time.perf_counter()`` value after which the search gives up.
    """

    adj: list
    xy: np.ndarray
    node_piece: np.ndarray
    moves: dict
    radius_mm: float
    speed_mm_s: float
    start: int
    goal: int
    depart_s: float
    goal_not_before_s: float
    h: np.ndarray
    deadline: float = math.inf


@dataclass
class SippResult:
    """Nodes visited and the departure / arrival time at each: ``arrive[0]`` is the start time
    (0), ``depart[k]`` the time the robot leaves ``nodes[k]`` (inf for the goal)."""

    nodes: list[int]
    arrive: list[float]
    depart: list[float]
    expanded: int


class _Local:
    """Moves of one piece with their bounding boxes (for quick prefilters) and as plain lists (for
    the scalar closest-approach loop)."""

    def __init__(self, ms: MoveSet):
        self.ms = ms
        span = np.where(np.isfinite(ms.t1 - ms.t0), ms.t1 - ms.t0, 0.0)
        end = ms.p0 + span[:, None] * ms.v
        self.lo = np.minimum(ms.p0, end) - ms.reach[:, None]
        self.hi = np.maximum(ms.p0, end) + ms.reach[:, None]
        self.rows = list(zip(ms.t0.tolist(), ms.t1.tolist(), ms.p0[:, 0].tolist(), ms.p0[:, 1].tolist(),
                             ms.v[:, 0].tolist(), ms.v[:, 1].tolist(), ms.reach.tolist(), strict=True))

    def near_index(self, lo: np.ndarray, hi: np.ndarray) -> list[int]:
        if not len(self.rows):
            return []
        m = np.all(self.hi >= lo[None, :], axis=1) & np.all(self.lo <= hi[None, :], axis=1)
        return np.flatnonzero(m).tolist()

    def near(self, lo: np.ndarray, hi: np.ndarray) -> MoveSet:
        m = np.all(self.hi >= lo[None, :], axis=1) & np.all(self.lo <= hi[None, :], axis=1)
        return self.ms.subset(m)


def _approach(px: float, py: float, wx: float, wy: float, tau: float, d: float, row: tuple) -> float:
    """Closest approach of a robot leaving (px, py) at ``tau`` with velocity (wx, wy) for ``d`` s
    and one move ``row`` (see :func:`garnav.fleet.motion.closest_approach`); inf without overlap."""
    t0, t1, qx, qy, vx, vy, _ = row
    lo = tau if tau > t0 else t0
    hi = tau + d if tau + d < t1 else t1
    if hi < lo:
        return math.inf
    ax, ay = px + (lo - tau) * wx, py + (lo - tau) * wy
    bx, by = qx + (lo - t0) * vx, qy + (lo - t0) * vy
    dx, dy = bx - ax, by - ay
    ux, uy = vx - wx, vy - wy
    vv = ux * ux + uy * uy
    s = 0.0
    if vv > 0:
        s = -(dx * ux + dy * uy) / vv
        s = 0.0 if s < 0 else (hi - lo if s > hi - lo else s)
    return math.hypot(dx + s * ux, dy + s * uy)


def sipp(pb: SippProblem) -> SippResult | None:
    """Earliest-arrival path of one robot; None when no path exists on the roadmap.

    Raises
    ------
    SearchTimeout
        When ``pb.deadline`` passes.
    """
    r = pb.radius_mm
    local = {k: _Local(v) for k, v in pb.moves.items()}
    empty = _Local(MoveSet.empty())
    intervals: dict[int, list[tuple[float, float]]] = {}

    def safe(n: int) -> list[tuple[float, float]]:
        got = intervals.get(n)
        if got is None:
            p = pb.xy[n]
            ms = local.get(int(pb.node_piece[n]), empty).near(p - r, p + r)
            unsafe = unsafe_point_intervals(ms, p, r)
            if n == pb.goal and pb.goal_not_before_s > 0:
                unsafe = sorted(unsafe + [(-math.inf, pb.goal_not_before_s)])
            got, t = [], 0.0
            for a, b in unsafe:
                if a > t:
                    got.append((t, a))
                t = max(t, b)
            if t < math.inf:
                got.append((t, math.inf))
            intervals[n] = got
        return got

    reach_of: dict[int, list[int]] = {}

    def candidates(u: int) -> list[int]:
        """Moves that can come near any edge leaving node u."""
        got = reach_of.get(u)
        if got is None:
            p = pb.xy[u]
            lmax = max((w for _, w in pb.adj[u]), default=0.0)
            got = local.get(int(pb.node_piece[u]), empty).near_index(p - r - lmax, p + r + lmax)
            reach_of[u] = got
        return got

    def earliest_departure(u: int, v: int, d: float, lo: float, hi: float) -> float | None:
        if d <= 0:
            return lo
        cand = candidates(u)
        if not cand:
            return lo
        rows = local[int(pb.node_piece[u])].rows
        near = [rows[i] for i in cand if rows[i][1] >= lo and rows[i][0] <= hi + d]
        if not near:
            return lo
        px, py = float(pb.xy[u, 0]), float(pb.xy[u, 1])
        wx, wy = (float(pb.xy[v, 0]) - px) / d, (float(pb.xy[v, 1]) - py) / d
        tau = lo
        while tau <= hi:
            bad = [row for row in near if _approach(px, py, wx, wy, tau, d, row) < r + row[6]]
            if not bad:
                return tau
            nxt = tau
            for row in bad:
                need = r + row[6]
                # past a finite move nothing overlaps; a move lasting for ever is a parked robot,
                # static from its t0 on
                b = row[1] + STEP_S if math.isfinite(row[1]) else (hi if math.isfinite(hi) else max(tau, row[0]) + 1.0)
                if _approach(px, py, wx, wy, b, d, row) < need:
                    return None
                a = tau
                for _ in range(_BISECT):
                    mid = 0.5 * (a + b)
                    if _approach(px, py, wx, wy, mid, d, row) < need:
                        a = mid
                    else:
                        b = mid
                nxt = max(nxt, b)
            tau = nxt + STEP_S
        return None

    start_iv = safe(pb.start)
    k0 = next((i for i, (a, b) in enumerate(start_iv) if a <= pb.depart_s < b), None)
    if k0 is None:
        return None
    # state: (node, interval index); g = arrival time; the robot is at the start from time 0
    best: dict[tuple[int, int], float] = {(pb.start, k0): 0.0}
    parent: dict[tuple[int, int], tuple[tuple[int, int], float] | None] = {(pb.start, k0): None}
    ready = {(pb.start, k0): pb.depart_s}  # earliest time a state may be left
    # ties on f go to the deeper state (larger g): the heuristic is exact where nobody is in the way
    heap = [(pb.h[pb.start] + pb.depart_s, -0.0, 0, pb.start, k0)]
    counter = 1
    expanded = 0
    closed: set[tuple[int, int]] = set()
    while heap:
        f, neg_g, _, u, ku = heapq.heappop(heap)
        g = -neg_g
        key = (u, ku)
        if key in closed:
            continue
        closed.add(key)
        expanded += 1
        if expanded % 256 == 0 and time.perf_counter() > pb.deadline:
            raise SearchTimeout()
        iv_u = safe(u)
        if u == pb.goal and math.isinf(iv_u[ku][1]):
            res = _trace(parent, key, best)
            res.expanded = expanded
            return res
        t_ready = ready.get(key, g)
        end_u = iv_u[ku][1]
        for v, length in pb.adj[u]:
            d = length / pb.speed_mm_s
            for kv, (a_v, b_v) in enumerate(safe(v)):
                if a_v > end_u + d:
                    break
                if b_v <= t_ready + d:
                    continue
                lo = max(t_ready, a_v - d)
                hi = min(end_u, b_v - d)
                if lo > hi:
                    continue
                tau = earliest_departure(u, v, d, lo, hi)
                if tau is None:
                    continue
                arr = tau + d
                vk = (v, kv)
                if vk in closed or arr >= best.get(vk, math.inf):
                    continue
                best[vk] = arr
                parent[vk] = (key, tau)
                heapq.heappush(heap, (arr + pb.h[v], -arr, counter, v, kv))
                counter += 1
    return None


def edge_min_distance_each(ms: MoveSet, p: np.ndarray, w: np.ndarray, depart: np.ndarray, d: float) -> np.ndarray:
    """As :func:`edge_min_distance` with one departure time per move ((k,) s)."""
    depart = np.asarray(depart, float)
    lo = np.maximum(depart, ms.t0)
    hi = np.minimum(depart + d, ms.t1)
    ok = hi >= lo
    out = np.full(len(ms), np.inf)
    if not ok.any():
        return out
    lo_k = lo[ok]
    pb_ = ms.p0[ok] + (lo_k - ms.t0[ok])[:, None] * ms.v[ok]
    pa = p[None, :] + (lo_k - depart[ok])[:, None] * w[None, :]
    out[ok] = closest_approach(pa, np.broadcast_to(w, pa.shape), pb_, ms.v[ok], hi[ok] - lo_k)
    return out


def _trace(parent, key, best) -> SippResult:
    nodes, arrive, depart = [], [], []
    cur = key
    nxt_depart = math.inf
    while cur is not None:
        nodes.append(cur[0])
        arrive.append(best[cur])
        depart.append(nxt_depart)
        link = parent[cur]
        if link is None:
            break
        cur, nxt_depart = link
    nodes.reverse()
    arrive.reverse()
    depart.reverse()
    return SippResult(nodes, arrive, depart, 0)
