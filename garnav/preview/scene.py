"""The 3D preview: mannequin, draped garment, seams, keep-outs, landmarks and routes (pyvista).

Pure parts (testable without a screen): :func:`drape_edges` finds the seam and open-edge lines of a
drape from its topology, :func:`keepout_face_mask` marks the triangles inside keep-outs,
:func:`route_polyline` gets a route's 3D polyline. :func:`build_plotter` assembles a
``pyvista.Plotter``; :func:`screenshot_png` renders it off-screen to PNG bytes and
:func:`write_screenshot` writes them atomically.

Seams and open edges come from the mesh itself: an edge of the welded mesh with one triangle is an
open edge (hem, cuff, neckline); an edge with two triangles whose corner UVs differ across it is a
seam (the UV map is cut there). Routes are drawn as tubes lifted off the surface by their radius
along the surface normal (a line lying exactly on a surface flickers), flat-shaded in the route
colours of the pattern sheet, with cones along them, a sphere at the start and a cube at the goal.
"""

from __future__ import annotations

import io
import math
import os
from dataclasses import dataclass
from typing import Sequence

import numpy as np
import shapely

from garnav.atomic import write_bytes_atomic
from garnav.errors import GarnavError, MeshError
from garnav.model import Garment
from garnav.polyline import point_at_length, polyline_length, tangent_at
from garnav.preview.sheet import ROUTE_COLOURS

__all__ = [
    "SceneStyle",
    "SceneRoute",
    "MARGIN_CMAP",
    "MARGIN_CLIM",
    "point_margins",
    "document_margins",
    "PIECE_COLOURS",
    "drape_edges",
    "keepout_face_mask",
    "route_polyline",
    "landmark_points",
    "keepout_outline_3d",
    "build_plotter",
    "draw_scene",
    "screenshot_png",
    "views_png",
    "set_view",
    "VIEW_DIRECTIONS",
    "write_screenshot",
    "off_screen_environment",
]

# Piece colours on the drape (our own muted palette), in garment piece order.
PIECE_COLOURS = ("#9fb8ad", "#c9b79c", "#a9b4c2", "#d4a5a5", "#b5c99a", "#c3aed6", "#e3c88f", "#9cc5c9")


@dataclass(frozen=True)
class SceneStyle:
    background: str = "#f4f1ec"
    body: str = "#d9cbbd"
    seam: str = "#24415f"
    open_edge: str = "#6b4423"
    keepout: str = "#c0392b"
    landmark: str = "#1b1b3a"
    coverage: str = "#5b8fc7"
    line_width: float = 3.0


@dataclass(frozen=True)
class SceneRoute:
    """A route to draw: points (M, 3) and unit normals (M, 3) on the surface, world mm.

    ``margin`` (M − 1,), optional: each segment's tightest margin over its requirement
    (``RouteMechanics.tightest``; 1 = just safe): the tube is coloured by it, with a colour bar.
    ``faint``: drawn thin and without direction cones (e.g. a shortest route that was refused).
    """

    name: str
    points: np.ndarray
    normals: np.ndarray | None = None
    margin: np.ndarray | None = None
    faint: bool = False


#: Colour map and range of the margin colouring: tightest margin over its requirement.
MARGIN_CMAP = "RdYlGn"
MARGIN_CLIM = (0.0, 2.0)
MARGIN_TITLE = "margin / required"


def point_margins(margin: np.ndarray) -> np.ndarray:
    """(M,) per-point margins from (M − 1,) per-segment ones: the smaller of the two segments
    meeting at each point (the ends take their one segment).

    >>> point_margins(np.array([2.0, 0.5, 1.0])).tolist()
    [2.0, 0.5, 0.5, 1.0]
    """
    m = np.asarray(margin, dtype=float)
    return np.minimum(np.r_[m[:1], m], np.r_[m, m[-1:]])


def off_screen_environment() -> None:
    """Set the environment variables for headless rendering (EGL, no display)."""
    os.environ.setdefault("PYVISTA_OFF_SCREEN", "true")
    os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")


