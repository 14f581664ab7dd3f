"""Poses: several drapes of one pattern — the ``[[pose]]`` tables, choosing poses, the per-pose
report of a route and the robust route that keeps every pose's body zones."""

from __future__ import annotations

import dataclasses
import json

import numpy as np
import pytest
from scipy.spatial.transform import Rotation

import drape_meshes as dm
from garnav.cli import main
from garnav.drape import link_drape, save_obj
from garnav.errors import QueryError, SpecError
from garnav.mechanics.gravity import POSTURES
from garnav.poses import POSE_POSTURES, Pose
from garnav.poses.load import PoseDrape, load_pose_drapes, select_poses
from garnav.poses.robust import pose_report, robust_garment
from garnav.spec import load_garment, loads_garment, save_garment
from garnav.zones import BodyZone

ZONE_CENTRE = np.array([200.0, 150.0, 0.0])
ZONE_MM = 60.0


def _shifted(mesh, dx: float):
    """The same UV-mapped mesh moved rigidly by ``dx`` mm along world x (an exact development)."""
    return dataclasses.replace(mesh, positions=np.asarray(mesh.positions) + [dx, 0.0, 0.0])


@pytest.fixture
def spec(tmp_path):
    """A 400 × 300 mm panel in two poses: 'flat' and 'slid' (the body moved 80 mm along −x under
    the garment, so the world-fixed zone falls 80 mm further along the pattern's +x)."""
    g, m = dm.flat_sheet(400.0, 300.0, 40, 30)
    save_obj(m, tmp_path / "flat.obj")
    save_obj(_shifted(m, -80.0), tmp_path / "slid.obj")
    zone = BodyZone("pump", "implanted_device", "sphere", (tuple(ZONE_CENTRE),), distance_mm=ZONE_MM)
    g = dataclasses.replace(g, drape="flat.obj", body_zones=(zone,),
                            poses=(Pose("flat", "flat.obj"), Pose("slid", "slid.obj", posture="supine")))
    return save_garment(g, tmp_path / "panel.toml")


# -- the spec ---------------------------------------------------------------------------------

def test_poses_round_trip_and_default(spec):
    g = load_garment(spec)
    assert [p.name for p in g.poses] == ["flat", "slid"]
    assert g.poses[1].posture == "supine" and g.drape == "flat.obj"
    again = loads_garment(spec.read_text(), "again.toml")
    assert again == g


def test_first_pose_is_the_default_without_a_top_level_drape(spec):
    text = spec.read_text().replace('drape = "flat.obj"\n', "", 1)
    g = loads_garment(text, "x.toml")
    assert g.drape == "flat.obj"  # the first pose's


@pytest.mark.parametrize("edit, message", [
    (('name = "slid"', 'name = "flat"'), "pose 'flat': the name is used by another pose"),
    (('posture = "supine"', 'posture = "lying"'), "unknown posture 'lying'"),
    (('posture = "supine"', 'postur = "supine"'), "unknown key 'postur'"),
    (('drape = "slid.obj"', 'drape = 3'), "'drape' must be a string"),
    (('drape = "flat.obj"\n', 'drape = "other.obj"\n'), "drape 'other.obj' is the drape of none of the [[pose]] tables"),
])
def test_bad_pose_tables(spec, edit, message):
    text = spec.read_text().replace(*edit, 1)
    with pytest.raises(SpecError) as exc:
        loads_garment(text, "bad.toml")
    assert message in str(exc.value) and "bad.toml" in str(exc.value)


def test_pose_postures_are_the_gravity_postures():
    assert POSE_POSTURES == tuple(POSTURES)


# -- choosing and loading ---------------------------------------------------------------------

def test_select_poses(spec):
    g = load_garment(spec)
    assert [p.name for p in select_poses(g, None)] == ["flat"]
    assert [p.name for p in select_poses(g, "all")] == ["flat", "slid"]
    with pytest.raises(QueryError, match="no pose 'sld'.*did you mean 'slid'"):
        select_poses(g, "sld")
    with pytest.raises(QueryError, match="names no drape"):
        select_poses(dataclasses.replace(g, drape=None, poses=()), None)


