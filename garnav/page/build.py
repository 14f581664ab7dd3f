"""Build a plan page from a garment and route documents, and write it.

:func:`plan_page` assembles the page in memory (sheet, figures, 3D scene) and returns a
:class:`PlanPage` with its HTML and what went into it; :func:`write_plan_page` writes it with
:mod:`garnav.atomic`; :func:`read_routes` reads route files with the export reader and checks they
belong to the garment.
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path
from typing import Sequence

import numpy as np

from garnav.atomic import write_text_atomic
from garnav.errors import QueryError
from garnav.model import Garment, Robot
from garnav.page.encode import pack_scene, quantisation
from garnav.page.figures import RouteFigures, route_figures
from garnav.page.geometry import BodyZone, decimate_body, scene_content, scene_scale
from garnav.page.html import PageText, page_html
from garnav.polyline import polyline_length

__all__ = ["PlanPage", "plan_page", "write_plan_page", "read_routes", "PAGE_VIEWS", "MAX_BODY_TRIANGLES"]

#: Mannequins with more triangles are decimated for the page (about 14 bytes per triangle: a
#: 200,000-triangle body adds about 3 MB).
MAX_BODY_TRIANGLES = 200_000

#: Camera directions of the page's view buttons (world, z up): the front and back views of the
#: desktop preview (garnav.preview.scene.VIEW_DIRECTIONS) and one from above the shoulders.
PAGE_VIEWS = {"front": (0.35, 1.0, 0.25), "back": (-0.35, -1.0, 0.25), "top": (0.15, 0.45, 1.0)}


@dataclass(frozen=True, eq=False)
class PlanPage:
    """A built page.

    Attributes
    ----------
    html : str
    routes : tuple of RouteFigures
    parts : int
        Meshes in the 3D view (0 without one).
    triangles, vertices : int
        In the 3D view.
    quantisation_error_mm : float
        Largest position error from the 16-bit grid (0 without a 3D view).
    """

    html: str
    routes: tuple[RouteFigures, ...]
    parts: int
    triangles: int
    vertices: int
    quantisation_error_mm: float

    @property
    def size_bytes(self) -> int:
        return len(self.html.encode("utf-8"))


def read_routes(paths: Sequence[str | os.PathLike], garment: Garment) -> list[tuple[str, dict]]:
    """Read route files (``garnav.export.read_route_document``) planned on ``garment``.

    Returns
    -------
    list of (name, document)
        Names are the file stems, made unique with ``-2``, ``-3`` … when two files share one.

    Raises
    ------
    QueryError
        A file that is not a route document, or one planned on another garment.
    """
    from garnav.export.route_checks import check_route_on_garment
    from garnav.export.waypoints import read_route_document

    out: list[tuple[str, dict]] = []
    seen: dict[str, int] = {}
    for path in paths:
        doc = read_route_document(path)
        planned_on = doc["garment"]["name"]
        if planned_on != garment.name:
            raise QueryError(f"{path}: the route was planned on garment '{planned_on}', not '{garment.name}'")
        check_route_on_garment(doc, garment, str(path))  # unknown pieces, off-piece points: before drawing
        stem = Path(path).stem
        seen[stem] = seen.get(stem, 0) + 1
        out.append((stem if seen[stem] == 1 else f"{stem}-{seen[stem]}", doc))
    return out


def _robot_line(garment: Garment, documents: Sequence[tuple[str, dict]]) -> str:
    robot = documents[0][1].get("robot") if documents else None
    if isinstance(robot, dict) and isinstance(robot.get("name"), str):
        return (f"robot {robot['name']} (radius {float(robot.get('radius_mm', 0)):g} mm, "
                f"{float(robot.get('speed_mm_s', 0)):g} mm/s)")
    r = garment.robot or Robot()
    return f"robot {r.name} (radius {r.radius_mm:g} mm, {r.speed_mm_s:g} mm/s)"


def _with_3d_figures(document: dict, points) -> dict:
    """A copy of a route document with the 3D length and climbs (world z) of its lifted polyline,
    for documents written without a drape (``--no-drape``, fleet robots)."""
    pts = np.asarray(points, dtype=float)
    dz = np.diff(pts[:, 2])
    summary = dict(document.get("summary") or {})
    summary["climb_up_mm"] = float(dz[dz > 0].sum())
    summary["climb_down_mm"] = float(-dz[dz < 0].sum())
    return dict(document, length_3d_mm=polyline_length(pts), summary=summary)


def plan_page(
    garment: Garment,
    documents: Sequence[tuple[str, dict]],
    drape=None,
    body=None,
    *,
    free_space=None,
    zones: Sequence[BodyZone] = (),
    title: str | None = None,
    sources: Sequence[str] | None = None,
    max_body_triangles: int = MAX_BODY_TRIANGLES,
) -> PlanPage:
    """The plan page of a garment and its routes.

    Parameters
    ----------
    garment : Garment
    documents : sequence of (name, garnav-route document)
        As :func:`read_routes` returns them, or built with ``garnav.export.route_document``.
    drape : garnav.drape.Drape, optional
        The 3D garment; routes without a ``path3d`` are lifted onto it.
    body : (vertices (B, 3), faces (G, 3)), optional
        The mannequin, world mm.
    free_space : garnav.plan.FreeSpace, optional
        Shaded on the sheet (the free space of the robot the routes were planned for).
    zones : sequence of BodyZone
        Body zones to show in 3D.
    title : str, optional
        Defaults to "Robot routes on <garment>".
    sources : sequence of str, optional
        File names of the documents, for messages (defaults to the names).
    max_body_triangles : int
        A mannequin with more triangles is decimated to about this many (the page says by how
        much); the garment is never decimated.

    Raises
    ------
    QueryError, MeshError
        A document with bad figures, or one with no 3D path and no drape to lift it onto.
    """
    from garnav import __version__
    from garnav.export.waypoints import document_route
    from garnav.preview.scene import route_polyline
    from garnav.preview.sheet import sheet_drawing, sheet_svg

    documents = list(documents)
    names = [n for n, _ in documents]
    srcs = list(sources) if sources is not None else names
    drawing = sheet_drawing(garment, [document_route(d) for _, d in documents], free_space,
                            route_names=names)
    svg = sheet_svg(drawing)

    scene = None
    body_note = None
    parts = triangles = vertices = 0
    q_err = 0.0
    if drape is not None or body is not None:
        lifted: list[tuple] = []
        for i, (n, d) in enumerate(documents):
            if drape is None and not d.get("path3d"):
                continue  # drawn on the sheet only
            pts, nrm = route_polyline(d, drape, garment, source=srcs[i])
            if d.get("length_3d_mm") is None:  # lifted here: its 3D figures follow from the lift
                documents[i] = (n, _with_3d_figures(d, pts))
            sweep = d.get("sweep")
            swath = sweep.get("swath_mm") if isinstance(sweep, dict) else None
            if isinstance(swath, (int, float)) and swath > 0:  # lanes a swath apart stay apart
                lifted.append((n, pts, nrm, min(0.004 * scene_scale(drape, body), swath / 8.0)))
            else:
                lifted.append((n, pts, nrm))
        if body is not None:
            before = len(body[1])
            body = decimate_body(body[0], body[1], max_body_triangles)
            if len(body[1]) < before:
                body_note = (f"The mannequin was simplified for this page from {before:,} to {len(body[1]):,} "
                             f"triangles ({100 * (1 - len(body[1]) / before):.0f} % fewer); the garment is as planned.")
        content = scene_content(garment, drape, body, lifted, zones)
        scene = pack_scene(content, PAGE_VIEWS)
        parts = len(scene["parts"])
        triangles = sum(p["triangle_count"] for p in scene["parts"])
        vertices = sum(p["vertex_count"] for p in scene["parts"])
        q_err = quantisation(content.parts).max_error_mm

    figures = tuple(route_figures(n, d, i, srcs[i]) for i, (n, d) in enumerate(documents))
    hard = sum(1 for k in garment.keepouts if k.hard)
    notes = [
        "Units: millimetres and degrees; times in seconds. The 3D view is the garment's drape in the world "
        "frame (z up, the wearer facing +y).",
    ]
    if scene is not None:
        notes.append(
            f"3D view: {parts} meshes, {triangles:,} triangles, {vertices:,} vertices; positions stored on a "
            f"16-bit grid (at most {q_err:.3f} mm from the computed ones). Drawn with three.js in the browser."
        )
    if scene is not None and body_note:
        notes.append(body_note)
    notes.append(f"Made with garnav {__version__}. garnav plans routes; it certifies nothing.")
    text = PageText(
        title=title or f"Robot routes on {garment.name}",
        garment=garment.name,
        robot=_robot_line(garment, documents),
        routes=figures,
        sheet_svg=svg,
        pieces=tuple(p.name for p in garment.pieces) if drape is None else tuple(drape.piece_names),
        keepouts=(hard, len(garment.keepouts) - hard),
        zones=len(zones),
        landmarks=len(scene["landmarks"]) if scene is not None else 0,
        has_body=body is not None,
        has_drape=drape is not None,
        notes=tuple(notes),
        version=__version__,
    )
    return PlanPage(page_html(text, scene), figures, parts, triangles, vertices, q_err)


def write_plan_page(path: str | os.PathLike, page: PlanPage) -> Path:
    """Write a built page atomically. Returns the path."""
    return Path(write_text_atomic(path, page.html))
