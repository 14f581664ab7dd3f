"""Certifying the branch and bound over seam sequences by splitting windows (garnav.plan.sequence_bound).

References: plane geometry (two panels sewn along a straight seam of equal length unfold to one
flat rectangle, where the shortest route is the straight line), and a dense reference that the
project's bound must never exceed: the same planner with 2 mm portals (10x denser than the
default 20 mm) and without the sequence search, whose route is a feasible route, so no lower
bound of all routes may be above its cost. Branch and bound: Land & Doig (1960); windows as the
intervals of Mitchell, Mount & Papadimitriou (1987).
"""

import math

import numpy as np
import pytest

import garments
from garnav import Circle, Garment, KeepOut, Placement, Robot, Seam, SeamRun
from garnav.plan import PiecePoint, Planner
from garnav.plan.sequence_bound import LabelSearch, SequenceBound, to_goals
from garnav.plan.sequences import MAX_CERTIFY_WINDOWS, SequenceSearch
from garnav.testing import validate_route


def _panels(rng: np.random.Generator) -> tuple[Garment, PiecePoint, PiecePoint]:
    """Two or three panels in a row with seeded ease, crossing angle and cost, a few buttons near
    the seams, and a start on the first panel and a goal on the last."""
    n = int(rng.integers(2, 4))
    h = 240.0
    widths = rng.uniform(120.0, 180.0, n)
    ease = rng.choice([0.0, 10.0, 25.0])
    pieces, x = [], 10.0
    for k in range(n):
        extra = ease if k == n - 1 else 0.0
        pieces.append(garments.rect_piece(f"p{k}", float(widths[k]), h + extra, Placement(x, 10.0)))
        x += float(widths[k]) + 10.0
    angle = float(rng.choice([0.0, 30.0]))
    cost = float(rng.choice([0.0, 5.0]))
    seams = tuple(
        Seam(f"s{k}", SeamRun(f"p{k}", "right"), SeamRun(f"p{k + 1}", "left", reverse=True), crossing_cost_mm=cost,
             min_crossing_angle_deg=angle)
        for k in range(n - 1)
    )
    kos = []
    for k in range(n - 1):  # buttons 14-40 mm before each seam, so some routes cross and come back
        for j, y in enumerate(rng.uniform(30.0, h - 30.0, 3)):
            kos.append(KeepOut(f"b{k}_{j}", f"p{k}", "custom", Circle(float(widths[k]) - float(rng.uniform(14.0, 40.0)), float(y), 8.0)))
    g = Garment("panels", tuple(pieces), seams=seams, keepouts=tuple(kos), robot=Robot(radius_mm=8.0, edge_margin_mm=2.0),
                sheet_size_mm=(x + 10.0, h + ease + 20.0))
    s = PiecePoint("p0", float(rng.uniform(20.0, widths[0] - 60.0)), float(rng.uniform(20.0, h - 20.0)))
    e = PiecePoint(f"p{n - 1}", float(rng.uniform(20.0, widths[-1] - 20.0)), float(rng.uniform(20.0, h - 20.0)))
    return g, s, e


# seeds whose queries take under 0.5 s with the dense reference; the others (three panels whose
# search refines four sequences, 1-2.5 s each) run with the slow tests
_QUICK = [0, 2, 4, 5, 9]
_SLOW = [1, 3, 6, 7, 8]


@pytest.mark.parametrize("seed", _QUICK + [pytest.param(k, marks=pytest.mark.slow) for k in _SLOW])
def test_certified_bound_is_below_the_dense_reference_and_route_no_dearer(seed):
    g, s, e = _panels(np.random.default_rng([seed, 41]))
    planner = Planner(g)
    dense = Planner(g, portal_spacing_mm=2.0, seam_sequences=0)
    route = planner.route(s, e)
    ref = dense.route(s, e)
    validate_route(route, g, planner.free)
    found = planner.last_sequences
    assert route.cost <= ref.cost * (1 + 1e-6) + 1e-9  # observed: equal to 1e-9 on all ten seeds
    # the bound is a lower bound of every route, so of the dense reference's too
    assert found.lower_mm <= ref.cost * (1 + 1e-12)
    assert found.lower_mm <= route.cost
    assert found.windows_added <= MAX_CERTIFY_WINDOWS
    assert found.certified == (found.reason == "")
    # every seed ends certified (observed 10 of 10, 0-72 windows added)
    assert found.certified, found.reason


