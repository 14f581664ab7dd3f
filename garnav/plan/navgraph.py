"""The navigation graph of a whole garment: per-piece reduced visibility graphs joined at seam portals.

Nodes (integers, numbered piece by piece in garment order): the reflex corners of the piece's free
space, its portals, and the approach points of those portals (see :class:`NavGraph`). Edges:

* corner–corner bitangents (:func:`garnav.plan.visgraph.bitangent_pairs`);
* portal/approach point – corner links, tangent at the corner; at a portal the link must make at
  least the seam's smallest crossing angle with the seam tangent;
* portal/approach point pairs on one piece (angle limits at portals);
* each approach point to its own portal (the straight approach at the smallest angle);
* crossing edges joining a portal to its partner on the other run (same 3D point), weighted by the
  seam's crossing cost.

In-piece edge weights are length + soft-zone surcharge ((cost_factor − 1) × length inside). Edges
are kept in sorted order as arrays (:class:`~garnav.plan.edgegraph.EdgeGraph`) so that searches
are reproducible.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import shapely

from garnav.model import Garment
from garnav.plan.edgegraph import EdgeGraph
from garnav.plan.freespace import FreeSpace, PieceFreeSpace
from garnav.plan.portals import (
    SeamSides,
    angle_ok,
    approach_points,
    free_intervals,
    portal_fractions,
    seam_sides,
    seam_spacing_mm,
)
from garnav.plan.visgraph import (
    Corners,
    bitangent_pairs,
    merge_corners,
    point_links,
    reflex_corners,
    zone_corners,
)

__all__ = [
    "NavGraph",
    "build_nav_graph",
    "seam_run_points",
    "seam_portals",
    "place_nodes",
    "graph_edges",
    "assemble_graph",
    "edge_costs",
    "free_point_links",
    "point_pairs",
    "DEFAULT_PORTAL_SPACING_MM",
]

DEFAULT_PORTAL_SPACING_MM = 20.0


def edge_costs(fs: PieceFreeSpace, a: np.ndarray, b: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Length and cost of segments a[i] → b[i]; two (m,) arrays.

    cost = length + Σ (cost_factor − 1) × length inside each soft zone (its interior: a segment
    along the zone's edge pays nothing).
    """
    a = np.asarray(a, dtype=float).reshape(-1, 2)
    b = np.asarray(b, dtype=float).reshape(-1, 2)
    length = np.linalg.norm(b - a, axis=1)
    cost = length.copy()
    if fs.soft and len(a):
        segs = shapely.linestrings(np.stack([a, b], axis=1))
        for zone in fs.soft:
            hit = np.nonzero(shapely.intersects(segs, zone.grown))[0]
            if not len(hit):
                continue
            # driving along the zone's edge is outside it: count the interior only
            inside = shapely.length(shapely.intersection(segs[hit], zone.grown))
            inside -= shapely.length(shapely.intersection(segs[hit], zone.grown.boundary))
            cost[hit] += (zone.cost_factor - 1.0) * np.maximum(inside, 0.0)
    return length, cost


