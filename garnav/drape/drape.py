"""The drape: a UV-mapped garment mesh linked to the garment's pattern pieces.

:func:`link_drape` maps each triangle's UVs to the sheet (mm), finds the piece each UV island lies
on (via the pieces' placements), and returns an immutable :class:`Drape` that knows, for every
triangle, its piece and its corners in that piece's frame. Point location on a piece, 3D positions
and surface normals are answered from there.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from functools import cached_property

import numpy as np
import shapely
from scipy.spatial import cKDTree

from garnav.drape.locate import TriangleLocator, barycentric_2d
from garnav.drape.meshio import UVMesh, load_uv_mesh, signed_area_2d
from garnav.drape.uvtopo import NEXT, UVTopology, uv_topology
from garnav.errors import MeshError, QueryError, did_you_mean
from garnav.model import Garment

__all__ = ["Drape", "link_drape", "load_drape", "PieceHits", "PieceLocator", "SurfaceIndex"]

#: An island is assigned to a piece when at least this share of its UV area lies on the piece.
MAJORITY = 0.5
#: An island with more than this share of its UV area on a second piece lies across pieces.
ACROSS_TOL = 0.01
#: Overlap between islands (or an island with itself) above this share of the smaller area fails.
OVERLAP_TOL = 1e-4


def _ro(a: np.ndarray) -> np.ndarray:
    a = np.ascontiguousarray(a)
    a.flags.writeable = False
    return a


@dataclass(frozen=True)
class PieceHits:
    """Where points on one piece lie on the drape.

    Attributes
    ----------
    face : (n,) int array
        Triangle of the drape (global index).
    bary : (n, 3) float array
        Barycentric coordinates in that triangle.
    snap : (n,) float array
        Distance (mm, pattern space) a point was moved to reach the mesh; 0 inside the mesh.
    """

    face: np.ndarray
    bary: np.ndarray
    snap: np.ndarray


@dataclass(frozen=True, eq=False)
class PieceLocator:
    """Point location on one piece of a drape.

    Attributes
    ----------
    faces : (k,) int array
        Global indices of the piece's triangles, ascending.
    locator : TriangleLocator
        Over those triangles' pattern corners; its triangle ``i`` is global face ``faces[i]``.
    """

    faces: np.ndarray
    locator: TriangleLocator


class SurfaceIndex:
    """Centroid k-d tree of a surface's triangles with their largest bounding radius (world mm),
    for exact closest-point queries (:func:`garnav.drape.inverse.closest_surface_points`).

    Parameters
    ----------
    triangles : (F, 3, 3) float array
        Corner positions, world mm.
    """

    def __init__(self, triangles: np.ndarray):
        self.tri = np.asarray(triangles, dtype=float)
        self.centroid = self.tri.mean(axis=1)
        self.rmax = float(np.linalg.norm(self.tri - self.centroid[:, None], axis=2).max())
        self.tree = cKDTree(self.centroid)


@dataclass(frozen=True, eq=False)
class Drape:
    """A UV-mapped mesh linked to the pieces of a garment. Immutable.

    Attributes
    ----------
    positions : (V, 3) float array
        Welded vertex positions, world mm.
    faces : (F, 3) int array
    corner_uv : (F, 3, 2) float array
        UV of each face corner.
    face_piece : (F,) int array
        Index into ``piece_names`` of each triangle's piece.
    piece_names : tuple of str
        The garment's piece names, in garment order.
    sheet_size_mm : (float, float)
    corner_pattern : (F, 3, 2) float array
        Each corner in its piece's frame, mm.
    topology : UVTopology
    source : str
        The mesh file (for messages).
    notes : tuple of str
        What loading changed (skipped triangles, ...).
    """

    positions: np.ndarray
    faces: np.ndarray
    corner_uv: np.ndarray
    face_piece: np.ndarray
    piece_names: tuple[str, ...]
    sheet_size_mm: tuple[float, float]
    corner_pattern: np.ndarray
    topology: UVTopology
    source: str = "<memory>"
    notes: tuple[str, ...] = ()

    # ------------------------------------------------------------------ derived geometry

    @cached_property
    def jacobian(self) -> np.ndarray:
        """(F, 3, 2) pattern → 3D Jacobian of each triangle (columns: d/dx, d/dy), unitless."""
        p = self.corner_pattern
        q = self.positions[self.faces]
        e2 = np.stack([p[:, 1] - p[:, 0], p[:, 2] - p[:, 0]], axis=2)  # (F, 2, 2)
        e3 = np.stack([q[:, 1] - q[:, 0], q[:, 2] - q[:, 0]], axis=2)  # (F, 3, 2)
        return _ro(e3 @ np.linalg.inv(e2))

    @cached_property
    def singular_values(self) -> np.ndarray:
        """(F, 2) singular values (largest first) of each triangle's Jacobian: 1 = no stretch."""
        return _ro(np.linalg.svd(self.jacobian, compute_uv=False))

    @cached_property
    def pattern_area(self) -> np.ndarray:
        """(F,) triangle areas in pattern space, mm²."""
        p = self.corner_pattern
        a, b = p[:, 1] - p[:, 0], p[:, 2] - p[:, 0]
        return _ro(0.5 * np.abs(a[:, 0] * b[:, 1] - a[:, 1] * b[:, 0]))

    @cached_property
    def face_normals(self) -> np.ndarray:
        """(F, 3) unit normals pointing to the garment's outside.

        The pattern is seen from the outside, so d/dx × d/dy of the pattern → 3D map points out,
        whatever the winding of the mesh's faces.
        """
        j = self.jacobian
        n = np.cross(j[:, :, 0], j[:, :, 1])
        return _ro(n / np.linalg.norm(n, axis=1, keepdims=True))

    @cached_property
    def vertex_normals(self) -> np.ndarray:
        """(V, 3) unit normals: area-weighted mean of the adjacent faces' outside normals."""
        q = self.positions[self.faces]
        area = 0.5 * np.linalg.norm(np.cross(q[:, 1] - q[:, 0], q[:, 2] - q[:, 0]), axis=1)
        acc = np.zeros_like(self.positions)
        for k in range(3):
            np.add.at(acc, self.faces[:, k], self.face_normals * area[:, None])
        norm = np.linalg.norm(acc, axis=1, keepdims=True)
        return _ro(acc / np.where(norm > 0, norm, 1.0))

    @cached_property
    def pattern_key(self) -> bytes:
        """Digest (BLAKE2b, 32 bytes) of everything a pattern-space query reads: the piece names,
        each triangle's piece and pattern corners, the UV neighbours and island boundary. Drapes
        of one UV link (poses: the same pattern, other 3D positions) have equal keys, so their
        pattern-side answers (:meth:`locate`, :func:`garnav.drape.lift.lift_polyline`) are equal."""
        import hashlib

        h = hashlib.blake2b(digest_size=32)
        h.update("\0".join(self.piece_names).encode())
        for a in (self.face_piece, self.corner_pattern, self.topology.neighbor, self.topology.boundary):
            a = np.ascontiguousarray(a)
            h.update(f"{a.dtype.str}{a.shape}".encode())
            h.update(a.tobytes())
        return h.digest()

    # ------------------------------------------------------------------ search structures
    # Built on first use and kept on the (immutable) drape that owns them.

    @cached_property
    def _piece_locators(self) -> dict[str, PieceLocator]:
        return {}

    def piece_locator(self, piece: str) -> PieceLocator:
        """Point location on the triangles of ``piece`` (built on first use, then kept).

        Raises
        ------
        QueryError
            When the drape has no such piece.
        """
        found = self._piece_locators.get(piece)
        if found is None:
            ids = self.piece_faces(piece)
            found = PieceLocator(_ro(ids), TriangleLocator.build(self.corner_pattern[ids]))
            self._piece_locators[piece] = found
        return found

    @cached_property
    def surface_index(self) -> SurfaceIndex:
        """The 3D search structure for closest-point queries on the surface (built on first use)."""
        return SurfaceIndex(self.positions[self.faces])

    def piece_faces(self, piece: str) -> np.ndarray:
        """Global indices of the triangles on ``piece``."""
        return np.flatnonzero(self.face_piece == self._piece_id(piece))

    def _piece_id(self, piece: str) -> int:
        try:
            return self.piece_names.index(piece)
        except ValueError:
            hint = did_you_mean(piece, self.piece_names)
            raise QueryError(
                f"{self.source}: no piece '{piece}' on the drape" + (f"; {hint}" if hint else "")
            ) from None

    def boundary_segments(self, piece: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """The piece's island boundary: segment ends (B, 2, 2) in pattern mm, their triangle
        (B,) and that triangle's edge k (B,; edge k is opposite corner k)."""
        self._piece_id(piece)
        return self._all_boundary_segments[piece]

    @cached_property
    def _all_boundary_segments(self) -> dict[str, tuple[np.ndarray, np.ndarray, np.ndarray]]:
        topo = self.topology
        f, k = topo.boundary[:, 0], topo.boundary[:, 1]
        c0, c1 = NEXT[k], NEXT[NEXT[k]]
        seg = np.stack([self.corner_pattern[f, c0], self.corner_pattern[f, c1]], axis=1)
        out = {}
        for i, name in enumerate(self.piece_names):
            sel = self.face_piece[f] == i
            out[name] = (seg[sel], f[sel], k[sel])
        return out

    # ------------------------------------------------------------------ queries

    def locate(self, piece: str, points: np.ndarray, snap_mm: float = 0.0) -> PieceHits:
        """Find pattern points of one piece on the drape.

        Parameters
        ----------
        piece : str
        points : (n, 2) float array
            Piece frame, mm.
        snap_mm : float
            Points outside the mesh's UV island by at most this much (a curved outline is cut by
            the mesh's chords) are moved to the nearest island boundary point.

        Returns
        -------
        PieceHits

        Raises
        ------
        QueryError
            Unknown piece, or a point farther than ``snap_mm`` from the piece's triangles.
        """
        pts = np.asarray(points, dtype=float).reshape(-1, 2)
        pl = self.piece_locator(piece)
        ids, loc = pl.faces, pl.locator
        local, bary = loc.locate(pts)
        face = np.where(local >= 0, ids[np.maximum(local, 0)], -1)
        snap = np.zeros(len(pts))
        miss = np.flatnonzero(face < 0)
        if len(miss):
            segs, sf, _ = self.boundary_segments(piece)
            q, d, which = _nearest_on_segments(pts[miss], segs)
            far = d > snap_mm
            if np.any(far):
                i = int(miss[np.flatnonzero(far)[0]])
                raise QueryError(
                    f"{self.source}: point ({pts[i, 0]:.1f}, {pts[i, 1]:.1f}) mm on piece '{piece}' "
                    f"is {float(d[far][0]):.2f} mm outside the drape's triangles "
                    f"(allowed: {snap_mm:g} mm)"
                )
            fb = sf[which]
            tri = self.corner_pattern[fb]
            lam = np.clip(barycentric_2d(tri, q), 0.0, None)
            face[miss] = fb
            bary[miss] = lam / lam.sum(axis=1, keepdims=True)
            snap[miss] = d
        return PieceHits(face, bary, snap)

    def to_3d(self, face: np.ndarray, bary: np.ndarray) -> np.ndarray:
        """(n, 3) world positions, mm, of surface points given as (face (n,), bary (n, 3))."""
        tri = self.positions[self.faces[face]]
        return np.einsum("nk,nkd->nd", bary, tri)

    def normals_at(self, face: np.ndarray, bary: np.ndarray) -> np.ndarray:
        """(n, 3) unit outside normals interpolated from the vertex normals."""
        n = np.einsum("nk,nkd->nd", bary, self.vertex_normals[self.faces[face]])
        return n / np.linalg.norm(n, axis=1, keepdims=True)

    def to_pattern(self, face: np.ndarray, bary: np.ndarray) -> np.ndarray:
        """(n, 2) piece-frame positions, mm, of surface points (face, bary)."""
        return np.einsum("nk,nkd->nd", bary, self.corner_pattern[face])

    def pattern_to_3d(self, piece: str, points: np.ndarray, snap_mm: float = 0.0) -> np.ndarray:
        """(n, 3) world positions of piece-frame points (n, 2); see :meth:`locate`."""
        hits = self.locate(piece, points, snap_mm)
        return self.to_3d(hits.face, hits.bary)


def _nearest_on_segments(pts: np.ndarray, segs: np.ndarray, chunk: int = 2_000_000):
    """Nearest point on any of ``segs`` (B, 2, 2) for each of ``pts`` (m, 2).

    Returns (points (m, 2), distances (m,), segment index (m,)).
    """
    m, b = len(pts), len(segs)
    best_q = np.zeros((m, 2))
    best_d = np.full(m, np.inf)
    best_i = np.zeros(m, dtype=np.int64)
    if b == 0:
        return best_q, best_d, best_i
    a, d = segs[:, 0], segs[:, 1] - segs[:, 0]
    dd = np.maximum((d * d).sum(axis=1), 1e-300)
    step = max(1, chunk // b)
    for s in range(0, m, step):
        p = pts[s : s + step]
        t = np.clip(((p[:, None, :] - a[None]) * d[None]).sum(axis=2) / dd[None], 0.0, 1.0)
        q = a[None] + t[..., None] * d[None]
        dist = np.linalg.norm(q - p[:, None, :], axis=2)
        i = np.argmin(dist, axis=1)
        r = np.arange(len(p))
        best_q[s : s + step] = q[r, i]
        best_d[s : s + step] = dist[r, i]
        best_i[s : s + step] = i
    return best_q, best_d, best_i


def _sheet_polygons(garment: Garment) -> list[shapely.Polygon]:
    polys = []
    for p in garment.pieces:
        pl = p.placement
        polys.append(
            shapely.Polygon(pl.to_sheet(p.outline), [pl.to_sheet(o.array) for o in p.openings])
        )
    return polys


def _loop_polygon(loops_xy: list[np.ndarray]) -> shapely.Geometry:
    """An island's region from its boundary loops: the largest loop minus the others."""
    rings = sorted(loops_xy, key=lambda r: -abs(shapely.area(shapely.Polygon(r))))
    return shapely.Polygon(rings[0], rings[1:])


def link_drape(garment: Garment, mesh: UVMesh, *, verify: bool = True) -> Drape:
    """Link a UV-mapped mesh to a garment's pieces.

    Each UV island is assigned to the piece (on the sheet, via the placements) that holds most of
    its area. Then the linked drape is verified (:func:`garnav.drape.verify.verify_drape`):
    mirrored, misplaced or swapped islands, folds in 3D and seams that gap are refused.

    Parameters
    ----------
    garment : Garment
    mesh : UVMesh
        UVs are sheet position / ``garment.sheet_size_mm``.
    verify : bool
        Run the verification (``garnav check`` turns it off to report the faults as findings with
        :func:`garnav.drape.verify.drape_faults`).

    Returns
    -------
    Drape

    Raises
    ------
    MeshError
        An island on no piece or across two pieces, a piece without an island, UV triangles
        folded over or wound the other way within an island, islands overlapping each other, or
        (with ``verify``) any fault of :func:`garnav.drape.verify.drape_faults`.
    """
    src = mesh.source
    sheet = np.asarray(garment.sheet_size_mm, dtype=float)
    topo = uv_topology(mesh)
    corner_sheet = mesh.corner_uv * sheet
    signed = signed_area_2d(corner_sheet)
    area = np.abs(signed)
    centroid = corner_sheet.mean(axis=1)
    polys = _sheet_polygons(garment)
    n_p = len(polys)
    inside = np.zeros((len(mesh.faces), n_p), dtype=bool)
    for i, poly in enumerate(polys):
        inside[:, i] = shapely.contains_xy(poly, centroid[:, 0], centroid[:, 1])
    problems = []
    island_piece = np.full(topo.n_islands, -1, dtype=np.int64)
    for isl in range(topo.n_islands):
        sel = topo.island == isl
        a_isl = area[sel].sum()
        share = (area[sel][:, None] * inside[sel]).sum(axis=0) / a_isl
        lo = corner_sheet[sel].reshape(-1, 2).min(axis=0)
        hi = corner_sheet[sel].reshape(-1, 2).max(axis=0)
        where = f"sheet ({lo[0]:.0f}, {lo[1]:.0f})..({hi[0]:.0f}, {hi[1]:.0f}) mm"
        best = int(np.argmax(share)) if n_p else -1
        if n_p == 0 or share[best] < MAJORITY:
            on = [f"{garment.pieces[i].name} {share[i]:.0%}" for i in np.flatnonzero(share > 0.01)]
            raise_text = (
                f"UV island {isl} ({int(sel.sum())} triangles, {where}) matches no piece"
                + (f" (it lies partly on: {', '.join(on)})" if on else "")
                + "; check the pieces' placements and sheet_size_mm"
            )
            problems.append(raise_text)
            continue
        others = [i for i in np.flatnonzero(share > ACROSS_TOL) if i != best]
        if others:
            on = ", ".join(f"'{garment.pieces[i].name}' {share[i]:.0%}" for i in [best, *others])
            problems.append(
                f"UV island {isl} ({int(sel.sum())} triangles, {where}) lies across pieces {on}; "
                "check the pieces' placements and sheet_size_mm"
            )
            continue
        island_piece[isl] = best
        s_sel = signed[sel]
        pos, neg = area[sel][s_sel > 0].sum(), area[sel][s_sel < 0].sum()
        if min(pos, neg) > 0:
            problems.append(_turned_text(mesh, topo, signed, np.flatnonzero(sel), pos >= neg,
                                         f"UV island {isl} (piece '{garment.pieces[best].name}', {where})"))
    if problems:
        raise MeshError(f"{src}: " + "\n  ".join(problems))
    missing = [garment.pieces[i].name for i in range(n_p) if i not in set(island_piece.tolist())]
    if missing:
        raise MeshError(
            f"{src}: piece(s) {', '.join(repr(m) for m in missing)} have no UV island on the drape; "
            "check the pieces' placements and sheet_size_mm"
        )
    _check_overlaps(src, garment, mesh, topo, corner_sheet, area, island_piece)

    notes = mesh.notes
    if area[signed < 0].sum() > area[signed > 0].sum():
        notes += ("the faces are wound clockwise seen from the outside (the side the UVs' pattern "
                  "faces): the file's normals point inwards",)
    face_piece = island_piece[topo.island]
    corner_pattern = np.empty_like(corner_sheet)
    for i, p in enumerate(garment.pieces):
        sel = face_piece == i
        corner_pattern[sel] = p.placement.from_sheet(corner_sheet[sel])
    drape = Drape(
        positions=mesh.positions,
        faces=mesh.faces,
        corner_uv=mesh.corner_uv,
        face_piece=_ro(face_piece),
        piece_names=tuple(p.name for p in garment.pieces),
        sheet_size_mm=(float(sheet[0]), float(sheet[1])),
        corner_pattern=_ro(corner_pattern),
        topology=topo,
        source=src,
        notes=notes,
    )
    if verify:
        from garnav.drape.verify import verify_drape

        verify_drape(garment, drape)
    return drape


def _turned_text(mesh: UVMesh, topo: UVTopology, signed: np.ndarray, faces: np.ndarray,
                 positive: bool, label: str) -> str:
    """Why an island's triangles turn both ways in UV: folded over (the UV map reverses against
    its neighbours') or wound the other way (corners reversed in 3D and UV alike, so the map
    itself agrees with the neighbours': its outside normal, sign(UV area) × winding normal)."""
    q = mesh.positions[mesh.faces]
    n_w = np.cross(q[:, 1] - q[:, 0], q[:, 2] - q[:, 0])
    n_map = np.sign(signed)[:, None] * n_w
    turned = faces[(signed[faces] < 0) if positive else (signed[faces] > 0)]
    nb = topo.neighbor[turned]
    ok = nb >= 0
    dots = np.einsum("fd,fkd->fk", n_map[turned], n_map[np.maximum(nb, 0)])
    agree = (np.where(ok, np.sign(dots), 0.0).sum(axis=1) > 0)
    wound, folded = int(agree.sum()), int((~agree).sum())
    parts = []
    if folded:
        parts.append(f"is folded over: {folded} triangle(s) face the other way in UV")
    if wound:
        parts.append(f"has {wound} triangle(s) wound the other way (3D and UV corners both "
                     "reversed; drape faces turn counter-clockwise seen from the outside)")
    return f"{label} " + "; it ".join(parts)


def load_drape(garment: Garment, mesh: str | None = None, folder: str = ".", *,
               verify: bool = True, cache_dir: str | os.PathLike | None = None) -> Drape:
    """Read and link a garment's drape mesh.

    Parameters
    ----------
    garment : Garment
    mesh : str, optional
        Mesh file; default: the garment's own ``drape``, relative to ``folder``.
    folder : str
        The spec file's folder (what the garment's ``drape`` path is relative to).
    verify : bool
        See :func:`link_drape`.
    cache_dir : path, optional
        Folder of the on-disk cache of linked drapes (:mod:`garnav.drape.cache`); None = no cache.

    Raises
    ------
    MeshError
        No mesh given and the garment names none, or any loading, linking or verifying problem.
    """
    if not mesh:
        if garment.drape is None:
            raise MeshError(
                f"garment '{garment.name}' names no drape mesh; give one (e.g. --drape MESH)"
            )
        mesh = os.path.join(folder, garment.drape)
    if cache_dir is not None:
        from garnav.drape.cache import load_drape_cached

        return load_drape_cached(garment, mesh, cache_dir, verify=verify)
    return link_drape(garment, load_uv_mesh(mesh), verify=verify)


def island_polygons(topo: UVTopology, corner_xy: np.ndarray) -> list[shapely.Geometry]:
    """Region of each island (list indexed by island) from its boundary loops, in ``corner_xy`` units."""
    f = topo.boundary[:, 0]
    c0, _ = topo.boundary_corners()
    loops_by_island: dict[int, list[np.ndarray]] = {}
    for loop in topo.boundary_loops():
        isl = int(topo.island[f[loop[0]]])
        loops_by_island.setdefault(isl, []).append(corner_xy[f[loop], c0[loop]])
    # an island without a boundary (a closed surface in UV) has no region: the overlap test
    # then compares its triangles' area with 0 and refuses it
    return [_loop_polygon(loops_by_island[i]) if i in loops_by_island else shapely.Polygon()
            for i in range(topo.n_islands)]


def _check_overlaps(src, garment, mesh, topo, corner_sheet, area, island_piece) -> None:
    regions = island_polygons(topo, corner_sheet)
    problems = []
    for isl, region in enumerate(regions):
        tri_area = area[topo.island == isl].sum()
        if not region.is_valid or abs(region.area - tri_area) > OVERLAP_TOL * tri_area + 1e-9:
            problems.append(
                f"UV island {isl} (piece '{garment.pieces[island_piece[isl]].name}') overlaps "
                f"itself: its triangles cover {tri_area:.1f} mm² but its outline "
                f"{region.area:.1f} mm²"
            )
    tree = shapely.STRtree(regions)
    left, right = tree.query(regions, predicate="intersects")
    for i, j in sorted(zip(left.tolist(), right.tolist())):
        if i >= j:
            continue
        inter = regions[i].intersection(regions[j]).area
        if inter > OVERLAP_TOL * min(regions[i].area, regions[j].area):
            c = regions[i].intersection(regions[j]).representative_point()
            problems.append(
                f"UV islands {i} (piece '{garment.pieces[island_piece[i]].name}') and {j} "
                f"(piece '{garment.pieces[island_piece[j]].name}') overlap by {inter:.1f} mm² "
                f"near sheet ({c.x:.0f}, {c.y:.0f}) mm"
            )
    if problems:
        raise MeshError(f"{src}: " + "\n  ".join(problems))
