"""The multi-piece benchmark garments and reference (b): the tangent visibility graph of the
unfolded free region (benchmarks/refs.py, benchmarks/seam_garments.py).

Checked against things the benchmark did not write: a hand-worked shortest path, pyvisgraph 0.2.1
(an independent visibility-graph library, rotational sweep), and garnav's own per-piece free space.
"""

from __future__ import annotations

import math
import sys
from pathlib import Path

import numpy as np
import pytest
import shapely
from shapely import affinity

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from benchmarks import cases as C  # noqa: E402
from benchmarks import refs as R  # noqa: E402
from benchmarks import seam_garments as S  # noqa: E402


def test_tangent_graph_hand_worked_detour():
    # a 20 mm square hole in a 100 mm square: from (10, 50) to (90, 50) round two corners of the
    # hole, 2·hypot(30, 10) + 20 mm (hand-worked)
    region = shapely.box(0, 0, 100, 100).difference(shapely.box(40, 40, 60, 60))
    ref = R.TangentVisibilityRef(region)
    ref.build()
    assert len(ref.xy) == 4  # the hole's four corners; the outer square has no reflex corner
    length, path = ref.query(np.array([10.0, 50.0]), np.array([90.0, 50.0]))
    assert length == pytest.approx(2 * math.hypot(30.0, 10.0) + 20.0, rel=1e-14)
    assert R.path_length(path) == pytest.approx(length, rel=1e-14)
    # straight when visible
    assert ref.query(np.array([10.0, 10.0]), np.array([90.0, 20.0]))[0] == pytest.approx(math.hypot(80.0, 10.0), rel=1e-14)


def _two_strips(seed: int, pairs: int):
    """Two small seeded strips laid flat: (largest part of the free region, seeded query pairs
    150 mm apart or more, the built tangent visibility reference)."""
    case = S.chain_garment(2, seed=seed, keepouts_per_strip=3, width_mm=150.0, height_mm=100.0)
    main = max(shapely.get_parts(S.unfolded_region(case)), key=lambda p: p.area)
    ours = R.TangentVisibilityRef(main)
    ours.build()
    return main, C.sample_pairs(main, pairs, np.random.default_rng(5), min_dist_mm=150.0), ours


def test_tangent_graph_agrees_with_pyvisgraph_on_an_unfolded_chain():
    # two 150 x 100 mm strips with three keep-outs each, unfolded into one plane; pyvisgraph on
    # the same component (its obstacles: the holes and the outside frame, benchmarks/refs.py).
    # Seed 5: a case where every pyvisgraph path stays in the region (on other seeds some of its
    # paths cut through keep-outs merged with the hem band, a pyvisgraph failure; where its paths
    # are valid the lengths agree as here)
    main, pairs, ours = _two_strips(seed=5, pairs=4)
    pv = R.PyvisgraphRef(main)
    pv.build()
    for a, b in pairs:
        length, path = ours.query(a, b)
        other = pv.query(a, b)
        assert R.path_in_region(main, path) and R.path_in_region(main, other)
        assert R.path_length(path) == pytest.approx(length, rel=1e-14)
        # observed agreement 2.2e-16 relative at most
        assert length == pytest.approx(R.path_length(other), rel=2e-15)


def test_tangent_graph_equals_all_pairs_graph_where_pyvisgraph_fails():
    # seed 3: pyvisgraph's paths leave the region on every pair; the naive all-pairs visibility
    # graph (every vertex pair, shapely covers, Dijkstra) finds the same lengths as the tangent graph
    main, pairs, ours = _two_strips(seed=3, pairs=3)
    naive = R.NaiveVisibilityRef(main)
    naive.build()
    for a, b in pairs:
        assert ours.query(a, b)[0] == pytest.approx(R.path_length(naive.query(a, b)), rel=1e-14)


def test_unfolded_region_is_the_pieces_free_space_laid_out():
    # garnav's free space of each piece (obstacles carried across the seams) laid out by the
    # layout has the area of the one-piece free space of the union, to round-off
    from garnav.plan.freespace import build_free_space

    case = S.tiled_garment(4, seed=1, keepouts_per_piece=4, tile_mm=120.0)
    fs = build_free_space(case.garment, case.robot)
    laid = [affinity.translate(fs[p.name].region, *case.layout[p.name]) for p in case.garment.pieces]
    union = S.unfolded_region(case)
    per_piece = sum(g.area for g in laid)
    # observed: areas 9e-16 relative apart, symmetric difference 2e-16 of the area
    assert per_piece == pytest.approx(union.area, rel=1e-13)
    assert shapely.union_all(laid).symmetric_difference(union).area < 1e-14 * union.area


def test_generators_are_seeded_and_pieces_repeat_across_k():
    assert [S.grid_shape(k) for k in (2, 5, 10, 20)] == [(1, 2), (1, 5), (2, 5), (4, 5)]
    small, big = S.tiled_garment(2, seed=0), S.tiled_garment(20, seed=0)
    assert small.garment.keepouts_on("p0_0") == big.garment.keepouts_on("p0_0")
    assert S.tiled_garment(10, seed=0).garment == S.tiled_garment(10, seed=0).garment
    chain = S.chain_garment(10, seed=0)
    assert len(chain.garment.seams) == 9 and chain.grid_distance("s0", "s9") == 9
    one = S.as_one_piece(chain)
    assert one.pieces[0].area == pytest.approx(10 * S.STRIP_W_MM * S.STRIP_H_MM)
    assert len(one.keepouts) == len(chain.garment.keepouts)
    # no keep-out near a piece corner (bounding circle at least CORNER_CLEAR_MM away)
    for ko in big.garment.keepouts:
        raw = ko.shape.exact_geometry()
        for x, y in ((0, 0), (S.TILE_MM, 0), (S.TILE_MM, S.TILE_MM), (0, S.TILE_MM)):
            assert raw.distance(shapely.Point(x, y)) >= S.CORNER_CLEAR_MM - 1e-9
