"""The numpy segment-in-region test against shapely.covers (GEOS exact predicates).

Reference: ``shapely.covers(region, LineString([a, b]))`` — the general-purpose library's answer
for every segment, including the delicate ones (along edges, through vertices, ends on edges).
"""

import numpy as np
import pytest
import shapely
import shapely.affinity

from garnav.plan.segtest import BoundaryIndex, segments_in_region
from garnav.plan.visgraph import reflex_corners


def _region(seed: int) -> shapely.Geometry:
    rng = np.random.default_rng(seed)
    outer = shapely.box(0.0, 0.0, 300.0, 200.0)
    holes = []
    for _ in range(14):
        c = rng.uniform([20, 20], [280, 180])
        kind = rng.integers(3)
        if kind == 0:
            holes.append(shapely.Point(*c).buffer(rng.uniform(4, 14), quad_segs=int(rng.integers(1, 5))))
        elif kind == 1:
            w, h = rng.uniform(4, 30, 2)
            holes.append(shapely.box(c[0] - w / 2, c[1] - h / 2, c[0] + w / 2, c[1] + h / 2))  # axis-aligned: collinear sides
        else:
            bar = shapely.affinity.rotate(shapely.box(-8, -3, 8, 3), float(rng.uniform(0, 180)), origin=(0, 0))
            holes.append(shapely.affinity.translate(bar, *c))
    region = outer.difference(shapely.union_all(holes))
    region = shapely.make_valid(region) if not region.is_valid else region
    shapely.prepare(region)
    return region


def _vertices(region):
    return np.unique(shapely.get_coordinates(shapely.boundary(region)), axis=0)


@pytest.mark.parametrize("seed", [0, 1, 2, 3])
def test_matches_shapely_covers(seed):
    region = _region(seed)
    rng = np.random.default_rng([seed, 5])
    v = _vertices(region)
    ring = shapely.get_coordinates(shapely.boundary(region))
    # segments between vertices (many along edges, through vertices, collinear runs of boxes)
    i = rng.integers(0, len(v), 3000)
    j = rng.integers(0, len(v), 3000)
    a, b = [v[i]], [v[j]]
    # reflex corners to each other, as the visibility graph uses them
    c = reflex_corners(region).xy
    ci, cj = np.triu_indices(len(c), 1)
    pick = rng.choice(len(ci), min(len(ci), 4000), replace=False)
    a.append(c[ci[pick]])
    b.append(c[cj[pick]])
    # random points, points on edges (edge midpoints), extended boundary edges, whole edges
    p = rng.uniform([-10, -10], [310, 210], (2000, 2))
    mids = 0.5 * (ring[:-1] + ring[1:])
    k = rng.integers(0, len(ring) - 1, 1500)
    a += [p[:1000], mids[k[:500]], ring[k[500:1000]], ring[k[1000:]], v[rng.integers(0, len(v), 500)]]
    b += [p[1000:], p[:500], ring[k[500:1000] + 1], 2 * ring[k[1000:] + 1] - ring[k[1000:]], v[rng.integers(0, len(v), 500)]]
    # axis-parallel segments at the height of box sides (collinear with edges, overlapping or not)
    ys = v[rng.integers(0, len(v), 500), 1]
    a.append(np.stack([rng.uniform(0, 300, 500), ys], 1))
    b.append(np.stack([rng.uniform(0, 300, 500), ys], 1))
    a, b = np.vstack(a), np.vstack(b)
    got = segments_in_region(region, a, b, chunk=997)
    want = shapely.covers(region, shapely.linestrings(np.stack([a, b], axis=1)))
    bad = np.nonzero(got != want)[0]
    assert not len(bad), [(a[k].tolist(), b[k].tolist(), bool(want[k])) for k in bad[:5]]
    assert want.sum() > 500 and (~want).sum() > 500  # both answers well represented


def test_fast_path_used_for_most_segments():
    # the point of the index: few segments need the exact fallback
    region = _region(7)
    c = reflex_corners(region).xy
    ci, cj = np.triu_indices(len(c), 1)
    crossing, delicate, on_edge = BoundaryIndex(region).classify(c[ci], c[cj])
    assert delicate.mean() < 0.05


def test_empty_and_invalid_regions():
    a = np.array([[0.0, 0.0], [1.0, 1.0]])
    b = np.array([[1.0, 0.0], [1.0, 1.0]])
    assert not segments_in_region(shapely.Polygon(), a, b).any()
    bow = shapely.Polygon([(0, 0), (2, 2), (2, 0), (0, 2)])  # invalid: shapely answers
    want = shapely.covers(bow, shapely.linestrings(np.stack([a, b], 1)))
    assert (segments_in_region(bow, a, b) == want).all()


def test_the_free_space_keeps_its_own_index():
    # The index lives on the free space that owns the region (no module-level cache): built once,
    # the same answers as shapely.covers, and refused for another region.
    from garnav.plan.freespace import build_free_space
    from garnav.plan.segtest import boundary_index
    import garments

    g = garments.two_panels()
    fs = build_free_space(g, g.robot)["left"]
    assert fs.boundary_index is fs.boundary_index
    rng = np.random.default_rng(11)
    a, b = rng.uniform(-20, 320, (2, 200, 2))
    want = shapely.covers(fs.region, shapely.linestrings(np.stack([a, b], axis=1)))
    assert (fs.segments_free(a, b) == want).all()
    with pytest.raises(ValueError, match="another region"):
        segments_in_region(fs.region, a, b, index=boundary_index(shapely.box(0, 0, 1, 1)))
