"""The 3D preview: mesh edges against trimesh, keep-out faces, off-screen screenshots."""

from __future__ import annotations

import io
import os

os.environ.setdefault("PYVISTA_OFF_SCREEN", "true")
os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")

import matplotlib.image  # noqa: E402
import numpy as np  # noqa: E402
import pytest  # noqa: E402
import trimesh  # noqa: E402
import vtk  # noqa: E402

import export_routes as er  # noqa: E402
import garments  # noqa: E402
from cylinder_drape import R as cylinder_r  # noqa: E402
from cylinder_drape import CylinderDrape, cylinder_drape  # noqa: E402
from dataclasses import replace  # noqa: E402
from garnav import Circle, KeepOut  # noqa: E402
from garnav.errors import GarnavError  # noqa: E402
from garnav.export.waypoints import route_document  # noqa: E402
from garnav.preview.scene import (  # noqa: E402
    SceneRoute,
    build_plotter,
    drape_edges,
    keepout_face_mask,
    route_polyline,
    screenshot_png,
    write_screenshot,
)
from garnav.preview.sheet import ROUTE_COLOURS  # noqa: E402


def _edge_set(edges):
    return {tuple(sorted(map(int, e))) for e in edges}


def test_open_edges_and_seams_match_trimesh_boundaries():
    g = garments.two_panels()
    d = cylinder_drape(g)
    seams, opens = drape_edges(d.faces, d.corner_uv)
    # reference: trimesh's edge grouping — boundary edges of the welded mesh are the open edges;
    # boundary edges of the UV-split mesh that are interior once welded are the seams
    welded = trimesh.Trimesh(d.positions, d.faces, process=False)
    boundary = welded.edges_sorted[trimesh.grouping.group_rows(welded.edges_sorted, require_count=1)]
    assert _edge_set(opens) == _edge_set(boundary)
    split = trimesh.Trimesh(d.split_positions, d.split_faces, process=False)
    split_boundary = split.edges_sorted[trimesh.grouping.group_rows(split.edges_sorted, require_count=1)]
    key = {tuple(np.round(p, 6)) for p in d.positions}
    index = {tuple(np.round(p, 6)): i for i, p in enumerate(d.positions)}
    mapped = {tuple(sorted((index[tuple(np.round(d.split_positions[a], 6))], index[tuple(np.round(d.split_positions[b], 6))])))
              for a, b in split_boundary}
    assert len(key) == len(d.positions)
    assert _edge_set(seams) == mapped - _edge_set(boundary)
    assert len(seams) == 20 and len(opens) == 160  # 400 mm / 20 mm seam cells; 2·(60 + 20) rims


def test_keepout_faces_are_those_inside_the_zone():
    g = replace(garments.two_panels(), keepouts=(KeepOut("dot", "left", "sensor", Circle(150.0, 200.0, 30.0)),))
    d = cylinder_drape(g)
    mask = keepout_face_mask(g, d)
    c = d.corner_pattern.mean(axis=1)
    expect = (d.face_piece == 0) & (np.hypot(c[:, 0] - 150.0, c[:, 1] - 200.0) < 30.0)
    assert np.array_equal(mask, expect) and mask.sum() > 0


def test_route_polyline_uses_path3d():
    g = garments.two_panels()
    route = er.two_panel_route(np.random.default_rng(3))
    lifted = er.cylinder_lift(route)
    pts, nrm = route_polyline(route_document(route, g, None, lifted))
    assert np.array_equal(pts, lifted.points) and np.array_equal(nrm, lifted.normals)
    with pytest.raises(GarnavError, match="no 3D path"):
        route_polyline(route_document(route, g), None, g, source="r.json")


def test_route_polyline_lifts_a_route_without_3d_path_through_the_drape():
    import garnav.drape as drape_mod
    g = garments.two_panels()
    d = cylinder_drape(g)
    drape = drape_mod.link_drape(g, drape_mod.uv_mesh_from_arrays(d.split_positions, d.split_faces, d.corner_uv))
    route = er.two_panel_route(np.random.default_rng(3), back=True)
    pts, nrm = route_polyline(route_document(route, g), drape, g)
    # reference: the closed-form cylinder — every lifted point is R from the axis (mesh chords lie
    # inside the circle by at most R (1 - cos(Δθ/2)) for the 10 mm cells)
    chord_gap = cylinder_r * (1 - np.cos(10.0 / cylinder_r / 2))
    r = np.hypot(pts[:, 0], pts[:, 1])
    assert np.all(r <= cylinder_r + 1e-6) and np.all(r >= cylinder_r - chord_gap - 1e-6)
    assert np.all(np.abs(np.linalg.norm(nrm, axis=1) - 1) < 1e-9)


