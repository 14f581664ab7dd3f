"""A direction-aware lattice over the free space, for routes the robot can drive.

Nodes are grid points of spacing h in each piece's free space plus points along every crossable
seam; edges join nodes up to two grid steps apart (16 directions) when the segment lies in the
free space. Each directed edge is classed by the force balance at its two ends
(:func:`garnav.mechanics.balance.heading_limits`): drivable as it is, drivable only as a
switchback, or not at all.

Switchbacks follow Rowe & Ross, "Optimal grid-free path planning across arbitrarily contoured
terrain with anisotropic friction and gravity effects" (IEEE Trans. Robotics and Automation 6(5),
1990): a direction too steep to drive ("impermissible") is crossed by zig-zagging at the limiting
heading ψ* on either side of it, and the zig-zag's length is the uphill progress u over cos ψ*,
whatever the number of turns. On a plane of slope β with along-path limit θ, sin θ = sin β cos ψ*,
so a climb of Δh costs exactly Δh / sin θ — the optimum (docs/physics.md). Such an edge gets
that length as its cost and is expanded into zig-zag legs at ψ* when the route is assembled. On
a curved drape ψ* is taken from the stricter end of each edge; the assembled route is checked
segment by segment on the drape afterwards (:mod:`garnav.mechanics.planning`).

The lattice search is Dijkstra's algorithm (scipy.sparse.csgraph) on the directed edge costs:
length, time (length / speed) or energy (:mod:`garnav.mechanics.evaluate`'s model).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import dijkstra

from garnav.mechanics.balance import heading_limits
from garnav.mechanics.profile import RobotPhysics
from garnav.polyline import cumulative_length, point_at_length
from garnav.plan.visgraph import segments_free

__all__ = ["Lattice", "build_lattice", "LatticeCosts", "edge_classes", "OK", "ZIG", "NO"]

OK, ZIG, NO = 0, 1, 2
#: Grid offsets of the 16 edge directions (one step and knight's moves), one per direction.
_STEPS = np.array(
    [(1, 0), (1, 1), (0, 1), (-1, 1), (-1, 0), (-1, -1), (0, -1), (1, -1),
     (2, 1), (1, 2), (-1, 2), (-2, 1), (-2, -1), (-1, -2), (1, -2), (2, -1)], dtype=int
)
#: A switchback must make at least this much uphill (or downhill) progress per unit length
#: (cos ψ*), or the edge is refused: turns would outnumber metres.
_MIN_ZIG_COS = 0.05
#: Lattice nodes farther than this (mm) outside the drape's triangles are dropped.
_ON_MESH_MM = 0.5


@dataclass(frozen=True, eq=False)
class Lattice:
    """Nodes and candidate edges over the free space of some pieces (built once per query set).

    Attributes
    ----------
    xy : (V, 2) float array
        Node positions, piece frame, mm.
    piece : (V,) int array
        Index into ``pieces``.
    pieces : tuple of str
    face : (V,) int array
        Drape triangle under each node.
    seam_node : (V,) int array
        For seam nodes the index into ``seam_info``, else −1.
    seam_info : list of (seam name, fraction, side 0 = run a / 1 = run b)
    edges : (E, 2) int array
        Directed candidate edges (both directions listed), free in the free space.
    crossing : (E,) bool array
        True for the zero-length seam crossings.
    spacing_mm : float
    """

    xy: np.ndarray
    piece: np.ndarray
    pieces: tuple[str, ...]
    face: np.ndarray
    seam_node: np.ndarray
    seam_info: list
    edges: np.ndarray
    crossing: np.ndarray
    spacing_mm: float


def _grid_nodes(region, spacing: float) -> np.ndarray:
    """(n, 2) grid points of spacing ``spacing`` covered by ``region``, row by row."""
    import shapely

    x0, y0, x1, y1 = region.bounds
    xs = np.arange(math.floor(x0 / spacing), math.ceil(x1 / spacing) + 1) * spacing
    ys = np.arange(math.floor(y0 / spacing), math.ceil(y1 / spacing) + 1) * spacing
    gx, gy = np.meshgrid(xs, ys, indexing="xy")
    pts = np.column_stack([gx.ravel(), gy.ravel()])
    return pts[shapely.covers(region, shapely.points(pts))]


def build_lattice(garment, free, drape, pieces, spacing_mm: float, robot) -> Lattice:
    """Build the lattice on ``pieces`` (names) of a garment.

    Parameters
    ----------
    garment : Garment
    free : FreeSpace
        The planner's free space (``Planner.free``).
    drape : Drape
    pieces : iterable of str
    spacing_mm : float
        Grid step h, mm.
    robot : Robot
        For the seam approach length (its radius).
    """
    pieces = tuple(sorted(set(pieces)))
    h = float(spacing_mm)
    xy, pid, faces, seam_node = [], [], [], []
    edges: list[np.ndarray] = []
    crossing_pairs: list[tuple[int, int]] = []
    seam_info: list = []
    count = 0
    grid_index: dict[str, tuple[int, np.ndarray]] = {}
    for k, name in enumerate(pieces):
        region = free[name].region
        if region.is_empty:
            continue
        pts = _grid_nodes(region, h)
        if not len(pts):
            continue
        hits = drape.locate(name, pts, snap_mm=2.0 * h)
        on = hits.snap <= _ON_MESH_MM  # points in a gap between the outline and the mesh's chords
        pts = pts[on]
        hits = type(hits)(hits.face[on], hits.bary[on], hits.snap[on])
        if not len(pts):
            continue
        ij = np.rint(pts / h).astype(np.int64)
        xy.append(pts)
        pid.append(np.full(len(pts), k))
        faces.append(hits.face)
        seam_node.append(np.full(len(pts), -1))
        lo = ij.min(axis=0)
        rel = ij - lo + 2
        dense = np.full(tuple(rel.max(axis=0) + 3), -1, dtype=np.int64)
        dense[rel[:, 0], rel[:, 1]] = np.arange(len(pts))
        a_parts, b_parts = [], []
        for di, dj in _STEPS:
            m = dense[rel[:, 0] + di, rel[:, 1] + dj]
            has = np.flatnonzero(m >= 0)
            a_parts.append(has)
            b_parts.append(m[has])
        a_arr, b_arr = np.concatenate(a_parts), np.concatenate(b_parts)
        if len(a_arr):
            ok = segments_free(region, pts[a_arr], pts[b_arr])
            edges.append(np.column_stack([a_arr[ok] + count, b_arr[ok] + count]))
        grid_index[name] = (count, pts)
        count += len(pts)
    # seam nodes: pairs of points at equal fractions of the two runs, linked to nearby grid nodes
    for seam in garment.seams:
        if not seam.crossable or seam.a.piece not in grid_index or seam.b.piece not in grid_index:
            continue
        length = garment.run_length(seam.a)
        n = max(1, int(math.ceil(length / h)))
        fractions = (np.arange(n) + 0.5) / n
        ends = []
        good = np.ones(n, bool)
        for run in (seam.a, seam.b):
            poly = garment.run_polyline(run)
            total = cumulative_length(poly)[-1]
            p = point_at_length(poly, fractions * total)
            eps = min(0.5, 0.25 * total / n)
            tan = point_at_length(poly, np.clip(fractions * total + eps, 0, total)) - point_at_length(
                poly, np.clip(fractions * total - eps, 0, total))
            tan = tan / np.maximum(np.linalg.norm(tan, axis=1, keepdims=True), 1e-12)
            hits = drape.locate(run.piece, p, snap_mm=2.0 * h)
            good &= free[run.piece].covers(p) & (hits.snap <= _ON_MESH_MM)
            ends.append((run.piece, p, tan, hits.face))
        for i in np.flatnonzero(good):
            ids = []
            for side, (name, p_all, tan_all, face_all) in enumerate(ends):
                p, tan = p_all[i], tan_all[i]
                off, pts = grid_index[name]
                node = count
                xy.append(p[None])
                pid.append(np.array([pieces.index(name)]))
                faces.append(face_all[i : i + 1])
                seam_node.append(np.array([len(seam_info)]))
                seam_info.append((seam.name, float(fractions[i]), side))
                count += 1
                near = np.flatnonzero(np.linalg.norm(pts - p, axis=1) <= 2.5 * h)
                if len(near):
                    d = pts[near] - p
                    cosang = np.abs(d @ tan) / np.maximum(np.linalg.norm(d, axis=1), 1e-12)
                    angle = np.degrees(np.arccos(np.clip(cosang, 0.0, 1.0)))
                    keep = near[angle >= seam.min_crossing_angle_deg - 1e-9]
                    if len(keep):
                        ok = segments_free(free[name].region, np.repeat(p[None], len(keep), 0), pts[keep])
                        keep = keep[ok] + off
                        edges.append(np.column_stack([np.full(len(keep), node), keep]))
                        edges.append(np.column_stack([keep, np.full(len(keep), node)]))
                ids.append(node)
            crossing_pairs.append((ids[0], ids[1]))
            crossing_pairs.append((ids[1], ids[0]))
    plain = np.vstack(edges) if edges else np.zeros((0, 2), dtype=int)
    cross = np.array(crossing_pairs, dtype=int).reshape(-1, 2)
    all_edges = np.vstack([plain, cross]).astype(np.int64)
    crossing = np.concatenate([np.zeros(len(plain), bool), np.ones(len(cross), bool)])
    return Lattice(
        xy=np.vstack(xy) if xy else np.zeros((0, 2)),
        piece=np.concatenate(pid).astype(int) if pid else np.zeros(0, int),
        pieces=pieces,
        face=np.concatenate(faces).astype(int) if faces else np.zeros(0, int),
        seam_node=np.concatenate(seam_node).astype(int) if seam_node else np.zeros(0, int),
        seam_info=seam_info,
        edges=all_edges,
        crossing=crossing,
        spacing_mm=h,
    )


@dataclass(frozen=True, eq=False)
class LatticeCosts:
    """Per-edge class (:data:`OK`, :data:`ZIG`, :data:`NO`), cost and switchback heading.

    ``zig_cos`` (E,): cos ψ* of the switchback legs (uphill positive, downhill negative; nan for
    straight edges); ``uphill`` (E, 2): unit uphill direction in the pattern at the edge.
    """

    klass: np.ndarray
    cost: np.ndarray
    length_mm: np.ndarray
    zig_cos: np.ndarray
    uphill: np.ndarray


def node_terms(drape, physics: RobotPhysics, gravity: np.ndarray, face: np.ndarray, piece_names,
               side: str, safety_scale: float = 1.0):
    """Per point: pattern→3D Jacobian (n, 3, 2), heading limits and uphill direction (n, 2)."""
    jac = np.asarray(drape.jacobian)[face]
    normal = np.asarray(drape.face_normals)[face]
    if side == "inside":
        normal = -normal
    forces = physics.piece_forces(drape.piece_names)[np.asarray(drape.face_piece)[face]]
    p = physics
    lim = heading_limits(normal, gravity, p.weight_n, forces, p.friction_coefficient,
                         p.rolling_resistance, p.drive_force_n, p.safety_factor * safety_scale,
                         p.drive_safety_factor * safety_scale)
    up = np.einsum("nkd,k->nd", jac, -np.asarray(gravity, dtype=float))  # pattern gradient of height
    norm = np.linalg.norm(up, axis=1, keepdims=True)
    up = np.where(norm > 1e-12, up / np.where(norm > 1e-12, norm, 1.0), 0.0)
    return jac, lim, up


def edge_classes(
    xy_a: np.ndarray,
    xy_b: np.ndarray,
    terms_a,
    terms_b,
    gravity: np.ndarray,
    physics: RobotPhysics,
    cost: str,
    speed_mm_s: float,
) -> LatticeCosts:
    """Class and cost of straight pattern edges a → b (E, 2), from the terms at both ends.

    ``terms_*`` are :func:`node_terms` results for the two ends of every edge.
    """
    g = np.asarray(gravity, dtype=float)
    d = xy_b - xy_a
    length = np.linalg.norm(d, axis=1)
    unit = d / np.maximum(length, 1e-12)[:, None]
    cos_end, t3len, along_end = [], [], []
    for jac, lim, _ in (terms_a, terms_b):
        t3 = np.einsum("nkd,nd->nk", jac, unit)
        tl = np.linalg.norm(t3, axis=1)
        t3 = t3 / np.maximum(tl, 1e-12)[:, None]
        along = -(t3 @ g)
        with np.errstate(divide="ignore", invalid="ignore"):
            c = np.where(lim.sin_theta > 1e-9, along / np.maximum(lim.sin_theta, 1e-300), 0.0)
        cos_end.append(np.clip(c, -1.0, 1.0))
        t3len.append(tl)
        along_end.append(along)
    lims = (terms_a[1], terms_b[1])
    blocked = lims[0].blocked | lims[1].blocked
    ok = ~blocked
    up_need = np.zeros(len(d), bool)
    down_need = np.zeros(len(d), bool)
    for c, lim in zip(cos_end, lims, strict=True):
        up_need |= c > lim.c_hi + 1e-12
        down_need |= c < lim.c_lo - 1e-12
    c_hi = np.minimum(lims[0].c_hi, lims[1].c_hi)
    c_lo = np.maximum(lims[0].c_lo, lims[1].c_lo)
    klass = np.full(len(d), OK)
    klass[up_need | down_need] = ZIG
    klass[blocked | (up_need & down_need)] = NO
    klass[ok & up_need & ~down_need & (c_hi < _MIN_ZIG_COS)] = NO
    klass[ok & down_need & ~up_need & (c_lo > -_MIN_ZIG_COS)] = NO
    zig_cos = np.where(up_need, c_hi, np.where(down_need, c_lo, np.nan))
    stretch = 0.5 * (t3len[0] + t3len[1])
    length3 = length * stretch
    c_edge = np.maximum(np.abs(cos_end[0]), np.abs(cos_end[1]))
    with np.errstate(divide="ignore", invalid="ignore"):
        factor = np.where(klass == ZIG, c_edge / np.abs(zig_cos), 1.0)
    factor = np.where(np.isfinite(factor), np.maximum(factor, 1.0), 1.0)
    drive_len = length3 * factor
    if cost == "energy":
        rise_m = length3 * 0.5 * (along_end[0] + along_end[1]) * 1e-3
        value = physics.power_w * drive_len / speed_mm_s + np.clip(physics.weight_n * rise_m, 0.0, None) / physics.drive_efficiency
    elif cost == "time":
        value = drive_len / speed_mm_s
    else:
        value = drive_len
    up_dir = terms_a[2] + terms_b[2]
    nrm = np.linalg.norm(up_dir, axis=1, keepdims=True)
    up_dir = np.where(nrm > 1e-12, up_dir / np.where(nrm > 1e-12, nrm, 1.0), 0.0)
    return LatticeCosts(klass, value, drive_len, zig_cos, up_dir)


def shortest(n_nodes: int, u: np.ndarray, v: np.ndarray, w: np.ndarray, source: int, targets):
    """Dijkstra on directed edges u → v of cost w (parallel edges: the cheapest).

    Returns (node path, cost) to the cheapest of ``targets``, or (None, inf)."""
    if len(u):
        order = np.lexsort((w, v, u))
        u, v, w = u[order], v[order], w[order]
        first = np.ones(len(u), bool)
        first[1:] = (u[1:] != u[:-1]) | (v[1:] != v[:-1])
        u, v, w = u[first], v[first], w[first]
    mat = sp.csr_matrix((np.maximum(w, 1e-9), (u, v)), shape=(n_nodes, n_nodes))
    dist, pred = dijkstra(mat, directed=True, indices=source, return_predecessors=True)
    targets = list(targets)
    best = min(targets, key=lambda t: dist[t])
    if not np.isfinite(dist[best]):
        return None, math.inf
    path = [best]
    while path[-1] != source:
        path.append(int(pred[path[-1]]))
    return path[::-1], float(dist[best])
