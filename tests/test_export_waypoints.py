"""The route document: schema validity, CSV agreement, orientations, atomic writing."""

from __future__ import annotations

import csv
import io
import json
import math
import os

import jsonschema
import numpy as np
import pytest
from scipy.spatial.transform import Rotation

import export_routes as er
import garments
from garnav import Robot
from garnav.errors import GarnavError, QueryError
from garnav.export.commands import route_commands, write_commands
from garnav.export.waypoints import (
    CSV_COLUMNS,
    body_frame,
    document_csv,
    document_json,
    quaternion_xyzw,
    read_route_document,
    route_document,
    route_schema,
    write_route_csv,
    write_route_json,
)

# Reference: the jsonschema library's Draft 2020-12 validator (the dialect the schema declares).
VALIDATOR = jsonschema.Draft202012Validator(route_schema())


def _random_docs(n, lifted):
    rng = np.random.default_rng(31 if lifted else 32)
    g2, gt = garments.two_panels(), er.turned_panels()
    for i in range(n):
        if lifted or i % 2:
            route = er.two_panel_route(rng, int(rng.integers(1, 4)), int(rng.integers(1, 4)), back=bool(i % 3))
            g = g2
        else:
            route, g = er.turned_route(rng), gt
        robot = Robot(side="inside" if i % 4 == 0 else "outside", wheel_base_mm=25.0, speed_mm_s=15.0)
        lift = er.cylinder_lift(route) if lifted else None
        yield route, g, robot, lift, route_document(route, g, robot, lift)


def test_schema_is_valid_draft_2020_12():
    jsonschema.Draft202012Validator.check_schema(route_schema())


@pytest.mark.parametrize("lifted", [False, pytest.param(True, marks=pytest.mark.slow)])
def test_every_document_validates_and_round_trips_through_json(lifted):
    count = 0
    for _route, _g, _robot, _lift, doc in _random_docs(50, lifted):
        parsed = json.loads(document_json(doc))
        VALIDATOR.validate(parsed)
        assert parsed == doc
        count += 1
    assert count == 50


def test_bad_documents_fail_the_schema():
    route = er.two_panel_route(np.random.default_rng(2))
    doc = route_document(route, garments.two_panels())
    for mutate in (
        lambda d: d.update(version=2),
        lambda d: d["waypoints"][0].update(orientation_xyzw=[0.0, 0.0, 1.0]),
        lambda d: d["commands"].append({"op": "go", "distance_mm": -1.0}),
        lambda d: d["robot"].update(side="underneath"),
        lambda d: d.pop("summary"),
        lambda d: d.pop("length_mm"),
        lambda d: d["waypoints"][0].update(x_mm=1.0),
    ):
        bad = json.loads(document_json(doc))
        mutate(bad)
        assert not VALIDATOR.is_valid(bad)


@pytest.mark.parametrize("lifted", [False, True])
def test_csv_parses_with_stdlib_and_matches_json(lifted):
    for _route, _g, _robot, _lift, doc in _random_docs(10, lifted):
        rows = list(csv.DictReader(io.StringIO(document_csv(doc))))
        assert tuple(rows[0].keys()) == CSV_COLUMNS
        assert len(rows) == len(doc["waypoints"])
        for row, w in zip(rows, doc["waypoints"]):
            assert int(row["index"]) == w["index"] and int(row["leg"]) == w["leg"] and row["piece"] == w["piece"]
            assert [float(row[k]) for k in ("x_mm", "y_mm", "heading_deg")] == [w["x"], w["y"], w["heading_deg"]]
            tail = [row[k] for k in CSV_COLUMNS[6:16]]
            assert [row[k] for k in CSV_COLUMNS[16:]] == [""] * 3  # margins: no physics profile
            if lifted:
                assert [float(v) for v in tail] == w["xyz"] + w["normal"] + w["orientation_xyzw"]
            else:
                assert tail == [""] * 10


def test_quaternions_are_unit_and_their_axes_match_normal_and_travel():
    checked = 0
    for _route, _g, robot, _lift, doc in _random_docs(20, lifted=True):
        up = 1.0 if robot.side == "outside" else -1.0
        for w in doc["waypoints"]:
            q = np.array(w["orientation_xyzw"])
            assert abs(np.linalg.norm(q) - 1.0) < 1e-12
            # reference: scipy's Rotation (scalar-last quaternions, the default of from_quat)
            m = Rotation.from_quat(q).as_matrix()
            normal = er.cylinder_normal(w["piece"], w["x"])  # analytic outward normal
            assert np.degrees(np.arccos(np.clip(m[:, 2] @ (up * normal), -1, 1))) < 1.0
            assert np.allclose(w["normal"], normal, atol=1e-12)
            travel = er.cylinder_direction(w["piece"], w["x"], w["heading_deg"])
            assert np.degrees(np.arccos(np.clip(m[:, 0] @ travel, -1, 1))) < 1.0
            assert np.allclose(w["xyz"], er.cylinder_point(w["piece"], w["x"], w["y"]), atol=1e-9)
            checked += 1
    assert checked > 100


def test_quaternion_from_matrix_matches_scipy():
    # reference: scipy.spatial.transform.Rotation.as_quat (scalar last), sign fixed to w >= 0
    rots = Rotation.random(500, random_state=np.random.default_rng(4))
    mats = rots.as_matrix()
    extra = [np.eye(3), np.diag([1.0, -1.0, -1.0]), np.diag([-1.0, 1.0, -1.0]), np.diag([-1.0, -1.0, 1.0])]
    for m in list(mats) + extra:
        ref = Rotation.from_matrix(m).as_quat()
        ref = -ref if ref[3] < 0 else ref
        ours = quaternion_xyzw(m)
        assert np.allclose(ours, ref, atol=1e-12) or (abs(ref[3]) < 1e-12 and np.allclose(ours, -ref, atol=1e-12))


