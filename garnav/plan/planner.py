"""The planner: built once per (garment, robot), answers many route queries.

Usage (needs a garment; see README)::

    import garnav.plan as plan
    planner = plan.Planner(garment)
    route = planner.route("wrist_left", "sternum_left")
    route = plan.plan_route(garment, "front:100,200", "dock")

A query runs A* (:mod:`garnav.plan.search`) on the navigation graph plus temporary links from the
start and goal points, then refines the crossings (:mod:`garnav.plan.refine`) and assembles a
:class:`~garnav.plan.route.Route`. With ``exact_seams=True`` the seam sequence and crossings come
from the certified branch-and-bound search of :mod:`garnav.plan.exact` instead.
"""

from __future__ import annotations

import math
from pathlib import Path
from typing import Callable, Sequence

import numpy as np
import scipy.sparse as sp

from garnav.errors import GarnavError, NoRouteError, QueryError
from garnav.model import Garment, Robot
from garnav.plan.cache import cache_key, cache_path, load_nav_graph, save_nav_graph
from garnav.plan.explain import check_free, explain_no_route
from garnav.plan.freespace import DEFAULT_QUAD_SEGS, build_free_space
from garnav.plan.navgraph import (
    DEFAULT_PORTAL_SPACING_MM,
    NavGraph,
    build_nav_graph,
    edge_costs,
    free_point_links,
    point_pairs,
)
from garnav.plan.points import PiecePoint, PointLike, resolve_point
from garnav.plan.exact import ExactResult, SeamSearch
from garnav.plan.unfold import place_crossings
from garnav.plan.sequences import SequenceResult, SequenceSearch, interval_index
from garnav.plan.route import Leg, Route, join_routes, make_route
from garnav.polyline import distance_to_polyline
from garnav.plan.search import NodePortalTable, PortalGraph, astar, lazy_heuristic

__all__ = ["Planner", "plan_route", "PLANNER_VERSION"]

PLANNER_VERSION = "1"

#: An alternative seam sequence is refined when its graph cost is at most the refined cost of the
#: first route plus twice what refining that route gained plus this fraction of its graph cost.
ALTERNATIVE_MARGIN = 0.002


