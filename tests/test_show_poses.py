"""``garnav show --pose NAME|all``: one sub-view per pose, the same pattern route lifted onto each
pose's drape, that pose's body zones as keep-outs, one camera for all; clear refusals."""

from __future__ import annotations

import os

os.environ.setdefault("PYVISTA_OFF_SCREEN", "true")
os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")

import dataclasses  # noqa: E402

import matplotlib.image  # noqa: E402
import numpy as np  # noqa: E402
import pytest  # noqa: E402
import shapely  # noqa: E402
import trimesh  # noqa: E402

import drape_meshes as dm  # noqa: E402
from garnav.cli import main  # noqa: E402
from garnav.drape import save_obj  # noqa: E402
from garnav.export.waypoints import document_route, read_route_document  # noqa: E402
from garnav.poses import Pose  # noqa: E402
from garnav.poses.load import load_pose_drapes  # noqa: E402
from garnav.preview.pose_views import build_pose_plotter, pose_grid, pose_views  # noqa: E402
from garnav.preview.scene import SceneStyle  # noqa: E402
from garnav.spec import load_garment, save_garment  # noqa: E402
from garnav.zones import BodyZone  # noqa: E402

SHIFT_MM = 80.0
ZONE_CENTRE = (200.0, 150.0, 0.0)
ZONE_MM = 40.0
W, H = 160, 120


def _shifted(mesh, dx: float):
    """The same UV-mapped mesh moved rigidly by ``dx`` mm along world x (an exact development)."""
    return dataclasses.replace(mesh, positions=np.asarray(mesh.positions) + [dx, 0.0, 0.0])


@pytest.fixture
def posed(tmp_path):
    """A 400 × 300 mm panel in two poses, 'flat' and 'slid' (moved 80 mm along −x: the world-fixed
    zone falls 80 mm further along the pattern's +x); 'slid' has a body mesh (a box under it)."""
    g, m = dm.flat_sheet(400.0, 300.0, 40, 30)
    save_obj(m, tmp_path / "flat.obj")
    save_obj(_shifted(m, -SHIFT_MM), tmp_path / "slid.obj")
    box = trimesh.creation.box(extents=(300.0, 200.0, 60.0))
    box.apply_translation((120.0, 150.0, -31.0))
    box.export(tmp_path / "box.obj")
    zone = BodyZone("pump", "implanted_device", "sphere", (ZONE_CENTRE,), distance_mm=ZONE_MM)
    g = dataclasses.replace(g, drape="flat.obj", body_zones=(zone,),
                            poses=(Pose("flat", "flat.obj"), Pose("slid", "slid.obj", body="box.obj",
                                                                    posture="supine")))
    spec = save_garment(g, tmp_path / "panel.toml")
    route = tmp_path / "r.json"
    assert main(["route", str(spec), "--from", "panel:30,60", "--to", "panel:380,60", "--quiet",
                 "--json", str(route)]) == 0
    return spec, route


def _rgb(hex_colour: str) -> np.ndarray:
    return np.array([int(hex_colour[i : i + 2], 16) for i in (1, 3, 5)]) / 255.0


def _panels(img: np.ndarray, cols: int) -> list[np.ndarray]:
    w = img.shape[1] // cols
    return [img[:, k * w : (k + 1) * w, :3] for k in range(cols)]


def _drawn(panel: np.ndarray) -> int:
    """Pixels that are not the background."""
    return int(np.sum(np.any(np.abs(panel - _rgb(SceneStyle().background)) > 0.04, axis=2)))


def test_all_poses_side_by_side(posed, tmp_path, capsys):
    spec, route = posed
    shot = tmp_path / "poses.png"
    assert main(["show", str(spec), str(route), "--pose", "all", "--screenshot", str(shot),
                 "--size", str(W), str(H)]) == 0
    out = capsys.readouterr().out
    assert f"wrote {shot}" in out
    assert "pose flat (upright): drape flat.obj, body none, 1 body-zone keep-out(s)" in out
    assert "pose slid (supine): drape slid.obj, body box.obj, 1 body-zone keep-out(s)" in out
    img = matplotlib.image.imread(shot)
    assert img.shape[:2] == (H, 2 * W)  # --size is each view's
    flat, slid = _panels(img, 2)
    assert _drawn(flat) > 500 and _drawn(slid) > 500  # observed 2,350 and 2,825