# --------------------------------------------------------------------------- pure parts


def drape_edges(faces: np.ndarray, corner_uv: np.ndarray, tol: float = 1e-9) -> tuple[np.ndarray, np.ndarray]:
    """Seam edges and open edges of a welded, UV-mapped triangle mesh.

    Parameters
    ----------
    faces : (F, 3) int array
        Triangles over welded vertex positions.
    corner_uv : (F, 3, 2) float array
        UV of each corner.
    tol : float
        UV distance below which two corners count as the same UV vertex.

    Returns
    -------
    seams : (S, 2) int array
        Vertex pairs of edges shared by two triangles whose UVs differ across the edge.
    open_edges : (O, 2) int array
        Vertex pairs of edges used by one triangle only.
    """
    faces = np.asarray(faces, dtype=np.int64)
    f_idx = np.repeat(np.arange(len(faces)), 3)
    k = np.tile(np.arange(3), len(faces))
    v0 = faces[f_idx, k]
    v1 = faces[f_idx, (k + 1) % 3]
    uv0 = corner_uv[f_idx, k]
    uv1 = corner_uv[f_idx, (k + 1) % 3]
    lo, hi = np.minimum(v0, v1), np.maximum(v0, v1)
    swap = v0 > v1
    uv_lo = np.where(swap[:, None], uv1, uv0)
    uv_hi = np.where(swap[:, None], uv0, uv1)
    order = np.lexsort((hi, lo))
    lo, hi, uv_lo, uv_hi = lo[order], hi[order], uv_lo[order], uv_hi[order]
    key = np.column_stack([lo, hi])
    starts = np.flatnonzero(np.r_[True, np.any(key[1:] != key[:-1], axis=1)])
    counts = np.diff(np.r_[starts, len(key)])
    open_edges = key[starts[counts == 1]]
    pairs = starts[counts == 2]
    differ = (np.linalg.norm(uv_lo[pairs] - uv_lo[pairs + 1], axis=1) > tol) | (
        np.linalg.norm(uv_hi[pairs] - uv_hi[pairs + 1], axis=1) > tol
    )
    seams = key[pairs[differ]]
    return seams, open_edges


def keepout_face_mask(garment: Garment, drape) -> np.ndarray:
    """(F,) bool: triangles of the drape whose pattern centroid lies in a keep-out of their piece."""
    centroids = np.asarray(drape.corner_pattern).mean(axis=1)
    mask = np.zeros(len(centroids), dtype=bool)
    for k in garment.keepouts:
        if k.piece not in drape.piece_names:
            continue
        on_piece = np.asarray(drape.face_piece) == drape.piece_names.index(k.piece)
        geom = k.shape.exact_geometry()
        inside = shapely.contains_xy(geom, centroids[:, 0], centroids[:, 1])
        mask |= on_piece & inside
    return mask


def document_margins(document: dict) -> np.ndarray | None:
    """(M − 1,) tightest margin over its requirement of each ``path3d`` segment of a route
    document with a ``physics`` object (null margins count as unlimited); None without one."""
    phys = document.get("physics")
    if not phys:
        return None
    seg = phys["segments"]

    def arr(key: str) -> np.ndarray:
        return np.array([np.inf if v is None else v for v in seg[key]], dtype=float)

    return np.minimum.reduce([arr("grip_margin") / phys["safety_factor"], arr("hold_margin") / phys["safety_factor"],
                              arr("drive_margin") / phys["drive_safety_factor"]])


