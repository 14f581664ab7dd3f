"""Point location in a given triangulation, checked against shapely's STRtree containment query."""

from __future__ import annotations

import numpy as np
import pytest
import shapely
from scipy.spatial import Delaunay

from garnav.drape.locate import TriangleLocator, barycentric_2d


def _random_mesh(seed: int, n: int = 400) -> np.ndarray:
    rng = np.random.default_rng(seed)
    # clustered points give triangles of very different sizes
    pts = np.vstack([rng.uniform(0, 100, (n // 2, 2)), rng.normal(30, 3, (n // 2, 2))])
    tri = Delaunay(pts).simplices
    return pts[tri]


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_locate_agrees_with_shapely(seed):
    triangles = _random_mesh(seed)
    loc = TriangleLocator.build(triangles)
    rng = np.random.default_rng(100 + seed)
    q = rng.uniform(-10, 110, (3000, 2))
    face, bary = loc.locate(q, tol=0.0)
    # reference: shapely (GEOS) point-in-polygon over every triangle
    polys = shapely.polygons(triangles)
    tree = shapely.STRtree(polys)
    qi, ti = tree.query(shapely.points(q), predicate="intersects")
    ref = {}
    for i, t in zip(qi.tolist(), ti.tolist()):
        ref.setdefault(i, set()).add(t)
    for i in range(len(q)):
        if i in ref:
            assert face[i] in ref[i]
        else:
            assert face[i] == -1
    hit = face >= 0
    back = np.einsum("nk,nkd->nd", bary[hit], triangles[face[hit]])
    np.testing.assert_allclose(back, q[hit], rtol=0, atol=1e-12)  # observed 2.8e-14 mm


def test_points_on_edges_and_vertices_are_found():
    triangles = _random_mesh(5)
    loc = TriangleLocator.build(triangles)
    corners = triangles.reshape(-1, 2)
    mids = 0.5 * (triangles[:, 0] + triangles[:, 1])
    face, bary = loc.locate(np.vstack([corners, mids]))
    assert np.all(face >= 0)
    assert np.all(np.isfinite(bary))


def test_barycentric_matches_trimesh():
    import trimesh

    triangles = _random_mesh(7)
    rng = np.random.default_rng(8)
    p = rng.uniform(0, 100, (len(triangles), 2))
    ours = barycentric_2d(triangles, p)
    # reference: trimesh.triangles.points_to_barycentric on the triangles lifted to z = 0
    tri3 = np.concatenate([triangles, np.zeros(triangles.shape[:2] + (1,))], axis=2)
    ref = trimesh.triangles.points_to_barycentric(tri3, np.column_stack([p, np.zeros(len(p))]))
    np.testing.assert_allclose(ours, ref, rtol=0, atol=5e-10)  # observed 4.1e-11
