"""Wrong drapes built from the demo drape: each one a UV layout or 3D surface that is wrong in one
known way (mirrored, rotated or swapped islands, reversed or folded triangles).

Every builder takes the demo's :class:`UVMesh` and returns a new one; UVs stay on the sheet.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from garnav.drape.meshio import UVMesh, load_uv_mesh, uv_mesh_from_arrays
from garnav.drape.uvtopo import uv_topology
from garnav.spec import load_garment

ROOT = Path(__file__).resolve().parent.parent
SPEC = ROOT / "meshes" / "sensing_top.toml"
MESH = ROOT / "meshes" / "sensing_top_drape.obj"


def demo():
    """(garment, mesh) of the demo."""
    return load_garment(SPEC), load_uv_mesh(MESH)


def island_of(garment, mesh: UVMesh, piece: str) -> np.ndarray:
    """(F,) mask of the triangles of the island whose centroid lies on ``piece`` (by placement)."""
    topo = uv_topology(mesh)
    sheet = np.asarray(garment.sheet_size_mm)
    c = (mesh.corner_uv * sheet).mean(axis=1)
    p = garment.piece(piece)
    local = p.placement.from_sheet(c)
    import shapely

    on = shapely.contains_xy(p.polygon, local[:, 0], local[:, 1])
    isl = np.bincount(topo.island[on]).argmax()
    return topo.island == isl


def _with(mesh: UVMesh, *, positions=None, faces=None, corner_uv=None, name: str) -> UVMesh:
    return uv_mesh_from_arrays(
        mesh.positions if positions is None else positions,
        mesh.faces if faces is None else faces,
        mesh.corner_uv if corner_uv is None else corner_uv,
        source=name,
    )


def _centroid(uv: np.ndarray) -> np.ndarray:
    return uv.reshape(-1, 2).mean(axis=0)


def mirrored(garment, mesh: UVMesh, piece: str) -> UVMesh:
    """The piece's island mirrored (u → 2 c_u - u) about its centroid, in sheet mm."""
    sheet = np.asarray(garment.sheet_size_mm)
    sel = island_of(garment, mesh, piece)
    xy = mesh.corner_uv * sheet
    c = _centroid(xy[sel])
    xy[sel, :, 0] = 2 * c[0] - xy[sel, :, 0]
    return _with(mesh, corner_uv=xy / sheet, name=f"mirrored_{piece}.obj")


def rotated(garment, mesh: UVMesh, piece: str, angle_deg: float) -> UVMesh:
    """The piece's island turned by ``angle_deg`` (CCW) about its centroid, in sheet mm."""
    sheet = np.asarray(garment.sheet_size_mm)
    sel = island_of(garment, mesh, piece)
    xy = mesh.corner_uv * sheet
    c = _centroid(xy[sel])
    a = np.radians(angle_deg)
    rot = np.array([[np.cos(a), -np.sin(a)], [np.sin(a), np.cos(a)]])
    xy[sel] = (xy[sel] - c) @ rot.T + c
    return _with(mesh, corner_uv=xy / sheet, name=f"rotated_{piece}_{angle_deg:g}.obj")


def swapped(garment, mesh: UVMesh, a: str, b: str) -> UVMesh:
    """The islands of two same-shape pieces trade places on the sheet (each shifted by the
    difference of the two placements)."""
    sheet = np.asarray(garment.sheet_size_mm)
    sa, sb = island_of(garment, mesh, a), island_of(garment, mesh, b)
    pa, pb = garment.piece(a).placement, garment.piece(b).placement
    xy = mesh.corner_uv * sheet
    shift = np.array([pb.x - pa.x, pb.y - pa.y])
    xy[sa] += shift
    xy[sb] -= shift
    return _with(mesh, corner_uv=xy / sheet, name=f"swapped_{a}_{b}.obj")


def reversed_faces(garment, mesh: UVMesh, piece: str, count: int, seed: int = 3) -> UVMesh:
    """``count`` triangles of the piece's island with their corners in reverse order (3D winding
    and UV winding both reversed, as a 'flip normals' on selected faces does)."""
    rng = np.random.default_rng(seed)
    ids = rng.choice(np.flatnonzero(island_of(garment, mesh, piece)), size=count, replace=False)
    faces = mesh.faces.copy()
    uv = mesh.corner_uv.copy()
    faces[ids] = faces[ids, ::-1]
    uv[ids] = uv[ids, ::-1]
    return _with(mesh, faces=faces, corner_uv=uv, name=f"reversed_{piece}_{count}.obj")


