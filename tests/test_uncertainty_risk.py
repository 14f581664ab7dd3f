"""Contact risk from the Monte Carlo, against the normal distribution and scipy's Wilson interval."""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from scipy import stats

import garments
from garnav.export.commands import CommandList, Go, Start
from garnav.model import KeepOut, Rectangle
from garnav.uncertainty import NOISE_FREE
from garnav.uncertainty.montecarlo import OPEN_EDGE, RiskMap, monte_carlo, wilson_interval
from garnav.uncertainty.plan_ops import compile_commands


def _panel_with_wall(gap_mm: float):
    """A 600 × 800 panel; a long keep-out wall parallel to a straight run, ``gap_mm`` beyond the disc."""
    g = garments.single_panel()
    r = g.robot.radius_mm
    x_run = 300.0
    wall = KeepOut("wall", "panel", "custom", Rectangle(x_run + r + gap_mm + 5.0, 400.0, 10.0, 700.0))
    return dataclasses.replace(g, keepouts=(wall,)), x_run


def test_contact_probability_matches_the_normal_tail():
    # Only the start position is uncertain (σ per axis); the run is parallel to the wall, so the
    # disc touches it exactly when the lateral offset exceeds the gap: P = 1 − Φ(gap/σ).
    gap, sigma = 3.0, 2.0
    g, x = _panel_with_wall(gap)
    plan = compile_commands(g, CommandList((Go(300.0),), "outside", Start("panel", x, 250.0, 90.0)), g.robot)
    m = dataclasses.replace(NOISE_FREE, start_position_mm=sigma)
    mc = monte_carlo(plan, m, RiskMap(g, g.robot, quad_segs=64), runs=20000, seed=5)
    expect = stats.norm.sf(gap / sigma)  # 0.0668
    assert mc.probability("wall") == pytest.approx(expect, abs=0.008)  # observed Δ 0.0030 (σ_MC 0.0018)
    assert mc.probability(OPEN_EDGE) == 0.0
    assert mc.probability() == mc.probability("wall")


def test_open_edge_contact():
    g = garments.single_panel()
    r = g.robot.radius_mm
    # a run along the left hem, its disc 2 mm from the edge; lateral σ 2 mm -> P = 1 − Φ(1)
    plan = compile_commands(g, CommandList((Go(400.0),), "outside", Start("panel", r + 2.0, 200.0, 90.0)), g.robot)
    m = dataclasses.replace(NOISE_FREE, start_position_mm=2.0)
    mc = monte_carlo(plan, m, RiskMap(g, g.robot, quad_segs=64), runs=20000, seed=6)
    assert mc.probability(OPEN_EDGE) == pytest.approx(stats.norm.sf(1.0), abs=0.008)  # observed Δ 0.0005


def test_no_noise_no_contact():
    g, x = _panel_with_wall(1.0)
    plan = compile_commands(g, CommandList((Go(300.0),), "outside", Start("panel", x, 250.0, 90.0)), g.robot)
    mc = monte_carlo(plan, NOISE_FREE, RiskMap(g, g.robot), runs=100, seed=0)
    assert mc.probability() == 0.0


@pytest.mark.parametrize("k, n", [(0, 10000), (37, 1000), (500, 1000), (1000, 1000)])
def test_wilson_interval_matches_scipy(k, n):
    ci = stats.binomtest(k, n).proportion_ci(confidence_level=0.95, method="wilson")
    assert wilson_interval(k, n) == pytest.approx((ci.low, ci.high), abs=1e-12)


def test_contacts_are_per_run_booleans():
    g, x = _panel_with_wall(0.5)
    plan = compile_commands(g, CommandList((Go(300.0),), "outside", Start("panel", x, 250.0, 90.0)), g.robot)
    mc = monte_carlo(plan, dataclasses.replace(NOISE_FREE, start_position_mm=2.0), RiskMap(g, g.robot), runs=2000, seed=1)
    hit = mc.contact["wall"]
    assert hit.dtype == bool and hit.shape == (2000,)
    assert np.count_nonzero(hit) / 2000 == mc.probability("wall")


def test_keep_outs_just_across_a_seam_count():
    # two_panels: left.right (x = 300) is sewn to right.left (x = 0). A run on 'left' 5 mm from the
    # seam and a wall on 'right' 8 mm beyond it: the disc (r = 10) has a 3 mm gap across the seam,
    # so with a lateral σ of 2 mm, P = 1 − Φ(1.5) — as for a wall on the same piece.
    g = garments.two_panels()
    wall = KeepOut("wall", "right", "custom", Rectangle(13.0, 200.0, 10.0, 350.0))
    g = dataclasses.replace(g, keepouts=(wall,))
    plan = compile_commands(g, CommandList((Go(250.0),), "outside", Start("left", 295.0, 75.0, 90.0)), g.robot)
    m = dataclasses.replace(NOISE_FREE, start_position_mm=2.0)
    mc = monte_carlo(plan, m, RiskMap(g, g.robot, quad_segs=64), runs=20000, seed=8)
    assert mc.probability("wall") == pytest.approx(stats.norm.sf(1.5), abs=0.008)  # observed Δ −0.0010