def route_polyline(document: dict, drape=None, garment: Garment | None = None, source: str = "route"):
    """The 3D polyline of a ``garnav-route`` document.

    Uses the document's ``path3d`` (with the normals of ``path3d_detail``) when it has one;
    otherwise lifts its legs onto ``drape`` with :func:`garnav.drape.lift_route`.

    Returns
    -------
    points : (M, 3) array, normals : (M, 3) array or None
    """
    path = document.get("path3d")
    if path:
        pts = np.asarray(path, dtype=float).reshape(-1, 3)
        detail = document.get("path3d_detail") or {}
        nrm = detail.get("normals")
        return pts, (np.asarray(nrm, dtype=float).reshape(-1, 3) if nrm else None)
    if drape is None or garment is None:
        raise MeshError(f"{source}: the route has no 3D path and the garment has no drape to lift it onto")
    from garnav.drape import lift_route
    from garnav.export.waypoints import document_route

    lifted = lift_route(drape, garment, document_route(document))
    return np.asarray(lifted.points, dtype=float), np.asarray(lifted.normals, dtype=float)


# --------------------------------------------------------------------------- plotting


def _lines_polydata(positions: np.ndarray, edges: np.ndarray):
    import pyvista as pv

    if len(edges) == 0:
        return None
    cells = np.column_stack([np.full(len(edges), 2), edges]).ravel()
    return pv.PolyData(np.asarray(positions, dtype=float), lines=cells)


def build_plotter(
    garment: Garment,
    drape=None,
    body=None,
    routes: Sequence[SceneRoute] = (),
    *,
    off_screen: bool = False,
    size: tuple[int, int] = (1200, 900),
    style: SceneStyle = SceneStyle(),
    labels: bool = True,
    covered_faces: np.ndarray | None = None,
):
    """A pyvista Plotter showing the scene.

    Parameters
    ----------
    garment : Garment
    drape : garnav.drape.Drape, optional
        Needs ``positions`` (V, 3), ``faces`` (F, 3), ``corner_uv`` (F, 3, 2), ``face_piece`` (F,),
        ``piece_names``, ``corner_pattern`` (F, 3, 2) and ``pattern_to_3d(piece, pts)``.
    body : (vertices (B, 3), faces (G, 3)), optional
        The mannequin.
    routes : sequence of SceneRoute
    off_screen : bool
    size : (width, height) in pixels
    labels : bool
        Draw landmark labels (text rendering).
    covered_faces : (F,) bool array, optional
        Drape triangles a sweep covers, shaded in ``style.coverage`` (see
        :func:`garnav.sweep.coverage_face_mask`).
    """
    import pyvista as pv

    if off_screen:
        off_screen_environment()
    plotter = pv.Plotter(off_screen=off_screen, window_size=[int(size[0]), int(size[1])])
    plotter.set_background(style.background)
    draw_scene(plotter, garment, drape, body, routes, style=style, labels=labels, covered_faces=covered_faces)
    set_view(plotter, "front")
    return plotter


