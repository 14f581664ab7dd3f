"""Flattening Bézier curves and elliptical arcs into polylines within a chord tolerance.

* Bézier curves of degree d sampled at n uniform parameter steps deviate from the curve by at most
  d(d − 1)/8 · max‖P[i+2] − 2 P[i+1] + P[i]‖ / n² (Wang's formula, G.-J. Wang 1984; as given in
  T. W. Sederberg, *Computer Aided Geometric Design*, course notes, §10.6 — from memory), so
  n = ⌈√(d(d − 1) M / (8 tol))⌉ steps keep every chord within ``tol``.
* An ellipse p(t) = c + A (cos t, sin t) sampled at parameter steps Δ deviates by at most
  ‖A‖₂ (1 − cos(Δ/2)) = a (1 − cos(Δ/2)) for the larger semi-axis a (the affine image of the
  circle's sagitta), so Δ = 2 acos(1 − tol / a).
"""

from __future__ import annotations

import math

import numpy as np

__all__ = ["bezier_points", "arc_steps", "MAX_STEPS"]

MAX_STEPS = 100_000
"""Most chords one curve is cut into (a bound against absurd inputs)."""


def bezier_points(ctrl: np.ndarray, tol: float) -> np.ndarray:
    """Points on a Bézier curve with control points ``ctrl`` (d + 1, 2), chords within ``tol``.

    Returns (n + 1, 2), first and last points equal to the end control points.

    >>> bezier_points(np.array([[0.0, 0.0], [1.0, 0.0]]), 0.1).tolist()
    [[0.0, 0.0], [1.0, 0.0]]
    """
    ctrl = np.asarray(ctrl, dtype=float)
    d = len(ctrl) - 1
    if d < 2:
        return ctrl.copy()
    second = ctrl[2:] - 2 * ctrl[1:-1] + ctrl[:-2]
    m = float(np.max(np.hypot(second[:, 0], second[:, 1])))
    n = max(1, int(math.ceil(math.sqrt(d * (d - 1) * m / (8.0 * tol))))) if m > 0 else 1
    n = min(n, MAX_STEPS)
    t = np.linspace(0.0, 1.0, n + 1)[:, None]
    # de Casteljau-free Bernstein evaluation (d <= 3 here)
    coeff = [math.comb(d, k) for k in range(d + 1)]
    out = sum(coeff[k] * (t ** k) * ((1 - t) ** (d - k)) * ctrl[k] for k in range(d + 1))
    out = np.asarray(out)
    out[0], out[-1] = ctrl[0], ctrl[-1]
    return out


def arc_steps(sweep: float, major_radius: float, tol: float) -> int:
    """Number of uniform parameter steps that keep an elliptical arc's chords within ``tol``.

    >>> arc_steps(2 * math.pi, 100.0, 0.1) >= 2 * math.pi / (2 * math.acos(1 - 0.001))
    True
    """
    if major_radius <= tol:
        return max(1, int(math.ceil(abs(sweep) / (math.pi / 2))))
    step = 2.0 * math.acos(1.0 - tol / major_radius)
    return min(MAX_STEPS, max(1, int(math.ceil(abs(sweep) / min(step, math.pi / 2)))))
