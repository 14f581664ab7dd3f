"""The navigation graph of a whole garment: per-piece reduced visibility graphs joined at seam portals.

Nodes (integers, numbered piece by piece in garment order): first the reflex corners of the
piece's free space, then its portals sorted by (seam name, side, fraction). Edges:

* corner–corner bitangents (:func:`garnav.plan.visgraph.bitangent_pairs`);
* portal–corner links, tangent at the corner, making at least the seam's smallest crossing angle
  with the seam tangent at the portal;
* portal–portal links on one piece (both angle limits);
* crossing edges joining a portal to its partner on the other run (same 3D point), weighted by the
  seam's crossing cost.

In-piece edge weights are length + soft-zone surcharge ((cost_factor − 1) × length inside). Edges
are added in sorted order so that searches are reproducible.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import networkx as nx
import numpy as np
import shapely

from garnav.model import Garment
from garnav.plan.freespace import FreeSpace, PieceFreeSpace
from garnav.plan.portals import angle_ok, free_intervals, portal_fractions, seam_sides
from garnav.plan.visgraph import Corners, bitangent_pairs, point_links, reflex_corners, segments_free

__all__ = ["NavGraph", "build_nav_graph", "edge_costs", "DEFAULT_PORTAL_SPACING_MM"]

DEFAULT_PORTAL_SPACING_MM = 20.0


def edge_costs(fs: PieceFreeSpace, a: np.ndarray, b: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Length and cost (length + soft-zone surcharge) of segments a[i] → b[i]; two (m,) arrays."""
    a = np.asarray(a, dtype=float).reshape(-1, 2)
    b = np.asarray(b, dtype=float).reshape(-1, 2)
    length = np.linalg.norm(b - a, axis=1)
    cost = length.copy()
    if fs.soft and len(a):
        segs = shapely.linestrings(np.stack([a, b], axis=1))
        for zone in fs.soft:
            inside = shapely.length(shapely.intersection(segs, zone.grown))
            cost += (zone.cost_factor - 1.0) * inside
    return length, cost


