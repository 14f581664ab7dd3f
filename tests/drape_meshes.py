"""Synthetic UV-mapped meshes for the drape tests: exact developable surfaces, built in Python.

Each builder returns ``(garment, mesh)``: the garment's pieces are the flat developments, the
mesh's corner UVs are the pieces' points on the sheet divided by the sheet size, and the 3D
positions are the developable surface's points (so seams weld exactly).
"""

from __future__ import annotations

import math

import numpy as np
import shapely

import garments
from garnav import Edge, Garment, Piece, Placement, Robot, Seam, SeamRun
from garnav.drape.meshio import UVMesh, uv_mesh_from_arrays


def grid_triangles(nx: int, ny: int) -> np.ndarray:
    """(2 nx ny, 3) CCW triangles of an (nx+1) × (ny+1) vertex grid, vertex id = j * (nx+1) + i."""
    i, j = np.meshgrid(np.arange(nx), np.arange(ny), indexing="xy")
    v00 = (j * (nx + 1) + i).reshape(-1)
    v10, v01, v11 = v00 + 1, v00 + nx + 1, v00 + nx + 2
    return np.vstack([np.column_stack([v00, v10, v11]), np.column_stack([v00, v11, v01])])


def mesh_from_parts(garment: Garment, parts, **kwargs) -> UVMesh:
    """Join per-piece parts ``{piece: (pattern (n, 2), tris (m, 3), positions (n, 3))}``."""
    sheet = np.asarray(garment.sheet_size_mm, dtype=float)
    pos, faces, uv = [], [], []
    offset = 0
    for name in sorted(parts):
        pattern, tris, xyz = parts[name]
        corner_sheet = garment.piece(name).placement.to_sheet(pattern[tris])
        pos.append(xyz)
        faces.append(tris + offset)
        uv.append(corner_sheet / sheet)
        offset += len(xyz)
    return uv_mesh_from_arrays(np.vstack(pos), np.vstack(faces), np.vstack(uv), **kwargs)


def rect_grid(width: float, height: float, nx: int, ny: int) -> tuple[np.ndarray, np.ndarray]:
    x, y = np.meshgrid(np.linspace(0, width, nx + 1), np.linspace(0, height, ny + 1), indexing="xy")
    return np.column_stack([x.reshape(-1), y.reshape(-1)]), grid_triangles(nx, ny)


def cylinder(radius: float = 50.0, length: float = 300.0, n_around: int = 128, n_along: int = 30):
    """A tube piece (circumference 2πr × length) wrapped on a cylinder about the z axis.

    Pattern x runs around (angle x / r), y runs up (z = y). The closing seam joins the piece's
    right and left edges.
    """
    circ = 2 * math.pi * radius
    garment = garments.tube(circumference=circ, length=length)
    garment = Garment(
        garment.name,
        tuple(
            Piece(p.name, p.edges, placement=Placement(10.0, 10.0)) for p in garment.pieces
        ),
        seams=garment.seams,
        robot=garment.robot,
        sheet_size_mm=garment.sheet_size_mm,
    )
    pattern, tris = rect_grid(circ, length, n_around, n_along)
    theta = pattern[:, 0] / radius
    xyz = np.column_stack([radius * np.cos(theta), radius * np.sin(theta), pattern[:, 1]])
    return garment, mesh_from_parts(garment, {"tube": (pattern, tris, xyz)})


def cone(sin_half_angle: float = 0.5, s_in: float = 60.0, s_out: float = 300.0,
         n_around: int = 128, n_radial: int = 40):
    """A right circular cone (apex at the origin, opening downwards) cut from a sector.

    The development of a cone of half-angle α is a circular sector of angle Φ = 2π sin α
    (slant distance s kept, angle scaled by sin α). The piece is the annular sector
    s_in <= s <= s_out, 0 <= φ <= Φ; its straight sides are sewn together.
    """
    phi_max = 2 * math.pi * sin_half_angle
    s = np.linspace(s_in, s_out, n_radial + 1)
    phi = np.linspace(0.0, phi_max, n_around + 1)
    P, S = np.meshgrid(phi, s, indexing="xy")  # vertex id = j * (n_around + 1) + i
    pattern = np.column_stack([(S * np.cos(P)).reshape(-1), (S * np.sin(P)).reshape(-1)])
    tris = grid_triangles(n_around, n_radial)
    theta = P.reshape(-1) / sin_half_angle
    rho = S.reshape(-1) * sin_half_angle
    z = -S.reshape(-1) * math.sqrt(1 - sin_half_angle**2)
    xyz = np.column_stack([rho * np.cos(theta), rho * np.sin(theta), z])
    # outline CCW: side_a (φ = 0, s up), outer arc, side_b (φ = Φ, s down), inner arc back
    outer = [(s_out * math.cos(a), s_out * math.sin(a)) for a in phi]
    inner = [(s_in * math.cos(a), s_in * math.sin(a)) for a in phi[::-1]]
    piece = Piece(
        "cone",
        (
            Edge("side_a", ((s_in, 0.0), (s_out, 0.0))),
            Edge("outer", tuple(outer)),
            Edge("side_b", (outer[-1], inner[0])),
            Edge("inner", tuple(inner)),
        ),
        placement=Placement(s_out + 10.0, s_out + 10.0),
    )
    garment = Garment(
        "cone",
        (piece,),
        seams=(Seam("closing", SeamRun("cone", "side_a"), SeamRun("cone", "side_b", reverse=True)),),
        robot=Robot(radius_mm=10.0, edge_margin_mm=2.0),
        sheet_size_mm=(2 * s_out + 20.0, 2 * s_out + 20.0),
    )
    return garment, mesh_from_parts(garment, {"cone": (pattern, tris, xyz)})


def flat_sheet(width: float = 400.0, height: float = 300.0, nx: int = 40, ny: int = 30,
               stretch=(1.0, 1.0)):
    """The single-panel garment laid flat in the plane z = 0, optionally stretched along x and y."""
    garment = garments.single_panel(width, height)
    pattern, tris = rect_grid(width, height, nx, ny)
    xyz = np.column_stack([pattern[:, 0] * stretch[0], pattern[:, 1] * stretch[1], np.zeros(len(pattern))])
    return garment, mesh_from_parts(garment, {"panel": (pattern, tris, xyz)})


def folded_panels(nx: int = 30, ny: int = 40, gap: float = 0.0):
    """The two-panel garment folded at its seam by 90°: 'left' in the plane y = 0, 'right' in x = 300.

    ``gap`` (mm) moves the right panel along +x, opening the seam.
    """
    garment = garments.two_panels()
    pattern, tris = rect_grid(300.0, 400.0, nx, ny)
    left = np.column_stack([pattern[:, 0], np.zeros(len(pattern)), pattern[:, 1]])
    right = np.column_stack([np.full(len(pattern), 300.0 + gap), pattern[:, 0], pattern[:, 1]])
    mesh = mesh_from_parts(
        garment, {"left": (pattern, tris, left), "right": (pattern, tris, right)}
    )
    return garment, mesh


def match_pieces(original: Garment, imported: Garment) -> dict[str, str]:
    """Map imported piece names to original ones by where the pieces lie on the sheet."""
    out = {}
    for p in imported.pieces:
        inside = p.placement.to_sheet(np.array(p.polygon.representative_point().coords[0]))
        for q in original.pieces:
            if q.polygon.contains(shapely.Point(q.placement.from_sheet(inside))):
                out[p.name] = q.name
    return out