def draw_scene(
    plotter,
    garment: Garment,
    drape=None,
    body=None,
    routes: Sequence[SceneRoute] = (),
    *,
    style: SceneStyle = SceneStyle(),
    labels: bool = True,
    covered_faces: np.ndarray | None = None,
) -> None:
    """Add the scene of :func:`build_plotter` to the plotter's active renderer (subplot); the
    camera is left alone (:func:`set_view`). Parameters as :func:`build_plotter`'s."""
    import pyvista as pv

    scale = 100.0

    if body is not None:
        verts, faces = body
        mesh = pv.PolyData(np.asarray(verts, dtype=float), np.column_stack([np.full(len(faces), 3), faces]).ravel())
        plotter.add_mesh(mesh, color=style.body, smooth_shading=True, specular=0.1, name="body")
        scale = float(np.linalg.norm(np.ptp(np.asarray(verts), axis=0)))

    if drape is not None:
        positions = np.asarray(drape.positions, dtype=float)
        faces = np.asarray(drape.faces, dtype=np.int64)
        scale = max(scale if body is not None else 0.0, float(np.linalg.norm(np.ptp(positions, axis=0))))
        cloth = pv.PolyData(positions, np.column_stack([np.full(len(faces), 3), faces]).ravel())
        colours = np.array([_rgb(PIECE_COLOURS[i % len(PIECE_COLOURS)]) for i in range(len(drape.piece_names))])
        face_rgb = colours[np.asarray(drape.face_piece)]
        mask = keepout_face_mask(garment, drape)
        if covered_faces is not None:
            face_rgb[np.asarray(covered_faces, dtype=bool)] = _rgb(style.coverage)
        face_rgb[mask] = _rgb(style.keepout)
        cloth.cell_data["colour"] = (face_rgb * 255).astype(np.uint8)
        plotter.add_mesh(cloth, scalars="colour", rgb=True, show_edges=False, name="drape", specular=0.05)
        seams, opens = drape_edges(faces, np.asarray(drape.corner_uv))
        for name, edges, colour in (("seams", seams, style.seam), ("open-edges", opens, style.open_edge)):
            lines = _lines_polydata(positions, edges)
            if lines is not None:
                plotter.add_mesh(lines.tube(radius=0.0015 * scale, n_sides=8), color=colour, name=name)
        for k in garment.keepouts:
            outline = keepout_outline_3d(drape, k)
            if outline is not None:
                plotter.add_mesh(pv.lines_from_points(outline).tube(radius=0.0025 * scale, n_sides=8),
                                 color=style.keepout, name=f"keepout-{k.name}")
        marks, names, normals = landmark_points(garment, drape)
        if marks:
            pts = pv.PolyData(np.array(marks))
            plotter.add_mesh(pts.glyph(geom=pv.Sphere(radius=0.006 * scale), scale=False, orient=False),
                             color=style.landmark, name="landmarks")
            if labels:
                # with normals known, set_view labels only the landmarks on the side of the garment
                # it looks at (labels are drawn on top of everything)
                known = all(n is not None for n in normals)
                _add_label_anchors(plotter, np.array(marks), names, np.array(normals) if known else None, style)

    radius = 0.004 * scale
    bar = False
    for ri, route in enumerate(routes):
        colour = ROUTE_COLOURS[ri % len(ROUTE_COLOURS)]
        pts = np.asarray(route.points, dtype=float)
        width = 0.55 * radius if route.faint else radius
        if route.normals is not None:
            pts = pts + 1.2 * radius * np.asarray(route.normals, dtype=float)
        keep = np.r_[True, np.linalg.norm(np.diff(pts, axis=0), axis=1) > 1e-9]
        pts = pts[keep]
        if len(pts) < 2:
            continue
        line = pv.lines_from_points(pts)
        if route.margin is not None and len(route.margin) == len(keep) - 1:
            line.point_data["margin"] = np.clip(point_margins(route.margin)[keep], *MARGIN_CLIM)
            plotter.add_mesh(line.tube(radius=width, n_sides=12), scalars="margin", cmap=MARGIN_CMAP,
                             clim=MARGIN_CLIM, lighting=False, name=f"route-{ri}", show_scalar_bar=not bar,
                             scalar_bar_args={"title": MARGIN_TITLE, "color": "#222222", "vertical": True,
                                              "position_x": 0.84, "position_y": 0.25, "height": 0.5})
            bar = True
        else:
            plotter.add_mesh(line.tube(radius=width, n_sides=12), color="#8a8a8a" if route.faint else colour,
                             lighting=False, name=f"route-{ri}")
        if route.faint:
            continue
        plotter.add_mesh(pv.Sphere(radius=2.2 * radius, center=pts[0]), color=colour, lighting=False,
                         name=f"route-{ri}-start")
        plotter.add_mesh(pv.Cube(center=pts[-1], x_length=4 * radius, y_length=4 * radius, z_length=4 * radius),
                         color=colour, lighting=False, name=f"route-{ri}-goal")
        # direction cones every ~8 % of the route length
        at = np.arange(0.08, 0.95, 0.12) * polyline_length(pts)
        for c, d in zip(point_at_length(pts, at), tangent_at(pts, at)):
            plotter.add_mesh(pv.Cone(center=c, direction=d, height=5 * radius, radius=2 * radius, resolution=16),
                             color=colour, lighting=False)


