"""Several poses side by side: one sub-view per pose, the same pattern routes lifted onto each
pose's drape, that pose's body-zone keep-outs, one camera for all (pyvista).

The pattern route is the same in every pose (it is what the robot drives); what changes is the
drape. :func:`pose_views` lifts the routes onto every pose's drape
(:func:`garnav.drape.lift.lift_route_poses`) and projects the garment's body zones onto each
(:func:`garnav.zones.zone_keepouts`), so a zone
that moves with the body is drawn where it falls in that pose. :func:`build_pose_plotter` puts
the views in a ``pyvista.Plotter`` with one sub-view each (:func:`pose_grid`: one row up to
:data:`ROW_MAX` poses, else a near-square grid), each drawn like the single view
(:func:`garnav.preview.scene.draw_scene`) and titled with the pose's name and posture; the
cameras are linked and frame the box round every view, so the poses compare at one scale.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING, Sequence

import numpy as np

from garnav.errors import GarnavError, QueryError
from garnav.model import Garment
from garnav.preview.scene import SceneRoute, SceneStyle, draw_scene, off_screen_environment, set_view

if TYPE_CHECKING:
    from garnav.drape.drape import Drape
    from garnav.poses.load import PoseDrape

__all__ = ["PoseView", "ROW_MAX", "pose_grid", "pose_views", "build_pose_plotter"]

#: Up to this many poses are shown in one row; more go in a near-square grid.
ROW_MAX = 4


@dataclass(frozen=True)
class PoseView:
    """What one pose's sub-view shows.

    Attributes
    ----------
    name, posture : str
        The pose (its title).
    garment : Garment
        With this pose's body-zone keep-outs added.
    drape : garnav.drape.Drape
        This pose's drape, linked to the garment's pieces.
    body : (vertices (B, 3), faces (G, 3)) or None
        The body mesh in this pose, world mm.
    routes : tuple of SceneRoute
        The routes lifted onto this pose's drape.
    """

    name: str
    posture: str
    garment: Garment
    drape: Drape
    body: tuple[np.ndarray, np.ndarray] | None
    routes: tuple[SceneRoute, ...]

    @property
    def title(self) -> str:
        return f"{self.name} ({self.posture})"


def pose_grid(n: int) -> tuple[int, int]:
    """(rows, columns) of the sub-views of ``n`` poses: one row up to :data:`ROW_MAX`, else
    ``ceil(sqrt(n))`` columns.

    >>> pose_grid(1), pose_grid(3), pose_grid(4), pose_grid(5), pose_grid(10)
    ((1, 1), (1, 3), (1, 4), (2, 3), (3, 4))
    """
    if n < 1:
        raise ValueError("no pose to show")
    cols = n if n <= ROW_MAX else math.ceil(math.sqrt(n))
    return math.ceil(n / cols), cols


def pose_views(garment: Garment, pose_drapes: Sequence[PoseDrape], routes: Sequence[tuple[str, object]],
               bodies: Sequence[tuple[np.ndarray, np.ndarray] | None] | None = None,
               snap_mm: float = 1.0) -> tuple[PoseView, ...]:
    """Every pose's view: its drape, its body-zone keep-outs and the pattern routes lifted onto it.

    Parameters
    ----------
    garment : Garment
        As read (its ``body_zones`` are projected onto each pose's drape; its own keep-outs stay).
    pose_drapes : sequence of garnav.poses.PoseDrape
        The poses and their drapes, linked to ``garment``.
    routes : sequence of (name, route)
        Pattern routes (anything with ``legs``), e.g. :func:`garnav.export.waypoints.document_route`
        of a route file; ``name`` is the route's name in the view and in messages. Each is lifted
        onto every pose at once (:func:`garnav.drape.lift.lift_route_poses`: the pattern side once).
    bodies : sequence of (vertices (B, 3), faces (G, 3)) or None, optional
        Each pose's body mesh, world mm.
    snap_mm : float
        Lift tolerance (:func:`garnav.drape.lift_route`).

    Raises
    ------
    QueryError
        A route cannot be lifted onto the poses' drapes (the message names the route).
    """
    from garnav.drape.lift import lift_route_poses
    from garnav.zones.project import zone_keepouts

    drapes = [pd.drape for pd in pose_drapes]
    lifted: list[list[SceneRoute]] = [[] for _ in drapes]
    for name, route in routes:
        try:
            paths = lift_route_poses(drapes, garment, route, snap_mm=snap_mm)
        except GarnavError as exc:
            raise QueryError(f"{name}: the route cannot be lifted onto the poses' drapes: {exc}") from None
        for pd, path, out in zip(pose_drapes, paths, lifted):
            pts = np.asarray(path.points, dtype=float)
            if not np.all(np.isfinite(pts)):
                raise QueryError(f"{name}: pose '{pd.name}': the lifted route is not finite: nothing to draw")
            out.append(SceneRoute(str(name), pts, np.asarray(path.normals, dtype=float)))
    views = []
    for k, pd in enumerate(pose_drapes):
        zoned = garment.with_keepouts(zone_keepouts(garment, pd.drape)) if garment.body_zones else garment
        body = bodies[k] if bodies is not None else None
        views.append(PoseView(pd.pose.name, pd.pose.posture, zoned, pd.drape, body, tuple(lifted[k])))
    return tuple(views)


def build_pose_plotter(views: Sequence[PoseView], *, off_screen: bool = False, size: tuple[int, int] = (600, 600),
                       style: SceneStyle | None = None, labels: bool = True, view: str = "front"):
    """A pyvista Plotter with one sub-view per pose, cameras linked.

    Parameters
    ----------
    views : sequence of PoseView
        In order, row by row (:func:`pose_grid`).
    off_screen : bool
    size : (width, height)
        Pixels of **each** sub-view; the window is columns × width by rows × height.
    style : SceneStyle, optional
        Colours (default :class:`~garnav.preview.scene.SceneStyle`).
    labels : bool
        Draw landmark labels.
    view : str
        Camera direction (:data:`garnav.preview.scene.VIEW_DIRECTIONS`).
    """
    import pyvista as pv

    if not views:
        raise ValueError("no pose to show")
    style = style or SceneStyle()
    if off_screen:
        off_screen_environment()
    rows, cols = pose_grid(len(views))
    plotter = pv.Plotter(shape=(rows, cols), off_screen=off_screen,
                         window_size=[int(size[0]) * cols, int(size[1]) * rows], border=False)
    plotter.set_background(style.background)
    boxes = []
    for i, pv_view in enumerate(views):
        plotter.subplot(i // cols, i % cols)
        draw_scene(plotter, pv_view.garment, pv_view.drape, pv_view.body, pv_view.routes, style=style, labels=labels)
        plotter.add_text(pv_view.title, position="upper_edge", font_size=11, color=style.landmark, name="pose-title")
        boxes.append(np.asarray(plotter.renderer.bounds, dtype=float))
    box = np.array(boxes)
    bounds = np.ravel(np.column_stack([box[:, 0::2].min(axis=0), box[:, 1::2].max(axis=0)]))
    plotter.link_views()
    plotter.subplot(0, 0)
    set_view(plotter, view, bounds=tuple(float(b) for b in bounds))
    return plotter
