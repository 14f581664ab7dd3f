"""A legal but huge garment (two 20 m × 30 m pieces on a 30 m seam) plans with bounded work: the
portal spacing grows on a seam longer than MAX_PORTALS_PER_SEAM × spacing (5 m at 20 mm), the
fit test along a seam takes at most MAX_FIT_SAMPLES samples, and the certified seam search adds at
most MAX_SPLIT_WINDOWS windows. Garments of real size keep the spacing.

Measured before the bound (this machine, shared): ``garnav route`` on huge_panels built 1,500
portals a side and 2.3 million graph edges, 1.7 GB and 23 s; with it, 250 portals, 0.16 GB.
"""

from __future__ import annotations

import math

import pytest

import garments
from garnav.demo import demo_garment
from garnav.plan import Planner
from garnav.plan.freespace import build_free_space, join_grow_factor
from garnav.plan.navgraph import DEFAULT_PORTAL_SPACING_MM, seam_portals
from garnav.plan.portals import MAX_FIT_SAMPLES, MAX_PORTALS_PER_SEAM, free_intervals, seam_spacing_mm


def test_spacing_is_kept_on_seams_of_real_garments():
    for g in (demo_garment(), garments.two_panels(), garments.tube()):
        for s in g.seams:
            la = g.run_length(s.a)
            assert seam_spacing_mm(la, DEFAULT_PORTAL_SPACING_MM) == DEFAULT_PORTAL_SPACING_MM, (g.name, s.name, la)


def test_a_30_m_seam_gets_at_most_the_capped_portal_count():
    g = garments.huge_panels()
    free = build_free_space(g, g.robot)
    s = g.seams[0]
    runs = {s.name: (g.run_polyline(s.a), g.run_polyline(s.b))}
    intervals, rows = seam_portals(g, free, g.seams, DEFAULT_PORTAL_SPACING_MM, runs)
    # one free interval: the seam minus the robot's reach at both ends (radius + edge margin, 12 mm,
    # grown by the free space's join factor at the corners); observed error 4e-10 mm
    (lo, hi), = intervals["middle"]
    reach = 12.0 * join_grow_factor()
    assert (lo * 30000.0, hi * 30000.0) == pytest.approx((reach, 30000.0 - reach), abs=1e-6)
    # spacing 30 m / 250 = 120 mm: ceil(29,975.7 / 120) = 250 pieces, 251 portals a side (the middle
    # is one of them); at 20 mm it was 1,499 pieces, 1,500 portals and the middle
    assert seam_spacing_mm(30000.0, DEFAULT_PORTAL_SPACING_MM) == 120.0
    assert len(rows["left"]) == len(rows["right"]) == MAX_PORTALS_PER_SEAM + 1


def test_the_fit_test_along_a_seam_is_capped():
    g = garments.huge_panels(width=200.0, height=80000.0)  # 80 m: 160,000 samples at 0.5 mm
    free = build_free_space(g, g.robot)
    (lo, hi), = free_intervals(g, g.seams[0], free)
    assert MAX_FIT_SAMPLES == 100_000  # 0.8 mm steps here; the ends are bisected to 1e-12 of them
    reach = 12.0 * join_grow_factor()  # as above
    assert (lo * 80000.0, hi * 80000.0) == pytest.approx((reach, 80000.0 - reach), abs=1e-6)


@pytest.mark.slow
def test_the_huge_garment_plans_the_straight_route():
    g = garments.huge_panels()
    planner = Planner(g)
    assert planner.nav.graph.number_of_edges() < 200_000  # was 2.3 million
    route = planner.route("a", "b")
    # the two pieces unfold into one 40 m × 30 m plane: the shortest route is the straight line
    # from (10 m, 10 m) to (30 m, 20 m) (Euclid): hypot(20 m, 10 m) = 22,360.68 mm
    assert route.length_mm == pytest.approx(math.hypot(20000.0, 10000.0), rel=1e-9)
    assert [c.seam for c in route.crossings] == ["middle"]


def test_exact_search_stops_at_the_split_window_limit_with_its_gap():
    # on two empty 300 x 400 panels the certified search at rel_tol 1e-4 ran for more than 20 s
    # (a 30 m seam: out of 7.6 GB); bounded, it returns the best route and its lower bound
    from garnav.plan.exact import MAX_SPLIT_WINDOWS, SeamSearch

    assert MAX_SPLIT_WINDOWS == 2000
    g = garments.two_panels()
    planner = Planner(g)
    search = SeamSearch(planner, rel_tol=1e-4, max_split_windows=200)
    found = search.search(planner.point(("left", 150.0, 133.0)), [planner.point(("right", 150.0, 267.0))])
    assert found.limited
    # the panels unfold into one plane: the shortest route is the straight line, hypot(300, 134) mm
    # (Euclid); the route found is within its certificate of it (observed gap 4.2 mm, and the route
    # itself 2e-7 mm from the straight line)
    shortest = math.hypot(300.0, 134.0)
    assert found.lower_mm <= shortest + 1e-6 <= found.cost_mm + 2e-6
    assert found.cost_mm - found.lower_mm < 40.0
    certified = SeamSearch(planner, rel_tol=1e-2).search(planner.point(("left", 150.0, 133.0)),
                                                        [planner.point(("right", 150.0, 267.0))])
    assert not certified.limited and certified.cost_mm - certified.lower_mm <= 1e-2 * certified.cost_mm + 1e-9


def test_exact_search_reports_each_round_to_a_progress_callback():
    g = garments.two_panels()
    planner = Planner(g, exact_seams=True, rel_tol=1e-2)
    seen = []
    planner.seam_search.progress = lambda *a: seen.append(a)
    route = planner.route(("left", 150.0, 133.0), ("right", 150.0, 267.0))
    assert [r for r, *_ in seen] == list(range(1, len(seen) + 1))
    rounds, windows, lower, upper = seen[-1]
    assert lower <= upper and upper == pytest.approx(route.length_mm, abs=1e-6)


@pytest.mark.slow
def test_cli_route_exact_seams_names_the_gap_when_the_window_limit_stops_it(tmp_path, capsys):
    from garnav.cli import main
    from garnav.spec import save_garment

    spec = tmp_path / "two.toml"
    save_garment(garments.two_panels(), spec)
    assert main(["route", str(spec), "--from", "left:150,133", "--to", "right:150,267", "--exact-seams",
                 "--no-cache", "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "note: --exact-seams: the search stopped at its limit of 2000 split seam windows" in out
    assert f"length         {math.hypot(300.0, 134.0):.1f} mm" in out
