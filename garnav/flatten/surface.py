"""A 3D garment surface to cut and flatten: positions, triangles, and its edge topology.

The surface of a 3D-first garment (a scan, a simulated garment) is read without its texture
coordinates: only the ``v`` and ``f`` lines of an OBJ (in file order, so that a cut file can name
vertices by their place in the file), or the triangles of a glTF / PLY file through trimesh.
Coincident positions are welded, triangles with no 3D area are dropped (with a note), and the
surface is refused unless it is an oriented 2-manifold with boundary: every edge on one or two
triangles, the two triangles of an edge running it in opposite directions, and the triangles
around every vertex forming one fan.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from functools import cached_property

import numpy as np
import scipy.sparse
import scipy.sparse.csgraph

from garnav.drape.meshio import checked_mesh_file, parse_obj, weld_positions
from garnav.errors import MeshError
from garnav.drape.meshio import readonly_array as _ro
from garnav.textio import read_text

__all__ = ["Surface", "surface_from_arrays", "load_surface", "corner_classes", "NEXT"]

#: Edge k of a face is opposite corner k: it runs from corner NEXT[k] to corner NEXT[NEXT[k]].
NEXT = np.array([1, 2, 0])


@dataclass(frozen=True, eq=False)
class Surface:
    """A welded, oriented, manifold triangle surface.

    Parameters
    ----------
    positions : (V, 3) float array
        Welded vertex positions, world mm.
    faces : (F, 3) int array
        Vertex ids of each triangle, counter-clockwise seen from the garment's outside.
    file_vertex : (N,) int array
        Welded vertex of each vertex of the file, in file order (-1 for a vertex no triangle
        uses).
    source : str
        The file, for messages.
    corner_uv : (F, 3, 2) float array or None
        The file's texture coordinates, when it has them (only ``--reflatten`` reads them).
    notes : tuple of str
        What loading changed.
    """

    positions: np.ndarray
    faces: np.ndarray
    file_vertex: np.ndarray
    source: str = "<memory>"
    corner_uv: np.ndarray | None = None
    notes: tuple[str, ...] = field(default=())

    def __post_init__(self) -> None:
        object.__setattr__(self, "positions", _ro(np.asarray(self.positions, dtype=float)))
        object.__setattr__(self, "faces", _ro(np.asarray(self.faces, dtype=np.int64)))
        object.__setattr__(self, "file_vertex", _ro(np.asarray(self.file_vertex, dtype=np.int64)))

    @property
    def n_vertices(self) -> int:
        return int(len(self.positions))

    @cached_property
    def half_edges(self) -> tuple[np.ndarray, np.ndarray]:
        """(3F,) start and end vertex of half-edge 3f + k (edge k of face f, opposite corner k)."""
        f = self.faces
        return f[:, NEXT].reshape(-1), f[:, NEXT[NEXT]].reshape(-1)

    @cached_property
    def twin(self) -> np.ndarray:
        """(3F,) the half-edge on the same edge in the neighbouring face, -1 on the boundary."""
        a, b = self.half_edges
        lo, hi = np.minimum(a, b), np.maximum(a, b)
        order = np.lexsort((hi, lo))
        same = (lo[order][1:] == lo[order][:-1]) & (hi[order][1:] == hi[order][:-1])
        twin = np.full(len(a), -1, dtype=np.int64)
        i, j = order[:-1][same], order[1:][same]
        twin[i], twin[j] = j, i
        return _ro(twin)

    @cached_property
    def edge_graph(self) -> scipy.sparse.csr_matrix:
        """(V, V) symmetric sparse matrix of edge lengths (mm) between neighbouring vertices."""
        a, b = self.half_edges
        e = np.unique(np.column_stack([np.minimum(a, b), np.maximum(a, b)]), axis=0)
        w = np.linalg.norm(self.positions[e[:, 0]] - self.positions[e[:, 1]], axis=1)
        n = self.n_vertices
        rows, cols = np.concatenate([e[:, 0], e[:, 1]]), np.concatenate([e[:, 1], e[:, 0]])
        return scipy.sparse.coo_matrix((np.concatenate([w, w]), (rows, cols)), shape=(n, n)).tocsr()

    def where(self, v: int) -> str:
        p = self.positions[v]
        return f"({p[0]:.1f}, {p[1]:.1f}, {p[2]:.1f}) mm"


def corner_classes(faces: np.ndarray, twin: np.ndarray, joined: np.ndarray) -> np.ndarray:
    """Group the face corners around each vertex into fans joined across edges.

    Parameters
    ----------
    faces : (F, 3) int array
    twin : (3F,) int array
        See :attr:`Surface.twin`.
    joined : (3F,) bool array
        Whether the two faces of half-edge h are joined across it (an uncut interior edge).

    Returns
    -------
    (F, 3) int array
        Class of each corner (3f + c): corners of one vertex joined through a chain of joined
        edges share a class. Classes are numbered by their lowest corner.
    """
    n = 3 * len(faces)
    h = np.flatnonzero(joined & (twin >= 0))
    h = h[h < twin[h]]
    t = twin[h]
    f, k = h // 3, h % 3
    g, m = t // 3, t % 3
    # half-edge h runs corner NEXT[k] -> NEXT[NEXT[k]] of f; its twin runs the other way in g
    a1, a2 = 3 * f + NEXT[k], 3 * g + NEXT[NEXT[m]]
    b1, b2 = 3 * f + NEXT[NEXT[k]], 3 * g + NEXT[m]
    rows = np.concatenate([a1, b1])
    cols = np.concatenate([a2, b2])
    graph = scipy.sparse.coo_matrix((np.ones(len(rows)), (rows, cols)), shape=(n, n))
    _, labels = scipy.sparse.csgraph.connected_components(graph, directed=False)
    first = np.full(labels.max() + 1, n, dtype=np.int64)
    np.minimum.at(first, labels, np.arange(n))
    rank = np.empty(len(first), dtype=np.int64)
    rank[np.argsort(first, kind="stable")] = np.arange(len(first))
    return rank[labels].reshape(-1, 3)


def surface_from_arrays(
    positions: np.ndarray,
    faces: np.ndarray,
    *,
    source: str = "<memory>",
    corner_uv: np.ndarray | None = None,
    weld_tol_mm: float = 1e-4,
    area_tol_mm2: float = 1e-10,
    flip: bool = False,
) -> Surface:
    """Build a checked :class:`Surface` from raw arrays.

    Parameters
    ----------
    positions : (N, 3) float array, mm
    faces : (F, 3) int array
    source : str
        File name for messages.
    corner_uv : (F, 3, 2) float array, optional
        Texture coordinates to keep (for cutting along the UV seams).
    weld_tol_mm : float
        Positions closer than this are one vertex.
    area_tol_mm2 : float
        Triangles with less 3D area are dropped.
    flip : bool
        The faces are clockwise seen from the outside (normals point inwards): reverse them.

    Raises
    ------
    MeshError
        Not a triangle mesh, non-finite positions, non-manifold edges or vertices, or triangles
        whose orientations disagree across an edge.
    """
    positions = np.asarray(positions, dtype=float)
    faces = np.asarray(faces)
    if positions.ndim != 2 or positions.shape[1] != 3 or faces.size == 0:
        raise MeshError(f"{source}: not a triangle mesh (no faces found)")
    if faces.ndim != 2 or faces.shape[1] != 3:
        raise MeshError(f"{source}: faces must be triangles, got shape {faces.shape}")
    faces = faces.astype(np.int64)
    if faces.min() < 0 or faces.max() >= len(positions):
        raise MeshError(f"{source}: a face refers to a vertex that does not exist")
    if not np.all(np.isfinite(positions)):
        raise MeshError(f"{source}: vertex positions contain NaN or infinity")
    if flip:
        faces = faces[:, ::-1]
        corner_uv = None if corner_uv is None else np.asarray(corner_uv)[:, ::-1]
    used = np.unique(faces)
    welded, index = weld_positions(positions[used], weld_tol_mm)
    file_vertex = np.full(len(positions), -1, dtype=np.int64)
    file_vertex[used] = index
    faces = file_vertex[faces]
    notes: list[str] = []
    tri = welded[faces]
    area = 0.5 * np.linalg.norm(np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0]), axis=1)
    flat = area <= area_tol_mm2
    if np.any(flat):
        if np.all(flat):
            raise MeshError(f"{source}: all {len(faces)} triangles have zero area")
        notes.append(f"skipped {int(flat.sum())} triangle(s) with zero area "
                     f"(first: face {int(np.flatnonzero(flat)[0])})")
        faces = faces[~flat]
        corner_uv = None if corner_uv is None else np.asarray(corner_uv)[~flat]
    keep = np.unique(faces)
    if len(keep) != len(welded):  # a weld or a dropped triangle left vertices unused
        remap = np.full(len(welded), -1, dtype=np.int64)
        remap[keep] = np.arange(len(keep))
        welded, faces = welded[keep], remap[faces]
        file_vertex = np.where(file_vertex >= 0, remap[np.maximum(file_vertex, 0)], -1)
    surface = Surface(welded, faces, file_vertex, source, corner_uv, tuple(notes))
    _check_manifold(surface)
    return surface


def _check_manifold(s: Surface) -> None:
    a, b = s.half_edges
    lo, hi = np.minimum(a, b), np.maximum(a, b)
    _, inv, counts = np.unique(np.column_stack([lo, hi]), axis=0, return_inverse=True,
                               return_counts=True)
    bad = counts[inv.reshape(-1)] > 2
    if np.any(bad):
        h = int(np.flatnonzero(bad)[0])
        raise MeshError(
            f"{s.source}: non-manifold mesh: {int((counts > 2).sum())} edge(s) are shared by more "
            f"than two triangles (first: from {s.where(int(a[h]))} to {s.where(int(b[h]))}); "
            "a garment surface is a sheet, split or remove the extra triangles")
    twin = s.twin
    inner = np.flatnonzero(twin >= 0)
    same = a[inner] == a[twin[inner]]
    if np.any(same):
        e = int(inner[np.flatnonzero(same)[0]])
        raise MeshError(
            f"{s.source}: the triangles on both sides of the edge from {s.where(int(a[e]))} to "
            f"{s.where(int(b[e]))} are oriented oppositely; orient all faces the same way (a "
            "non-orientable surface such as a Moebius strip cannot be flattened)")
    classes = corner_classes(s.faces, twin, twin >= 0)
    n_class = np.zeros(s.n_vertices, dtype=np.int64)
    first_of = np.full(classes.max() + 1, -1, dtype=np.int64)
    first_of[classes.reshape(-1)] = s.faces.reshape(-1)
    np.add.at(n_class, first_of, 1)
    if np.any(n_class > 1):
        v = int(np.flatnonzero(n_class > 1)[0])
        raise MeshError(
            f"{s.source}: non-manifold mesh: {int((n_class > 1).sum())} vertex(es) join triangle "
            f"fans that share no edge (first: vertex at {s.where(v)}); split them apart")


def load_surface(path: str | os.PathLike, *, weld_tol_mm: float = 1e-4, flip: bool = False,
                 keep_uv: bool = False) -> Surface:
    """Read a triangle surface (OBJ, glTF / GLB, PLY) without needing texture coordinates.

    Parameters
    ----------
    path : path-like
    weld_tol_mm : float
        Positions closer than this (mm) are one vertex.
    flip : bool
        The file's faces are clockwise seen from the garment's outside.
    keep_uv : bool
        Keep the OBJ's texture coordinates (when every corner has one) on the surface.

    Raises
    ------
    MeshError
        Missing or unreadable file, unknown format, or any problem of :func:`surface_from_arrays`.
    """
    p, source, suffix = checked_mesh_file(path)
    corner: np.ndarray | None = None
    if suffix == ".obj":
        text = read_text(p, lambda reason: MeshError(f"{source}: {reason}"),
                         binary_reason="is not a mesh file (an OBJ file is text, this is binary)")
        positions, faces, uv = parse_obj(text, source)
        corner = uv if (keep_uv and uv.size) else None
    else:
        import trimesh

        try:
            mesh = trimesh.load(str(p), force="mesh", process=False)
        except Exception as exc:  # trimesh raises many kinds for bad files
            raise MeshError(f"{source}: not a readable mesh file: {exc}") from None
        positions = np.asarray(getattr(mesh, "vertices", np.zeros((0, 3))), dtype=float)
        faces = np.asarray(getattr(mesh, "faces", np.zeros((0, 3))), dtype=np.int64)
        tex = getattr(getattr(mesh, "visual", None), "uv", None)
        if keep_uv and tex is not None and len(tex) == len(positions):
            corner = np.asarray(tex, dtype=float)[faces]
    return surface_from_arrays(positions, faces, source=source, corner_uv=corner,
                               weld_tol_mm=weld_tol_mm, flip=flip)