def _floor_path(bound, upper=math.inf):
    h_pre, h_post = to_goals(bound)
    labels = LabelSearch(bound, bound.to_pre, bound.goal_post, h_pre, h_post, upper, set(), 1e-9)
    lb, _, path = next(labels)
    return lb, path, bound.floor(h_pre)


def test_splitting_the_bound_path_closes_on_the_straight_line_of_two_unfolded_panels():
    """Two panels unfold to one rectangle (plane geometry): the shortest route is the straight
    line. Splitting the windows of the least bound path raises the window graph's bound towards it
    and never above it."""
    planner = Planner(garments.two_panels())
    s, e = PiecePoint("left", 100.0, 100.0), PiecePoint("right", 200.0, 300.0)
    straight = math.hypot(300.0 - 100.0 + 200.0, 200.0)
    wg = SequenceSearch(planner).graph
    w = len(wg.win)
    to_pre = np.full(w, np.inf)
    idx, cost = wg.ends(s, reverse=False)
    to_pre[idx] = cost
    gp = np.full(w, np.inf)
    idx, cost = wg.ends(e, reverse=True)
    gp[idx] = cost
    bound = SequenceBound(wg, s, [e], to_pre, [gp])
    floors = []
    for _ in range(30):
        lb, path, floor = _floor_path(bound)
        floors.append(floor)
        assert lb == pytest.approx(floor, abs=1e-9)  # the first popped sequence is the floor's
        bound.split(path)
    floors.append(_floor_path(bound)[2])
    assert all(f <= straight + 1e-9 for f in floors)
    assert all(b >= a - 1e-9 for a, b in zip(floors, floors[1:], strict=False))  # children are tighter
    # 20 mm windows lose up to 2r = 20 mm per crossing; splitting only the least path's windows
    # closes most of it (the next least path then runs through a neighbouring window)
    assert straight - floors[0] > 5.0  # observed 19.78 mm
    assert straight - floors[-1] < 2.0  # observed 1.13 mm after 30 rounds


@pytest.mark.slow
def test_demo_buttons_back_to_yoke_is_certified():
    """The 0.93 % case of tests/test_plan_exact_search.py: the route over five crossings is the
    cheapest over all seam sequences, to the certificate's tolerance."""
    from benchmarks.run import _demo_with_buttons

    garment, robot = _demo_with_buttons(200, 0)
    planner = Planner(garment, robot)
    route = planner.route(PiecePoint("back", 198.20353229391216, 27.034284443310217),
                          PiecePoint("yoke", 134.53871297877166, 22.271301880620427))
    found = planner.last_sequences
    assert route.cost == pytest.approx(778.5915529204149, rel=1e-9)
    assert found.certified, found.reason
    assert found.lower_mm <= route.cost


@pytest.mark.slow
def test_a_search_stopped_by_the_window_budget_says_so_and_keeps_its_route():
    g, s, e = _panels(np.random.default_rng([8, 41]))
    planner = Planner(g)
    stopped = SequenceSearch(planner, max_windows=0).search(s, [e])
    full = SequenceSearch(planner).search(s, [e])
    assert not stopped.certified and stopped.reason.startswith("window budget")
    assert stopped.windows_added == 0
    assert full.certified and 0 < full.windows_added <= MAX_CERTIFY_WINDOWS  # observed 32
    assert stopped.cost_mm == pytest.approx(full.cost_mm, rel=1e-12)
    assert stopped.lower_mm <= full.lower_mm + 1e-9  # splitting only raises the bound