def test_pose_report_against_direct_geometry(spec):
    """3D length, climbs in the pose's posture and zone clearance, each recomputed outside garnav:
    the posture's rotation from scipy (supine = the body turned 90° about its x axis,
    docs/physics.md), the zone as the 3D sphere itself."""
    from garnav.plan import Planner

    g = load_garment(spec)
    pds = load_pose_drapes(g, g.poses, spec.parent)
    planner = Planner(robust_garment(g, pds), g.robot)
    route = planner.route(planner.point("panel:30,150"), planner.point("panel:380,150"))
    for pd in pds:
        rep = pose_report(route, g, pd, g.robot)
        assert rep.ok, rep.problems()
        pts = rep.lifted.points
        room = Rotation.from_euler("x", 90.0 if pd.pose.posture == "supine" else 0.0, degrees=True).apply(pts)
        dz = np.diff(room[:, 2])
        assert rep.climb_up_mm == pytest.approx(np.clip(dz, 0, None).sum(), abs=1e-9)
        assert rep.climb_down_mm == pytest.approx(np.clip(-dz, 0, None).sum(), abs=1e-9)
        assert rep.length_3d_mm == pytest.approx(route.length_mm, rel=1e-9)  # rigid poses: isometric
        # the robot's disc keeps out of the zone in this pose: every lifted centre point is at least
        # the zone's distance + the robot radius from the sphere's centre (flat panel: the pattern
        # distance is the 3D distance); observed margin ≥ 0 mm
        d = np.linalg.norm(pts - ZONE_CENTRE, axis=1)
        assert d.min() >= ZONE_MM + g.robot.radius_mm - 1e-3


def test_route_fine_in_one_pose_not_the_other(spec, tmp_path, capsys):
    out = tmp_path / "r.json"
    args = ["route", str(spec), "--from", "panel:30,150", "--to", "panel:380,150", "--quiet"]
    assert main(args + ["--pose", "all", "--json", str(out)]) == 0
    doc = json.loads(out.read_text())
    by = {p["pose"]: p for p in doc["poses"]}
    assert by["flat"]["ok"] and not by["slid"]["ok"]
    assert by["slid"]["zones"][0]["entered"] and "enters body zone 'pump'" in by["slid"]["problems"][0]
    assert "pose slid (supine)" in capsys.readouterr().out
    import jsonschema  # the route document's published schema (garnav/data/route.schema.json)

    from garnav.export.waypoints import route_schema
    jsonschema.validate(doc, route_schema())
    # planned for the slid pose alone: fine there
    assert main(args + ["--pose", "slid", "--json", str(out)]) == 0
    slid_len = json.loads(out.read_text())["length_mm"]
    # the robust route keeps the zone in both poses, and is at least as long as either
    assert main(args + ["--robust", "--json", str(out)]) == 0
    robust = json.loads(out.read_text())
    assert all(p["ok"] for p in robust["poses"])
    assert robust["length_mm"] >= max(doc["length_mm"], slid_len) - 1e-6


@pytest.mark.parametrize("extra, message", [
    (["--pose", "nope"], "has no pose 'nope'"),
    (["--pose", "slid", "--drape", "x.obj"], "leave out --drape x.obj"),
    (["--robust", "--no-drape"], "leave out --no-drape"),
    (["--robust", "--pose", "flat"], "--robust plans for every pose"),
])
def test_pose_option_errors(spec, extra, message, capsys, monkeypatch):
    monkeypatch.chdir(spec.parent)  # x.obj exists there: a missing input would be refused first
    (spec.parent / "x.obj").write_text("", encoding="utf-8")
    assert main(["route", str(spec), "--from", "panel:30,150", "--to", "panel:380,150", "--quiet"] + extra) == 2
    err = capsys.readouterr().err
    assert message in err and "Traceback" not in err


def test_unreadable_pose_drape_is_named(spec, capsys):
    (spec.parent / "slid.obj").write_text("v 0 0 0\n")
    assert main(["route", str(spec), "--from", "panel:30,150", "--to", "panel:380,150", "--pose", "all",
                 "--quiet"]) == 2
    assert "pose 'slid'" in capsys.readouterr().err


def test_check_reports_every_pose(spec, tmp_path, capsys):
    out = tmp_path / "c.json"
    assert main(["check", str(spec), "--drape", "--json", str(out)]) == 0
    doc = json.loads(out.read_text())
    assert [p["pose"] for p in doc["poses"]] == ["flat", "slid"]
    assert doc["drape"] == doc["poses"][0]["drape"]
    assert main(["check", str(spec), "--drape"]) == 0
    text = capsys.readouterr().out
    assert "pose 'flat' (upright, default): flat.obj" in text and "pose 'slid' (supine): slid.obj" in text


def test_check_names_the_pose_of_a_bad_drape(spec, capsys):
    (spec.parent / "slid.obj").write_text("v 0 0 0\nvt 0 0\n")  # no faces
    assert main(["check", str(spec)]) == 2
    assert "pose 'slid' drape 'slid.obj'" in capsys.readouterr().out


def test_shared_drape_read_once(spec):
    g = load_garment(spec)
    g = dataclasses.replace(g, poses=(Pose("a", "flat.obj"), Pose("b", "flat.obj", posture="prone")))
    pds = load_pose_drapes(g, g.poses, spec.parent)
    assert pds[0].drape is pds[1].drape
    assert isinstance(pds[0], PoseDrape) and link_drape is not None


def test_study_pose_axis_lists_the_spec_poses(spec):
    from garnav.study.poses import garment_poses

    assert garment_poses(load_garment(spec)) == {"default": "flat.obj", "flat": "flat.obj", "slid": "slid.obj"}
