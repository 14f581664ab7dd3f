"""The exact placement of a seam sequence's crossings in its unfolded corridor (garnav/plan/unfold.py).

Checked against things garnav did not write: pyvisgraph 0.2.1 (an independent visibility-graph
library) on the pieces laid out in one plane, and the tangent visibility graph of the laid-out
free region built from garnav's *single-piece* free space (benchmarks/refs.py
``TangentVisibilityRef``, itself checked against pyvisgraph and an all-pairs visibility graph in
tests/test_benchmarks_tiled.py); a mirrored piece against the same garment unmirrored (an isometry
of the plane keeps every length); ease, curves and angle limits against the cases the method
leaves to refinement (module docstring).
"""

from __future__ import annotations

import math
import sys
from pathlib import Path

import numpy as np
import pytest
import shapely

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from benchmarks import cases as C  # noqa: E402
from benchmarks import refs as R  # noqa: E402
from benchmarks import seam_garments as S  # noqa: E402
from garnav.model import Circle, Garment, KeepOut, Placement, Seam, SeamRun  # noqa: E402
from garnav.plan import Planner  # noqa: E402
from garnav.plan.refine import refine  # noqa: E402
from garnav.plan.unfold import place_crossings, solve_unfolded, unfoldable  # noqa: E402


def _free_point(planner, region, case, piece, rng):
    main = max(shapely.get_parts(planner.free[piece].region), key=lambda p: p.area)
    for _ in range(200):
        xy = C.sample_pairs(main, 1, rng, min_dist_mm=0.0)[0, 0]
        if region.covers(shapely.Point(*S.to_unfolded(case, piece, xy))):
            return (piece, float(xy[0]), float(xy[1]))
    raise AssertionError("no free point")


def _portal_route(planner, start, goal):
    s, g = planner.point(start), planner.point(goal)
    path, _, _ = planner.search(s, [g])
    legs, crossings = planner.split_path(path, s, g)
    return s, g, legs, crossings


def test_two_strips_equal_pyvisgraph():
    # two 150 x 100 mm strips, three keep-outs each (seed 5: every pyvisgraph path stays in the
    # region, tests/test_benchmarks_tiled.py); queries from strip 0 to strip 1. Observed: within
    # 1.6e-9 relative, garnav shorter — its two crossing points sit 1e-7 mm inside their pieces
    # (plan/portals.py INSET_MM), so a route skips 2e-7 mm per crossing; tolerance 1e-8.
    case = S.chain_garment(2, seed=5, keepouts_per_strip=3, width_mm=150.0, height_mm=100.0)
    region = max(shapely.get_parts(S.unfolded_region(case)), key=lambda p: p.area)
    pv = R.PyvisgraphRef(region)
    pv.build()
    planner = Planner(case.garment, case.robot)
    rng = np.random.default_rng(11)
    for _ in range(4):
        start, goal = _free_point(planner, region, case, "s0", rng), _free_point(planner, region, case, "s1", rng)
        s, g, legs, crossings = _portal_route(planner, start, goal)
        legs2, cross2, cost = solve_unfolded(planner, s.xy, g.xy, crossings)
        other = pv.query(S.to_unfolded(case, "s0", s.xy), S.to_unfolded(case, "s1", g.xy))
        assert R.path_in_region(region, other)
        assert cost == pytest.approx(R.path_length(other), rel=1e-8)
        # never dearer than refinement from the same portal route
        assert cost <= refine(planner, legs, crossings)[2] + 1e-9
        # the legs are the route: their lengths add up to the cost, ends on the seam
        assert sum(float(np.linalg.norm(np.diff(p, axis=0), axis=1).sum()) for _, p in legs2) == pytest.approx(cost, rel=1e-12)
        assert [p for p, _ in legs2] == ["s0", "s1"] and len(cross2) == 1


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_tiled_sequences_equal_the_laid_out_visibility_graph(seed):
    # a 2 x 2 tiled garment (side and stack seams, 200 mm tiles, six keep-outs each): every query
    # from p0_0 to p1_1 crosses two seams, turning a corner of the layout. The planner's route
    # (sequence search on, crossings placed by the corridor) against the tangent visibility graph
    # of the laid-out free region. Observed: within 2.7e-9 relative (the 2e-7 mm per crossing of
    # the inset, above); tolerance 1e-8.
    case = S.tiled_garment(4, seed)
    region = S.unfolded_region(case)
    ref = R.TangentVisibilityRef(region)
    ref.build()
    planner = Planner(case.garment, case.robot)
    rng = np.random.default_rng([seed, 3])
    for _ in range(3):
        start, goal = _free_point(planner, region, case, "p0_0", rng), _free_point(planner, region, case, "p1_1", rng)
        route = planner.route(start, goal)
        best, _ = ref.query(S.to_unfolded(case, "p0_0", start[1:]), S.to_unfolded(case, "p1_1", goal[1:]))
        assert route.cost == pytest.approx(best, rel=1e-8)
        assert R.path_in_region(region, S.route_unfolded(case, route), 1e-6)


