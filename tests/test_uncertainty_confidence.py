"""Planning to a confidence: the returned route's contact probability, checked by a fresh Monte Carlo."""

from __future__ import annotations

import dataclasses

import pytest

import garments
from garnav.errors import NoRouteError, QueryError
from garnav.export.commands import route_commands
from garnav.model import KeepOut, Rectangle
from garnav.plan import Planner
from garnav.uncertainty import OdometryModel
from garnav.uncertainty.confidence import confident_route, runs_for
from garnav.uncertainty.montecarlo import RiskMap, monte_carlo
from garnav.uncertainty.plan_ops import compile_commands


def _box_garment():
    g = garments.two_panels()
    box = KeepOut("box", "left", "pocket", Rectangle(150.0, 200.0, 60.0, 60.0))
    return dataclasses.replace(g, keepouts=(box,))


def _contact(g, route, model, runs, seed):
    plan = compile_commands(g, route_commands(route, g, g.robot), g.robot)
    return monte_carlo(plan, model, RiskMap(g, g.robot), runs=runs, seed=seed)


def test_confident_route_honours_its_bound():
    g = _box_garment()
    model = OdometryModel(start_heading_deg=1.0)
    stops = ["left:40,200", "right:150,200"]
    plain = Planner(g).route(*stops)
    assert _contact(g, plain, model, 4000, 11).probability() > 0.2  # hugs the box: observed 0.53
    result = confident_route(g, g.robot, stops, 0.99, model=model, seed=0)
    assert result.upper <= 0.01
    assert result.grown_mm.get("box", 0.0) > 0.0
    assert result.route.length_mm > plain.length_mm
    # a fresh Monte Carlo (other seed, more runs) confirms the bound
    check = _contact(g, result.route, model, 10000, 12345)
    assert check.probability() <= 0.01  # observed 0.0
    assert "confidence  0.99" in "\n".join(result.lines())


def test_already_safe_routes_are_kept():
    g = garments.two_panels()
    result = confident_route(g, g.robot, ["left_centre", "right_centre"], 0.99)
    assert result.rounds == 1 and result.grown_mm == {}


def test_bad_confidence():
    g = garments.two_panels()
    with pytest.raises(QueryError, match="between 0 and 1"):
        confident_route(g, g.robot, ["left_centre", "right_centre"], 1.0)


def test_unreachable_bound_says_so():
    g = _box_garment()
    wild = OdometryModel(start_heading_deg=20.0, start_position_mm=30.0)
    with pytest.raises((NoRouteError, QueryError), match="confidence|contact probability"):
        confident_route(g, g.robot, ["left:40,200", "right:150,200"], 0.999, model=wild, max_rounds=2, runs=2000)


def test_runs_for():
    assert runs_for(0.99) == 3000 and runs_for(0.5) == 2000 and runs_for(0.999999) == 200_000