def test_one_pose_by_name(posed, tmp_path, capsys):
    spec, route = posed
    shot = tmp_path / "slid.png"
    assert main(["show", str(spec), str(route), "--pose", "slid", "--screenshot", str(shot),
                 "--size", str(W), str(H)]) == 0
    out = capsys.readouterr().out
    assert "pose slid (supine)" in out and "pose flat" not in out
    assert matplotlib.image.imread(shot).shape[:2] == (H, W)


def test_without_pose_one_view_as_before(posed, tmp_path, capsys):
    spec, route = posed
    shot = tmp_path / "one.png"
    assert main(["show", str(spec), str(route), "--screenshot", str(shot), "--size", str(W), str(H)]) == 0
    assert "pose " not in capsys.readouterr().out
    assert matplotlib.image.imread(shot).shape[:2] == (H, W)


def test_each_pose_gets_its_zones_and_the_route_on_its_drape(posed):
    """Against the rigid motion itself: on the slid drape the lifted route is the flat one moved by
    −80 mm along x, and the zone's keep-out is the flat pose's disc moved by +80 mm on the pattern
    (the sphere cuts the plane z = 0 in a disc of radius ZONE_MM round (200, 150))."""
    spec, route_file = posed
    g = load_garment(spec)
    route = document_route(read_route_document(route_file))
    views = pose_views(g, load_pose_drapes(g, g.poses, spec.parent), [("r", route)])
    flat, slid = views
    np.testing.assert_allclose(slid.routes[0].points, flat.routes[0].points - [SHIFT_MM, 0.0, 0.0], atol=1e-9)
    for view, cx in ((flat, ZONE_CENTRE[0]), (slid, ZONE_CENTRE[0] + SHIFT_MM)):
        (keep,) = [k for k in view.garment.keepouts if k.kind == "body_zone"]
        disc = shapely.Point(cx, ZONE_CENTRE[1]).buffer(ZONE_MM, 256)
        geom = keep.shape.exact_geometry()
        assert geom.contains(disc.buffer(-1e-6))  # conservative
        # projection grows the outline by ~0.25 mm (docs/zones.md); observed Hausdorff ≈ 0.5 mm
        assert shapely.hausdorff_distance(geom, disc) < 3.0
    assert [v.title for v in views] == ["flat (upright)", "slid (supine)"]


def test_cameras_are_linked_and_frame_every_pose(posed):
    spec, route_file = posed
    g = load_garment(spec)
    route = document_route(read_route_document(route_file))
    box = trimesh.load(spec.parent / "box.obj", force="mesh")
    views = pose_views(g, load_pose_drapes(g, g.poses, spec.parent), [("r", route)],
                       [None, (box.vertices, box.faces)])
    plotter = build_pose_plotter(views, off_screen=True, size=(W, H))
    try:
        assert ["body" in r.actors for r in plotter.renderers] == [False, True]  # slid's box only
        assert all("route-0" in r.actors for r in plotter.renderers)
        cams = [r.GetActiveCamera() for r in plotter.renderers]
        assert cams[0] is cams[1]
        # the shared focal point is the centre of the box round both poses (and the body)
        lo = np.min([r.bounds[0::2] for r in plotter.renderers], axis=0)
        hi = np.max([r.bounds[1::2] for r in plotter.renderers], axis=0)
        np.testing.assert_allclose(cams[0].GetFocalPoint(), (lo + hi) / 2, atol=1e-6)
    finally:
        plotter.close()


def test_many_poses_in_a_grid(posed, tmp_path, capsys):
    spec, route = posed
    g = load_garment(spec)
    poses = tuple(Pose(f"p{k}", "slid.obj" if k % 2 else "flat.obj") for k in range(5))
    spec5 = save_garment(dataclasses.replace(g, poses=poses), tmp_path / "five.toml")
    shot = tmp_path / "five.png"
    assert main(["show", str(spec5), str(route), "--pose", "all", "--screenshot", str(shot),
                 "--size", "64", "48"]) == 0
    assert capsys.readouterr().out.count("pose p") == 5
    rows, cols = pose_grid(5)
    img = matplotlib.image.imread(shot)
    assert (rows, cols) == (2, 3) and img.shape[:2] == (2 * 48, 3 * 64)
    cells = [img[r * 48 : (r + 1) * 48, c * 64 : (c + 1) * 64, :3] for r in range(rows) for c in range(cols)]
    assert all(_drawn(c) > 50 for c in cells[:5]) and _drawn(cells[5]) == 0  # the sixth cell is empty