def _project(plotter, points):
    """World → display pixels (x right, y down), reference: VTK's own coordinate conversion."""
    coord = vtk.vtkCoordinate()
    coord.SetCoordinateSystemToWorld()
    out = []
    h = plotter.window_size[1]
    for p in points:
        coord.SetValue(*map(float, p))
        x, y = coord.GetComputedDoubleDisplayValue(plotter.renderer)
        out.append((x, h - 1 - y))
    return np.array(out)


def test_screenshot_has_the_size_and_route_colour_where_the_route_projects(tmp_path):
    g = garments.two_panels()
    d = cylinder_drape(g)
    # a route on the piece facing the camera (θ from 0 to 3π/8, normals towards +y)
    pts2 = np.array([[40.0, 60.0], [140.0, 300.0], [260.0, 120.0]])
    dense = np.vstack([a + t * (b - a) for a, b in zip(pts2[:-1], pts2[1:]) for t in np.linspace(0, 1, 40)])
    lifted = SceneRoute("r", d.pattern_to_3d("left", dense), CylinderDrape.normal("left", dense[:, 0]))
    plotter = build_plotter(g, d, None, [lifted], off_screen=True, size=(480, 360), labels=False)
    try:
        png = screenshot_png(plotter)
        img = matplotlib.image.imread(io.BytesIO(png), format="png")
        assert img.shape[:2] == (360, 480)
        colour = np.array([int(ROUTE_COLOURS[0][i : i + 2], 16) for i in (1, 3, 5)]) / 255.0
        cam = np.array(plotter.camera.position)
        pix = _project(plotter, lifted.points)
        facing = np.einsum("ij,ij->i", lifted.normals, cam - lifted.points) > 0
        hits = total = 0
        for (x, y), ok in zip(pix, facing):
            if not ok or not (2 <= x < 478 and 2 <= y < 358):
                continue
            patch = img[int(y) - 2 : int(y) + 3, int(x) - 2 : int(x) + 3, :3].reshape(-1, 3)
            total += 1
            hits += bool(np.any(np.all(np.abs(patch - colour) < 0.06, axis=1)))
        assert total > 20 and hits >= 0.9 * total
        # no route colour far from the route
        far = np.ones(img.shape[:2], dtype=bool)
        for x, y in pix:
            far[max(int(y) - 15, 0) : int(y) + 16, max(int(x) - 15, 0) : int(x) + 16] = False
        route_px = np.all(np.abs(img[..., :3] - colour) < 0.06, axis=2)
        assert not np.any(route_px & far)
    finally:
        plotter.close()


def test_a_failed_screenshot_write_leaves_the_old_file(tmp_path, monkeypatch):
    g = garments.two_panels()
    plotter = build_plotter(g, cylinder_drape(g), None, [], off_screen=True, size=(120, 90), labels=False)
    target = tmp_path / "shot.png"
    target.write_bytes(b"old")
    try:
        with monkeypatch.context() as m:
            m.setattr(os, "fsync", lambda fd: (_ for _ in ()).throw(OSError(5, "simulated failure")))
            with pytest.raises(GarnavError, match="simulated failure"):
                write_screenshot(target, plotter)
        assert target.read_bytes() == b"old" and os.listdir(tmp_path) == ["shot.png"]
    finally:
        plotter.close()


def test_views_side_by_side_and_labels_of_the_side_in_view():
    from garnav.preview.scene import VIEW_DIRECTIONS, set_view, views_png

    g = garments.two_panels()
    d = cylinder_drape(g)
    plotter = build_plotter(g, d, None, [], off_screen=True, size=(160, 120))
    try:
        img = matplotlib.image.imread(io.BytesIO(views_png(plotter, ("front", "back"))), format="png")
        assert img.shape[:2] == (120, 320)
        normals = {lm.name: CylinderDrape.normal(lm.piece, [lm.x])[0] for lm in g.landmarks}
        for view, direction in VIEW_DIRECTIONS.items():
            set_view(plotter, view)
            cam = np.array(plotter.camera.position) - np.array(plotter.camera.focal_point)
            assert cam @ np.asarray(direction) > 0.99 * np.linalg.norm(cam) * np.linalg.norm(direction)
            # labels only for the landmarks whose outward normal faces this view
            expect = sum(float(n @ np.asarray(direction)) > 0 for n in normals.values())
            actor = plotter.actors.get("landmark-labels-points")
            shown = 0 if actor is None else actor.mapper.dataset.n_points
            assert shown == expect
        with pytest.raises(ValueError, match="unknown view 'side'"):
            set_view(plotter, "side")
    finally:
        plotter.close()
