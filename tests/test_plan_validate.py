"""Routes on the catalogue garments pass garnav.testing.validate_route; the validator rejects
broken routes (each property fed a route that breaks it); a route from a point to itself."""

import dataclasses

import numpy as np
import pytest

import garments
from garnav.plan import PiecePoint, Planner
from garnav.plan.route import Leg
from garnav.testing import validate_route
from plan_courses import random_free_points


@pytest.fixture(scope="module")
def two_panel_planner():
    return Planner(garments.two_panels())


@pytest.mark.parametrize("make", [garments.single_panel, garments.two_panels, garments.tube])
def test_random_routes_on_the_catalogue_are_valid(make):
    planner = Planner(make())
    pts = random_free_points(planner, np.random.default_rng(5), 16)
    for s, g in zip(pts[::2], pts[1::2]):
        route = planner.route(s, g)
        validate_route(route, planner.garment, planner.free, start=s, goal=g)


def test_start_equals_goal_is_a_route_of_no_length(two_panel_planner):
    p = PiecePoint("left", 120.0, 140.0)
    route = two_panel_planner.route(p, p)
    validate_route(route, two_panel_planner.garment, two_panel_planner.free, start=p, goal=p)
    assert route.length_mm == 0.0 and route.cost == 0.0
    assert route.crossings == () and route.turn_count() == 0
    assert [w[:3] for w in route.waypoints()] == [("left", 120.0, 140.0)] * len(route.waypoints())


def _broken(route, **changes):
    return dataclasses.replace(route, **changes)


def test_the_validator_rejects_each_broken_property(two_panel_planner):
    pl = two_panel_planner
    g, free = pl.garment, pl.free
    route = pl.route("left:50,100", "right:250,300")
    validate_route(route, g, free, start="left:50,100", goal="right:250,300")
    check = lambda r, **kw: validate_route(r, g, free, **kw)  # noqa: E731
    with pytest.raises(AssertionError, match="start is"):
        check(route, start="left:60,100")
    with pytest.raises(AssertionError, match="goal is"):
        check(route, goal=("right", 250.0, 301.0))
    with pytest.raises(AssertionError, match="length_mm"):
        check(_broken(route, length_mm=route.length_mm + 1e-6))
    # a leg moved onto the open hem (outside the robot's free space)
    leg0 = route.legs[0]
    off = Leg(leg0.piece, np.vstack([[[2.0, 100.0]], leg0.points]))
    with pytest.raises(AssertionError, match="leaves the free space"):
        check(_broken(route, legs=(off, *route.legs[1:]), length_mm=route.length_mm + 48.0))
    # a crossing whose far side is not the partner point
    c = route.crossings[0]
    moved = dataclasses.replace(c, point_to=c.point_to + [0.0, 5.0])
    leg1 = route.legs[1]
    shifted = Leg(leg1.piece, np.vstack([moved.point_to, leg1.points[1:]]))
    length = sum(float(np.sum(np.hypot(*np.diff(leg.points, axis=0).T))) for leg in (route.legs[0], shifted))
    with pytest.raises(AssertionError, match="not the partner"):
        check(_broken(route, legs=(route.legs[0], shifted), crossings=(moved,), length_mm=length,
                      headings_deg=route.headings_deg))
    with pytest.raises(AssertionError, match="crossings"):
        check(_broken(route, crossings=()))
    with pytest.raises(AssertionError, match="headings"):
        check(_broken(route, headings_deg=route.headings_deg[:-1]))
    with pytest.raises(AssertionError, match="turns"):
        check(_broken(route, turns_deg=np.zeros(len(route.turns_deg) + 1)))
    closed = dataclasses.replace(g, seams=(dataclasses.replace(g.seams[0], crossable=False),))
    with pytest.raises(AssertionError, match="not crossable"):
        validate_route(route, closed, free)