def test_body_frame_is_right_handed():
    f = body_frame(np.array([1.0, 1.0, 0.2]), np.array([0.0, 0.0, 2.0]))
    assert np.allclose(f.T @ f, np.eye(3)) and np.linalg.det(f) == pytest.approx(1.0, abs=1e-14)  # observed 1.1e-16
    assert np.allclose(f[:, 2], [0, 0, 1]) and abs(f[:, 0] @ [0, 0, 1]) < 1e-15
    with pytest.raises(ValueError):
        body_frame(np.array([0.0, 0.0, 1.0]), np.array([0.0, 0.0, 1.0]))


def test_summary_by_hand():
    # one straight 200 mm go then a 90° left turn and 100 mm: 300 mm at 20 mm/s = 15 s;
    # the turn moves each wheel along π/2 · 30/2 mm (differential drive, turn in place)
    g = garments.single_panel()
    route = er.build_route([("panel", np.array([[100.0, 100.0], [300.0, 100.0], [300.0, 200.0]]))], [])
    robot = Robot(wheel_base_mm=30.0, speed_mm_s=20.0)
    doc = route_document(route, g, robot)
    s = doc["summary"]
    assert s["drive_time_s"] == pytest.approx(15.0)
    assert s["turn_time_s"] == pytest.approx(math.pi / 2 * 15.0 / 20.0)
    assert s["estimated_time_s"] == pytest.approx(15.0 + math.pi / 2 * 15.0 / 20.0)
    assert s["turn_count"] == 1 and s["turn_total_deg"] == pytest.approx(90.0)
    assert doc["length_mm"] == pytest.approx(300.0)
    assert doc["length_3d_mm"] is None and s["climb_up_mm"] is None and doc["path3d"] is None


def test_lifted_summary_and_dense_path():
    route = er.two_panel_route(np.random.default_rng(8), back=True)
    lift = er.cylinder_lift(route)
    doc = route_document(route, garments.two_panels(), None, lift)
    assert doc["length_3d_mm"] == pytest.approx(lift.length_3d_mm)
    assert doc["summary"]["climb_up_mm"] == lift.climb_up_mm
    assert doc["summary"]["seams_crossed"] == ["middle", "middle"]
    # an isometric lift: the 3D length (chords on a cylinder) is a little under the pattern length
    assert lift.length_3d_mm <= route.length_mm + 1e-9
    assert lift.length_3d_mm == pytest.approx(route.length_mm, rel=1e-3)
    assert len(doc["path3d"]) == len(doc["path3d_detail"]["normals"]) == len(lift.points)
    assert [doc["path3d"][j] for j in doc["path3d_detail"]["waypoint_index"]] == [w["xyz"] for w in doc["waypoints"]]
    assert doc["commands"][0]["op"] in ("go", "turn", "cross")


def test_lifted_route_of_another_route_is_refused():
    rng = np.random.default_rng(9)
    route = er.two_panel_route(rng, 1, 1)
    other = er.cylinder_lift(er.two_panel_route(rng, 3, 3))
    with pytest.raises(GarnavError, match="lift this very route"):
        route_document(route, garments.two_panels(), None, other)


def _writers(tmp_path):
    route = er.two_panel_route(np.random.default_rng(10))
    g = garments.two_panels()
    doc = route_document(route, g)
    cl = route_commands(route, g)
    return {
        "route.json": lambda p: write_route_json(p, doc),
        "route.csv": lambda p: write_route_csv(p, doc),
        "route.cmd": lambda p: write_commands(p, cl),
    }


@pytest.mark.parametrize("name", ["route.json", "route.csv", "route.cmd"])
def test_a_failed_write_leaves_no_partial_file(tmp_path, monkeypatch, name):
    write = _writers(tmp_path)[name]
    target = tmp_path / name

    def broken_fsync(fd):  # data written, not yet renamed: fail here
        raise OSError(5, "simulated disk failure")

    with monkeypatch.context() as m:
        m.setattr(os, "fsync", broken_fsync)
        with pytest.raises(GarnavError, match="simulated disk failure"):
            write(target)
    assert os.listdir(tmp_path) == []  # no target, no temporary file
    target.write_text("old content")
    with monkeypatch.context() as m:
        m.setattr(os, "fsync", broken_fsync)
        with pytest.raises(GarnavError):
            write(target)
    assert target.read_text() == "old content"
    assert os.listdir(tmp_path) == [name]
    write(target)
    assert target.read_text() != "old content"


def test_reading_a_document_with_the_early_key_names_says_so(tmp_path):
    route = er.two_panel_route(np.random.default_rng(5))
    doc = json.loads(document_json(route_document(route, garments.two_panels())))
    for w in doc["waypoints"]:
        w["x_mm"], w["y_mm"] = w.pop("x"), w.pop("y")
    path = tmp_path / "old.json"
    path.write_text(json.dumps(doc))
    with pytest.raises(QueryError, match=r"old\.json: written with the early key names.*plan the route again"):
        read_route_document(path)
    good = tmp_path / "new.json"
    write_route_json(good, route_document(route, garments.two_panels()))
    assert read_route_document(good)["length_mm"] == pytest.approx(route.length_mm)