class Planner:
    """Route planner for one garment and one robot.

    Parameters
    ----------
    garment : Garment
    robot : Robot, optional
        Defaults to ``garment.robot``, else a default :class:`Robot`.
    quad_segs : int
        Segments per quarter circle of grown shapes (see :mod:`garnav.plan.freespace`).
    portal_spacing_mm : float
        Largest gap between seam portals before refinement.
    extra_clearance_mm : float
        Added to every keep-out's clearance.
    locate_3d : callable, optional
        ``locate_3d(xyz) -> (piece, x, y)``: maps a world point (mm) to the pattern (needs a drape).
    approach_mm : float, optional
        Straight run kept at a seam's smallest crossing angle on each side (default: the robot
        radius).
    cache_dir : path, optional
        Folder for the on-disk graph cache (:mod:`garnav.plan.cache`); None = no cache.
    exact_seams : bool
        Choose seam sequences and crossings by the branch-and-bound search of
        :mod:`garnav.plan.exact` (certified within ``rel_tol``; slow on large garments, see
        docs/planning.md) instead of A* on the portals followed by crossing refinement.
    rel_tol : float
        Relative optimality tolerance of the exact cross-seam search.
    seam_sequences : int
        Most seam sequences the branch and bound over sequences (:mod:`garnav.plan.sequences`)
        solves per query after A* and refinement; 0 = none (A* on the portals, refinement and
        the alternatives of docs/planning.md §3 only).
    """

    def __init__(
        self,
        garment: Garment,
        robot: Robot | None = None,
        *,
        quad_segs: int = DEFAULT_QUAD_SEGS,
        portal_spacing_mm: float = DEFAULT_PORTAL_SPACING_MM,
        extra_clearance_mm: float = 0.0,
        locate_3d: Callable | None = None,
        approach_mm: float | None = None,
        cache_dir: str | Path | None = None,
        exact_seams: bool = False,
        rel_tol: float = 1e-4,
        seam_sequences: int = 4,
    ):
        self.garment = garment
        self.robot = robot or garment.robot or Robot()
        self.locate_3d = locate_3d
        self.free = build_free_space(garment, self.robot, quad_segs=quad_segs, extra_clearance_mm=extra_clearance_mm)
        nav: NavGraph | None = None
        self.cache_file: Path | None = None
        if cache_dir is not None:
            options = {
                "quad_segs": quad_segs,
                "portal_spacing_mm": portal_spacing_mm,
                "extra_clearance_mm": extra_clearance_mm,
                "approach_mm": approach_mm,
            }
            key = cache_key(garment, self.robot, options, PLANNER_VERSION)
            self.cache_file = cache_path(cache_dir, key)
            nav = load_nav_graph(self.cache_file, garment, self.free, key)
        if nav is None:
            nav = build_nav_graph(garment, self.free, portal_spacing_mm, approach_mm)
            if self.cache_file is not None:
                try:
                    save_nav_graph(nav, self.cache_file, key)
                except GarnavError:
                    self.cache_file = None  # a cache that cannot be written only costs time
        self.nav: NavGraph = nav
        self.portal_graph = PortalGraph(self.nav)
        self.node_portal_table = NodePortalTable(self.portal_graph)
        self._corner_mats: dict = {}
        self.exact_seams = bool(exact_seams)
        self._spacing_mm = float(portal_spacing_mm)
        self._rel_tol = float(rel_tol)
        self._seam_search: SeamSearch | None = None
        self.last_search: ExactResult | None = None
        self.seam_sequences = int(seam_sequences)
        self._sequence_search: SequenceSearch | None = None
        self._portal_interval: np.ndarray | None = None
        self._first_gain = 0.0
        self.last_sequences: SequenceResult | None = None

    def corner_matrix(self, piece: str):
        """(k, k) sparse matrix of the corner–corner edge costs of one piece (upper triangle)."""
        cached = self._corner_mats.get(piece)
        if cached is None:
            corners, off = self.nav.corners[piece]
            k = len(corners)
            rows, cols, vals = [], [], []
            for n in range(off, off + k):
                for m, w in self.nav.neighbours(n):
                    if n < m < off + k:
                        rows.append(n - off)
                        cols.append(m - off)
                        vals.append(w)
            cached = sp.csr_matrix((vals, (rows, cols)), shape=(k, k))
            self._corner_mats[piece] = cached
        return cached

    # ------------------------------------------------------------------ points

    def point(self, spec: PointLike, *, snap: bool = False, role: str = "point") -> PiecePoint:
        """Resolve a point (landmark name, ``PIECE:X,Y``, ``xyz:X,Y,Z`` or PiecePoint) and check
        that the robot fits there; with ``snap`` move it to the nearest free point instead."""
        pp = resolve_point(self.garment, spec, locate_3d=self.locate_3d)
        return check_free(self.free, pp, snap=snap, role=role)

    # ------------------------------------------------------------------ links

    def links(
        self,
        pp: PiecePoint,
        *,
        tangent: np.ndarray | None = None,
        min_angle_deg: float = 0.0,
        corners_only: bool = False,
    ) -> list[tuple[int, float]]:
        """Graph nodes visible from a point, with edge costs: corners (tangent at the corner) and,
        unless ``corners_only``, the portals (angle limit at the portal) and approach points of its
        piece. With ``tangent`` the links also keep ``min_angle_deg`` to it at the point. Sorted by
        node."""
        ng = self.nav
        fs = self.free[pp.piece]
        xy = pp.xy[None, :]
        tan = None if tangent is None else np.asarray(tangent, dtype=float).reshape(1, 2)
        _, n = free_point_links(ng, pp.piece, xy, tan, min_angle_deg)
        nodes = n.tolist()
        if not corners_only:
            fp = np.concatenate([ng.portal_nodes[pp.piece], ng.approach_nodes[pp.piece]]).astype(int)
            if len(fp):
                pts = np.vstack([xy, ng.xy[fp]])
                tans = np.vstack([tan if tan is not None else np.zeros((1, 2)), ng.portal_tan[fp]])
                amin = np.concatenate([[min_angle_deg if tan is not None else 0.0], ng.min_angles(fp)])
                _, pb = point_pairs(fs, pts, tans, amin, (np.zeros(len(fp), int), np.arange(1, len(fp) + 1)))
                nodes.extend(fp[pb - 1].tolist())
        nodes = sorted(nodes)
        if not nodes:
            return []
        _, cost = edge_costs(fs, np.repeat(xy, len(nodes), axis=0), ng.xy[nodes])
        return list(zip(nodes, cost.tolist(), strict=False))

    def direct(self, p: PiecePoint, q: PiecePoint) -> float | None:
        """Cost of the straight segment p → q when both lie on one piece and it is free, else None."""
        if p.piece != q.piece:
            return None
        fs = self.free[p.piece]
        if not fs.segments_free(p.xy[None], q.xy[None])[0]:
            return None
        return float(edge_costs(fs, p.xy[None], q.xy[None])[1][0])

    # ------------------------------------------------------------------ search

    def search(self, start: PiecePoint, goals: Sequence[PiecePoint]) -> tuple[list[int], float, int]:
        """A* from ``start`` to the cheapest of ``goals`` on the navigation graph.

        Returns (node path, cost, goal index). Temporary node ids: N = start, N + 1 + k = goal k.
        Raises NoRouteError when no goal is reachable.
        """
        path, cost, k = self._search(start, goals)
        if path is None:
            raise NoRouteError(explain_no_route(self, start, goals))
        return path, cost, k

    def query_edges(self, start: PiecePoint, goals: Sequence[PiecePoint]) -> list[tuple[int, int, float]]:
        """The temporary edges (u, v, cost) a query adds to the graph (ids as in :meth:`search`)."""
        n0 = self.nav.graph.number_of_nodes()
        edges = [(n0, m, w) for m, w in self.links(start)]
        for k, g in enumerate(goals):
            gid = n0 + 1 + k
            edges.extend((gid, m, w) for m, w in self.links(g))
            d = self.direct(start, g)
            if d is not None:
                edges.append((n0, gid, d))
        return edges

    def _search(self, start: PiecePoint, goals: Sequence[PiecePoint], banned: frozenset[int] = frozenset()):
        """A* as in :meth:`search`; crossings of the seams (indices) in ``banned`` are left out."""
        ng = self.nav
        n0 = ng.graph.number_of_nodes()
        extra: dict[int, list[tuple[int, float]]] = {}
        for u, v, w in self.query_edges(start, goals):
            extra.setdefault(u, []).append((v, w))
            extra.setdefault(v, []).append((u, w))
        goal_pairs = [(ng.piece_index(g.piece), g.xy) for g in goals]
        h_at = lazy_heuristic(self.node_portal_table, goal_pairs)
        si = ng.piece_index(start.piece)

        def h(n: int) -> float:
            if n > n0:
                return 0.0
            if n == n0:
                return h_at(n, si, start.xy)
            return h_at(n, int(ng.node_piece[n]), ng.xy[n])

        def neighbors(n: int):
            base = ng.neighbours(n) if n < n0 else []
            if banned and n < n0 and int(ng.portal_seam[n]) in banned:
                s = ng.portal_seam[n]
                base = [(m, w) for m, w in base if not (m < n0 and ng.portal_seam[m] == s and ng.graph.is_crossing(n, m))]
            return base + sorted(extra.get(n, []))

        found = astar(neighbors, {n0: 0.0}, set(range(n0 + 1, n0 + 1 + len(goals))), h)
        if found is None:
            return None, np.inf, -1
        path, cost = found
        return path, cost, path[-1] - n0 - 1

    def portal_intervals(self) -> np.ndarray:
        """(N,) free-interval index of each portal node (−1 for other nodes), computed once."""
        if self._portal_interval is None:
            ng = self.nav
            self._portal_interval = np.array(
                [interval_index(ng, int(s), float(t)) if s >= 0 else -1 for s, t in zip(ng.portal_seam, ng.portal_t, strict=True)],
                dtype=int,
            )
        return self._portal_interval

    def sequence_search(
        self, start: PiecePoint, goal: PiecePoint, sequence: tuple, edges: list | None = None, h_layer: Callable | None = None
    ) -> tuple[list[int] | None, float]:
        """A* on the navigation graph over the routes that cross exactly ``sequence``: (seam
        index, free interval index, from side) per crossing, in order. States are (node, crossings
        done); the heuristic of :meth:`search` stays admissible (fewer routes). Returns (node path,
        graph cost) or (None, inf). ``edges``: ``query_edges(start, [goal])`` when already known;
        ``h_layer(node, crossings done, piece index, xy)``: an admissible, consistent heuristic of
        the constrained search to use instead (e.g. :class:`garnav.plan.layer_bound.LayerBound`)."""
        ng = self.nav
        n0 = ng.graph.number_of_nodes()
        iv = self.portal_intervals()
        steps = len(sequence)
        width = steps + 1
        extra: dict[int, list[tuple[int, float]]] = {}
        for u, v, w in self.query_edges(start, [goal]) if edges is None else edges:
            if steps and {u, v} == {n0, n0 + 1}:
                continue  # the direct link crosses nothing
            extra.setdefault(u, []).append((v, w))
            extra.setdefault(v, []).append((u, w))
        h_at = lazy_heuristic(self.node_portal_table, [(ng.piece_index(goal.piece), goal.xy)])
        si = ng.piece_index(start.piece)

        def h(state: int) -> float:
            n, j = divmod(state, width)
            if n > n0:
                return 0.0
            if h_layer is not None:
                return h_layer(n, j, si, start.xy) if n == n0 else h_layer(n, j, int(ng.node_piece[n]), ng.xy[n])
            if n == n0:
                return h_at(n, si, start.xy)
            return h_at(n, int(ng.node_piece[n]), ng.xy[n])

        def neighbors(state: int):
            n, j = divmod(state, width)
            out = []
            for m, w in (ng.neighbours(n) if n < n0 else []):
                s = ng.portal_seam[n]
                if s >= 0 and m < n0 and ng.portal_seam[m] == s and ng.graph.is_crossing(n, m):
                    if j < steps and sequence[j] == (int(s), int(iv[n]), int(ng.portal_side[n])):
                        out.append((m * width + j + 1, w))
                    continue
                out.append((m * width + j, w))
            out.extend((m * width + j, w) for m, w in sorted(extra.get(n, [])))
            return out

        found = astar(neighbors, {n0 * width: 0.0}, {(n0 + 1) * width + steps}, h)
        if found is None:
            return None, np.inf
        path, cost = found
        return [state // width for state in path], cost

    # ------------------------------------------------------------------ queries

    def route(self, start: PointLike, goal: PointLike, via: Sequence[PointLike] = (), *, snap: bool = False) -> Route:
        """Shortest safe route from ``start`` through each ``via`` point to ``goal``."""
        stops = [self.point(start, snap=snap, role="start")]
        stops += [self.point(v, snap=snap, role="via point") for v in via]
        stops.append(self.point(goal, snap=snap, role="goal"))
        parts = [self._route_between(a, [b])[1] for a, b in zip(stops[:-1], stops[1:], strict=False)]
        return parts[0] if len(parts) == 1 else join_routes(self.garment, self.robot, parts)

    def nearest(self, start: PointLike, goals: Sequence[PointLike], *, snap: bool = False) -> tuple[int, Route]:
        """The goal reached at least cost (by graph search) and the refined route to it."""
        if not goals:
            raise QueryError("nearest: no goals given")
        s = self.point(start, snap=snap, role="start")
        gs = [self.point(g, snap=snap, role="goal") for g in goals]
        return self._route_between(s, gs)

    @property
    def seam_search(self) -> SeamSearch:
        """The exact cross-seam searcher of this planner (built on first use)."""
        if self._seam_search is None:
            self._seam_search = SeamSearch(self, spacing_mm=self._spacing_mm, rel_tol=self._rel_tol)
        return self._seam_search

    def _route_between(self, start: PiecePoint, goals: list[PiecePoint]) -> tuple[int, Route]:
        if self.exact_seams:
            found = self.seam_search.search(start, goals)
            if found is None:
                raise NoRouteError(explain_no_route(self, start, goals))
            self.last_search = found
            legs, crossings, cost, k = found.legs, found.crossings, found.cost_mm, found.goal
        else:
            legs, crossings, cost, k = self._portal_route(start, goals)
            if self.seam_sequences > 0 and not crossings and cost <= self._exit_bound(start, goals):
                # no route that leaves the piece can be cheaper: the in-piece route is the optimum
                self.last_sequences = SequenceResult(legs, crossings, cost, cost, True, 0, k, reason="")
            elif self.seam_sequences > 0 and any(s.crossable for s in self.nav.seams):
                if self._sequence_search is None:
                    self._sequence_search = SequenceSearch(self, max_sequences=self.seam_sequences)
                found_seq = self._sequence_search.search(start, goals, (legs, crossings, cost, k), self._first_gain)
                self.last_sequences = found_seq
                if found_seq is not None and found_seq.cost_mm < cost:
                    legs, crossings, cost, k = found_seq.legs, found_seq.crossings, found_seq.cost_mm, found_seq.goal
        route = make_route(
            self.garment,
            self.robot,
            [Leg(piece, pts) for piece, pts in legs],
            [(self.nav.seams[s].name, t, side) for s, t, side in crossings],
            cost,
        )
        return k, route

    def _exit_bound(self, start: PiecePoint, goals: list[PiecePoint]) -> float:
        """A lower bound (mm) of every route from ``start`` to a goal that crosses a seam: the
        straight distance to the nearest crossable seam run of the start's piece, plus its
        crossing cost, plus — for a goal on the same piece — the way back (the goal's distance to
        such a run and a second crossing). A cost is at least a length (cost factors ≥ 1). inf
        when the piece has no crossable seam."""
        ng = self.nav
        runs, cc = [], math.inf
        for seam in ng.seams:
            if not seam.crossable or not ng.intervals.get(seam.name):
                continue
            cc = min(cc, max(float(seam.crossing_cost_mm), 0.0))
            for run, pts in zip((seam.a, seam.b), ng.run_points[seam.name], strict=True):
                if run.piece == start.piece:
                    runs.append(pts)
        if not runs:
            return math.inf
        out = min(distance_to_polyline(start.xy, r) for r in runs) + cc
        back = [min(distance_to_polyline(g.xy, r) for r in runs) + cc for g in goals if g.piece == start.piece]
        return out + min(back) if len(back) == len(goals) else out

    def _portal_route(self, start: PiecePoint, goals: list[PiecePoint]):
        """A* on the portals, refinement, then the same for the seam sequences found with each
        crossed seam left out in turn, when their graph cost is close enough to the first's (see
        ``ALTERNATIVE_MARGIN``): the seam sequence is chosen on sampled portals, so a sequence that wins only
        after refinement may rank second on the graph (e.g. round a corner where several seams
        meet). Returns the cheapest (legs, crossings, cost, goal index)."""
        path, first_cost, k = self.search(start, goals)
        legs, crossings = self.split_path(path, start, goals[k])
        best = (*place_crossings(self, legs, crossings), k)
        self._first_gain = max(first_cost - best[2], 0.0)
        tried = {tuple((s, side) for s, _, side in best[1])}
        for seam in sorted({s for s, _, _ in best[1]}):
            alt, alt_cost, ak = self._search(start, goals, frozenset([seam]))
            # worth refining only if it could win after gaining as much as the first route did
            # (twice over, plus ALTERNATIVE_MARGIN of its cost)
            reach = best[2] + 2.0 * max(first_cost - best[2], 0.0) + ALTERNATIVE_MARGIN * first_cost
            if alt is None or alt_cost > reach:
                continue
            a_legs, a_cross = self.split_path(alt, start, goals[ak])
            key = tuple((s, side) for s, _, side in a_cross)
            if key in tried:
                continue
            tried.add(key)
            cand = place_crossings(self, a_legs, a_cross, best[2])
            if cand[2] < best[2] - 1e-12:
                best = (*cand, ak)
        return best

    def split_path(self, path: list[int], start: PiecePoint, goal: PiecePoint):
        """Node path → legs [(piece, (n, 2) points)] and crossings [(seam index, t, from side)]."""
        ng = self.nav
        n0 = ng.graph.number_of_nodes()

        def pos(n: int) -> np.ndarray:
            return start.xy if n == n0 else (goal.xy if n > n0 else ng.xy[n])

        legs: list[tuple[str, list[np.ndarray]]] = [(start.piece, [start.xy])]
        crossings = []
        for u, v in zip(path[:-1], path[1:], strict=False):
            if u < n0 and v < n0 and ng.graph.is_crossing(u, v):
                crossings.append((int(ng.portal_seam[u]), float(ng.portal_t[u]), int(ng.portal_side[u])))
                legs.append((ng.pieces[ng.node_piece[v]], [ng.xy[v]]))
            else:
                legs[-1][1].append(pos(v))
        return [(p, np.array(pts, dtype=float)) for p, pts in legs], crossings


def plan_route(
    garment: Garment,
    start: PointLike,
    goal: PointLike,
    robot: Robot | None = None,
    *,
    via: Sequence[PointLike] = (),
    snap: bool = False,
    **planner_options,
) -> Route:
    """One call: build a :class:`Planner` and return the route from ``start`` to ``goal``."""
    return Planner(garment, robot, **planner_options).route(start, goal, via, snap=snap)
