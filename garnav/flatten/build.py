"""A 3D garment surface → cut → flattened pieces → garment spec and UV-mapped drape.

The flattened pieces are turned so that the cut file's grain direction (default: world up)
points along +y of each piece on average, laid out on one sheet without overlap, and written as
per-corner UVs (UV = sheet position / sheet size) on the welded 3D surface. The pieces, their
edges and their seams are then derived from that drape by the project's mesh-first import
(:func:`garnav.drape.import_mesh.garment_from_mesh`): each piece's outline is its flattened
boundary, each pair of cut-boundary runs that meet in 3D is a seam, the rest are open edges.
Pieces and seams take their names from the cut file where it gives them.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass

import numpy as np
from scipy.spatial import cKDTree

from garnav.drape.import_mesh import garment_from_mesh
from garnav.drape.meshio import UVMesh, uv_mesh_from_arrays
from garnav.drape.uvtopo import uv_topology
from garnav.errors import MeshError
from garnav.flatten.cut import CutSurface, cut_paths, cut_surface, uv_seam_edges
from garnav.flatten.cutfile import CutFile
from garnav.flatten.distortion import Distortion, jacobians, measure_distortion
from garnav.flatten.param import flatten_piece
from garnav.flatten.surface import Surface
from garnav.model import Garment, SeamRun
from garnav.polyline import polyline_length

__all__ = ["FlatPiece", "SeamLength", "Flattened", "flatten_surface", "grain_angle",
           "layout_pieces"]


@dataclass(frozen=True)
class FlatPiece:
    """One flattened piece: its name, how it was flattened and its :class:`Distortion`."""

    name: str
    method: str
    distortion: Distortion


@dataclass(frozen=True)
class SeamLength:
    """The two runs of a seam on the pattern (mm) and the 3D length of the cut they came from."""

    name: str
    a: SeamRun
    b: SeamRun
    length_a_mm: float
    length_b_mm: float
    length_3d_mm: float


@dataclass(frozen=True, eq=False)
class Flattened:
    """The result of :func:`flatten_surface`: the garment, its drape and the per-piece report."""

    garment: Garment
    mesh: UVMesh
    pieces: tuple[FlatPiece, ...]
    seams: tuple[SeamLength, ...]
    notes: tuple[str, ...] = ()

    def over(self, max_scale_error: float) -> tuple[FlatPiece, ...]:
        """The pieces whose ``worst_scale_error`` is above the threshold (a fraction)."""
        return tuple(p for p in self.pieces if p.distortion.worst_scale_error > max_scale_error)


def grain_angle(v3: np.ndarray, uv: np.ndarray, faces: np.ndarray, grain: np.ndarray) -> float | None:
    """Angle (radians, CCW) of the area-weighted image of the world direction ``grain`` in the
    flattened piece, or None when the grain is (nearly) normal to the whole piece."""
    jac, frame_x, frame_y, area = jacobians(v3, uv, faces)
    g = np.column_stack([frame_x @ grain, frame_y @ grain])  # (m, 2) grain in each frame
    img = np.einsum("mij,mj->mi", jac, g)
    total = (img * area[:, None]).sum(axis=0)
    if np.linalg.norm(total) <= 1e-6 * area.sum():
        return None
    return math.atan2(total[1], total[0])


def layout_pieces(flat: list[np.ndarray], gap_mm: float = 20.0) -> tuple[list[np.ndarray], tuple[float, float]]:
    """Place flattened pieces on one sheet in rows (shelf packing), ``gap_mm`` apart.

    Returns each piece's vertices on the sheet (mm) and the sheet size (W, H) in mm.
    """
    boxes = [(p.min(axis=0), p.max(axis=0)) for p in flat]
    sizes = [hi - lo for lo, hi in boxes]
    width = max(max(s[0] for s in sizes), math.sqrt(sum(s[0] * s[1] for s in sizes)) * 1.5)
    x = y = gap_mm
    row_h = 0.0
    out: list[np.ndarray] = []
    for (lo, _), size in zip(boxes, sizes, strict=True):
        if x > gap_mm and x + size[0] > width + gap_mm:
            x, y, row_h = gap_mm, y + row_h + gap_mm, 0.0
        out.append(flat[len(out)] - lo + np.array([x, y]))
        x += size[0] + gap_mm
        row_h = max(row_h, float(size[1]))
    sheet_w = max(float(p[:, 0].max()) for p in out) + gap_mm
    sheet_h = y + row_h + gap_mm
    return out, (sheet_w, sheet_h)


def _piece_names(cs: CutSurface, cf: CutFile | None) -> list[str]:
    names = [f"piece_{p + 1}" for p in range(cs.n_pieces)]
    if cf is None or not cf.pieces:
        return names
    s = cs.surface
    centres = s.positions[s.faces].mean(axis=1)
    tree = cKDTree(centres)
    taken: dict[int, str] = {}
    for pn in cf.pieces:
        dist, f = tree.query(np.asarray(pn.at))
        tri = s.positions[s.faces[int(f)]]
        reach = cf.snap_mm + float(np.linalg.norm(tri - tri.mean(axis=0), axis=1).max())
        if dist > reach:
            raise MeshError(f"{cf.source}: piece '{pn.name}': its point {tuple(pn.at)} mm is "
                            f"{dist:.1f} mm from the centre of the nearest triangle of {s.source}; the point is "
                            "not on the mesh")
        p = int(cs.face_piece[int(f)])
        if p in taken:
            raise MeshError(f"{cf.source}: piece '{pn.name}': its point lies on the same piece as "
                            f"piece '{taken[p]}' (piece {p + 1}); give each piece one point")
        taken[p] = pn.name
        names[p] = pn.name
    return names


def _rename(garment: Garment, pieces: dict[str, str], seams: dict[str, str]) -> Garment:
    def run(r: SeamRun) -> SeamRun:
        return dataclasses.replace(r, piece=pieces.get(r.piece, r.piece))

    new_pieces = tuple(dataclasses.replace(p, name=pieces.get(p.name, p.name)) for p in garment.pieces)
    new_seams = tuple(dataclasses.replace(s, name=seams.get(s.name, s.name), a=run(s.a), b=run(s.b))
                      for s in garment.seams)
    return dataclasses.replace(garment, pieces=new_pieces, seams=new_seams)


def _seam_lengths(garment: Garment, cs: CutSurface, sheet_xy: np.ndarray
                  ) -> tuple[dict[str, str], list[tuple[str, float]]]:
    """Cut name and 3D length of each seam (by the split vertices its run 'a' passes)."""
    tree = cKDTree(sheet_xy)
    s = cs.surface
    n_v = s.n_vertices
    a, b = s.half_edges
    key_of = {}
    for h in np.flatnonzero(cs.cut).tolist():
        key_of[int(min(a[h], b[h])) * n_v + int(max(a[h], b[h]))] = str(cs.cut_name[h])
    names: dict[str, str] = {}
    out: list[tuple[str, float]] = []
    for seam in garment.seams:
        piece = garment.piece(seam.a.piece)
        pts = piece.placement.to_sheet(piece.edge(seam.a.edge).array)
        _, idx = tree.query(pts)
        verts = cs.split_of[idx]
        p3 = s.positions[verts]
        out.append((seam.name, float(np.linalg.norm(np.diff(p3, axis=0), axis=1).sum())))
        cut = [key_of.get(int(min(u, v)) * n_v + int(max(u, v)), "")
               for u, v in zip(verts[:-1].tolist(), verts[1:].tolist(), strict=True)]
        best = max(set(cut), key=lambda c: (cut.count(c), c)) if cut else ""
        if best:
            names[seam.name] = best
    counts: dict[str, int] = {}
    for cname in names.values():
        counts[cname] = counts.get(cname, 0) + 1
    seen: dict[str, int] = {}
    final = {}
    for sname, cname in names.items():
        if counts[cname] == 1:
            final[sname] = cname
        else:
            seen[cname] = seen.get(cname, 0) + 1
            final[sname] = f"{cname}_{seen[cname]}"
    kept = {seam.name for seam in garment.seams if seam.name not in final}
    used: set[str] = set()
    for k in list(final):  # never clash with a kept name or another cut's numbered name
        if final[k] in kept or final[k] in used:
            del final[k]
        else:
            used.add(final[k])
    return final, out


def flatten_surface(
    surface: Surface,
    cut_file: CutFile | None = None,
    *,
    reflatten: bool = False,
    method: str = "arap",
    iterations: int = 50,
    name: str = "imported",
    drape: str | None = None,
    gap_mm: float = 20.0,
) -> Flattened:
    """Cut, flatten and lay out a 3D garment surface; derive its garment and UV-mapped drape.

    Parameters
    ----------
    surface : Surface
    cut_file : CutFile, optional
        Where to cut, piece names, grain. Without it (and with ``reflatten``) the surface is cut
        along its texture map's UV seams.
    reflatten : bool
        Cut along the surface's UV seams when no cut file is given.
    method : {"arap", "lscm"}
        Parametrisation (see :mod:`garnav.flatten.param`).
    iterations : int
        ARAP local/global iterations.
    name : str
        Garment name.
    drape : str, optional
        Drape path stored in the garment.
    gap_mm : float
        Space between pieces on the sheet.

    Raises
    ------
    MeshError
        A cut not on the mesh, a piece that is not a disc, or a piece the parametrisation turns
        over.
    """
    if cut_file is not None:
        cut, cut_name = cut_paths(surface, cut_file)
        where = cut_file.source
    elif reflatten:
        cut, cut_name = uv_seam_edges(surface), None
        where = "its UV seams"
    else:
        raise ValueError("give a cut file or reflatten=True")
    cs = cut_surface(surface, cut, cut_name, where)
    grain = np.asarray(cut_file.grain if cut_file is not None else (0.0, 0.0, 1.0), dtype=float)
    names = _piece_names(cs, cut_file)
    notes = list(surface.notes) + list(cs.notes)
    flat, meshes, reports = [], [], []
    for p in range(cs.n_pieces):
        fids, local, verts = cs.piece_mesh(p)
        v3 = surface.positions[cs.split_of[verts]]
        uv = flatten_piece(v3, local, method, iterations)
        ang = grain_angle(v3, uv, local, grain)
        if ang is None:
            notes.append(f"piece '{names[p]}': the grain direction is normal to the piece; "
                         "left as flattened")
        else:
            t = math.pi / 2 - ang
            c, s_ = math.cos(t), math.sin(t)
            uv = uv @ np.array([[c, s_], [-s_, c]])
        d = measure_distortion(v3, uv, local)
        if d.flipped:
            raise MeshError(f"{surface.source}: piece '{names[p]}': {d.flipped} triangle(s) turn "
                            f"over when flattened with {method}; cut the piece further")
        flat.append(uv)
        meshes.append((fids, local, verts))
        reports.append(FlatPiece(names[p], method, d))
    placed, (w, h) = layout_pieces(flat, gap_mm)
    sheet_xy = np.zeros((len(cs.split_of), 2))
    for (_, _, verts), xy in zip(meshes, placed, strict=True):
        sheet_xy[verts] = xy
    corner_uv = sheet_xy[cs.corner_vertex] / np.array([w, h])
    mesh = uv_mesh_from_arrays(surface.positions, surface.faces, corner_uv, source=surface.source)
    garment = garment_from_mesh(mesh, sheet_size_mm=(w, h), name=name, drape=drape)
    island = uv_topology(mesh).island
    piece_rename = {f"piece_{int(island[m[0][0]]) + 1}": names[p] for p, m in enumerate(meshes)}
    garment = _rename(garment, piece_rename, {})
    seam_names, lengths3 = _seam_lengths(garment, cs, sheet_xy)
    garment = _rename(garment, {}, seam_names)
    seams = []
    for seam, (_, l3) in zip(garment.seams, lengths3, strict=True):
        seams.append(SeamLength(seam.name, seam.a, seam.b,
                                polyline_length(garment.run_polyline(seam.a)),
                                polyline_length(garment.run_polyline(seam.b)), l3))
    garment = dataclasses.replace(
        garment, description=f"cut along {where} and flattened ({method}) from {surface.source}")
    return Flattened(garment, mesh, tuple(reports), tuple(seams), tuple(notes))
