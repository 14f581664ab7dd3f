"""Splitting pattern segments at triangle edges, all at once, and the lift built on it."""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely
from scipy.spatial import Delaunay

import drape_meshes as dm
import garnav.drape.lift as lift_mod
from garnav.drape import TriangleLocator, link_drape, lift_polyline
from garnav.drape.split import segment_candidates, split_segments


@pytest.fixture(scope="module")
def scattered():
    """An irregular triangulation: scipy's Delaunay of 2,000 seeded random points in 300 × 200 mm."""
    rng = np.random.default_rng(21)
    pts = np.vstack([rng.uniform([0, 0], [300, 200], (2000, 2)),
                     [[0, 0], [300, 0], [300, 200], [0, 200]]])
    dl = Delaunay(pts)
    tri = pts[dl.simplices]
    return dl, TriangleLocator.build(tri)


def _segments(rng, n):
    p = rng.uniform([1, 1], [299, 199], (n, 2))
    q = rng.uniform([1, 1], [299, 199], (n, 2))
    return p, q


@pytest.mark.slow
def test_split_points_are_the_segment_edge_intersections(scattered):
    dl, loc = scattered
    rng = np.random.default_rng(4)
    p, q = _segments(rng, 60)
    face_p = dl.find_simplex(p)
    face_q = dl.find_simplex(q)
    sp = split_segments(loc, p, q, face_p, face_q)
    edges = shapely.MultiLineString(
        [loc.triangles[f][[a, b]] for f in range(len(loc.triangles)) for a, b in ((0, 1), (1, 2), (2, 0))]
    )
    for s in range(len(p)):
        rows = np.flatnonzero(sp.seg == s)
        assert sp.t[rows[0]] == 0.0 and sp.t[rows[-1]] == 1.0
        assert np.all(np.diff(sp.t[rows]) > 0)
        # reference: shapely (GEOS) intersection of the segment with every triangle edge
        cut = shapely.LineString([p[s], q[s]]).intersection(edges)
        ref = shapely.get_coordinates(cut)
        ref_t = np.unique(np.round((ref - p[s]) @ (q[s] - p[s]) / np.dot(q[s] - p[s], q[s] - p[s]), 12))
        ref_t = ref_t[(ref_t > 1e-9) & (ref_t < 1 - 1e-9)]
        np.testing.assert_allclose(sp.t[rows[1:-1]], ref_t, rtol=0, atol=1e-11)  # observed 5.0e-13
        # every piece lies in its triangle; reference: scipy's find_simplex at the piece's midpoint
        mid = 0.5 * (sp.xy[rows[:-1]] + sp.xy[rows[1:]])
        np.testing.assert_array_equal(sp.piece_face[rows[:-1]], dl.find_simplex(mid))
        assert sp.piece_score[rows[:-1]].min() >= -1e-9


def test_candidates_hold_every_triangle_the_segment_meets(scattered):
    dl, loc = scattered
    rng = np.random.default_rng(9)
    p, q = _segments(rng, 40)
    seg, tri = segment_candidates(loc, p, q)
    polys = shapely.polygons(loc.triangles)
    for s in range(len(p)):
        # reference: shapely intersects on every triangle polygon
        line = shapely.LineString([p[s], q[s]])
        hit = np.flatnonzero(shapely.intersects(polys, line))
        assert set(hit.tolist()) <= set(tri[seg == s].tolist())


def test_segments_along_edges_and_through_vertices():
    g, m = dm.flat_sheet(nx=40, ny=30)  # 10 mm cells, pattern = world x, y
    d = link_drape(g, m)
    pl = d.piece_locator("panel")
    ids, loc = pl.faces, pl.locator
    p = np.array([[10.0, 50.0], [20.0, 20.0], [0.0, 0.0], [35.0, 35.0]])
    q = np.array([[200.0, 50.0], [120.0, 220.0], [300.0, 300.0], [35.0, 35.0]])
    hits = d.locate("panel", np.vstack([p, q]))
    local = np.searchsorted(ids, hits.face)
    sp = split_segments(loc, p, q, local[:4], local[4:])
    # along a grid line every vertex is a split point (plus the diagonals' vertices: the same)
    np.testing.assert_allclose(sp.xy[sp.seg == 0][:, 0], np.arange(10.0, 201.0, 10.0))
    # (20, 20) → (120, 220) passes vertices at every 10 mm of y and crosses edges between them
    s1 = sp.xy[sp.seg == 1]
    assert np.all(np.abs(2 * (s1[:, 0] - 20.0) - (s1[:, 1] - 20.0)) < 1e-9)
    # along the cell diagonals (mesh edges): one split per vertex
    assert np.sum(sp.seg == 2) == 31
    # a zero-length segment: its two ends, one piece
    assert np.sum(sp.seg == 3) == 2
    assert np.all(sp.piece_score[sp.is_piece] >= -1e-9)


def test_split_lift_equals_the_triangle_walk():
    g, m = dm.cylinder(radius=50.0, length=300.0, n_around=128, n_along=30)
    d = link_drape(g, m)
    rng = np.random.default_rng(2)
    circ = 2 * math.pi * 50.0
    for _ in range(20):
        pts = np.column_stack([rng.uniform(0, circ, 6), rng.uniform(0, 300, 6)])
        fast = lift_polyline(d, "tube", pts)
        hits = d.locate("tube", pts, 1.0)
        target = d.to_pattern(hits.face, hits.bary)
        # the walk (Devillers, Pion & Teillaud 2002) as the independent construction
        xy, face, bary, wp = lift_mod._lift_walk(d, "tube", hits, target, 1.0)
        keep = np.r_[True, np.any(np.abs(np.diff(xy, axis=0)) > 1e-12, axis=1)]
        np.testing.assert_allclose(fast.pattern, xy[keep], rtol=0, atol=2e-11)  # observed 1.4e-12 mm
        np.testing.assert_allclose(d.to_3d(fast.face, fast.bary), d.to_3d(face[keep], bary[keep]), rtol=0, atol=2e-11)  # observed 1.1e-12 mm


def test_walk_is_the_fallback(monkeypatch):
    g, m = dm.cylinder(radius=50.0, length=300.0, n_around=64, n_along=10)
    d = link_drape(g, m)
    pts = np.array([[5.0, 20.0], [200.0, 250.0], [40.0, 100.0]])
    fast = lift_polyline(d, "tube", pts)
    monkeypatch.setattr(lift_mod, "_lift_split", lambda *a: None)
    walked = lift_polyline(d, "tube", pts)
    np.testing.assert_allclose(walked.pattern, fast.pattern, rtol=0, atol=1e-12)  # observed 8.5e-14 mm
    np.testing.assert_array_equal(walked.waypoint_index, fast.waypoint_index)
