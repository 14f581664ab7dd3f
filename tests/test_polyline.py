"""Polyline helpers against independent computations."""

import numpy as np

from garnav.polyline import point_at_length, tangent_at


def test_tangent_at_matches_the_derivative_of_the_arc_length_parametrisation():
    # Reference: a central difference of point_at_length (the curve's derivative by arc length is
    # its unit tangent, do Carmo §1-3), taken away from the vertices where it is not defined.
    rng = np.random.default_rng(3)
    worst = 0.0
    for _ in range(50):
        pts = np.cumsum(rng.normal(size=(rng.integers(2, 8), int(rng.integers(2, 4)))), axis=0)
        cum = np.r_[0.0, np.cumsum(np.linalg.norm(np.diff(pts, axis=0), axis=1))]
        mids = 0.5 * (cum[:-1] + cum[1:])
        h = 1e-6
        ref = (point_at_length(pts, mids + h) - point_at_length(pts, mids - h)) / (2 * h)
        worst = max(worst, float(np.abs(tangent_at(pts, mids) - ref).max()))
    assert worst < 1e-8  # observed 6.4e-10 (finite-difference rounding)


def test_tangent_at_skips_segments_of_no_length():
    pts = np.array([[0.0, 0.0], [0.0, 0.0], [2.0, 0.0], [2.0, 0.0]])
    assert tangent_at(pts, 0.0).tolist() == [1.0, 0.0]  # leading repeat: the next real segment
    assert tangent_at(pts, 2.0).tolist() == [1.0, 0.0]  # trailing repeat: the last real one
    assert tangent_at(np.zeros((3, 2)), [0.0, 1.0]).tolist() == [[0.0, 0.0], [0.0, 0.0]]
    assert tangent_at(pts, 1.0).shape == (2,) and tangent_at(pts, [1.0]).shape == (1, 2)