def _mirror_pair(mirrored: bool):
    """Strips A and B (150 x 100 mm) with circular keep-outs; B's right edge sewn to A's right
    edge when ``mirrored`` (B then lies reflected in the layout), else B's left edge as usual, with
    B's keep-outs reflected so that both garments are one shape."""
    w, h = 150.0, 100.0
    a = C.rect_piece("A", w, h, Placement(10.0, 10.0))
    b = C.rect_piece("B", w, h, Placement(170.0, 10.0))
    circles_a = [(60.0, 40.0, 12.0), (120.0, 70.0, 9.0)]
    circles_b = [(30.0, 55.0, 14.0), (95.0, 30.0, 10.0)]  # in the unmirrored B
    kos = [KeepOut(f"a{i}", "A", "button", Circle(x, y, r)) for i, (x, y, r) in enumerate(circles_a)]
    if mirrored:
        kos += [KeepOut(f"b{i}", "B", "button", Circle(w - x, y, r)) for i, (x, y, r) in enumerate(circles_b)]
        seam = Seam("AB", SeamRun("A", "right"), SeamRun("B", "right"))
    else:
        kos += [KeepOut(f"b{i}", "B", "button", Circle(x, y, r)) for i, (x, y, r) in enumerate(circles_b)]
        seam = Seam("AB", SeamRun("A", "right"), SeamRun("B", "left", reverse=True))
    return Garment("pair", (a, b), seams=(seam,), keepouts=tuple(kos), robot=C.ROBOT, sheet_size_mm=(340.0, 120.0))


def test_a_mirrored_piece_unfolds_by_reflection():
    # the same two strips, B sewn on mirrored or not: every route has the same cost (a
    # reflection of B keeps all lengths). Observed: equal to 2e-16 relative; tolerance 1e-9.
    plain, mirror = Planner(_mirror_pair(False), C.ROBOT), Planner(_mirror_pair(True), C.ROBOT)
    assert unfoldable(mirror, 0)
    for (ax, ay), (bx, by) in [((20.0, 20.0), (130.0, 80.0)), ((20.0, 85.0), (20.0, 15.0)), ((135.0, 50.0), (110.0, 50.0))]:
        r0 = plain.route(("A", ax, ay), ("B", bx, by))
        r1 = mirror.route(("A", ax, ay), ("B", 150.0 - bx, by))
        assert r1.cost == pytest.approx(r0.cost, rel=1e-9)


def _eased_pair(min_angle: float = 0.0, eased: bool = False):
    a = C.rect_piece("A", 150.0, 100.0, Placement(10.0, 10.0))
    b = C.rect_piece("B", 150.0, 110.0 if eased else 100.0, Placement(170.0, 10.0))
    kos = (KeepOut("k", "A", "button", Circle(75.0, 50.0, 15.0)),)
    seam = Seam("AB", SeamRun("A", "right"), SeamRun("B", "left", reverse=True), min_crossing_angle_deg=min_angle)
    return Garment("pair", (a, b), seams=(seam,), keepouts=kos, robot=C.ROBOT, sheet_size_mm=(340.0, 130.0))


def test_ease_is_left_to_refinement():
    # runs of 100 and 110 mm: no isometry glues them, the corridor does not apply
    planner = Planner(_eased_pair(eased=True), C.ROBOT)
    assert not unfoldable(planner, 0)
    s, g, legs, crossings = _portal_route(planner, ("A", 20.0, 20.0), ("B", 100.0, 90.0))
    assert solve_unfolded(planner, s.xy, g.xy, crossings) is None
    assert place_crossings(planner, legs, crossings)[2] == pytest.approx(refine(planner, legs, crossings)[2], rel=1e-15)


