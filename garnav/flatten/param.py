"""Flatten one disc-shaped piece of a 3D surface: LSCM, then ARAP (libigl).

* **LSCM** — least-squares conformal maps (Lévy, Petitjean, Ray & Maillot, "Least squares
  conformal maps for automatic texture atlas generation", SIGGRAPH 2002): the map whose
  per-triangle Jacobian is closest to a similarity, with two vertices pinned. It is exact (an
  isometry up to scale) on a developable piece; here it is pinned at two boundary vertices set
  their 3D distance apart and then scaled so that the flat area equals the 3D area.
* **ARAP** — as-rigid-as-possible parametrisation (Liu, Zhang, Xu, Gotsman & Gortler, "A local/
  global approach to mesh parameterization", SGP 2008): alternates the best rotation per triangle
  (local step) with one sparse solve for the positions (global step), minimising Σ area·‖J − R‖²;
  it keeps lengths, not only angles, so the robot's odometry sees true distances. Started from
  the LSCM map, one vertex pinned (libigl's ``arap_precomputation`` / ``arap_solve`` with the
  per-triangle ELEMENTS energy; the SPOKES energy crashed in 2D with libigl 2.6.3).

Both keep the faces' orientation: a triangle counter-clockwise seen from the outside stays
counter-clockwise in the plane (a mirrored result is flipped).
"""

from __future__ import annotations

import numpy as np

from garnav.errors import MeshError

__all__ = ["METHODS", "lscm", "arap", "flatten_piece", "boundary_vertices"]

METHODS = ("arap", "lscm")


def _signed_area(uv: np.ndarray, faces: np.ndarray) -> np.ndarray:
    t = uv[faces]
    a, b = t[:, 1] - t[:, 0], t[:, 2] - t[:, 0]
    return 0.5 * (a[:, 0] * b[:, 1] - a[:, 1] * b[:, 0])


def _area3(v: np.ndarray, faces: np.ndarray) -> np.ndarray:
    t = v[faces]
    return 0.5 * np.linalg.norm(np.cross(t[:, 1] - t[:, 0], t[:, 2] - t[:, 0]), axis=1)


def boundary_vertices(faces: np.ndarray) -> np.ndarray:
    """Vertices on the boundary of a triangle mesh (edges used by one face), sorted."""
    e = np.sort(faces[:, [0, 1, 1, 2, 2, 0]].reshape(-1, 2), axis=1)
    uniq, counts = np.unique(e, axis=0, return_counts=True)
    return np.unique(uniq[counts == 1])


def lscm(v: np.ndarray, faces: np.ndarray) -> np.ndarray:
    """Least-squares conformal map of a disc, at true area.

    Parameters
    ----------
    v : (n, 3) float array, mm
    faces : (m, 3) int array, counter-clockwise seen from the outside

    Returns
    -------
    (n, 2) float array, mm
    """
    import igl

    v = np.ascontiguousarray(v, dtype=np.float64)
    f = np.ascontiguousarray(faces, dtype=np.int64)
    bnd = boundary_vertices(f)
    if len(bnd) < 2:
        raise MeshError("a piece without a boundary cannot be flattened")
    b0 = int(bnd[0])
    b1 = int(bnd[np.argmax(np.linalg.norm(v[bnd] - v[b0], axis=1))])
    d = float(np.linalg.norm(v[b1] - v[b0]))
    b = np.array([b0, b1], dtype=np.int64)
    bc = np.array([[0.0, 0.0], [d, 0.0]])
    uv, _ = igl.lscm(v, f, b, bc)
    uv = np.asarray(uv, dtype=float)
    if not np.all(np.isfinite(uv)):
        raise MeshError("LSCM failed on a piece (non-finite result)")
    signed = _signed_area(uv, f)
    if signed.sum() < 0:
        uv[:, 0] = -uv[:, 0]
        signed = -signed
    scale = np.sqrt(_area3(v, f).sum() / signed.sum())
    return (uv - uv[b0]) * scale


def arap(v: np.ndarray, faces: np.ndarray, init: np.ndarray, iterations: int = 50) -> np.ndarray:
    """As-rigid-as-possible parametrisation started from ``init``.

    Parameters
    ----------
    v : (n, 3) float array, mm
    faces : (m, 3) int array
    init : (n, 2) float array, mm
        Starting map (e.g. :func:`lscm`), counter-clockwise.
    iterations : int
        Local/global iterations.

    Returns
    -------
    (n, 2) float array, mm
    """
    import igl

    v = np.ascontiguousarray(v, dtype=np.float64)
    f = np.ascontiguousarray(faces, dtype=np.int64)
    data = igl.ARAPData()
    data.energy = igl.ARAP_ENERGY_TYPE_ELEMENTS
    data.max_iter = int(iterations)
    b = np.array([int(boundary_vertices(f)[0])], dtype=np.int32)
    igl.arap_precomputation(v, f, 2, b, data)
    bc = np.ascontiguousarray(init[b.astype(np.int64)], dtype=np.float64)
    uv = np.asarray(igl.arap_solve(bc, data, np.ascontiguousarray(init, dtype=np.float64)),
                    dtype=float)
    if not np.all(np.isfinite(uv)):
        raise MeshError("ARAP failed on a piece (non-finite result)")
    if _signed_area(uv, f).sum() < 0:
        uv[:, 0] = 2 * uv[b[0], 0] - uv[:, 0]
    return uv


def flatten_piece(v: np.ndarray, faces: np.ndarray, method: str = "arap",
                  iterations: int = 50) -> np.ndarray:
    """Flatten one disc-shaped piece: ``"lscm"`` or ``"arap"`` (LSCM start). (n, 2) mm."""
    if method not in METHODS:
        raise ValueError(f"method must be one of {METHODS}, got {method!r}")
    uv = lscm(v, faces)
    if method == "arap":
        uv = arap(v, faces, uv, iterations)
    return uv
