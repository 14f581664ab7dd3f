"""How far a flattened piece is from an isometry: the robot's map error.

Per triangle, the 3D → 2D map is linear; its Jacobian J (2 × 2 in an orthonormal frame of the
triangle's plane) has singular values σ₁ ≥ σ₂, the largest and smallest scale of lengths there
(Tissot's indicatrix of cartography). A length measured by the robot on the fabric (3D) and the
same path's length on the pattern differ by a factor between σ₂ and σ₁; σ₁σ₂ is the area scale.

Reported per piece (:class:`Distortion`): the extreme scales, the area-weighted RMS of
(σ − 1) over both singular values, the extreme area scales, the worst edge-length ratio
(2D / 3D, over the piece's mesh edges), and ``scale_ratio`` = max σ₁ / min σ₂. The last is
comparable with Milnor's distortion of a map ("A problem in cartography", Amer. Math. Monthly 76
(1969) 1101–1112): the ratio of the largest to the smallest scale d_E(f(x), f(y)) / d_S(x, y)
over all pairs of points, which for a spherical cap of angular radius α is at least α / sin α
(attained by the azimuthal equidistant projection). Over pairs of nearby points the pairwise scale
tends to the local σ, so max σ₁ / min σ₂ is at most Milnor's ratio, and equals it for a map with
a convex image whose local scales bound the pairwise ones.

``worst_scale_error`` = max(max σ₁ − 1, 1 − min σ₂) is the figure checked against the threshold:
a robot driving a path of length L through the worst triangle may see its odometry disagree
with the pattern by up to that fraction of L there.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

__all__ = ["Distortion", "jacobians", "singular_values", "measure_distortion", "DEFAULT_MAX_SCALE_ERROR"]

#: Default refusal threshold for ``worst_scale_error``: 2 % — woven fabric eases by about that
#: much along a seam (common practice, no source); above it the pattern is not a faithful map.
DEFAULT_MAX_SCALE_ERROR = 0.02


def jacobians(v3: np.ndarray, uv: np.ndarray, faces: np.ndarray
              ) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """The 3D → 2D Jacobian of each triangle in an orthonormal frame of its plane.

    Parameters
    ----------
    v3 : (n, 3) float array, mm
    uv : (n, 2) float array, mm
    faces : (m, 3) int array

    Returns
    -------
    jac : (m, 2, 2) float array
        Maps (x, y) coordinates in the triangle's frame to the flat map (unitless).
    frame_x, frame_y : (m, 3) float arrays
        The frame: x along the first edge, y = n × x.
    area : (m,) float array
        3D triangle areas, mm².
    """
    t3 = v3[faces]
    e1 = t3[:, 1] - t3[:, 0]
    e2 = t3[:, 2] - t3[:, 0]
    l1 = np.linalg.norm(e1, axis=1)
    x = e1 / l1[:, None]
    n = np.cross(e1, e2)
    area = 0.5 * np.linalg.norm(n, axis=1)
    y = np.cross(n / (2.0 * area)[:, None], x)
    # 3D edges in the triangle's own frame: columns (e1, e2)
    a = np.stack([np.column_stack([l1, np.zeros_like(l1)]),
                  np.column_stack([(e2 * x).sum(1), (e2 * y).sum(1)])], axis=2)
    t2 = uv[faces]
    b = np.stack([t2[:, 1] - t2[:, 0], t2[:, 2] - t2[:, 0]], axis=2)
    return b @ np.linalg.inv(a), x, y, area


def singular_values(v3: np.ndarray, uv: np.ndarray, faces: np.ndarray) -> np.ndarray:
    """(m, 2) singular values σ₁ ≥ σ₂ of the 3D → 2D map of each triangle (see :func:`jacobians`)."""
    return np.linalg.svd(jacobians(v3, uv, faces)[0], compute_uv=False)


@dataclass(frozen=True)
class Distortion:
    """Distortion of one flattened piece (all scales are 2D length / 3D length).

    Attributes
    ----------
    triangles : int
    area_3d_mm2, area_2d_mm2 : float
    sigma_max, sigma_min : float
        Largest σ₁ and smallest σ₂ over the triangles.
    sigma_rms : float
        sqrt(Σ A (σ₁ − 1)² + (σ₂ − 1)²) / (2 Σ A)), area-weighted over the 3D areas A.
    area_scale_min, area_scale_max : float
        Extremes of σ₁σ₂.
    edge_ratio_min, edge_ratio_max : float
        Extremes of 2D / 3D edge length over the mesh edges.
    flipped : int
        Triangles turned over (negative area) by the map.
    """

    triangles: int
    area_3d_mm2: float
    area_2d_mm2: float
    sigma_max: float
    sigma_min: float
    sigma_rms: float
    area_scale_min: float
    area_scale_max: float
    edge_ratio_min: float
    edge_ratio_max: float
    flipped: int

    @property
    def scale_ratio(self) -> float:
        """max σ₁ / min σ₂ (comparable with Milnor's distortion ratio; see the module notes)."""
        return self.sigma_max / self.sigma_min

    @property
    def worst_scale_error(self) -> float:
        """max(σ_max − 1, 1 − σ_min): the largest local length error, as a fraction."""
        return max(self.sigma_max - 1.0, 1.0 - self.sigma_min)

    @property
    def worst_edge_error(self) -> float:
        """The worst edge-length ratio as an error: max(ratio_max − 1, 1 − ratio_min)."""
        return max(self.edge_ratio_max - 1.0, 1.0 - self.edge_ratio_min)


def measure_distortion(v3: np.ndarray, uv: np.ndarray, faces: np.ndarray) -> Distortion:
    """The :class:`Distortion` of a flattened piece.

    Parameters
    ----------
    v3 : (n, 3) float array, mm
    uv : (n, 2) float array, mm
    faces : (m, 3) int array
    """
    sv = singular_values(v3, uv, faces)
    t3 = v3[faces]
    a3 = 0.5 * np.linalg.norm(np.cross(t3[:, 1] - t3[:, 0], t3[:, 2] - t3[:, 0]), axis=1)
    t2 = uv[faces]
    p, q = t2[:, 1] - t2[:, 0], t2[:, 2] - t2[:, 0]
    a2 = 0.5 * (p[:, 0] * q[:, 1] - p[:, 1] * q[:, 0])
    rms = float(np.sqrt((a3[:, None] * (sv - 1.0) ** 2).sum() / (2.0 * a3.sum())))
    e = np.unique(np.sort(faces[:, [0, 1, 1, 2, 2, 0]].reshape(-1, 2), axis=1), axis=0)
    ratio = (np.linalg.norm(uv[e[:, 0]] - uv[e[:, 1]], axis=1)
             / np.linalg.norm(v3[e[:, 0]] - v3[e[:, 1]], axis=1))
    area_scale = sv[:, 0] * sv[:, 1]
    return Distortion(
        triangles=int(len(faces)),
        area_3d_mm2=float(a3.sum()),
        area_2d_mm2=float(np.abs(a2).sum()),
        sigma_max=float(sv[:, 0].max()),
        sigma_min=float(sv[:, 1].min()),
        sigma_rms=rms,
        area_scale_min=float(area_scale.min()),
        area_scale_max=float(area_scale.max()),
        edge_ratio_min=float(ratio.min()),
        edge_ratio_max=float(ratio.max()),
        flipped=int((a2 <= 0).sum()),
    )
