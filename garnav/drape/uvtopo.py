"""Topology of a mesh's UV layout: UV vertices, UV-edge neighbours, islands, boundary loops.

Two face corners are the same **UV vertex** when they sit on the same welded 3D vertex and carry
the same UV (within a tolerance). Two faces are **UV neighbours** when they share an edge whose
both ends are the same UV vertices. An **island** is a connected set of UV neighbours (one
flattened piece). Edges used by one face only are the islands' boundary; a boundary edge whose 3D
edge is shared by another face is a seam, the others are open (hems, cuffs, necklines).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse
import scipy.sparse.csgraph

from garnav.drape.meshio import UVMesh, weld_positions

__all__ = ["UVTopology", "uv_topology", "NEXT"]

#: Edge k of a face is opposite corner k: it runs from corner NEXT[k] to corner NEXT[NEXT[k]].
NEXT = np.array([1, 2, 0])


@dataclass(frozen=True, eq=False)
class UVTopology:
    """UV connectivity of a :class:`UVMesh`.

    Attributes
    ----------
    uv_vertex : (F, 3) int array
        UV vertex id of each face corner.
    neighbor : (F, 3) int array
        Face across edge k (opposite corner k) in UV, -1 on an island boundary.
    island : (F,) int array
        Island of each face, numbered by lowest face index.
    n_islands : int
    boundary : (B, 2) int array
        Boundary half-edges as (face, k): edge k of that face, oriented as in the face.
    mate : (B,) int array
        For each boundary half-edge, the boundary half-edge on the same 3D edge (the other side
        of a seam), or -1 when the 3D edge is open.
    """

    uv_vertex: np.ndarray
    neighbor: np.ndarray
    island: np.ndarray
    n_islands: int
    boundary: np.ndarray
    mate: np.ndarray

    def boundary_corners(self) -> tuple[np.ndarray, np.ndarray]:
        """(B,) start and end corner indices (0..2) of each boundary half-edge."""
        k = self.boundary[:, 1]
        return NEXT[k], NEXT[NEXT[k]]

    def boundary_loops(self) -> list[np.ndarray]:
        """Boundary half-edges chained into closed loops, each an int array of rows of ``boundary``.

        Loops are returned in order of their lowest half-edge row; each starts at that row. A loop
        stays in one island (two islands may touch at a UV vertex).
        """
        f = self.boundary[:, 0]
        isl = self.island[f]
        c0, c1 = self.boundary_corners()
        start_v = self.uv_vertex[f, c0]
        end_v = self.uv_vertex[f, c1]
        by_start: dict[int, list[int]] = {}
        for row in np.argsort(start_v, kind="stable").tolist():
            by_start.setdefault(int(start_v[row]), []).append(row)
        used = np.zeros(len(f), dtype=bool)
        loops = []
        for first in range(len(f)):
            if used[first]:
                continue
            loop = [first]
            used[first] = True
            row = first
            while True:
                nxt = [r for r in by_start.get(int(end_v[row]), []) if not used[r] and isl[r] == isl[row]]
                if not nxt:
                    break
                row = nxt[0]
                used[row] = True
                loop.append(row)
            loops.append(np.array(loop, dtype=np.int64))
        return loops


def uv_topology(mesh: UVMesh, uv_tol: float = 1e-7) -> UVTopology:
    """Compute the UV topology of a mesh.

    Parameters
    ----------
    mesh : UVMesh
    uv_tol : float
        Corners of one 3D vertex whose UVs differ by less than this are one UV vertex.
    """
    faces = mesh.faces
    n_f = len(faces)
    corners_v = faces.reshape(-1)
    corners_uv = mesh.corner_uv.reshape(-1, 2)
    # weld corners: same 3D vertex (kept apart by a large offset) and UV within tolerance
    key = np.column_stack([corners_uv, corners_v.astype(float) * 10.0])
    _, labels = weld_positions(key, uv_tol)
    uv_vertex = labels.reshape(n_f, 3).astype(np.int64)

    # half-edges: edge k of face f, opposite corner k
    fk_f = np.repeat(np.arange(n_f), 3)
    fk_k = np.tile(np.arange(3), n_f)
    a = uv_vertex[fk_f, NEXT[fk_k]]
    b = uv_vertex[fk_f, NEXT[NEXT[fk_k]]]
    neighbor = np.full((n_f, 3), -1, dtype=np.int64)
    lo, hi = np.minimum(a, b), np.maximum(a, b)
    order = np.lexsort((hi, lo))
    same = (lo[order][1:] == lo[order][:-1]) & (hi[order][1:] == hi[order][:-1])
    i, j = order[:-1][same], order[1:][same]
    neighbor[fk_f[i], fk_k[i]] = fk_f[j]
    neighbor[fk_f[j], fk_k[j]] = fk_f[i]

    adj = scipy.sparse.coo_matrix((np.ones(len(i)), (fk_f[i], fk_f[j])), shape=(n_f, n_f))
    n_islands, island = scipy.sparse.csgraph.connected_components(adj, directed=False)
    first = np.full(n_islands, n_f, dtype=np.int64)
    np.minimum.at(first, island, np.arange(n_f))
    rank = np.empty(n_islands, dtype=np.int64)
    rank[np.argsort(first, kind="stable")] = np.arange(n_islands)
    island = rank[island]

    is_b = neighbor.reshape(-1) < 0
    bf, bk = fk_f[is_b], fk_k[is_b]
    boundary = np.column_stack([bf, bk]).astype(np.int64)
    # mates: boundary half-edges on the same 3D edge
    v0 = faces[bf, NEXT[bk]]
    v1 = faces[bf, NEXT[NEXT[bk]]]
    lo3, hi3 = np.minimum(v0, v1), np.maximum(v0, v1)
    order = np.lexsort((hi3, lo3))
    same = (lo3[order][1:] == lo3[order][:-1]) & (hi3[order][1:] == hi3[order][:-1])
    mate = np.full(len(bf), -1, dtype=np.int64)
    mate[order[:-1][same]] = order[1:][same]
    mate[order[1:][same]] = order[:-1][same]
    return UVTopology(uv_vertex, neighbor, island.astype(np.int64), int(n_islands), boundary, mate)