def test_angle_limit_kept_or_left_to_refinement():
    # a 60° smallest crossing angle: a route whose unfolded optimum crosses square on is the
    # optimum under the limit too (the limited routes are a subset) and keeps its straight-line
    # cost; one whose optimum crosses at a shallow angle is left to refinement (None)
    planner = Planner(_eased_pair(min_angle=60.0), C.ROBOT)
    free = Planner(_eased_pair(), C.ROBOT)
    s, g, legs, crossings = _portal_route(planner, ("A", 120.0, 30.0), ("B", 40.0, 30.0))
    got = solve_unfolded(planner, s.xy, g.xy, crossings)
    assert got is not None and got[2] == pytest.approx(70.0, abs=1e-6)  # straight: 30 + 40 mm (less the inset)
    s, g, legs, crossings = _portal_route(planner, ("A", 135.0, 15.0), ("B", 15.0, 85.0))
    assert solve_unfolded(planner, s.xy, g.xy, crossings) is None  # atan(70 / 30) ≈ 67° from square on: 23° to the seam < 60°
    # without the limit the same query is straight in the layout
    s, g, legs, crossings = _portal_route(free, ("A", 135.0, 15.0), ("B", 15.0, 85.0))
    assert solve_unfolded(free, s.xy, g.xy, crossings)[2] == pytest.approx(math.hypot(30.0, 70.0), abs=1e-6)


def test_dominated_returns_leave_the_routes_unchanged(monkeypatch):
    # leaving out "straight back over the interval just crossed" changes no route: the same
    # seeded queries on a 1 x 2 tiled garment (crossings free) with and without the rule
    import garnav.plan.sequences as seqs
    from garnav.plan.unfold import dominated_returns

    case = S.tiled_garment(2, 4)
    planner = Planner(case.garment, case.robot)
    got = dominated_returns(planner)
    assert got and all(planner.nav.seams[s].name == "p0_0|p0_1" for s, _, _ in got)
    region = S.unfolded_region(case)
    rng = np.random.default_rng(9)
    pairs = [(_free_point(planner, region, case, a, rng), _free_point(planner, region, case, b, rng))
             for a, b in (("p0_0", "p0_0"), ("p0_0", "p0_1"), ("p0_1", "p0_0"), ("p0_1", "p0_1"))]
    with_rule = [planner.route(a, b).cost for a, b in pairs]
    monkeypatch.setattr(seqs, "dominated_returns", lambda planner: frozenset())
    plain = Planner(case.garment, case.robot)
    without = [plain.route(a, b).cost for a, b in pairs]
    assert with_rule == pytest.approx(without, rel=1e-12)


def test_a_soft_zone_on_the_seam_keeps_the_way_back():
    # a soft zone over the seam: driving along the run is no longer free of surcharge, so the way
    # back over the interval is not left out (the zone is carried into B too: neither side)
    from garnav.plan.unfold import dominated_returns

    g = _eased_pair()
    assert len(dominated_returns(Planner(g, C.ROBOT))) == 2  # both ways back, without the zone
    zone = KeepOut("z", "A", "print", Circle(145.0, 50.0, 10.0), hard=False, cost_factor=3.0)
    planner = Planner(Garment(g.name, g.pieces, seams=g.seams, keepouts=g.keepouts + (zone,), robot=g.robot,
                              sheet_size_mm=g.sheet_size_mm), C.ROBOT)
    assert any(z.carried for z in planner.free["B"].soft)
    assert dominated_returns(planner) == frozenset()


def _rotated_pair(rotated: bool):
    """Strips A and B (150 x 100 mm, circular keep-outs), B's left edge sewn to A's right edge;
    with ``rotated`` B's outline and keep-outs are given turned by 90° in its own frame
    ((x, y) -> (100 - y, x)), the same piece."""
    from garnav.model import Edge, Piece

    w, h = 150.0, 100.0
    a = C.rect_piece("A", w, h, Placement(10.0, 10.0))
    circles_b = [(40.0, 60.0, 12.0), (100.0, 35.0, 10.0)]
    turn = (lambda x, y: (h - y, x)) if rotated else (lambda x, y: (x, y))
    corners = [turn(*p) for p in ((0.0, 0.0), (w, 0.0), (w, h), (0.0, h))]
    names = ("bottom", "right", "top", "left")
    b = Piece("B", tuple(Edge(n, (corners[i], corners[(i + 1) % 4])) for i, n in enumerate(names)),
              placement=Placement(170.0, 10.0))
    kos = (KeepOut("a0", "A", "button", Circle(70.0, 45.0, 14.0)),)
    kos += tuple(KeepOut(f"b{i}", "B", "button", Circle(*turn(x, y), r)) for i, (x, y, r) in enumerate(circles_b))
    seam = Seam("AB", SeamRun("A", "right"), SeamRun("B", "left", reverse=True))
    return Garment("pair", (a, b), seams=(seam,), keepouts=kos, robot=C.ROBOT, sheet_size_mm=(340.0, 180.0)), turn