@dataclass
class NavGraph:
    """The built graph and what its nodes are.

    Node kinds, numbered piece by piece (garment order): the piece's reflex corners, then its
    portals sorted by (seam name, side, fraction), then the approach points of those portals (for
    seams with a smallest crossing angle, see :func:`garnav.plan.portals.approach_points`).

    Attributes
    ----------
    pieces : tuple of str
        Piece names in garment order; ``node_piece`` indexes it.
    xy : (N, 2) node positions in their piece frame, mm
    node_piece : (N,) int
    portal_seam : (N,) int, index into ``seams`` (−1 unless a portal)
    portal_side : (N,) int, 0 = run a, 1 = run b (−1 unless a portal)
    portal_t : (N,) float, seam fraction (nan unless a portal)
    portal_tan, portal_in : (N, 2) seam tangent / inward normal at portals (0 elsewhere)
    approach_of : (N,) int, the portal an approach point belongs to (−1 otherwise)
    graph : EdgeGraph with ``weight`` (cost), ``length`` and ``crossing`` of every edge
    corners : dict piece → (Corners, first node id)
    portal_nodes, approach_nodes : dict piece → node ids
    intervals : dict seam name → free fraction intervals
    approach_mm : float, length of the straight approach at the smallest crossing angle
    run_points : dict seam name → (run a, run b) polylines, piece frames, mm
    """

    garment: Garment
    free: FreeSpace
    seams: tuple
    pieces: tuple[str, ...]
    xy: np.ndarray
    node_piece: np.ndarray
    portal_seam: np.ndarray
    portal_side: np.ndarray
    portal_t: np.ndarray
    portal_tan: np.ndarray
    portal_in: np.ndarray
    approach_of: np.ndarray
    graph: EdgeGraph
    corners: dict[str, tuple[Corners, int]]
    portal_nodes: dict[str, np.ndarray]
    approach_nodes: dict[str, np.ndarray]
    intervals: dict[str, list[tuple[float, float]]]
    spacing_mm: float
    approach_mm: float
    run_points: dict[str, tuple[np.ndarray, np.ndarray]] = field(default_factory=dict)
    stats: dict = field(default_factory=dict)

    def piece_index(self, piece: str) -> int:
        return self.pieces.index(piece)

    def neighbours(self, node: int) -> list[tuple[int, float]]:
        """(neighbour, cost) pairs of a node, in ascending neighbour order; the lists are built
        once for all nodes on first use and owned by the graph (:meth:`EdgeGraph.adjacency`)."""
        return self.graph.adjacency()[node]

    def is_corner(self, node: int) -> bool:
        """Whether a node is a corner (not a portal or approach point)."""
        return bool(self.portal_seam[node] < 0 and self.approach_of[node] < 0)

    def seam_sides(self, seam_index: int, t: np.ndarray) -> SeamSides:
        """Both runs of seam ``seam_index`` at fractions ``t`` (:func:`garnav.plan.portals.seam_sides`)."""
        seam = self.seams[seam_index]
        return seam_sides(self.garment, seam, t, runs=self.run_points.get(seam.name))

    def min_angle(self, node: int) -> float:
        s = int(self.portal_seam[node])
        return float(self.seams[s].min_crossing_angle_deg) if s >= 0 else 0.0

    def min_angles(self, nodes: np.ndarray) -> np.ndarray:
        """Smallest crossing angle (deg) at each node (0 for non-portals); (m,)."""
        limits = np.array([s.min_crossing_angle_deg for s in self.seams] + [0.0], dtype=float)
        return limits[self.portal_seam[np.asarray(nodes, dtype=int)]]


def build_nav_graph(
    garment: Garment,
    free: FreeSpace,
    spacing_mm: float = DEFAULT_PORTAL_SPACING_MM,
    approach_mm: float | None = None,
) -> NavGraph:
    """Build the navigation graph of ``garment`` for the free space ``free``.

    ``approach_mm`` (default: the robot radius) is the straight run kept at the smallest crossing
    angle on each side of a seam before the robot may turn. Four phases: seam portals
    (:func:`seam_portals`), nodes (:func:`place_nodes`), edges (:func:`graph_edges`) and the
    graph itself (:func:`assemble_graph`).
    """
    seams = tuple(sorted(garment.seams, key=lambda s: s.name))
    approach = float(free.robot.radius_mm if approach_mm is None else approach_mm)
    runs = seam_run_points(garment, seams)
    intervals, portal_rows = seam_portals(garment, free, seams, spacing_mm, runs)
    ng = place_nodes(garment, free, seams, intervals, portal_rows, spacing_mm, approach, runs)
    assemble_graph(ng, graph_edges(ng))
    return ng


def seam_run_points(garment: Garment, seams: tuple) -> dict[str, tuple[np.ndarray, np.ndarray]]:
    """Run polylines of every seam: name → (run a (m, 2), run b (k, 2)), piece frames, mm."""
    return {s.name: (garment.run_polyline(s.a), garment.run_polyline(s.b)) for s in seams}


def seam_portals(garment: Garment, free: FreeSpace, seams: tuple, spacing_mm: float, runs: dict):
    """Free intervals of every seam and the portal rows of every piece.

    Returns (intervals: seam name → [(t0, t1)], rows: piece → [(seam index, side, t, xy, tangent,
    inward)]).
    """
    intervals: dict[str, list[tuple[float, float]]] = {}
    portal_rows: dict[str, list[tuple]] = {p.name: [] for p in garment.pieces}
    for si, seam in enumerate(seams):
        if not seam.crossable:
            intervals[seam.name] = []
            continue
        ivs = free_intervals(garment, seam, free, runs=runs[seam.name])
        intervals[seam.name] = ivs
        la = garment.run_length(seam.a)
        t = portal_fractions(ivs, la, seam_spacing_mm(la, spacing_mm))  # wider on a very long seam
        if len(t) == 0:
            continue
        sides = seam_sides(garment, seam, t, runs=runs[seam.name])
        for side, run in enumerate((seam.a, seam.b)):
            xy, tan, inward = sides.side(side)
            for k in range(len(t)):
                portal_rows[run.piece].append((si, side, float(t[k]), xy[k], tan[k], inward[k]))
    return intervals, portal_rows


