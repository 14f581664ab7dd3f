"""Garment model basics: outlines, arc-length seam matching, open runs."""

import numpy as np

import garments
from garnav import SeamRun
from garnav.polyline import point_at_length, sub_polyline


def test_outline_is_ccw_ring_of_edges():
    piece = garments.rect_piece("p", 100, 50)
    assert piece.outline.shape == (4, 2)
    assert piece.edge_starts == (0, 1, 2, 3)
    assert piece.area == 5000.0  # w*h
    assert piece.perimeter == 300.0
    assert piece.polygon.exterior.is_ccw


def test_seam_partner_matches_by_fraction(two_panels):
    seam = two_panels.seam("middle")
    pts = two_panels.seam_partner(seam, "a", np.array([0.0, 0.25, 1.0]))
    # run a goes up the left piece's right edge; run b goes up the right piece's left edge (reversed)
    np.testing.assert_allclose(pts, [[0.0, 0.0], [0.0, 100.0], [0.0, 400.0]])


def test_open_runs_exclude_seamed_edges(two_panels):
    open_edges = {(r.piece, r.edge) for r in two_panels.open_runs()}
    assert ("left", "right") not in open_edges
    assert ("right", "left") not in open_edges
    assert len(open_edges) == 6


def test_partial_run_leaves_open_remainder(two_panels):
    import dataclasses

    seam = two_panels.seam("middle")
    shorter = dataclasses.replace(seam, a=SeamRun("left", "right", from_mm=100.0, to_mm=300.0))
    g = dataclasses.replace(two_panels, seams=(shorter,))
    runs = [r for r in g.open_runs() if (r.piece, r.edge) == ("left", "right")]
    assert [(r.from_mm, r.to_mm) for r in runs] == [(0.0, 100.0), (300.0, 400.0)]


def test_polyline_helpers():
    line = np.array([[0.0, 0.0], [10.0, 0.0], [10.0, 10.0]])
    np.testing.assert_allclose(point_at_length(line, 15.0), [10.0, 5.0])
    np.testing.assert_allclose(sub_polyline(line, 5.0, 15.0), [[5, 0], [10, 0], [10, 5]])
