"""Tilted flat panels as drapes, for the mechanics tests: exact planes with known normals.

``tilted_panel(rotation)`` lays the single-panel garment (pattern x, y in mm) into 3D by a
rotation of the plane z = 0; its outside normal is ``rotation @ (0, 0, 1)``.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np

import drape_meshes
import garments
from garnav.drape import link_drape


def slope_rotation(beta_deg: float) -> np.ndarray:
    """Rotation about x by β: pattern +y runs uphill at slope β, x stays level."""
    b = math.radians(beta_deg)
    return np.array([[1.0, 0.0, 0.0], [0.0, math.cos(b), -math.sin(b)], [0.0, math.sin(b), math.cos(b)]])


def tilted_panel(rotation: np.ndarray, robot, width: float = 600.0, height: float = 800.0,
                 nx: int = 30, ny: int = 40):
    """(garment with ``robot``, linked drape) of a width × height panel rotated into 3D."""
    g0 = garments.single_panel(width, height)
    garment = dataclasses.replace(g0, robot=robot)
    pattern, tris = drape_meshes.rect_grid(width, height, nx, ny)
    flat = np.column_stack([pattern, np.zeros(len(pattern))])
    xyz = flat @ np.asarray(rotation, dtype=float).T
    mesh = drape_meshes.mesh_from_parts(garment, {"panel": (pattern, tris, xyz)})
    return garment, link_drape(garment, mesh)