def place_nodes(
    garment: Garment,
    free: FreeSpace,
    seams: tuple,
    intervals: dict,
    portal_rows: dict,
    spacing_mm: float,
    approach: float,
    runs: dict,
) -> NavGraph:
    """Number the nodes piece by piece (corners, portals, approach points): a NavGraph without edges."""
    pieces = tuple(p.name for p in garment.pieces)
    cols: dict[str, list] = {k: [] for k in ("xy", "piece", "seam", "side", "t", "tan", "in", "of")}
    corners: dict[str, tuple[Corners, int]] = {}
    portal_nodes: dict[str, np.ndarray] = {}
    approach_nodes: dict[str, np.ndarray] = {}
    offset = 0

    def add(xy, pi, seam=-1, side=-1, t=np.nan, tan=(0.0, 0.0), inward=(0.0, 0.0), of=-1):
        for key, val in zip(cols, (xy, pi, seam, side, t, tan, inward, of), strict=False):
            cols[key].append(val)

    for pi, name in enumerate(pieces):
        fs = free[name]
        c = reflex_corners(fs.region)
        if fs.soft:
            c = merge_corners(c, zone_corners(fs.region, [z.grown for z in fs.soft]))
        corners[name] = (c, offset)
        for xy in c.xy:
            add(xy, pi)
        rows = sorted(portal_rows[name], key=lambda r: (seams[r[0]].name, r[1], r[2]))
        first_portal = offset + len(c)
        portal_nodes[name] = np.arange(first_portal, first_portal + len(rows))
        for si, side, t, xy, tan, inward in rows:
            add(xy, pi, si, side, t, tan, inward)
        # approach points, kept where the straight approach lies in free space (one batch)
        nxt = first_portal + len(rows)
        app = []
        if rows and approach > 0:
            amin = np.array([seams[r[0]].min_crossing_angle_deg for r in rows])
            pxy, ptan, pin = (np.array([r[k] for r in rows]) for k in (3, 4, 5))
            ends = approach_points(pxy, ptan, pin, amin[:, None], approach)  # (p, 2, 2)
            want = np.stack([amin > 0, (amin > 0) & (amin < 90.0)], axis=1)  # at 90° the two coincide
            k, e = np.nonzero(want)
            ok = fs.segments_free(pxy[k], ends[k, e])
            for kk, ee in zip(k[ok].tolist(), e[ok].tolist(), strict=False):
                add(ends[kk, ee], pi, of=first_portal + kk)
                app.append(nxt)
                nxt += 1
        approach_nodes[name] = np.array(app, dtype=int)
        offset = nxt

    def arr(key, shape=None, dtype=float):
        return np.array(cols[key], dtype=dtype).reshape(shape) if cols[key] else np.zeros(shape if shape else 0, dtype)

    return NavGraph(
        garment=garment,
        free=free,
        seams=seams,
        pieces=pieces,
        xy=arr("xy", (-1, 2)) if cols["xy"] else np.zeros((0, 2)),
        node_piece=arr("piece", None, int),
        portal_seam=arr("seam", None, int),
        portal_side=arr("side", None, int),
        portal_t=arr("t"),
        portal_tan=arr("tan", (-1, 2)) if cols["tan"] else np.zeros((0, 2)),
        portal_in=arr("in", (-1, 2)) if cols["in"] else np.zeros((0, 2)),
        approach_of=arr("of", None, int),
        graph=EdgeGraph.from_edges(len(cols["xy"]), []),
        corners=corners,
        portal_nodes=portal_nodes,
        approach_nodes=approach_nodes,
        intervals=intervals,
        spacing_mm=float(spacing_mm),
        approach_mm=approach,
        run_points=runs,
    )


def graph_edges(ng: NavGraph) -> list[tuple[int, int, float, float, bool]]:
    """Every edge (i, j, length, cost, crossing), i < j: in-piece links, then crossing edges."""
    edges: list[tuple[int, int, float, float, bool]] = []
    for name in ng.pieces:
        edges.extend(_piece_edges(ng, name))
    # crossing edges: portal (seam, side 0, t) <-> (seam, side 1, t)
    portal_ids = np.nonzero(ng.portal_seam >= 0)[0]
    key = {(int(ng.portal_seam[n]), int(ng.portal_side[n]), float(ng.portal_t[n])): int(n) for n in portal_ids}
    for (si, side, t), n in sorted(key.items()):
        if side == 0:
            m = key[(si, 1, t)]
            cost = float(ng.seams[si].crossing_cost_mm)
            edges.append((min(n, m), max(n, m), 0.0, cost, True))
    return edges


