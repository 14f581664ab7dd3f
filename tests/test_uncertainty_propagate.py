"""Linearised propagation and Monte Carlo: analytic cases, agreement on routes, seams."""

from __future__ import annotations

import math

import numpy as np
import pytest

import garments
from garnav.export.commands import CommandList, Cross, Go, Start, Turn
from garnav.plan import Planner
from garnav.export.commands import route_commands
from garnav.uncertainty import NOISE_FREE, OdometryModel
from garnav.uncertainty.montecarlo import monte_carlo
from garnav.uncertainty.plan_ops import compile_commands
from garnav.uncertainty.propagate import ellipse_2sigma, propagate_covariance
from garnav.uncertainty.report import frobenius_gap
import dataclasses


def _only(**kw) -> OdometryModel:
    return dataclasses.replace(NOISE_FREE, **kw)


def _straight(length=400.0):
    g = garments.single_panel()
    cl = CommandList((Go(length),), "outside", Start("panel", 100.0, 100.0, 90.0))
    return g, compile_commands(g, cl, g.robot)


def test_angle_random_walk_gives_integrated_brownian_motion():
    # A heading random walk W(t) with var N²t integrated over a straight run: var(∫W ds) = N²·T·L²/3
    # and var(heading) = N²·T (integrated Wiener process; e.g. Papoulis, Probability, Random
    # Variables and Stochastic Processes, §10 — from memory).
    g, plan = _straight(400.0)
    m = _only(gyro_arw_deg_sqrt_h=60.0)  # 1 deg/√s
    P = propagate_covariance(plan, m).end
    N2, T, L = math.radians(1.0) ** 2, 400.0 / g.robot.speed_mm_s, 400.0
    assert P[0, 0] == pytest.approx(N2 * T * L * L / 3.0, rel=1e-12)  # heading 90°: cross-track is x
    assert P[2, 2] == pytest.approx(N2 * T, rel=1e-12)
    mc = monte_carlo(plan, m, runs=20000, seed=1, step_mm=2.0)
    C = mc.end_covariance
    assert C[0, 0] == pytest.approx(P[0, 0], rel=0.05)  # observed 0.6 %
    assert C[2, 2] == pytest.approx(P[2, 2], rel=0.05)  # observed 0.4 %


def test_distance_errors_are_along_track():
    g, plan = _straight(500.0)
    m = _only(distance_scale_error=0.01, distance_random_mm_per_sqrt_m=2.0)
    P = propagate_covariance(plan, m).end
    # along (y): (0.01·500)² + 2²·0.5 = 25 + 2 mm² (random walk: σ² grows with distance)
    assert P[1, 1] == pytest.approx(27.0, rel=1e-12)
    assert P[0, 0] == pytest.approx(0.0, abs=1e-12)


def test_gyro_bias_bends_the_run():
    # constant bias b: heading error b·T, cross-track b·L·T/2 (∫ b s/v ds)
    g, plan = _straight(300.0)
    m = _only(gyro_bias_deg_h=360.0)
    P = propagate_covariance(plan, m).end
    b, T, L = math.radians(0.1), 300.0 / g.robot.speed_mm_s, 300.0
    assert math.sqrt(P[2, 2]) == pytest.approx(b * T, rel=1e-12)
    assert math.sqrt(P[0, 0]) == pytest.approx(b * L * T / 2.0, rel=1e-12)


def test_turn_scale_error_scales_the_turn():
    g = garments.single_panel()
    cl = CommandList((Turn(90.0), Go(100.0)), "outside", Start("panel", 300.0, 300.0, 0.0))
    P = propagate_covariance(compile_commands(g, cl, g.robot), _only(turn_scale_error=0.02)).end
    assert math.sqrt(P[2, 2]) == pytest.approx(0.02 * math.pi / 2, rel=1e-12)


def test_seam_crossing_rotates_the_covariance_into_the_next_frame():
    g = garments.two_panels()
    # across the middle seam (left.right x=300 -> right.left x=0): the frames differ by a shift only
    cl = CommandList((Cross("middle", 100.0, 90.0), Go(200.0)), "outside", Start("left", 200.0, 200.0, 0.0))
    plan = compile_commands(g, cl, g.robot)
    assert [s.kind for s in plan.steps] == ["go", "cross", "go"]
    assert plan.end[0] == "right" and plan.end[1] == pytest.approx(100.0)
    m = OdometryModel()
    lin = propagate_covariance(plan, m).end
    mc = monte_carlo(plan, m, runs=20000, seed=3)
    assert frobenius_gap(lin[:2, :2], mc.end_covariance[:2, :2]) < 0.1  # observed 0.7 %


def test_relocalisation_removes_the_error_across_the_seam():
    g = garments.two_panels()
    cl = CommandList((Cross("middle", 250.0, 90.0), Go(250.0)), "outside", Start("left", 50.0, 200.0, 0.0))
    plan = compile_commands(g, cl, g.robot)
    m = _only(distance_scale_error=0.02, seam_relocalise=True)
    # square crossing: all the along-track (x) error before the seam is gone; after: 0.02·0 mm
    P = propagate_covariance(plan, m).end
    assert P[0, 0] == pytest.approx(0.0, abs=1e-9)
    Pn = propagate_covariance(plan, m, relocalise=False).end
    assert Pn[0, 0] == pytest.approx((0.02 * 250.0) ** 2, rel=1e-9)
    mc = monte_carlo(plan, m, runs=5000, seed=2)
    assert float(np.var(mc.end[:, 0])) == pytest.approx(0.0, abs=1e-9)


def test_monte_carlo_is_seeded():
    g, plan = _straight()
    a = monte_carlo(plan, OdometryModel(), runs=500, seed=9).end
    b = monte_carlo(plan, OdometryModel(), runs=500, seed=9).end
    np.testing.assert_array_equal(a, b)


def test_linear_and_monte_carlo_agree_on_a_planned_route(two_panels):
    planner = Planner(two_panels)
    route = planner.route("left:60,60", "right:240,340")
    plan = compile_commands(two_panels, route_commands(route, two_panels, two_panels.robot), two_panels.robot)
    m = OdometryModel()
    lin = propagate_covariance(plan, m).end
    mc = monte_carlo(plan, m, runs=10000, seed=0).end_covariance
    assert frobenius_gap(lin[:2, :2], mc[:2, :2]) < 0.1  # observed 1.4 %
    assert mc[2, 2] == pytest.approx(lin[2, 2], rel=0.1)


def test_ellipse_of_a_rotated_covariance():
    # numpy.linalg.eigh as the reference: a 30° rotated diag(9, 1) has 2σ axes 6 and 2 at 30°
    c, s = math.cos(math.radians(30)), math.sin(math.radians(30))
    R = np.array([[c, -s], [s, c]])
    e = ellipse_2sigma(R @ np.diag([9.0, 1.0]) @ R.T)
    assert (e["semi_major_mm"], e["semi_minor_mm"]) == pytest.approx((6.0, 2.0))
    assert e["angle_deg"] == pytest.approx(30.0)
