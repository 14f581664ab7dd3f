"""Exact pattern → world maps of the demo pieces (torso halves, sleeves, yoke).

Each map develops one developable part of the stylised mannequin (:mod:`garnav.demo.mannequin`)
onto its piece: ``to_world`` (pattern mm → world mm), ``to_pattern`` (its inverse on the part)
and ``normal`` (outward unit normals). Every map is orientation preserving with the outward
normal (see :mod:`garnav.demo.pattern`).
"""

from __future__ import annotations

import math

import numpy as np

from garnav.demo.mannequin import Cone, EllipticCylinder, HorizontalPlane

__all__ = ["TorsoPieceMap", "SleevePieceMap", "YokePieceMap", "PieceMap"]


class TorsoPieceMap:
    """Pattern (u, v) of a torso half → world: u = arc length from θ0, v = height above the hem."""

    kind = "cylinder"

    def __init__(self, cyl: EllipticCylinder, theta0: float):
        self.cyl = cyl
        self.theta0 = float(theta0)
        self.s0 = float(cyl.arc_length(theta0))

    def to_world(self, pts: np.ndarray) -> np.ndarray:
        """World points (n, 3) of pattern points (n, 2), mm."""
        pts = np.asarray(pts, dtype=float).reshape(-1, 2)
        theta = self.cyl.theta_at(pts[:, 0] + self.s0)
        return self.cyl.point(theta, pts[:, 1] + self.cyl.z_bottom)

    def to_pattern(self, world: np.ndarray) -> np.ndarray:
        """Pattern points (n, 2) of world points (n, 3) on this half of the cylinder."""
        world = np.asarray(world, dtype=float).reshape(-1, 3)
        rel = (
            np.mod(self.cyl.theta_of(world) - self.theta0 + math.pi / 2, 2 * math.pi) - math.pi / 2
        )
        u = self.cyl.arc_length(self.theta0 + rel) - self.s0
        return np.stack([u, world[:, 2] - self.cyl.z_bottom], axis=-1)

    def normal(self, pts: np.ndarray) -> np.ndarray:
        pts = np.asarray(pts, dtype=float).reshape(-1, 2)
        return self.cyl.outward_normal(self.cyl.theta_at(pts[:, 0] + self.s0))


class SleevePieceMap:
    """Pattern (X, Y) of a sleeve → world through the cone's development.

    The development's apex sits at pattern point (x0, y0); a point at distance ρ from it and at
    angle ψ from the +Y axis (positive towards +X) is the cone point (ρ, φ = −ψ / sin β). The
    minus sign makes the map orientation preserving with the outward normal.
    """

    kind = "cone"

    def __init__(self, cone: Cone, x0: float, y0: float):
        self.cone = cone
        self.x0 = float(x0)
        self.y0 = float(y0)
        self.k = math.sin(cone.beta)

    def polar(self, pts: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        pts = np.asarray(pts, dtype=float).reshape(-1, 2)
        dx, dy = pts[:, 0] - self.x0, pts[:, 1] - self.y0
        return np.hypot(dx, dy), -np.arctan2(dx, dy) / self.k

    def to_world(self, pts: np.ndarray) -> np.ndarray:
        rho, phi = self.polar(pts)
        return self.cone.point(rho, phi)

    def from_cone(self, rho: np.ndarray, phi: np.ndarray) -> np.ndarray:
        """Pattern points (n, 2) of cone coordinates ρ (n,), φ (n,) with φ in [−π, π]."""
        psi = -np.asarray(phi, dtype=float) * self.k
        rho = np.asarray(rho, dtype=float)
        return np.stack([self.x0 + rho * np.sin(psi), self.y0 + rho * np.cos(psi)], axis=-1)

    def to_pattern(self, world: np.ndarray) -> np.ndarray:
        rho, phi = self.cone.coordinates(np.asarray(world, dtype=float).reshape(-1, 3))
        return self.from_cone(rho, phi)

    def normal(self, pts: np.ndarray) -> np.ndarray:
        return self.cone.outward_normal(self.polar(pts)[1])


class YokePieceMap:
    """Pattern (X, Y) of the yoke → world (X − x0, Y − y0, height)."""

    kind = "plane"

    def __init__(self, plane: HorizontalPlane, x0: float, y0: float):
        self.plane = plane
        self.x0 = float(x0)
        self.y0 = float(y0)

    def to_world(self, pts: np.ndarray) -> np.ndarray:
        pts = np.asarray(pts, dtype=float).reshape(-1, 2)
        return self.plane.point(pts - [self.x0, self.y0])

    def to_pattern(self, world: np.ndarray) -> np.ndarray:
        world = np.asarray(world, dtype=float).reshape(-1, 3)
        return world[:, :2] + [self.x0, self.y0]

    def normal(self, pts: np.ndarray) -> np.ndarray:
        n = np.asarray(pts, dtype=float).reshape(-1, 2).shape[0]
        return np.tile([0.0, 0.0, 1.0], (n, 1))


PieceMap = TorsoPieceMap | SleevePieceMap | YokePieceMap
