"""The bounds between split window sides kept across queries (garnav.plan.side_rows).

References: numpy's own set operations (a dict of pairs as the plain reference for the store),
and the planner itself with the store switched off — the routes, costs and certificates of later
queries must not change when bounds come from the store instead of a recomputation (the store
only replaces a Dijkstra whose paths never pass through a third window point).
"""

import numpy as np
import pytest

from garnav.demo import demo_garment
from garnav.plan import Planner
from garnav.plan.sequences import SequenceSearch
from garnav.plan.side_rows import SideRows


def test_store_agrees_with_a_dict_of_pairs():
    rng = np.random.default_rng(5)
    store, ref = SideRows(), {}
    names = [(int(s), int(k), float(t), float(t) + 0.25) for s, k, t in rng.integers(0, 6, (60, 3))]
    ids = store.ids(names)
    assert np.array_equal(ids, store.ids(names))  # the same name, the same number
    assert len(set(ids.tolist())) == len(set(names))
    for _ in range(200):  # many small additions: the recent array is merged into the main one on the way
        a, b = rng.integers(0, len(ids), (2, 7))
        v = rng.uniform(0.0, 500.0, 7)
        store.put(ids[a], ids[b], v)
        for x, y, w in zip(ids[a].tolist(), ids[b].tolist(), v.tolist(), strict=True):
            ref.setdefault((min(x, y), max(x, y)), w)  # the first value kept, as the store does
    got = store.get(ids, ids)
    for i, x in enumerate(ids.tolist()):
        for j, y in enumerate(ids.tolist()):
            want = ref.get((min(x, y), max(x, y)))
            if want is None:
                assert np.isnan(got[i, j])
            else:
                assert got[i, j] == want  # symmetric: one key per unordered pair
    assert len(store) == len(ref)


def test_store_stops_growing_at_its_cap():
    store = SideRows(max_pairs=10)
    ids = store.ids([(0, 0, float(k), float(k) + 1.0) for k in range(20)])
    store.put(ids[:15], ids[5:], np.arange(15.0))
    assert len(store) == 10
    store.put(ids[:2], ids[18:], np.ones(2))
    assert len(store) == 10
    assert np.count_nonzero(~np.isnan(store.get(ids, ids))) == 20  # 10 pairs, both orders


@pytest.mark.slow
def test_later_queries_reuse_rows_and_get_the_same_routes():
    """Three cross-seam demo queries, twice: on one planner the second pass reads the store;
    on a planner without the store every split window side is recomputed. Same costs, same
    seam sequences, same certificates (observed: bit-identical costs)."""
    demo = demo_garment()
    queries = [("front:374.1,570.3", "yoke:87.4,201.1"), ("back:403.5,143.0", "sleeve_left:70.7,53.4"),
               ("back:250.3,415.3", "yoke:12.4,84.7")]
    with_rows, without = Planner(demo), Planner(demo)
    without._sequence_search = SequenceSearch(without, max_sequences=without.seam_sequences)
    without._sequence_search.side_rows = None
    first = [with_rows.route(s, g) for s, g in queries]
    store = with_rows._sequence_search.side_rows
    assert len(store) > 0
    hits = store.hits
    for (s, g), r1 in zip(queries, first, strict=True):
        r2 = with_rows.route(s, g)
        c2 = with_rows.last_sequences
        r3 = without.route(s, g)
        c3 = without.last_sequences
        assert r2.cost == r1.cost == r3.cost
        assert r2.seams_crossed == r3.seams_crossed
        assert (c2.certified, c2.windows_added) == (c3.certified, c3.windows_added)
    assert store.hits > hits


def test_min_directed_keeps_the_least_of_duplicates():
    """Against a dense numpy matrix filled entry by entry with np.minimum (the reference)."""
    from garnav.plan.sequence_bound import min_directed

    rng = np.random.default_rng(11)
    for dup in (False, True):
        size = 40
        keys = rng.choice(size * size, 300, replace=dup)
        r, c = keys // size, keys % size
        v = rng.uniform(0.5, 9.0, len(keys))
        dense = np.full((size, size), np.inf)
        np.minimum.at(dense, (r, c), v)
        got = min_directed(r, c, v, size).toarray()
        got[got == 0] = np.inf  # absent entries (every value here is positive)
        assert np.array_equal(got, dense)
        assert dup == (len(np.unique(keys)) < len(keys))


def test_distance_to_polyline_against_shapely():
    """Reference: shapely's LineString.distance (GEOS)."""
    import shapely

    from garnav.polyline import distance_to_polyline

    rng = np.random.default_rng(3)
    for _ in range(50):
        pts = rng.uniform(-50.0, 50.0, (int(rng.integers(2, 7)), 2))
        p = rng.uniform(-80.0, 80.0, 2)
        want = shapely.LineString(pts).distance(shapely.Point(p))
        assert abs(distance_to_polyline(p, pts) - want) < 1e-9  # observed ~1e-14


@pytest.mark.parametrize("query", [("front:240.7,172.3", "front:370.2,71.2"), ("back:386.8,279.3", "back:250.3,415.3")])
def test_same_piece_route_skips_the_sequence_search_only_when_no_exit_can_win(query):
    """A same-piece route no dearer than the straight way out to a seam and back is the optimum:
    the sequence search is skipped (nothing solved, no window split) and the cost equals the
    full search's (the same planner with the skip disabled)."""
    g = demo_garment()
    skip, full = Planner(g), Planner(g)
    full._exit_bound = lambda start, goals: -np.inf  # the search always runs
    r1, r2 = skip.route(*query), full.route(*query)
    assert r1.crossings == () or len(r1.crossings) == 0
    assert r1.cost == r2.cost
    found = skip.last_sequences
    assert found.certified and found.solved == 0 and found.windows_added == 0
    assert full.last_sequences is not None and full.last_sequences.cost_mm == r2.cost


def test_exit_bound_is_below_routes_that_cross_seams():
    """The bound the skip relies on never exceeds the cost of a route that does leave the piece
    (a cost is at least a length; a straight line is the shortest)."""
    p = Planner(demo_garment())
    for s, g in [("front:374.1,570.3", "yoke:87.4,201.1"), ("back:403.5,143.0", "sleeve_left:70.7,53.4")]:
        r = p.route(s, g)
        assert len(r.crossings) > 0
        assert p._exit_bound(p.point(s), [p.point(g)]) <= r.cost
