"""Cut a 3D garment surface along seam lines and split it into pieces that are topological discs.

A cut runs along mesh edges: each cut curve of a cut file is snapped to mesh vertices (given by
index, or the nearest vertex of a 3D point within ``snap_mm``) and consecutive vertices are joined
by the shortest path along mesh edges (Dijkstra, scipy.sparse.csgraph). Cutting an edge unjoins its
two triangles; a vertex is then split into one copy per fan of triangles still joined around it
(a cut that ends inside the surface, a slit, leaves its end vertex whole). The pieces are the
connected components of the triangles across uncut edges.

Only a topological disc flattens without tearing: a piece must have Euler characteristic
V − E + F = 1 and one boundary loop (χ = 2 − 2g − b for genus g and b boundary loops; do Carmo,
*Differential Geometry of Curves and Surfaces*, §4-5, the Gauss–Bonnet theorem).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse
import scipy.sparse.csgraph
from scipy.spatial import cKDTree

from garnav.errors import MeshError
from garnav.flatten.cutfile import CutFile
from garnav.flatten.surface import NEXT, Surface, corner_classes

__all__ = ["CutSurface", "cut_paths", "cut_surface", "uv_seam_edges"]


@dataclass(frozen=True, eq=False)
class CutSurface:
    """A surface cut into pieces.

    Attributes
    ----------
    surface : Surface
    cut : (3F,) bool array
        Half-edges on a cut (both half-edges of a cut interior edge).
    cut_name : (3F,) object array
        Name of the cut each cut half-edge lies on ("" elsewhere).
    corner_vertex : (F, 3) int array
        Split vertex of every face corner (one per fan of joined triangles around a vertex).
    split_of : (S,) int array
        Surface vertex of each split vertex.
    face_piece : (F,) int array
        Piece of every face, numbered by lowest face.
    n_pieces : int
    notes : tuple of str
    """

    surface: Surface
    cut: np.ndarray
    cut_name: np.ndarray
    corner_vertex: np.ndarray
    split_of: np.ndarray
    face_piece: np.ndarray
    n_pieces: int
    notes: tuple[str, ...] = ()

    def piece_mesh(self, p: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """One piece as its own mesh: (faces ids (m,), local faces (m, 3), split vertex ids (n,))."""
        fids = np.flatnonzero(self.face_piece == p)
        cv = self.corner_vertex[fids]
        verts, local = np.unique(cv.reshape(-1), return_inverse=True)
        return fids, local.reshape(-1, 3), verts


def _edge_lookup(s: Surface) -> tuple[np.ndarray, np.ndarray]:
    """Sorted edge keys lo·V + hi of all half-edges, and the half-edge of each sorted key."""
    a, b = s.half_edges
    key = np.minimum(a, b) * s.n_vertices + np.maximum(a, b)
    order = np.argsort(key, kind="stable")
    return key[order], order


def _snap(s: Surface, cf: CutFile, curve, tree) -> list[int]:
    item = f"{cf.source}: cut '{curve.name}'"
    if curve.vertices is not None:
        out = []
        for k, v in enumerate(curve.vertices):
            if v >= len(s.file_vertex):
                raise MeshError(f"{item}: vertex #{k + 1} is {v}, but {s.source} has only "
                                f"{len(s.file_vertex)} vertices (0-based, in file order); the "
                                "seam curve is not on the mesh")
            w = int(s.file_vertex[v])
            if w < 0:
                raise MeshError(f"{item}: vertex #{k + 1} ({v}) is on no triangle of {s.source}; "
                                "the seam curve is not on the mesh")
            out.append(w)
        return out
    pts = np.asarray(curve.points, dtype=float)
    dist, idx = tree.query(pts)
    far = np.flatnonzero(dist > cf.snap_mm)
    if len(far):
        k = int(far[0])
        p = pts[k]
        raise MeshError(
            f"{item}: point #{k + 1} ({p[0]:.1f}, {p[1]:.1f}, {p[2]:.1f}) mm is {dist[k]:.1f} mm "
            f"from the nearest vertex of {s.source} (snap_mm = {cf.snap_mm:g}); the seam curve is "
            "not on the mesh (check its units and frame, or raise snap_mm)")
    return [int(i) for i in idx]


def cut_paths(s: Surface, cf: CutFile) -> tuple[np.ndarray, np.ndarray]:
    """Mark the half-edges of every cut of a cut file.

    Returns
    -------
    cut : (3F,) bool array
    cut_name : (3F,) object array

    Raises
    ------
    MeshError
        A vertex index not in the file, a point farther than ``snap_mm`` from the mesh, or two
        consecutive vertices that no chain of mesh edges joins.
    """
    n_h = 3 * len(s.faces)
    cut = np.zeros(n_h, dtype=bool)
    names = np.full(n_h, "", dtype=object)
    if not cf.cuts:
        return cut, names
    tree = cKDTree(s.positions)
    keys, order = _edge_lookup(s)
    graph = s.edge_graph
    for curve in cf.cuts:
        vs = _snap(s, cf, curve, tree)
        if curve.closed:
            vs = vs + vs[:1]
        path: list[int] = [vs[0]]
        for k in range(1, len(vs)):
            u, v = vs[k - 1], vs[k]
            if u == v:
                continue
            straight = float(np.linalg.norm(s.positions[u] - s.positions[v]))
            dist, pred = scipy.sparse.csgraph.dijkstra(
                graph, indices=v, return_predecessors=True, limit=10.0 * straight + 1e-9)
            if not np.isfinite(dist[u]):
                raise MeshError(
                    f"{cf.source}: cut '{curve.name}': vertices #{k} and #{k + 1} (at "
                    f"{s.where(u)} and {s.where(v)}) are not joined by mesh edges of {s.source} "
                    "(within 10 times their distance); the seam curve is not on one surface")
            w = u
            while w != v:  # walk u -> v along predecessors towards the source v
                w = int(pred[w])
                path.append(w)
        p = np.asarray(path, dtype=np.int64)
        if len(p) < 2:
            raise MeshError(f"{cf.source}: cut '{curve.name}': all its points snap to one vertex "
                            f"at {s.where(int(p[0]))}; the cut has no length")
        ek = np.minimum(p[:-1], p[1:]) * s.n_vertices + np.maximum(p[:-1], p[1:])
        lo = np.searchsorted(keys, ek, side="left")
        hi = np.searchsorted(keys, ek, side="right")
        for a, b in zip(lo.tolist(), hi.tolist(), strict=True):
            hs = order[a:b]
            cut[hs] = True
            names[hs] = np.where(names[hs] == "", curve.name, names[hs])
    return cut, names


def uv_seam_edges(s: Surface, uv_tol: float = 1e-7) -> np.ndarray:
    """(3F,) half-edges where the surface's texture map is discontinuous (its UV seams).

    An interior edge is a UV seam when the two triangles give either end different UVs.
    """
    if s.corner_uv is None:
        raise MeshError(f"{s.source}: the mesh has no texture coordinates, so it has no UV seams "
                        "to cut along; give the seams with --cut CUTS.toml")
    uv = np.asarray(s.corner_uv, dtype=float).reshape(-1, 2)
    twin = s.twin
    h = np.arange(len(twin))
    f, k = h // 3, h % 3
    start = 3 * f + NEXT[k]
    end = 3 * f + NEXT[NEXT[k]]
    t = np.maximum(twin, 0)
    g, m = t // 3, t % 3
    # the twin runs end -> start: its start corner holds our end vertex
    t_start, t_end = 3 * g + NEXT[m], 3 * g + NEXT[NEXT[m]]
    jump = np.maximum(np.abs(uv[start] - uv[t_end]).max(axis=1), np.abs(uv[end] - uv[t_start]).max(axis=1))
    return (twin >= 0) & (jump > uv_tol)


def _piece_where(s: Surface, faces: np.ndarray) -> str:
    c = s.positions[s.faces[faces]].reshape(-1, 3).mean(axis=0)
    return f"({c[0]:.0f}, {c[1]:.0f}, {c[2]:.0f}) mm"


def cut_surface(s: Surface, cut: np.ndarray, cut_name: np.ndarray | None = None,
                where: str = "") -> CutSurface:
    """Cut the surface along the marked half-edges and check that every piece is a disc.

    Parameters
    ----------
    s : Surface
    cut : (3F,) bool array
        Half-edges to cut (one half-edge of an edge is enough).
    cut_name : (3F,) object array, optional
    where : str
        Where the cuts come from (a cut file), for messages.

    Raises
    ------
    MeshError
        A piece that is not a topological disc: closed (no boundary), with several boundary loops
        (a tube or a ring), or with handles; the message says where the piece is and what cut
        would fix it.
    """
    twin = s.twin
    cut = np.asarray(cut, dtype=bool).copy()
    inner = twin >= 0
    cut[twin[cut & inner]] = True
    names = np.full(len(cut), "", dtype=object) if cut_name is None else np.asarray(cut_name).copy()
    names[twin[cut & inner]] = np.where(names[twin[cut & inner]] == "", names[cut & inner],
                                        names[twin[cut & inner]])
    notes = []
    on_boundary = cut & ~inner
    if np.any(on_boundary):
        notes.append(f"{int(on_boundary.sum())} cut edge(s) lie on the mesh's own boundary "
                     "(already open; nothing to cut there)")
    joined = inner & ~cut
    classes = corner_classes(s.faces, twin, joined)
    n_split = int(classes.max()) + 1
    split_of = np.empty(n_split, dtype=np.int64)
    split_of[classes.reshape(-1)] = s.faces.reshape(-1)
    h = np.flatnonzero(joined)
    h = h[h < twin[h]]
    n_f = len(s.faces)
    adj = scipy.sparse.coo_matrix((np.ones(len(h)), (h // 3, twin[h] // 3)), shape=(n_f, n_f))
    n_pieces, label = scipy.sparse.csgraph.connected_components(adj, directed=False)
    first = np.full(n_pieces, n_f, dtype=np.int64)
    np.minimum.at(first, label, np.arange(n_f))
    rank = np.empty(n_pieces, dtype=np.int64)
    rank[np.argsort(first, kind="stable")] = np.arange(n_pieces)
    face_piece = rank[label]
    result = CutSurface(s, cut, names, classes, split_of, face_piece, int(n_pieces), tuple(notes))
    _check_discs(result, where)
    return result


def _check_discs(cs: CutSurface, where: str) -> None:
    s = cs.surface
    twin = s.twin
    joined = (twin >= 0) & ~cs.cut
    hb = np.flatnonzero(~joined)  # boundary half-edges of the cut surface
    f, k = hb // 3, hb % 3
    b_start = cs.corner_vertex[f, NEXT[k]]
    b_end = cs.corner_vertex[f, NEXT[NEXT[k]]]
    n_split = len(cs.split_of)
    loop_graph = scipy.sparse.coo_matrix((np.ones(len(hb)), (b_start, b_end)), shape=(n_split, n_split))
    _, vloop = scipy.sparse.csgraph.connected_components(loop_graph, directed=False)
    vpiece = np.empty(n_split, dtype=np.int64)
    vpiece[cs.corner_vertex.reshape(-1)] = np.repeat(cs.face_piece, 3)
    n_f = np.bincount(cs.face_piece, minlength=cs.n_pieces)
    n_v = np.bincount(vpiece, minlength=cs.n_pieces)
    n_inner = np.bincount(cs.face_piece[np.flatnonzero(joined) // 3], minlength=cs.n_pieces) // 2
    bpiece = cs.face_piece[f]
    n_b = np.bincount(bpiece, minlength=cs.n_pieces)
    chi = n_v - (n_inner + n_b) + n_f
    loops_of: list[set[int]] = [set() for _ in range(cs.n_pieces)]
    for p, lp in zip(bpiece.tolist(), vloop[b_start].tolist(), strict=True):
        loops_of[p].add(lp)
    src = f"{s.source}" + (f" cut by {where}" if where else "")
    for p in range(cs.n_pieces):
        b = len(loops_of[p])
        if chi[p] == 1 and b == 1:
            continue
        place = _piece_where(s, np.flatnonzero(cs.face_piece == p))
        if b == 0:
            reason = ("is a closed surface with no boundary; cut it open along a seam line "
                      "and at least one more to make a disc")
        elif (2 - b - chi[p]) % 2 == 0 and 2 - b - chi[p] == 0:
            reason = (f"has {b} boundary loops (a tube or a ring, not a disc); add a cut that "
                      "joins them, e.g. along a side seam")
        else:
            genus = max(0, (2 - b - int(chi[p])) // 2)
            reason = (f"has {genus} handle(s) and {b} boundary loop(s) (Euler characteristic "
                      f"{int(chi[p])}, a disc has 1); add cuts through each handle")
        raise MeshError(f"{src}: piece {p + 1} (centre near {place}, {int(n_f[p])} triangles) "
                        f"{reason}; only a topological disc can be flattened")
