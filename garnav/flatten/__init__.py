"""3D-first garments: cut a 3D garment surface along seam lines and flatten its pieces.

* :mod:`~garnav.flatten.surface` — read a triangle surface without UVs; weld; manifold checks.
* :mod:`~garnav.flatten.cutfile` — the cut file (TOML): seam lines, piece names, grain.
* :mod:`~garnav.flatten.cut` — snap seam lines to mesh edges, cut, split into disc pieces.
* :mod:`~garnav.flatten.param` — LSCM (Lévy et al. 2002) and ARAP (Liu et al. 2008) via libigl.
* :mod:`~garnav.flatten.distortion` — per-piece length and area distortion (the map error).
* :mod:`~garnav.flatten.build` — layout on a sheet, UV-mapped drape, garment via the mesh import.
"""

from garnav.flatten.build import FlatPiece, Flattened, SeamLength, flatten_surface
from garnav.flatten.cutfile import CutCurve, CutFile, PieceName, load_cut_file
from garnav.flatten.distortion import DEFAULT_MAX_SCALE_ERROR, Distortion, measure_distortion
from garnav.flatten.surface import Surface, load_surface, surface_from_arrays

__all__ = [
    "DEFAULT_MAX_SCALE_ERROR",
    "CutCurve",
    "CutFile",
    "Distortion",
    "FlatPiece",
    "Flattened",
    "PieceName",
    "SeamLength",
    "Surface",
    "flatten_surface",
    "load_cut_file",
    "load_surface",
    "measure_distortion",
    "surface_from_arrays",
]