def landmark_points(garment: Garment, drape) -> tuple[list[np.ndarray], list[str], list[np.ndarray | None]]:
    """Where the garment's landmarks are on the drape.

    Pattern landmarks are located on their piece (snapped up to 1 mm) and mapped to 3D; body
    landmarks (``xyz``) stay where they are, with the normal of the nearest surface point. Landmarks
    that are off the drape are left out.

    Returns
    -------
    points : list of (3,) arrays, world mm
    names : list of str
    normals : list of (3,) unit arrays, or None where the drape cannot tell
    """
    marks: list[np.ndarray] = []
    names: list[str] = []
    normals: list[np.ndarray | None] = []
    for lm in garment.landmarks:
        if lm.on_pattern and lm.piece in drape.piece_names:
            try:
                hits = drape.locate(lm.piece, np.array([[lm.x, lm.y]]), 1.0)
            except GarnavError:
                continue
            marks.append(drape.to_3d(hits.face, hits.bary)[0])
            normals.append(drape.normals_at(hits.face, hits.bary)[0] if hasattr(drape, "normals_at") else None)
        elif lm.xyz is not None:
            marks.append(np.asarray(lm.xyz, dtype=float))
            normals.append(_surface_normal(drape, marks[-1]))
        else:
            continue
        names.append(lm.name)
    return marks, names, normals


def _surface_normal(drape, xyz: np.ndarray) -> np.ndarray | None:
    """Outward normal of the drape at the surface point closest to ``xyz``, or None when the drape
    cannot tell (a stand-in without a mesh)."""
    try:
        from garnav.drape.inverse import surface_to_pattern

        hits = surface_to_pattern(drape, np.asarray(xyz, dtype=float)[None])
        return drape.normals_at(hits.face, hits.bary)[0]
    except (AttributeError, TypeError, ValueError, GarnavError):
        return None


def keepout_outline_3d(drape, keepout, step_mm: float = 2.0) -> np.ndarray | None:
    """The keep-out's outline (closed, sampled every ``step_mm``) on the drape, or None when it is
    not on the drape's piece or leaves the mesh."""
    if keepout.piece not in drape.piece_names:
        return None
    ring = np.asarray(keepout.shape.exact_geometry().exterior.coords, dtype=float)
    dense = [ring[0]]
    for a, b in zip(ring[:-1], ring[1:]):
        n = max(1, int(math.ceil(np.hypot(*(b - a)) / step_mm)))
        dense += list(a + (np.arange(1, n + 1) / n)[:, None] * (b - a))
    try:
        return np.asarray(drape.pattern_to_3d(keepout.piece, np.array(dense), 1.0), dtype=float)
    except GarnavError:
        return None


#: Where the camera looks from (world direction from the scene's centre), z up: the wearer's
#: front seen from a little to their right and above, and their back seen from their left.
VIEW_DIRECTIONS = {"front": (0.35, 1.0, 0.25), "back": (-0.35, -1.0, 0.25)}


def set_view(plotter, view: str = "front", bounds: Sequence[float] | None = None) -> None:
    """Point the camera at the scene from one of :data:`VIEW_DIRECTIONS`, z up, all in view.

    ``bounds`` (xmin, xmax, ymin, ymax, zmin, zmax), world mm: frame this box instead of what the
    active renderer shows (sub-views sharing one camera frame the box round all of them). The
    landmark labels of every sub-view are redrawn for the side in view.
    """
    if view not in VIEW_DIRECTIONS:
        raise ValueError(f"unknown view {view!r}; known: {', '.join(VIEW_DIRECTIONS)}")
    plotter.reset_camera(bounds=bounds)
    cam = plotter.camera
    focal = np.array(cam.focal_point)
    dist = float(np.linalg.norm(np.array(cam.position) - focal))
    direction = np.array(VIEW_DIRECTIONS[view], dtype=float)
    cam.position = tuple(focal + direction / np.linalg.norm(direction) * dist)
    cam.up = (0.0, 0.0, 1.0)
    plotter.reset_camera(bounds=bounds)
    renderers = plotter.renderers
    if len(renderers) == 1:
        _view_labels(plotter, direction)
        return
    active = renderers.active_index
    for i in range(len(renderers)):
        plotter.subplot(*np.atleast_1d(renderers.index_to_loc(i)))
        _view_labels(plotter, direction)
    plotter.subplot(*np.atleast_1d(renderers.index_to_loc(active)))


