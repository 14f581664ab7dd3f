"""A drape-shaped object for preview tests: tests.garments.two_panels on a 3/4 cylinder.

Piece 'left' covers angles θ = x / R, piece 'right' θ = (x + 300) / R with R = 600 / (1.5 π), so the
600 mm of width wrap three quarters of the way round and the cylinder stays open at the back.
Pattern y is world z. Built as a regular grid (10 mm × 20 mm cells, two triangles each) with
separate UV vertices per piece, welded in 3D along the seam 'middle'. It offers the attributes and
queries the preview reads from ``garnav.drape.Drape``, computed in closed form.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

R = 600.0 / (1.5 * math.pi)
OFFSET = {"left": 0.0, "right": 300.0}


@dataclass
class Hits:
    face: np.ndarray
    bary: np.ndarray


@dataclass
class CylinderDrape:
    positions: np.ndarray
    faces: np.ndarray
    corner_uv: np.ndarray
    face_piece: np.ndarray
    piece_names: tuple
    corner_pattern: np.ndarray
    sheet_size_mm: tuple
    split_positions: np.ndarray = field(repr=False, default=None)
    split_faces: np.ndarray = field(repr=False, default=None)

    @staticmethod
    def point(piece, x, y):
        th = (np.asarray(x) + OFFSET[piece]) / R
        return np.column_stack([R * np.cos(th), R * np.sin(th), np.asarray(y, dtype=float)])

    @staticmethod
    def normal(piece, x):
        th = (np.asarray(x) + OFFSET[piece]) / R
        return np.column_stack([np.cos(th), np.sin(th), np.zeros_like(th)])

    # the Drape queries the preview uses; faces are not needed by the closed form, so the "hit"
    # carries the pattern point itself
    def locate(self, piece, pts, snap_mm=0.0):
        pts = np.asarray(pts, dtype=float).reshape(-1, 2)
        return Hits(np.array([piece] * len(pts), dtype=object), pts)

    def to_3d(self, face, bary):
        return np.vstack([self.point(p, [x], [y]) for p, (x, y) in zip(face, bary)])

    def normals_at(self, face, bary):
        return np.vstack([self.normal(p, [x]) for p, (x, y) in zip(face, bary)])

    def pattern_to_3d(self, piece, pts, snap_mm=0.0):
        pts = np.asarray(pts, dtype=float).reshape(-1, 2)
        return self.point(piece, pts[:, 0], pts[:, 1])


def cylinder_drape(garment) -> CylinderDrape:
    xs = np.arange(0.0, 300.0 + 1e-9, 10.0)
    ys = np.arange(0.0, 400.0 + 1e-9, 20.0)
    nx, ny = len(xs), len(ys)
    split_pos, faces, uv, piece_of, pattern = [], [], [], [], []
    names = tuple(p.name for p in garment.pieces)
    w, h = garment.sheet_size_mm
    for pi, piece in enumerate(garment.pieces):
        base = len(split_pos) and sum(len(a) for a in split_pos)
        gx, gy = np.meshgrid(xs, ys, indexing="xy")
        flat = np.column_stack([gx.ravel(), gy.ravel()])
        split_pos.append(CylinderDrape.point(piece.name, flat[:, 0], flat[:, 1]))
        sheet = piece.placement.to_sheet(flat)
        for j in range(ny - 1):
            for i in range(nx - 1):
                a = j * nx + i
                for tri in ((a, a + 1, a + nx + 1), (a, a + nx + 1, a + nx)):
                    faces.append([base + t for t in tri])
                    uv.append(sheet[list(tri)] / [w, h])
                    pattern.append(flat[list(tri)])
                    piece_of.append(pi)
    split_positions = np.vstack(split_pos)
    split_faces = np.array(faces)
    # weld equal positions (the seam columns)
    key = np.round(split_positions, 6)
    _, first, inverse = np.unique(key, axis=0, return_index=True, return_inverse=True)
    positions = split_positions[first]
    welded_faces = inverse.ravel()[split_faces]
    return CylinderDrape(
        positions=positions,
        faces=welded_faces,
        corner_uv=np.array(uv),
        face_piece=np.array(piece_of),
        piece_names=names,
        corner_pattern=np.array(pattern),
        sheet_size_mm=(w, h),
        split_positions=split_positions,
        split_faces=split_faces,
    )