def test_a_turned_piece_unfolds_by_rotation():
    # the same two strips, B given turned by 90° in its own frame: every route costs the same (a
    # rotation keeps all lengths; the keep-out polygons turn onto themselves). Observed: equal
    # (0 relative, the corridor used for every leg); tolerance 1e-9.
    (g0, _), (g1, turn) = _rotated_pair(False), _rotated_pair(True)
    plain, turned = Planner(g0, C.ROBOT), Planner(g1, C.ROBOT)
    assert unfoldable(turned, 0)
    for (ax, ay), (bx, by) in [((20.0, 20.0), (130.0, 80.0)), ((130.0, 85.0), (20.0, 15.0)), ((40.0, 50.0), (75.0, 85.0))]:
        r0 = plain.route(("A", ax, ay), ("B", bx, by))
        r1 = turned.route(("A", ax, ay), ("B", *turn(bx, by)))
        assert r1.cost == pytest.approx(r0.cost, rel=1e-9)
        assert len(r1.crossings) == len(r0.crossings) == 1


def _corner_case():
    case = S.tiled_garment(4, 1)
    region = S.unfolded_region(case)
    planner = Planner(case.garment, case.robot)
    rng = np.random.default_rng(21)
    pairs = [(_free_point(planner, region, case, a, rng), _free_point(planner, region, case, b, rng))
             for a, b in (("p0_0", "p1_1"), ("p0_1", "p1_0"), ("p0_0", "p0_1"), ("p1_1", "p1_1"))]
    return case, planner, pairs


def test_loops_round_a_flat_corner_are_left_out():
    # a 2 x 2 tiled garment (crossings free): labels that circle the point where the four pieces
    # meet are left out (unfold.LoopRule), and the searches end certified
    from garnav.plan.unfold import LoopRule

    _, planner, pairs = _corner_case()
    for a, b in pairs:
        planner.route(a, b)
        ls = planner.last_sequences
        assert ls is None or ls.certified, ls.reason
    rule = planner._sequence_search._loops
    assert isinstance(rule, LoopRule) and any(rule._memo.values())  # some loop was left out


@pytest.mark.slow  # builds two planners; without the rule the searches run into the label budget
def test_loops_left_out_leave_the_routes_unchanged(monkeypatch):
    import garnav.plan.sequences as seqs
    from garnav.plan.unfold import LoopRule

    case, planner, pairs = _corner_case()
    got = [planner.route(a, b).cost for a, b in pairs]

    class Never(LoopRule):
        def __call__(self, g, entry, path):
            return False

    monkeypatch.setattr(seqs, "LoopRule", Never)
    plain = Planner(case.garment, case.robot)
    assert [plain.route(a, b).cost for a, b in pairs] == pytest.approx(got, rel=1e-12)


def test_a_round_without_repeats_after_the_label_budget(monkeypatch):
    # without the loop rule, labels circling the corner fill the label budget; one more round in
    # which no (seam, interval, side) is crossed twice still finds the optimum (against the
    # laid-out visibility graph, within the 2e-7 mm per crossing of the inset), and the search
    # says it is not certified
    import garnav.plan.sequences as seqs
    from garnav.plan.unfold import LoopRule

    class Never(LoopRule):
        def __call__(self, g, entry, path):
            return False

    monkeypatch.setattr(seqs, "LoopRule", Never)
    case, planner, pairs = _corner_case()
    (start, goal) = pairs[0]
    route = planner.route(start, goal)
    ls = planner.last_sequences
    assert not ls.certified and "at most once each way" in ls.reason
    ref = R.TangentVisibilityRef(S.unfolded_region(case))
    ref.build()
    best, _ = ref.query(S.to_unfolded(case, start[0], start[1:]), S.to_unfolded(case, goal[0], goal[1:]))
    assert route.cost == pytest.approx(best, rel=1e-8)
