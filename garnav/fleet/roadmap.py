"""A roadmap of the free space shared by several robots: lattice, seed routes, seam portals.

Nodes are pattern points (piece, x, y). They come from

* a triangular lattice of spacing ``h`` over every piece (so robots can step aside and wait where the
  fabric is wide),
* the single-robot shortest routes of every task, cut into steps of at most ``h`` (so a robot that
  meets nobody drives its own shortest route, and the schedule's lower bound is reached),
* starts, goals and meeting slots,
* pairs of seam portals every ``h`` along each crossable seam (the two frames of one fabric point).

Edges are straight segments of at most ``1.8 h`` inside one piece (the lattice's 12 directions,
any-angle within 15°, as in the any-angle roadmaps of Yakovlev & Andreychuk 2017), the steps of the
seed routes, and zero-length crossings between portal pairs. Robots of different size share the
nodes; each size class keeps only the nodes and edges inside its own free space
(:func:`garnav.plan.build_free_space`, via the class's :class:`~garnav.plan.Planner`). An edge that
ends on a seam keeps the seam's smallest crossing angle.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import shapely
from scipy.spatial import cKDTree

from garnav.model import Garment
from garnav.plan.freespace import FreeSpace, run_frame
from garnav.polyline import cumulative_length, point_at_length

__all__ = ["Roadmap", "ClassGraph", "build_roadmap", "seam_portals"]

# Free regions are widened by this much for point and segment tests, so that points exactly on a
# seam edge (where the free space ends) count as inside, mm.
ON_EDGE_TOL_MM = 1e-6
# Nodes closer than this many lattice spacings are joined: the lattice's first two rings (h and
# √3·h, 12 directions 30° apart); the third ring (2h) only repeats the first ring's directions.
NEIGHBOUR_REACH = 1.8


@dataclass(eq=False)
class ClassGraph:
    """Adjacency of one robot size class: ``adj[n]`` = list of (node, length mm)."""

    valid: np.ndarray
    adj: list[list[tuple[int, float]]]


@dataclass(eq=False)
class Roadmap:
    """Nodes (piece index, xy) and one :class:`ClassGraph` per robot size class.

    ``crossing[(u, v)]`` names the seam of a zero-length crossing edge and its from side.
    """

    pieces: tuple[str, ...]
    node_piece: np.ndarray
    xy: np.ndarray
    classes: dict[str, ClassGraph] = field(default_factory=dict)
    crossing: dict[tuple[int, int], tuple[str, str, float]] = field(default_factory=dict)
    seed_nodes: list[np.ndarray] = field(default_factory=list)

    def piece_of(self, n: int) -> str:
        return self.pieces[int(self.node_piece[n])]


def _lattice(polygon: shapely.Geometry, h: float) -> np.ndarray:
    x0, y0, x1, y1 = polygon.bounds
    ys = np.arange(y0 + h / 2, y1, h * math.sqrt(3) / 2)
    pts = []
    for i, y in enumerate(ys):
        xs = np.arange(x0 + (h / 2 if i % 2 else 0.0) + h / 4, x1, h)
        pts.append(np.column_stack([xs, np.full(len(xs), y)]))
    return np.vstack(pts) if pts else np.zeros((0, 2))


def seam_portals(garment: Garment, spacing_mm: float) -> list[tuple[str, float, np.ndarray, np.ndarray]]:
    """(seam, fraction, point on run a, point on run b) every ``spacing_mm`` along each crossable
    seam (ends excluded: they are piece corners)."""
    out: list[tuple[str, float, np.ndarray, np.ndarray]] = []
    for s in garment.seams:
        if not s.crossable:
            continue
        pa = garment.run_polyline(s.a)
        length = cumulative_length(pa)[-1]
        k = max(int(length // spacing_mm), 1)
        fr = (np.arange(k) + 0.5) / k
        a = point_at_length(pa, fr * length)
        b = garment.seam_partner(s, "a", fr)
        out.extend((s.name, float(f), a[i], b[i]) for i, f in enumerate(fr))
    return out


def build_roadmap(
    garment: Garment,
    free: dict[str, FreeSpace],
    seeds: list[tuple[str, np.ndarray]],
    crossings: list[tuple[str, str, float, str, np.ndarray, str, np.ndarray]],
    spacing_mm: float,
) -> Roadmap:
    """Build the shared roadmap.

    Parameters
    ----------
    garment : Garment
    free : dict
        Size-class name → that class's free space.
    seeds : list of (piece, (m, 2) points)
        Polylines inside one piece (route legs; a single point for a start, goal or slot); their
        consecutive points are joined by edges where free.
    crossings : list of (seam, side, fraction, from piece, (2,) point, to piece, (2,) point)
        Seam crossings of the seed routes, joined by zero-length edges.
    spacing_mm : float
        Lattice and portal spacing ``h``, mm.
    """
    h = float(spacing_mm)
    pieces = tuple(p.name for p in garment.pieces)
    pidx = {p: i for i, p in enumerate(pieces)}
    node_piece: list[np.ndarray] = []
    node_xy: list[np.ndarray] = []
    count = 0

    def add(piece: str, pts: np.ndarray) -> np.ndarray:
        nonlocal count
        pts = np.asarray(pts, float).reshape(-1, 2)
        node_piece.append(np.full(len(pts), pidx[piece], dtype=int))
        node_xy.append(pts)
        ids = np.arange(count, count + len(pts))
        count += len(pts)
        return ids

    chain_edges: list[tuple[int, int]] = []
    seed_ids: list[np.ndarray] = []
    for piece, pts in seeds:
        pts = np.asarray(pts, float).reshape(-1, 2)
        dense = [pts[0]]
        for a, b in zip(pts[:-1], pts[1:], strict=False):
            k = max(int(math.ceil(np.hypot(*(b - a)) / h)), 1)
            dense.extend(a + (b - a) * (j / k) for j in range(1, k + 1))
        ids = add(piece, np.array(dense))
        seed_ids.append(ids)
        chain_edges.extend(zip(ids[:-1].tolist(), ids[1:].tolist(), strict=False))
    cross_edges: list[tuple[int, int, str, str, float]] = []
    for seam, side, frac, pa, xa, pb, xb in crossings:
        ia = int(add(pa, xa)[0])
        ib = int(add(pb, xb)[0])
        cross_edges.append((ia, ib, seam, side, frac))
    for seam, frac, xa, xb in seam_portals(garment, h):
        s = garment.seam(seam)
        ia = int(add(s.a.piece, xa)[0])
        ib = int(add(s.b.piece, xb)[0])
        cross_edges.append((ia, ib, seam, "a", frac))
    for p in garment.pieces:
        add(p.name, _lattice(p.polygon, h))

    npc = np.concatenate(node_piece)
    xy = np.vstack(node_xy)
    # one node per fabric point of a piece: seeds, route points and portals may repeat
    _, first, inv = np.unique(np.column_stack([npc, xy]), axis=0, return_index=True, return_inverse=True)
    inv = inv.reshape(-1)
    keep = np.sort(first)
    order_of_first = np.argsort(first)  # rank of each unique row by first appearance
    rank = np.empty(len(first), int)
    rank[order_of_first] = np.arange(len(first))
    remap = rank[inv]
    npc, xy = npc[keep], xy[keep]
    seed_ids = [remap[ids] for ids in seed_ids]
    chain_edges = [(int(remap[u]), int(remap[v])) for u, v in chain_edges]
    cross_edges = [(int(remap[u]), int(remap[v]), sn, sd, fr) for u, v, sn, sd, fr in cross_edges]
    rm = Roadmap(pieces, npc, xy, seed_nodes=seed_ids)

    # portal nodes keep their seam's smallest crossing angle: (node → (tangent, min angle))
    portal_tan: dict[int, tuple[np.ndarray, float]] = {}
    for ia, ib, seam, side, frac in cross_edges:
        s = garment.seam(seam)
        ra, rb = (s.a, s.b) if side == "a" else (s.b, s.a)
        if s.min_crossing_angle_deg > 0:
            portal_tan[ia] = (run_frame(garment, ra, frac)[1], s.min_crossing_angle_deg)
            portal_tan[ib] = (run_frame(garment, rb, frac)[1], s.min_crossing_angle_deg)
        rm.crossing[(ia, ib)] = (seam, side, frac)
        rm.crossing[(ib, ia)] = (seam, "b" if side == "a" else "a", frac)

    # candidate pairs: near neighbours on each piece, plus the seed chains
    pairs: list[np.ndarray] = []
    for i, _ in enumerate(pieces):
        ids = np.flatnonzero(npc == i)
        if len(ids) < 2:
            continue
        tree = cKDTree(xy[ids])
        pr = tree.query_pairs(NEIGHBOUR_REACH * h, output_type="ndarray")
        if len(pr):
            pairs.append(ids[pr])
    if chain_edges:
        pairs.append(np.array(chain_edges, dtype=int))
    cand = np.unique(np.sort(np.vstack(pairs), axis=1), axis=0) if pairs else np.zeros((0, 2), int)
    cand = cand[cand[:, 0] != cand[:, 1]]
    length = np.hypot(*(xy[cand[:, 1]] - xy[cand[:, 0]]).T)
    cand, length = cand[length > 0], length[length > 0]
    angle_ok = np.ones(len(cand), bool)
    for end in (0, 1):
        for k, (node, other) in enumerate(zip(cand[:, end], cand[:, 1 - end], strict=False)):
            pt = portal_tan.get(int(node))
            if pt is None:
                continue
            d = (xy[other] - xy[node]) / length[k]
            ang = math.degrees(math.asin(min(1.0, abs(d[0] * pt[0][1] - d[1] * pt[0][0]))))
            if ang < pt[1] - 1e-9:
                angle_ok[k] = False
    cand, length = cand[angle_ok], length[angle_ok]

    for name, fs in free.items():
        valid = np.zeros(len(xy), bool)
        edge_ok = np.zeros(len(cand), bool)
        for i, piece in enumerate(pieces):
            region = fs[piece].region
            if region.is_empty:
                continue
            tol = region.buffer(ON_EDGE_TOL_MM)
            shapely.prepare(tol)
            on = npc == i
            valid[on] = shapely.covers(tol, shapely.points(xy[on]))
            sel = np.flatnonzero(npc[cand[:, 0]] == i)
            if len(sel):
                segs = shapely.linestrings(np.stack([xy[cand[sel, 0]], xy[cand[sel, 1]]], axis=1))
                edge_ok[sel] = shapely.covers(tol, segs)
        adj: list[list[tuple[int, float]]] = [[] for _ in range(len(xy))]
        for (u, v), w in zip(cand[edge_ok].tolist(), length[edge_ok].tolist(), strict=False):
            if valid[u] and valid[v]:
                adj[u].append((v, w))
                adj[v].append((u, w))
        for ia, ib, *_ in cross_edges:
            if valid[ia] and valid[ib]:
                adj[ia].append((ib, 0.0))
                adj[ib].append((ia, 0.0))
        for lst in adj:
            lst.sort()
        rm.classes[name] = ClassGraph(valid, adj)
    return rm