def whole_island_reversed(garment, mesh: UVMesh, piece: str) -> UVMesh:
    """Every triangle of the piece's island with its corners in reverse order."""
    sel = island_of(garment, mesh, piece)
    faces = mesh.faces.copy()
    uv = mesh.corner_uv.copy()
    faces[sel] = faces[sel, ::-1]
    uv[sel] = uv[sel, ::-1]
    return _with(mesh, faces=faces, corner_uv=uv, name=f"reversed_island_{piece}.obj")


def shifted(garment, mesh: UVMesh, piece: str, dx_mm: float, dy_mm: float) -> UVMesh:
    """The piece's island moved by (dx, dy) mm on the sheet."""
    sheet = np.asarray(garment.sheet_size_mm)
    sel = island_of(garment, mesh, piece)
    xy = mesh.corner_uv * sheet
    xy[sel] += np.array([dx_mm, dy_mm])
    return _with(mesh, corner_uv=xy / sheet, name=f"shifted_{piece}.obj")


def pinched(garment, mesh: UVMesh, piece: str, centre_mm, radius_mm: float) -> UVMesh:
    """A small fold: the vertices of the piece within ``radius_mm`` of ``centre_mm`` (piece frame)
    and right of it are pushed across the disc's centre line in 3D (along the secant of the disc
    that runs along pattern +x), by up to twice their distance from the line, tapered to nothing
    at the rim; a few triangles land upside down."""
    sheet = np.asarray(garment.sheet_size_mm)
    p = garment.piece(piece)
    sel = island_of(garment, mesh, piece)
    pattern = p.placement.from_sheet(mesh.corner_uv * sheet)  # (F, 3, 2)
    vert_xy = np.full((len(mesh.positions), 2), np.nan)
    vert_xy[mesh.faces[sel].reshape(-1)] = pattern[sel].reshape(-1, 2)
    d = vert_xy - np.asarray(centre_mm, dtype=float)
    ids = np.flatnonzero(np.isfinite(d[:, 0]) & (np.hypot(d[:, 0], d[:, 1]) < radius_mm))
    pos = mesh.positions.copy()
    ex = pos[ids[np.argmax(d[ids, 0])]] - pos[ids[np.argmin(d[ids, 0])]]
    ex /= np.linalg.norm(ex)
    taper = np.clip(1.0 - np.hypot(d[ids, 0], d[ids, 1]) / radius_mm, 0.0, 1.0)
    pos[ids] -= (2.0 * np.clip(d[ids, 0], 0.0, None) * np.minimum(1.0, 2.0 * taper))[:, None] * ex
    return _with(mesh, positions=pos, name=f"pinched_{piece}.obj")


def band_flipped(garment, mesh: UVMesh, pieces, y0_mm: float, width_mm: float) -> UVMesh:
    """A band across pieces of the same height turned over in 3D (pushed through the surface and
    back, as a folded pleat is): in each piece the vertices with y0 <= y <= y0 + w (piece frame)
    move to where the original drape put (x, 2 y0 + w - y), the band's other edge. The band's
    triangles face the other way; nothing outside it moves."""
    from garnav.drape.drape import link_drape

    sheet = np.asarray(garment.sheet_size_mm)
    original = link_drape(garment, mesh)
    pos = mesh.positions.copy()
    for piece in pieces:
        p = garment.piece(piece)
        sel = island_of(garment, mesh, piece)
        pattern = p.placement.from_sheet(mesh.corner_uv * sheet)
        vid, first = np.unique(mesh.faces[sel].reshape(-1), return_index=True)
        xy = pattern[sel].reshape(-1, 2)[first]
        band = (xy[:, 1] >= y0_mm) & (xy[:, 1] <= y0_mm + width_mm)
        src = xy[band] * [1.0, -1.0] + [0.0, 2 * y0_mm + width_mm]
        pos[vid[band]] = original.pattern_to_3d(piece, src)
    return _with(mesh, positions=pos, name="band_flipped.obj")


def winding_only_reversed(garment, mesh: UVMesh, piece: str, count: int, seed: int = 3) -> UVMesh:
    """``count`` triangles of the piece's island with their 3D vertices in reverse order but their
    UVs kept: two corners trade 3D vertices (an exporter that flips a face's winding and forgets
    its texture indices)."""
    rng = np.random.default_rng(seed)
    ids = rng.choice(np.flatnonzero(island_of(garment, mesh, piece)), size=count, replace=False)
    faces = mesh.faces.copy()
    faces[ids] = faces[ids][:, [0, 2, 1]]
    return _with(mesh, faces=faces, name=f"winding_only_{piece}_{count}.obj")