@dataclass
class NavGraph:
    """The built graph and what its nodes are.

    Attributes
    ----------
    pieces : tuple of str
        Piece names in garment order; ``node_piece`` indexes it.
    xy : (N, 2) node positions in their piece frame, mm
    node_piece : (N,) int
    portal_seam : (N,) int, index into ``seams`` (−1 for corners)
    portal_side : (N,) int, 0 = run a, 1 = run b (−1 for corners)
    portal_t : (N,) float, seam fraction (nan for corners)
    portal_tan : (N, 2) seam tangent at portals in the piece frame (0 for corners)
    graph : networkx.Graph with ``weight`` (cost) and ``length`` on every edge
    corners : dict piece → (Corners, first node id)
    portal_nodes : dict piece → (p,) node ids of its portals
    intervals : dict seam name → free fraction intervals
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
    graph: nx.Graph
    corners: dict[str, tuple[Corners, int]]
    portal_nodes: dict[str, np.ndarray]
    intervals: dict[str, list[tuple[float, float]]]
    spacing_mm: float
    stats: dict = field(default_factory=dict)

    def piece_index(self, piece: str) -> int:
        return self.pieces.index(piece)

    def min_angle(self, node: int) -> float:
        s = int(self.portal_seam[node])
        return float(self.seams[s].min_crossing_angle_deg) if s >= 0 else 0.0


def build_nav_graph(garment: Garment, free: FreeSpace, spacing_mm: float = DEFAULT_PORTAL_SPACING_MM) -> NavGraph:
    """Build the navigation graph of ``garment`` for the free space ``free``."""
    seams = tuple(sorted(garment.seams, key=lambda s: s.name))
    pieces = tuple(p.name for p in garment.pieces)

    # portals per seam
    intervals: dict[str, list[tuple[float, float]]] = {}
    portal_rows: dict[str, list[tuple]] = {p: [] for p in pieces}  # (seam idx, side, t, xy, tan)
    for si, seam in enumerate(seams):
        if not seam.crossable:
            intervals[seam.name] = []
            continue
        ivs = free_intervals(garment, seam, free)
        intervals[seam.name] = ivs
        t = portal_fractions(ivs, garment.run_length(seam.a), spacing_mm)
        if len(t) == 0:
            continue
        sides = seam_sides(garment, seam, t)
        for k in range(len(t)):
            portal_rows[seam.a.piece].append((si, 0, float(t[k]), sides.a_xy[k], sides.a_tan[k]))
            portal_rows[seam.b.piece].append((si, 1, float(t[k]), sides.b_xy[k], sides.b_tan[k]))

    xy_parts, piece_parts, seam_parts, side_parts, t_parts, tan_parts = [], [], [], [], [], []
    corners: dict[str, tuple[Corners, int]] = {}
    portal_nodes: dict[str, np.ndarray] = {}
    offset = 0
    for pi, name in enumerate(pieces):
        c = reflex_corners(free[name].region)
        corners[name] = (c, offset)
        rows = sorted(portal_rows[name], key=lambda r: (seams[r[0]].name, r[1], r[2]))
        n_c, n_p = len(c), len(rows)
        xy_parts.append(c.xy)
        tan = np.zeros((n_c, 2))
        xy_parts.append(np.array([r[3] for r in rows]).reshape(-1, 2))
        piece_parts.append(np.full(n_c + n_p, pi))
        seam_parts.append(np.concatenate([np.full(n_c, -1), [r[0] for r in rows]]).astype(int))
        side_parts.append(np.concatenate([np.full(n_c, -1), [r[1] for r in rows]]).astype(int))
        t_parts.append(np.concatenate([np.full(n_c, np.nan), [r[2] for r in rows]]))
        tan_parts.append(np.vstack([tan, np.array([r[4] for r in rows]).reshape(-1, 2)]))
        portal_nodes[name] = np.arange(offset + n_c, offset + n_c + n_p)
        offset += n_c + n_p

    ng = NavGraph(
        garment=garment,
        free=free,
        seams=seams,
        pieces=pieces,
        xy=np.vstack(xy_parts) if xy_parts else np.zeros((0, 2)),
        node_piece=np.concatenate(piece_parts).astype(int) if piece_parts else np.zeros(0, int),
        portal_seam=np.concatenate(seam_parts).astype(int) if seam_parts else np.zeros(0, int),
        portal_side=np.concatenate(side_parts).astype(int) if side_parts else np.zeros(0, int),
        portal_t=np.concatenate(t_parts) if t_parts else np.zeros(0),
        portal_tan=np.vstack(tan_parts) if tan_parts else np.zeros((0, 2)),
        graph=nx.Graph(),
        corners=corners,
        portal_nodes=portal_nodes,
        intervals=intervals,
        spacing_mm=float(spacing_mm),
    )

    edges: list[tuple[int, int, float, float, bool]] = []
    for name in pieces:
        edges.extend(_piece_edges(ng, name))
    # crossing edges: portal (seam, side 0, t) <-> (seam, side 1, t)
    portal_ids = np.nonzero(ng.portal_seam >= 0)[0]
    key = {(int(ng.portal_seam[n]), int(ng.portal_side[n]), float(ng.portal_t[n])): int(n) for n in portal_ids}
    for (si, side, t), n in sorted(key.items()):
        if side == 0:
            m = key[(si, 1, t)]
            cost = float(seams[si].crossing_cost_mm)
            edges.append((min(n, m), max(n, m), 0.0, cost, True))

    # one edge per node pair (a seam joining a piece to itself may give a pair both an in-piece
    # link and a crossing): keep the cheaper
    best: dict[tuple[int, int], tuple[float, float, bool]] = {}
    for i, j, ln, w, crossing in edges:
        if (i, j) not in best or w < best[(i, j)][1]:
            best[(i, j)] = (ln, w, crossing)
    g = ng.graph
    g.add_nodes_from(range(len(ng.xy)))
    g.add_edges_from(
        (i, j, {"length": ln, "weight": w, "crossing": c}) for (i, j), (ln, w, c) in sorted(best.items())
    )
    ng.stats = {"nodes": g.number_of_nodes(), "edges": g.number_of_edges(), "portals": int(len(portal_ids))}
    return ng


def _piece_edges(ng: NavGraph, name: str) -> list[tuple[int, int, float, float, bool]]:
    fs = ng.free[name]
    c, off = ng.corners[name]
    out: list[tuple[int, int, float, float, bool]] = []
    i, j = bitangent_pairs(fs.region, c)
    ia, ib = i + off, j + off
    pn = ng.portal_nodes[name]
    if len(pn):
        pxy = ng.xy[pn]
        ptan = ng.portal_tan[pn]
        amin = np.array([ng.min_angle(int(n)) for n in pn])
        # portal -> corner
        if len(c):
            d = c.xy[None, :, :] - pxy[:, None, :]
            allowed = angle_ok(d, ptan[:, None, :], amin[:, None])
            q, n = point_links(fs.region, c, pxy, allowed)
            ia = np.concatenate([ia, pn[q]])
            ib = np.concatenate([ib, n + off])
        # portal -> portal (same piece)
        pa, pb = np.triu_indices(len(pn), 1)
        d = pxy[pb] - pxy[pa]
        ok = angle_ok(d, ptan[pa], amin[pa]) & angle_ok(-d, ptan[pb], amin[pb])
        ok &= np.linalg.norm(d, axis=1) > 0
        pa, pb = pa[ok], pb[ok]
        vis = segments_free(fs.region, pxy[pa], pxy[pb])
        ia = np.concatenate([ia, pn[pa[vis]]])
        ib = np.concatenate([ib, pn[pb[vis]]])
    length, cost = edge_costs(fs, ng.xy[ia], ng.xy[ib])
    lo, hi = np.minimum(ia, ib), np.maximum(ia, ib)
    out.extend((i, j, ln, w, False) for i, j, ln, w in zip(lo.tolist(), hi.tolist(), length.tolist(), cost.tolist()))
    return out
