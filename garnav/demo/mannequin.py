"""A stylised mannequin made of developable surfaces, and their exact developments.

Three surface kinds, each with a pure map between its flat development (mm) and the world (mm,
right-handed: z up, y forward, x towards the wearer's right):

* :class:`EllipticCylinder` — the torso, axis along z. Developed by arc length around the ellipse
  (incomplete elliptic integral of the second kind, scipy ``ellipeinc``) and height.
* :class:`Cone` — a right circular cone (a sleeve). Developed into a circular sector: the point at
  slant distance ρ from the apex on the generator at angle φ goes to polar coordinates
  (ρ, φ·sin β), β the half-angle, so a circle of radius r = ρ sin β unrolls to an arc of the same
  length and the whole cone to a sector of angle 2π sin β = 2π r / s (the standard development of a
  cone's lateral surface).
* :class:`HorizontalPlane` — the yoke, developed by dropping z.

Developments are isometries: lengths measured on the pattern equal geodesic lengths on the surface.
:func:`cone_cylinder_intersection` gives the exact curve where a sleeve cone meets the torso
(a quadratic along each generator).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.special import ellipe, ellipeinc

__all__ = [
    "EllipticCylinder",
    "Cone",
    "HorizontalPlane",
    "cone_cylinder_intersection",
]


@dataclass(frozen=True)
class EllipticCylinder:
    """The elliptic cylinder x²/a² + y²/b² = 1 for z in [z_bottom, z_top] (world mm).

    The ellipse is parametrised by θ: (x, y) = (a cos θ, b sin θ); θ = 0 is the +x side (x = a, the
    wearer's right), θ = π/2 the front (y = b). Increasing θ runs counter-clockwise seen from above.
    """

    a: float
    b: float
    z_bottom: float
    z_top: float

    @property
    def m(self) -> float:
        """Parameter m = 1 − b²/a² of the elliptic integrals (requires a >= b)."""
        return 1.0 - (self.b / self.a) ** 2

    @property
    def perimeter(self) -> float:
        """Ellipse perimeter 4·a·E(m), mm.

        >>> abs(EllipticCylinder(100.0, 100.0, 0.0, 1.0).perimeter - 2 * math.pi * 100.0) < 1e-9
        True
        """
        return 4.0 * self.a * float(ellipe(self.m))

    def arc_length(self, theta: np.ndarray | float) -> np.ndarray:
        """Arc length from θ = 0 to θ (mm), any real θ, increasing.

        ds = a·sqrt(1 − m cos²θ) dθ; with t = π/2 − θ this is a·[E(m) − E(π/2 − θ | m)].
        """
        theta = np.asarray(theta, dtype=float)
        return self.a * (ellipe(self.m) - ellipeinc(math.pi / 2 - theta, self.m))

    def theta_at(self, s: np.ndarray | float) -> np.ndarray:
        """Inverse of :meth:`arc_length` by Newton's method (vectorised), radians."""
        s = np.asarray(s, dtype=float)
        theta = s * (2.0 * math.pi / self.perimeter)
        for _ in range(50):
            speed = np.sqrt((self.a * np.sin(theta)) ** 2 + (self.b * np.cos(theta)) ** 2)
            step = (self.arc_length(theta) - s) / speed
            theta = theta - step
            if np.all(np.abs(step) < 1e-14):
                break
        return theta

    def theta_of(self, xy: np.ndarray) -> np.ndarray:
        """θ in [0, 2π) of points (..., 2 or 3) on (or near) the cylinder."""
        xy = np.asarray(xy, dtype=float)
        return np.mod(np.arctan2(xy[..., 1] / self.b, xy[..., 0] / self.a), 2.0 * math.pi)

    def point(self, theta: np.ndarray, z: np.ndarray) -> np.ndarray:
        """World points (n, 3) at angles θ (n,) and heights z (n,)."""
        theta = np.asarray(theta, dtype=float)
        z = np.broadcast_to(np.asarray(z, dtype=float), theta.shape)
        return np.stack([self.a * np.cos(theta), self.b * np.sin(theta), z], axis=-1)

    def outward_normal(self, theta: np.ndarray) -> np.ndarray:
        """Unit outward normals (n, 3) at angles θ (n,)."""
        theta = np.asarray(theta, dtype=float)
        n = np.stack([self.b * np.cos(theta), self.a * np.sin(theta), np.zeros_like(theta)], -1)
        return n / np.linalg.norm(n, axis=-1, keepdims=True)

    def implicit(self, p: np.ndarray) -> np.ndarray:
        """x²/a² + y²/b² − 1 at world points (..., 3): zero on the surface, > 0 outside."""
        p = np.asarray(p, dtype=float)
        return (p[..., 0] / self.a) ** 2 + (p[..., 1] / self.b) ** 2 - 1.0


@dataclass(frozen=True)
class Cone:
    """A right circular cone: apex, unit axis ``d`` (from the body out to the apex), half-angle β.

    Generators leave the apex in directions g(φ) = −cos β·d + sin β·(cos φ·e1 + sin φ·e2), where
    (e1, e2, d) is a right-handed orthonormal frame and φ = 0 is the generator towards ``e1``.
    The point X(ρ, φ) = apex + ρ·g(φ) lies at slant distance ρ, at radius ρ sin β from the axis.
    """

    apex: tuple[float, float, float]
    d: tuple[float, float, float]
    e1: tuple[float, float, float]
    beta: float

    @property
    def e2(self) -> np.ndarray:
        """Third frame vector d × e1 so that e1 × e2 = d."""
        return np.cross(np.asarray(self.d), np.asarray(self.e1))

    def direction(self, phi: np.ndarray) -> np.ndarray:
        """Unit generator directions (n, 3) from the apex towards the body."""
        phi = np.asarray(phi, dtype=float)[..., None]
        radial = np.cos(phi) * np.asarray(self.e1) + np.sin(phi) * self.e2
        return -math.cos(self.beta) * np.asarray(self.d) + math.sin(self.beta) * radial

    def point(self, rho: np.ndarray, phi: np.ndarray) -> np.ndarray:
        """World points (n, 3) at slant distances ρ (n,) and generator angles φ (n,)."""
        rho = np.asarray(rho, dtype=float)[..., None]
        return np.asarray(self.apex) + rho * self.direction(phi)

    def coordinates(self, p: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(ρ, φ) of world points (n, 3) on the cone; φ in (−π, π]."""
        q = np.asarray(p, dtype=float) - np.asarray(self.apex)
        rho = np.linalg.norm(q, axis=-1)
        phi = np.arctan2(q @ self.e2, q @ np.asarray(self.e1))
        return rho, phi

    def outward_normal(self, phi: np.ndarray) -> np.ndarray:
        """Unit outward normals (n, 3) along the generators φ (n,)."""
        phi = np.asarray(phi, dtype=float)[..., None]
        radial = np.cos(phi) * np.asarray(self.e1) + np.sin(phi) * self.e2
        return math.cos(self.beta) * radial + math.sin(self.beta) * np.asarray(self.d)

    def implicit(self, p: np.ndarray) -> np.ndarray:
        """|q⊥|² − tan²β·(q·d)², q = p − apex, divided by |q|²: zero on the cone, > 0 outside."""
        q = np.asarray(p, dtype=float) - np.asarray(self.apex)
        along = q @ np.asarray(self.d)
        perp2 = np.sum(q * q, axis=-1) - along**2
        return (perp2 - math.tan(self.beta) ** 2 * along**2) / np.sum(q * q, axis=-1)


@dataclass(frozen=True)
class HorizontalPlane:
    """The plane z = height; its development is (x, y)."""

    height: float

    def point(self, xy: np.ndarray) -> np.ndarray:
        xy = np.asarray(xy, dtype=float)
        return np.concatenate([xy, np.full(xy.shape[:-1] + (1,), self.height)], axis=-1)


def cone_cylinder_intersection(cone: Cone, cyl: EllipticCylinder, phi: np.ndarray) -> np.ndarray:
    """Slant distance ρ (n,) where each generator φ (n,) first meets the cylinder from the apex.

    Along a generator X = apex + ρ g, the cylinder's equation x²/a² + y²/b² = 1 is a quadratic
    A ρ² + B ρ + C = 0; the apex lies outside (C > 0) and the smaller positive root is where the
    generator enters the torso. Raises ValueError when a generator misses the cylinder.
    """
    g = cone.direction(phi)
    apex = np.asarray(cone.apex, dtype=float)
    w = np.array([1.0 / cyl.a**2, 1.0 / cyl.b**2, 0.0])
    qa = np.sum(w * g * g, axis=-1)
    qb = 2.0 * np.sum(w * g * apex, axis=-1)
    qc = float(np.sum(w * apex * apex) - 1.0)
    disc = qb * qb - 4.0 * qa * qc
    if qc <= 0.0 or np.any(disc <= 0.0):
        raise ValueError("cone generators do not all cross the torso cylinder from outside")
    root = np.sqrt(disc)
    # Numerically stable smaller root: 2c / (−b + sqrt(disc)) with b < 0 on the way in.
    return (2.0 * qc) / (-qb + root)
