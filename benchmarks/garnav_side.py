"""Calls into garnav, kept in one place so the runner survives while parts of garnav are missing.

Each ``*_available()`` says whether the needed garnav module imports; the runner then reports the
figure as "not available" instead of failing.
"""

from __future__ import annotations

import importlib
from typing import Any

import numpy as np
import shapely

from garnav.model import Garment, Robot

__all__ = [
    "planner_available",
    "drape_available",
    "demo_available",
    "free_region",
    "build_planner",
    "route_points",
    "build_drape",
    "build_locator",
    "locate",
    "lift",
]


def _has(module: str, *names: str) -> bool:
    try:
        mod = importlib.import_module(module)
    except ImportError:
        return False
    return all(hasattr(mod, n) for n in names)


def _planner_class():
    for module in ("garnav.plan", "garnav.plan.planner"):
        if _has(module, "Planner"):
            return importlib.import_module(module).Planner
    return None


def planner_available() -> bool:
    return _planner_class() is not None


def drape_available() -> bool:
    return _has("garnav.drape", "link_drape", "lift_polyline", "TriangleLocator", "uv_mesh_from_arrays")


def demo_available() -> bool:
    return _has("garnav.demo", "demo_garment")


# --------------------------------------------------------------------------------------------
# planning


def free_region(garment: Garment, robot: Robot, piece: str, planner: Any = None) -> tuple[shapely.Geometry, str]:
    """The free region of one piece and where it came from (``"garnav"`` or ``"benchmark"``)."""
    if planner is not None:
        fs = getattr(planner, "free", None)
        if fs is not None:
            return fs[piece].region, "garnav"
    if _has("garnav.plan.freespace", "build_free_space"):
        from garnav.plan.freespace import build_free_space

        return build_free_space(garment, robot)[piece].region, "garnav"
    from benchmarks.freespace_ref import piece_free_space

    return piece_free_space(garment, piece, robot), "benchmark"


def free_regions(garment: Garment, robot: Robot) -> dict[str, shapely.Geometry]:
    """Free region of every piece (garnav's free space when importable)."""
    if _has("garnav.plan.freespace", "build_free_space"):
        from garnav.plan.freespace import build_free_space

        fs = build_free_space(garment, robot)
        return {p.name: fs[p.name].region for p in garment.pieces}
    from benchmarks.freespace_ref import piece_free_space

    return {p.name: piece_free_space(garment, p.name, robot) for p in garment.pieces}


def build_planner(garment: Garment, robot: Robot):
    """``garnav.plan.Planner(garment, robot)``: free space and navigation graph, built once."""
    return _planner_class()(garment, robot)


def route_points(planner, start: tuple[str, float, float], goal: tuple[str, float, float], via=()):
    """Plan one route; returns (route, (n, 2) points of all legs in order, piece frames)."""
    route = planner.route(start, goal, via=list(via)) if via else planner.route(start, goal)
    pts = [np.asarray(leg.points, dtype=float) for leg in route.legs]
    return route, np.vstack(pts)


def planner_graph_size(planner) -> dict[str, int | None]:
    """Node and edge counts of the planner's graph, when it exposes a networkx graph."""
    g = getattr(getattr(planner, "nav", None), "graph", None)
    try:
        return {"nodes": int(g.number_of_nodes()), "edges": int(g.number_of_edges())}
    except AttributeError:
        return {"nodes": None, "edges": None}


# --------------------------------------------------------------------------------------------
# drape


def build_drape(garment: Garment, vertices: np.ndarray, faces: np.ndarray, uv_sheet_mm: np.ndarray):
    """Link a mesh whose per-vertex UVs are given in sheet mm to ``garment``."""
    from garnav.drape import link_drape, uv_mesh_from_arrays

    size = np.asarray(garment.sheet_size_mm, dtype=float)
    corner_uv = (uv_sheet_mm / size)[faces]
    mesh = uv_mesh_from_arrays(vertices, faces, corner_uv, source="<benchmark drape>")
    return link_drape(garment, mesh)


def build_locator(triangles: np.ndarray):
    """garnav's bucket-grid locator over (T, 3, 2) triangles."""
    from garnav.drape import TriangleLocator

    return TriangleLocator.build(triangles)


def locate(locator, points: np.ndarray) -> np.ndarray:
    """Triangle index of each point (n,), -1 outside."""
    face, _ = locator.locate(points)
    return face


def lift(drape, piece: str, points: np.ndarray) -> np.ndarray:
    """Lift a piece-frame polyline (n, 2) to the surface; returns the 3D polyline (m, 3), mm."""
    from garnav.drape import lift_polyline

    path = lift_polyline(drape, piece, points)
    return drape.to_3d(path.face, path.bary)
