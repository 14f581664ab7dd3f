"""Drapes: UV-mapped garment meshes and the maps between pattern space and the 3D surface.

* :mod:`~garnav.drape.meshio` — read OBJ / glTF / PLY with per-corner UVs, weld, check.
* :mod:`~garnav.drape.uvtopo` — UV vertices, neighbours, islands, boundary loops.
* :mod:`~garnav.drape.drape` — :class:`Drape` and :func:`link_drape` (islands → pieces).
* :mod:`~garnav.drape.locate` — grid-bucket point location in a 2D triangulation.
* :mod:`~garnav.drape.lift` — pattern polylines and routes → 3D polylines on the surface.
* :mod:`~garnav.drape.inverse` — 3D points → closest surface point → piece and pattern position.
* :mod:`~garnav.drape.report` — coverage, stretch and seam closure of a drape.
"""

from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from garnav.drape.drape import Drape, link_drape, load_drape
    from garnav.drape.inverse import locate_3d, pattern_locator, surface_to_pattern
    from garnav.drape.lift import LiftedPath, LiftedRoute, lift_polyline, lift_route
    from garnav.drape.locate import TriangleLocator
    from garnav.drape.meshio import UVMesh, load_uv_mesh, save_obj, uv_mesh_from_arrays
    from garnav.drape.report import DrapeReport, drape_report

__all__ = [
    "Drape",
    "DrapeReport",
    "LiftedPath",
    "LiftedRoute",
    "TriangleLocator",
    "UVMesh",
    "drape_report",
    "lift_polyline",
    "lift_route",
    "link_drape",
    "load_drape",
    "load_uv_mesh",
    "locate_3d",
    "pattern_locator",
    "save_obj",
    "surface_to_pattern",
    "uv_mesh_from_arrays",
]

#: Where each name lives: they load on first use, so that a command that only reads and lifts
#: (``garnav route``) does not import what it does not call (trimesh for 3D points, the report).
_LAZY = {
    "Drape": "garnav.drape.drape",
    "link_drape": "garnav.drape.drape",
    "load_drape": "garnav.drape.drape",
    "locate_3d": "garnav.drape.inverse",
    "pattern_locator": "garnav.drape.inverse",
    "surface_to_pattern": "garnav.drape.inverse",
    "LiftedPath": "garnav.drape.lift",
    "LiftedRoute": "garnav.drape.lift",
    "lift_polyline": "garnav.drape.lift",
    "lift_route": "garnav.drape.lift",
    "TriangleLocator": "garnav.drape.locate",
    "UVMesh": "garnav.drape.meshio",
    "load_uv_mesh": "garnav.drape.meshio",
    "save_obj": "garnav.drape.meshio",
    "uv_mesh_from_arrays": "garnav.drape.meshio",
    "DrapeReport": "garnav.drape.report",
    "drape_report": "garnav.drape.report",
}


def __getattr__(name: str):
    if name in _LAZY:
        import importlib

        return getattr(importlib.import_module(_LAZY[name]), name)
    raise AttributeError(f"module 'garnav.drape' has no attribute '{name}'")