def assemble_graph(ng: NavGraph, edges: list[tuple[int, int, float, float, bool]]) -> None:
    """Set ``ng.graph`` (sorted, one edge per node pair: the cheaper, since a seam joining a piece
    to itself may give a pair both an in-piece link and a crossing) and ``ng.stats``."""
    best: dict[tuple[int, int], tuple[float, float, bool]] = {}
    for i, j, ln, w, crossing in edges:
        if (i, j) not in best or w < best[(i, j)][1]:
            best[(i, j)] = (ln, w, crossing)
    g = ng.graph = EdgeGraph.from_edges(len(ng.xy), [(i, j, ln, w, c) for (i, j), (ln, w, c) in sorted(best.items())])
    ng.stats = {
        "nodes": g.number_of_nodes(),
        "edges": g.number_of_edges(),
        "corners": int(sum(len(c) for c, _ in ng.corners.values())),
        "portals": int(np.count_nonzero(ng.portal_seam >= 0)),
        "approach_points": int(sum(len(a) for a in ng.approach_nodes.values())),
    }


def free_point_links(ng: NavGraph, piece: str, xy: np.ndarray, limit_tan: np.ndarray | None = None, limit_deg=0.0):
    """Links from points (m, 2) to the corners of a piece, tangent at the corner, with an optional
    angle limit ``limit_deg`` (scalar or (m,)) to tangents ``limit_tan`` (m, 2) at the points.
    Returns (point index, corner node id) arrays."""
    fs = ng.free[piece]
    c, off = ng.corners[piece]
    if not len(c) or not len(xy):
        return np.zeros(0, int), np.zeros(0, int)
    allowed = None
    if limit_tan is not None:
        d = c.xy[None, :, :] - xy[:, None, :]
        lim = np.broadcast_to(np.asarray(limit_deg, dtype=float), (len(xy),))
        allowed = angle_ok(d, limit_tan[:, None, :], lim[:, None])
    q, n = point_links(fs.region, c, xy, allowed)
    return q, n + off


def point_pairs(fs: PieceFreeSpace, xy: np.ndarray, tan: np.ndarray, amin: np.ndarray, pairs=None):
    """Visible pairs (i, j), i < j, among points (m, 2) with angle limits ``amin`` (m,) to tangents
    ``tan`` (m, 2) at each end (0 = no limit). Returns two int arrays."""
    m = len(xy)
    if pairs is None:
        pa, pb = np.triu_indices(m, 1)
    else:
        pa, pb = pairs
    d = xy[pb] - xy[pa]
    ok = angle_ok(d, tan[pa], amin[pa]) & angle_ok(-d, tan[pb], amin[pb])
    ok &= np.linalg.norm(d, axis=1) > 0
    pa, pb = pa[ok], pb[ok]
    vis = fs.segments_free(xy[pa], xy[pb])
    return pa[vis], pb[vis]


def _piece_edges(ng: NavGraph, name: str) -> list[tuple[int, int, float, float, bool]]:
    fs = ng.free[name]
    c, off = ng.corners[name]
    i, j = bitangent_pairs(fs.region, c)
    la, lb = [i + off], [j + off]
    # free points: portals (angle limit at them) and approach points (none)
    fp = np.concatenate([ng.portal_nodes[name], ng.approach_nodes[name]]).astype(int)
    if len(fp):
        xy, tan, amin = ng.xy[fp], ng.portal_tan[fp], ng.min_angles(fp)
        q, n = free_point_links(ng, name, xy, tan, amin)
        la.append(fp[q])
        lb.append(n)
        pa, pb = point_pairs(fs, xy, tan, amin)
        la.append(fp[pa])
        lb.append(fp[pb])
        # each approach point to its own portal (exactly at the angle limit)
        own = ng.approach_nodes[name]
        la.append(ng.approach_of[own])
        lb.append(own)
    ia, ib = np.concatenate(la).astype(int), np.concatenate(lb).astype(int)
    length, cost = edge_costs(fs, ng.xy[ia], ng.xy[ib])
    lo, hi = np.minimum(ia, ib), np.maximum(ia, ib)
    return [(i, j, ln, w, False) for i, j, ln, w in zip(lo.tolist(), hi.tolist(), length.tolist(), cost.tolist(), strict=False)]
