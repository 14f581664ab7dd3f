"""The 3D content of a plan page as plain triangle meshes (pure; pyvista builds the tubes).

Everything the page's viewer draws is turned into :class:`ScenePart` triangle meshes here, in world
mm, so the viewer in the browser only decodes and draws: the draped garment one mesh per piece,
keep-out triangles as an overlay, seams, open edges and keep-out outlines as thin tubes, the
mannequin, each route as a tube with direction cones, a start sphere and a goal cube (the same
marks as the desktop preview, :mod:`garnav.preview.scene`), landmarks as small spheres and body
zones as translucent spheres.

Tubes come from VTK's tube filter through pyvista (``PolyData.tube``); a route is lifted off the
surface by 1.2 tube radii along the surface normal, as in the desktop preview (a line lying exactly
on a surface flickers).
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from typing import Sequence

import numpy as np

from garnav.model import Garment
from garnav.preview.scene import (
    PIECE_COLOURS,
    SceneStyle,
    drape_edges,
    keepout_face_mask,
    keepout_outline_3d,
    landmark_points,
)
from garnav.preview.sheet import ROUTE_COLOURS, SheetStyle

__all__ = [
    "ScenePart",
    "BodyZone",
    "PageLandmark",
    "SceneContent",
    "scene_content",
    "route_parts",
    "tube",
    "scene_scale",
    "decimate_body",
    "ZONE_COLOUR",
]

#: Colour of body zones in the page (our own choice).
ZONE_COLOUR = "#8e44ad"


@dataclass(frozen=True, eq=False)
class ScenePart:
    """One triangle mesh of the page's 3D view.

    Attributes
    ----------
    name : str
        What it is, e.g. ``"piece front"``, ``"seams"``, ``"route 0"``.
    group : str
        The toggle it belongs to: ``garment``, ``body``, ``edges``, ``keepouts``, ``zones``,
        ``landmarks`` or ``route-K``.
    colour : str
        ``#rrggbb``.
    positions : (n, 3) float array
        World mm.
    faces : (m, 3) int array
        Triangles, indices into ``positions``.
    shading : {"lit", "unlit"}
        Unlit parts keep their colour from every side (routes).
    opacity : float
    overlay : bool
        Drawn over coplanar surfaces (keep-out triangles lie exactly on the garment).
    """

    name: str
    group: str
    colour: str
    positions: np.ndarray
    faces: np.ndarray
    shading: str = "lit"
    opacity: float = 1.0
    overlay: bool = False


@dataclass(frozen=True)
class BodyZone:
    """A zone around a point of the body that the page shows (e.g. an implanted device).

    Attributes
    ----------
    name, kind : str
    centre_mm : (x, y, z)
        World mm.
    radius_mm : float
    """

    name: str
    kind: str
    centre_mm: tuple[float, float, float]
    radius_mm: float


@dataclass(frozen=True)
class PageLandmark:
    """A landmark label of the 3D view: name, world position (mm) and outward normal (or None)."""

    name: str
    xyz: tuple[float, float, float]
    normal: tuple[float, float, float] | None


@dataclass(frozen=True, eq=False)
class SceneContent:
    """All parts and labels of the 3D view, and its size scale (mm, the scene's diagonal)."""

    parts: tuple[ScenePart, ...]
    landmarks: tuple[PageLandmark, ...]
    scale_mm: float


# --------------------------------------------------------------------------- mesh helpers


def _triangles(poly) -> tuple[np.ndarray, np.ndarray]:
    """Points (n, 3) and triangles (m, 3) of a pyvista PolyData (triangulated first)."""
    tri = poly.triangulate()
    faces = np.asarray(tri.faces).reshape(-1, 4)[:, 1:] if tri.n_cells else np.zeros((0, 3), dtype=np.int64)
    return np.asarray(tri.points, dtype=float), faces.astype(np.int64)


def _merge(meshes: Sequence[tuple[np.ndarray, np.ndarray]]) -> tuple[np.ndarray, np.ndarray]:
    pos, tri, offset = [], [], 0
    for p, f in meshes:
        if len(f) == 0:
            continue
        pos.append(p)
        tri.append(f + offset)
        offset += len(p)
    if not pos:
        return np.zeros((0, 3)), np.zeros((0, 3), dtype=np.int64)
    return np.vstack(pos), np.vstack(tri)


def _sub_mesh(positions: np.ndarray, faces: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """The vertices the faces use, re-indexed."""
    used, inverse = np.unique(faces, return_inverse=True)
    return positions[used], inverse.reshape(faces.shape).astype(np.int64)


def tube(points: np.ndarray, radius: float, sides: int = 10) -> tuple[np.ndarray, np.ndarray]:
    """A closed-capped tube around a polyline.

    Parameters
    ----------
    points : (n, 3) array
        The polyline, mm; repeated points are dropped.
    radius : float
        mm.
    sides : int

    Returns
    -------
    positions (k, 3), faces (m, 3)
    """
    import pyvista as pv

    pts = np.asarray(points, dtype=float)
    keep = np.r_[True, np.linalg.norm(np.diff(pts, axis=0), axis=1) > 1e-9]
    pts = pts[keep]
    if len(pts) < 2:
        return np.zeros((0, 3)), np.zeros((0, 3), dtype=np.int64)
    return _triangles(pv.lines_from_points(pts).tube(radius=radius, n_sides=sides, capping=True))


def _edge_tubes(positions: np.ndarray, edges: np.ndarray, radius: float, sides: int = 6):
    """Tubes along mesh edges (E, 2), joined into polylines first (VTK's stripper)."""
    import pyvista as pv

    if len(edges) == 0:
        return np.zeros((0, 3)), np.zeros((0, 3), dtype=np.int64)
    cells = np.column_stack([np.full(len(edges), 2), edges]).ravel()
    lines = pv.PolyData(np.asarray(positions, dtype=float), lines=cells).strip(join=True)
    return _triangles(lines.tube(radius=radius, n_sides=sides, capping=False))


def _xyz(v) -> tuple[float, float, float]:
    a = np.asarray(v, dtype=float).reshape(3)
    return (float(a[0]), float(a[1]), float(a[2]))


def scene_scale(drape=None, body=None) -> float:
    """Diagonal of the scene's bounding box, mm (100 when there is nothing)."""
    boxes = [np.asarray(m, dtype=float) for m in (getattr(drape, "positions", None), body[0] if body else None)
             if m is not None and len(m)]
    if not boxes:
        return 100.0
    allp = np.vstack(boxes)
    return float(np.linalg.norm(np.ptp(allp, axis=0)))


# --------------------------------------------------------------------------- the parts


def _garment_parts(garment: Garment, drape, scale: float, style: SceneStyle) -> list[ScenePart]:
    positions = np.asarray(drape.positions, dtype=float)
    faces = np.asarray(drape.faces, dtype=np.int64)
    face_piece = np.asarray(drape.face_piece)
    parts: list[ScenePart] = []
    for i, name in enumerate(drape.piece_names):
        sel = faces[face_piece == i]
        if len(sel):
            p, f = _sub_mesh(positions, sel)
            parts.append(ScenePart(f"piece {name}", "garment", PIECE_COLOURS[i % len(PIECE_COLOURS)], p, f))
    sheet = SheetStyle()
    for kind, hard, colour in (("hard", True, style.keepout), ("soft", False, sheet.soft_fill)):
        only = replace(garment, keepouts=tuple(k for k in garment.keepouts if k.hard == hard))
        mask = keepout_face_mask(only, drape) if only.keepouts else np.zeros(len(faces), dtype=bool)
        if np.any(mask):
            p, f = _sub_mesh(positions, faces[mask])
            parts.append(ScenePart(f"keep-out areas ({kind})", "keepouts", colour, p, f, overlay=True))
    seams, opens = drape_edges(faces, np.asarray(drape.corner_uv))
    for label, edges, colour in (("seams", seams, style.seam), ("open edges", opens, style.open_edge)):
        p, f = _edge_tubes(positions, edges, 0.0015 * scale)
        if len(f):
            parts.append(ScenePart(label, "edges", colour, p, f))
    outlines: dict[str, list] = {"hard": [], "soft": []}
    for k in garment.keepouts:
        ring = keepout_outline_3d(drape, k)
        if ring is not None:
            outlines["hard" if k.hard else "soft"].append(tube(ring, 0.0025 * scale, 8))
    for kind, colour in (("hard", style.keepout), ("soft", sheet.soft_fill)):
        if outlines[kind]:
            p, f = _merge(outlines[kind])
            parts.append(ScenePart(f"keep-out outlines ({kind})", "keepouts", colour, p, f))
    return parts


def route_parts(index: int, name: str, points: np.ndarray, normals: np.ndarray | None,
                scale: float, radius: float | None = None) -> list[ScenePart]:
    """Tube, direction cones, start sphere and goal cube of one route (colour by ``index``).

    ``radius`` (mm) of the tube defaults to 0.4 % of the scene's size, as in the desktop preview.
    """
    import pyvista as pv

    colour = ROUTE_COLOURS[index % len(ROUTE_COLOURS)]
    radius = 0.004 * scale if radius is None else float(radius)
    pts = np.asarray(points, dtype=float)
    if normals is not None:
        pts = pts + 1.2 * radius * np.asarray(normals, dtype=float)
    keep = np.r_[True, np.linalg.norm(np.diff(pts, axis=0), axis=1) > 1e-9]
    pts = pts[keep]
    if len(pts) < 2:
        return []
    meshes = [tube(pts, radius, 12)]
    meshes.append(_triangles(pv.Sphere(radius=2.2 * radius, center=pts[0], theta_resolution=16, phi_resolution=12)))
    meshes.append(_triangles(pv.Cube(center=pts[-1], x_length=4 * radius, y_length=4 * radius, z_length=4 * radius)))
    seg = np.linalg.norm(np.diff(pts, axis=0), axis=1)
    cum = np.r_[0.0, np.cumsum(seg)]
    for s in np.arange(0.08, 0.95, 0.12) * cum[-1]:
        k = int(np.clip(np.searchsorted(cum, s) - 1, 0, len(seg) - 1))
        d = pts[k + 1] - pts[k]
        c = pts[k] + d * ((s - cum[k]) / seg[k] if seg[k] > 0 else 0.0)
        meshes.append(_triangles(pv.Cone(center=c, direction=d, height=5 * radius, radius=2 * radius, resolution=12)))
    p, f = _merge(meshes)
    return [ScenePart(f"route {name}", f"route-{index}", colour, p, f, shading="unlit")]


def decimate_body(vertices: np.ndarray, faces: np.ndarray, max_triangles: int) -> tuple[np.ndarray, np.ndarray]:
    """The mannequin with at most about ``max_triangles`` triangles (unchanged when it has fewer).

    Quadric error decimation (Garland & Heckbert, "Surface simplification using quadric error
    metrics", SIGGRAPH 1997) through VTK's ``vtkQuadricDecimation`` (pyvista ``decimate``). Only
    the mannequin is decimated: the garment stays as it is, because the routes lie on it.

    Returns
    -------
    vertices (B', 3), faces (G', 3)
    """
    import pyvista as pv

    faces = np.asarray(faces, dtype=np.int64)
    if len(faces) <= max_triangles:
        return np.asarray(vertices, dtype=float), faces
    poly = pv.PolyData(np.asarray(vertices, dtype=float), np.column_stack([np.full(len(faces), 3), faces]).ravel())
    reduced = poly.decimate(1.0 - max_triangles / len(faces))
    return _triangles(reduced)


def scene_content(
    garment: Garment,
    drape=None,
    body=None,
    routes: Sequence[tuple] = (),
    zones: Sequence[BodyZone] = (),
    style: SceneStyle | None = None,
) -> SceneContent:
    """All parts of the page's 3D view.

    Parameters
    ----------
    garment : Garment
    drape : garnav.drape.Drape, optional
    body : (vertices (B, 3), faces (G, 3)), optional
        The mannequin, world mm.
    routes : sequence of (name, points (M, 3), normals (M, 3) or None[, tube radius mm])
        Lifted routes, in route-colour order.
    zones : sequence of BodyZone
    style : SceneStyle, optional
        Colours shared with the desktop preview (its defaults when not given).

    Returns
    -------
    SceneContent
    """
    import pyvista as pv

    style = style or SceneStyle()
    scale = scene_scale(drape, body)
    parts: list[ScenePart] = []
    if body is not None:
        verts, faces = body
        parts.append(ScenePart("mannequin", "body", style.body, np.asarray(verts, dtype=float),
                               np.asarray(faces, dtype=np.int64)))
    labels: list[PageLandmark] = []
    if drape is not None:
        parts += _garment_parts(garment, drape, scale, style)
        marks, names, normals = landmark_points(garment, drape)
        if marks:
            spheres = [_triangles(pv.Sphere(radius=0.006 * scale, center=m, theta_resolution=12, phi_resolution=8))
                       for m in marks]
            p, f = _merge(spheres)
            parts.append(ScenePart("landmarks", "landmarks", style.landmark, p, f))
            for m, n, nrm in zip(marks, names, normals, strict=True):
                labels.append(PageLandmark(n, _xyz(m), None if nrm is None else _xyz(nrm)))
    for ri, route in enumerate(routes):
        name, pts, nrm = route[:3]
        parts += route_parts(ri, name, pts, nrm, scale, *route[3:4])
    if zones:
        balls = [_triangles(pv.Sphere(radius=z.radius_mm, center=z.centre_mm, theta_resolution=32, phi_resolution=16))
                 for z in zones]
        p, f = _merge(balls)
        parts.append(ScenePart("body zones", "zones", ZONE_COLOUR, p, f, opacity=0.3))
    return SceneContent(tuple(parts), tuple(labels), scale)