@pytest.mark.parametrize("extra, message", [
    (["--pose", "nope"], "has no pose 'nope'; its poses: flat, slid (or 'all')"),
    (["--pose", "slid", "--margins"], "--margins colours a route by the margins of the pose it was planned in"),
    (["--pose", "all", "--size", "5000", "100"], "2 poses in 1 × 2 views make 10000 × 100 pixels"),
])
def test_pose_option_errors(posed, tmp_path, capsys, extra, message):
    spec, route = posed
    assert main(["show", str(spec), str(route), "--screenshot", str(tmp_path / "x.png")] + extra) == 2
    err = capsys.readouterr().err
    assert message in err and "Traceback" not in err
    assert not (tmp_path / "x.png").exists()


def test_pose_without_poses_is_refused(tmp_path, capsys):
    g, m = dm.flat_sheet(400.0, 300.0, 8, 6)
    spec = save_garment(g, tmp_path / "bare.toml")  # no drape: no pose
    assert main(["show", str(spec), "--pose", "all", "--screenshot", str(tmp_path / "x.png")]) == 2
    err = capsys.readouterr().err
    assert "names no drape, so it has no pose" in err and "Traceback" not in err
    save_obj(m, tmp_path / "flat.obj")
    assert main(["show", str(tmp_path / "flat.obj"), "--pose", "all", "--screenshot", str(tmp_path / "x.png")]) == 2
    assert "is a mesh, one drape; poses are [[pose]] tables" in capsys.readouterr().err
    # a drape and no [[pose]] tables: one pose, 'default' (as for garnav route --pose)
    spec = save_garment(dataclasses.replace(g, drape="flat.obj"), tmp_path / "one.toml")
    assert main(["show", str(spec), "--pose", "standing", "--screenshot", str(tmp_path / "x.png")]) == 2
    assert "has no pose 'standing'; its poses: default (or 'all')" in capsys.readouterr().err


def test_unreadable_pose_body_is_named(posed, tmp_path, capsys):
    spec, route = posed
    (spec.parent / "box.obj").write_text("not a mesh\n")
    assert main(["show", str(spec), str(route), "--pose", "all", "--screenshot", str(tmp_path / "x.png")]) == 2
    err = capsys.readouterr().err
    assert "pose 'slid'" in err and "Traceback" not in err


def test_sheet_draws_the_body_zones_of_the_pose_shown(posed, tmp_path):
    """The sheet's zone is the one of the pose shown: on the slid drape the disc lies 80 mm further
    along the pattern's +x (the sheet is drawn in pattern mm, the panel's placement at x = 0)."""
    import re

    import defusedxml.ElementTree as DET

    spec, route = posed
    centre = {}
    for pose in ("flat", "slid"):
        sheet = tmp_path / f"{pose}.svg"
        assert main(["show", str(spec), str(route), "--pose", pose, "--sheet", str(sheet), "--sheet-only"]) == 0
        zones = [e for e in DET.fromstring(sheet.read_bytes()).iter("{http://www.w3.org/2000/svg}path")
                 if e.get("class") == "body-zone"]
        xs = [float(x) for e in zones for x in re.findall(r"[ML]([-\d.]+),", e.get("d"))]
        centre[pose] = (min(xs) + max(xs)) / 2
    assert centre["flat"] == pytest.approx(ZONE_CENTRE[0], abs=1.0)  # observed 200.0
    assert centre["slid"] - centre["flat"] == pytest.approx(SHIFT_MM, abs=1.0)  # observed 80.0


@pytest.mark.slow
def test_demo_poses_side_by_side(tmp_path, capsys):
    from pathlib import Path

    spec = Path(__file__).resolve().parents[1] / "meshes" / "sensing_top.toml"
    route = tmp_path / "r.json"
    assert main(["route", str(spec), "--from", "wrist_left", "--to", "sternum_left", "--quiet", "--json", str(route)]) == 0
    shot = tmp_path / "demo.png"
    assert main(["show", str(spec), str(route), "--pose", "all", "--screenshot", str(shot), "--size", "200", "180"]) == 0
    out = capsys.readouterr().out
    names = [p.name for p in load_garment(spec).poses]
    assert len(names) >= 2 and all(f"pose {n} (" in out for n in names)
    img = matplotlib.image.imread(shot)
    assert img.shape[:2] == (180, 200 * len(names))
    assert all(_drawn(p) > 1000 for p in _panels(img, len(names)))
