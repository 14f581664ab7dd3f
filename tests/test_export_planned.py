"""Export of planned routes on the demo garment: schema, replay, turns, orientations.

The demo routes and >= 50 random routes (seeded) come from the planner; with the drape they are
lifted to 3D. Cross-checks between the planner's own numbers and the export's independent ones:
waypoints and headings, the sum of turns (the planner carries headings over seams with its seam
transform, the export with its own), crossing angles.
"""

from __future__ import annotations

import math

import jsonschema
import numpy as np
import pytest
from scipy.spatial.transform import Rotation

pytest.importorskip("garnav.plan.planner")  # runs once the planner is part of the package

from garnav.demo import demo_garment  # noqa: E402
from garnav.errors import GarnavError  # noqa: E402
from garnav.export.commands import Cross, Turn, format_commands, parse_commands, route_commands  # noqa: E402
from garnav.export.path import route_waypoints  # noqa: E402
from garnav.export.replay import replay_commands  # noqa: E402
from garnav.export.waypoints import route_document, route_schema  # noqa: E402
from garnav.plan import PiecePoint, Planner  # noqa: E402

DEMO_PAIRS = (
    ("wrist_left", "sternum_left"),
    ("wrist_right", "dock"),
    ("olecranon_left", "acromion_right"),
    ("omphalion", "wrist_right"),
    ("suprasternale", "dock"),
    ("wrist_left", "wrist_right"),
)

# Reference: the jsonschema library's Draft 2020-12 validator.
VALIDATOR = jsonschema.Draft202012Validator(route_schema())


@pytest.fixture(scope="module")
def demo():
    garment = demo_garment()
    planner = Planner(garment)
    routes = []
    for a, b in DEMO_PAIRS:
        try:
            routes.append(planner.route(a, b))
        except GarnavError:  # a pair the demo cannot join is not what this file tests
            continue
    rng = np.random.default_rng(2024)
    random_routes = []
    attempts = 0
    names = [p.name for p in garment.pieces]
    while len(random_routes) < 50 and attempts < 600:
        attempts += 1
        ends = []
        for _ in range(2):
            piece = names[int(rng.integers(len(names)))]
            x0, y0, x1, y1 = planner.free[piece].region.bounds
            p = np.array([rng.uniform(x0, x1), rng.uniform(y0, y1)])
            if planner.free[piece].covers(p[None])[0]:
                ends.append(PiecePoint(piece, float(p[0]), float(p[1])))
        if len(ends) < 2:
            continue
        try:
            random_routes.append(planner.route(ends[0], ends[1]))
        except GarnavError:
            continue
    return garment, planner, routes, random_routes


def test_enough_routes_were_planned(demo):
    garment, planner, routes, random_routes = demo
    assert len(routes) >= 4
    assert len(random_routes) >= 50
    assert sum(len(r.crossings) for r in random_routes) >= 25  # many cross seams


def _all(demo):
    garment, planner, routes, random_routes = demo
    return garment, list(routes) + list(random_routes)


def test_documents_validate(demo):
    garment, routes = _all(demo)
    for route in routes:
        VALIDATOR.validate(route_document(route, garment))


def test_waypoints_agree_with_the_planners(demo):
    garment, routes = _all(demo)
    for route in routes:
        ours = route_waypoints(route)
        theirs = route.waypoints()
        assert len(ours) == len(theirs)
        for w, (piece, x, y, h) in zip(ours, theirs):
            assert (w.piece, w.x_mm, w.y_mm) == (piece, x, y)
            assert abs(math.remainder(w.heading_deg - h, 360.0)) < 1e-6


def test_replay_reproduces_every_waypoint(demo):
    garment, routes = _all(demo)
    worst = 0.0
    for i, route in enumerate(routes):
        cl = route_commands(route, garment)
        if i % 2:
            cl = parse_commands(format_commands(cl))
        rep = replay_commands(garment, cl)
        assert [c.seam for c in rep.crossings] == [c.seam for c in route.crossings]
        assert rep.unmatched_notices == ()
        # every replayed pose is a route waypoint, in order, and every waypoint lies on the replay
        wps = route_waypoints(route)
        k = 0
        for p in rep.poses:
            while not (wps[k].piece == p.piece and math.hypot(wps[k].x_mm - p.x_mm, wps[k].y_mm - p.y_mm) <= 1e-6):
                k += 1  # skipped waypoints are repeated or collinear points (no turn, no crossing)
                assert k < len(wps), f"route {i}: replay pose {p} is not a waypoint"
            worst = max(worst, math.hypot(wps[k].x_mm - p.x_mm, wps[k].y_mm - p.y_mm))
        end = wps[-1]
        assert (rep.end.piece, rep.end.x_mm, rep.end.y_mm) == (end.piece, pytest.approx(end.x_mm, abs=1e-6),
                                                                pytest.approx(end.y_mm, abs=1e-6))
    assert worst <= 1e-6


def test_turns_sum_like_the_planners_and_crossing_angles_agree(demo):
    garment, routes = _all(demo)
    for route in routes:
        for side, sign in (("outside", 1.0), ("inside", -1.0)):
            robot = garment.robot.__class__(**{**garment.robot.__dict__, "side": side})
            cl = route_commands(route, garment, robot)
            total = sum(c.angle_deg for c in cl.commands if isinstance(c, Turn))
            assert total == pytest.approx(sign * float(np.sum(route.turns_deg)), abs=1e-6)
        notices = [c for c in route_commands(route, garment).commands if isinstance(c, Cross)]
        assert [n.seam for n in notices] == [c.seam for c in route.crossings]
        for n, c in zip(notices, route.crossings):
            assert n.angle_deg == pytest.approx(c.angle_deg, abs=1e-6)


def test_lifted_documents_have_unit_quaternions_along_the_normal(demo):
    drape_mod = pytest.importorskip("garnav.drape.lift")
    from pathlib import Path

    from garnav.drape import link_drape, load_uv_mesh

    garment, routes = _all(demo)
    mesh = Path(__file__).resolve().parents[1] / "meshes" / "sensing_top_drape.obj"
    drape = link_drape(garment, load_uv_mesh(mesh))
    for route in routes[:20]:
        lifted = drape_mod.lift_route(drape, garment, route)
        doc = route_document(route, garment, None, lifted)
        VALIDATOR.validate(doc)
        for w in doc["waypoints"]:
            q = np.array(w["orientation_xyzw"])
            assert abs(np.linalg.norm(q) - 1.0) < 1e-12
            # reference: scipy Rotation, scalar-last quaternions
            z = Rotation.from_quat(q).as_matrix()[:, 2]
            assert np.degrees(np.arccos(np.clip(z @ np.array(w["normal"]), -1.0, 1.0))) < 1.0