LABEL_ANCHORS = "landmark-label-anchors"  # name of the hidden actor holding what labels need


def _add_label_anchors(plotter, marks: np.ndarray, names: list[str], normals: np.ndarray | None,
                       style: SceneStyle) -> None:
    """Keep the landmark label data in the scene itself: a hidden point set (one point per
    landmark, world mm) with the outward normals (when known), the names and the text colour."""
    import pyvista as pv

    anchors = pv.PolyData(np.asarray(marks, dtype=float))
    if normals is not None:
        # field data, not point data: point vectors would become the mesh's active scalars
        anchors.field_data["outward_normal"] = np.asarray(normals, dtype=float)
    anchors.field_data["names"] = np.array(names, dtype=str)
    anchors.field_data["text_colour"] = np.array([style.landmark], dtype=str)
    actor = plotter.add_mesh(anchors, name=LABEL_ANCHORS)
    actor.SetVisibility(False)


def _view_labels(plotter, direction: np.ndarray) -> None:
    """(Re)draw the landmark labels facing ``direction`` (all of them when normals are unknown).

    The label set is replaced, not hidden: VTK's label placement keeps what it placed at the first
    render even when its actor is switched off.
    """
    actor = plotter.actors.get(LABEL_ANCHORS)
    if actor is None:
        return
    anchors = actor.mapper.dataset
    marks = np.asarray(anchors.points)
    names = [str(n) for n in anchors.field_data["names"]]
    normals = np.asarray(anchors.field_data["outward_normal"]) if "outward_normal" in anchors.field_data else None
    colour = str(anchors.field_data["text_colour"][0])
    # one name per sub-view: pyvista removes a named label set from every sub-view
    index = plotter.renderers.active_index
    label_set = "landmark-labels" if index == 0 else f"landmark-labels@{index}"
    for part in ("points", "labels"):  # pyvista names the two actors of a label set so
        plotter.renderer.remove_actor(f"{label_set}-{part}", render=False)
    sel = np.ones(len(marks), dtype=bool) if normals is None else normals @ direction > 0.0
    if np.any(sel):
        plotter.add_point_labels(marks[sel], [n for n, k in zip(names, sel) if k], font_size=12,
                                 text_color=colour, point_size=1, shape_opacity=0.6,
                                 shape_color="white", always_visible=True, name=label_set,
                                 render=False)


def _rgb(hex_colour: str) -> np.ndarray:
    h = hex_colour.lstrip("#")
    return np.array([int(h[i : i + 2], 16) for i in (0, 2, 4)], dtype=float) / 255.0


def screenshot_png(plotter) -> bytes:
    """Render an off-screen plotter and return PNG bytes of the window."""
    from matplotlib.image import imsave

    img = plotter.screenshot(None, return_img=True)
    buf = io.BytesIO()
    imsave(buf, img, format="png", metadata={"Software": None})
    return buf.getvalue()


def views_png(plotter, views: Sequence[str] = ("front", "back")) -> bytes:
    """Render an off-screen plotter from several views and return one PNG, the views side by side
    (each the plotter's window size)."""
    from matplotlib.image import imsave

    images = []
    for view in views:
        set_view(plotter, view)
        plotter.render()  # VTK places labels one frame late: render once before the picture
        images.append(plotter.screenshot(None, return_img=True))
    buf = io.BytesIO()
    imsave(buf, np.concatenate(images, axis=1), format="png", metadata={"Software": None})
    return buf.getvalue()


def write_screenshot(path, plotter):
    """Render an off-screen plotter to ``path`` (PNG) atomically. Returns the path."""
    return write_bytes_atomic(path, screenshot_png(plotter))
