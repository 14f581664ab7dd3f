"""Point location in a given 2D triangulation (UV or pattern space), many points at once.

A uniform grid of buckets covers the triangles' bounding box; every triangle is listed in each
bucket its bounding box touches (the classic "cell method", e.g. Akman, Franklin, Kankanhalli,
Narayanaswami, *Geometric computing and uniform grid technique*, Computer-Aided Design 21(7),
1989). A query looks only at the triangles listed in its bucket, computes their barycentric
coordinates in one vectorised pass and keeps the triangle where the point is most inside.

``scipy.spatial.Delaunay.find_simplex`` cannot be used: it only works on scipy's own Delaunay
triangulation, not on a given mesh.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np

__all__ = ["TriangleLocator", "barycentric_2d"]


def barycentric_2d(tri: np.ndarray, pts: np.ndarray) -> np.ndarray:
    """Barycentric coordinates of points in triangles.

    Parameters
    ----------
    tri : (n, 3, 2) float array
        Triangle corners.
    pts : (n, 2) float array
        One point per triangle.

    Returns
    -------
    (n, 3) float array; rows sum to 1. Degenerate triangles give NaN.
    """
    a, b, c = tri[:, 0], tri[:, 1], tri[:, 2]
    v0, v1, v2 = b - a, c - a, pts - a
    den = v0[:, 0] * v1[:, 1] - v1[:, 0] * v0[:, 1]
    with np.errstate(divide="ignore", invalid="ignore"):
        l1 = (v2[:, 0] * v1[:, 1] - v1[:, 0] * v2[:, 1]) / den
        l2 = (v0[:, 0] * v2[:, 1] - v2[:, 0] * v0[:, 1]) / den
    return np.stack([1.0 - l1 - l2, l1, l2], axis=1)


@dataclass(frozen=True, eq=False)
class TriangleLocator:
    """Answer "which triangle contains this point?" for many points.

    Build with :meth:`build`; query with :meth:`locate`.

    Attributes
    ----------
    triangles : (T, 3, 2) float array
        Triangle corners (any orientation).
    origin : (2,) float array
        Lower-left corner of the grid.
    cell : float
        Bucket side length (same unit as the points).
    shape : (int, int)
        Buckets along x and y.
    start : (nx * ny + 1,) int array
        Bucket b lists triangles ``members[start[b]:start[b + 1]]``.
    members : int array
        Triangle indices, bucket by bucket.
    """

    triangles: np.ndarray
    origin: np.ndarray
    cell: float
    shape: tuple[int, int]
    start: np.ndarray
    members: np.ndarray

    @classmethod
    def build(cls, triangles: np.ndarray, per_cell: float = 0.5) -> "TriangleLocator":
        """Index triangles (T, 3, 2) into about ``T / per_cell`` square buckets."""
        tri = np.ascontiguousarray(triangles, dtype=float).reshape(-1, 3, 2)
        if len(tri) == 0:
            raise ValueError("no triangles to index")
        lo, hi = tri.reshape(-1, 2).min(axis=0), tri.reshape(-1, 2).max(axis=0)
        extent = np.maximum(hi - lo, 1e-12)
        # buckets about the size of a typical triangle, capped by their count
        n_cells = max(1.0, len(tri) / per_cell)
        cell = float(np.sqrt(extent[0] * extent[1] / n_cells))
        cell = max(cell, float(extent.max()) / 4096.0)
        nx, ny = (np.floor(extent / cell).astype(int) + 1).tolist()
        tlo = np.floor((tri.min(axis=1) - lo) / cell).astype(np.int64)
        thi = np.floor((tri.max(axis=1) - lo) / cell).astype(np.int64)
        tlo = np.clip(tlo, 0, [nx - 1, ny - 1])
        thi = np.clip(thi, 0, [nx - 1, ny - 1])
        spanx, spany = thi[:, 0] - tlo[:, 0] + 1, thi[:, 1] - tlo[:, 1] + 1
        count = spanx * spany
        tid = np.repeat(np.arange(len(tri)), count)
        # position of each (triangle, bucket) pair within its triangle's bucket rectangle
        offs = np.arange(count.sum()) - np.repeat(np.cumsum(count) - count, count)
        ix = tlo[tid, 0] + offs % spanx[tid]
        iy = tlo[tid, 1] + offs // spanx[tid]
        bucket = ix * ny + iy
        order = np.argsort(bucket, kind="stable")
        start = np.searchsorted(bucket[order], np.arange(nx * ny + 1))
        return cls(tri, lo, cell, (nx, ny), start, tid[order])

    @cached_property
    def _affine(self) -> tuple[np.ndarray, np.ndarray]:
        """Per triangle: first corner (T, 2) and the inverse edge matrix (T, 2, 2)."""
        tri = self.triangles
        e = np.stack([tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0]], axis=2)  # columns
        det = e[:, 0, 0] * e[:, 1, 1] - e[:, 0, 1] * e[:, 1, 0]
        with np.errstate(divide="ignore", invalid="ignore"):
            inv = np.stack(
                [np.stack([e[:, 1, 1], -e[:, 0, 1]], 1), np.stack([-e[:, 1, 0], e[:, 0, 0]], 1)],
                axis=1,
            ) / det[:, None, None]
        return np.ascontiguousarray(tri[:, 0]), inv

    @cached_property
    def affine_rows(self) -> np.ndarray:
        """(T, 6) per triangle: first corner (x, y) and its inverse edge matrix row by row
        (i00, i01, i10, i11): barycentric (l1, l2) of a point = inverse @ (point - corner)."""
        origin, inv = self._affine
        return np.ascontiguousarray(np.column_stack([origin, inv.reshape(-1, 4)]))

    def locate(
        self, points: np.ndarray, tol: float = 1e-9, chunk: int = 1 << 16
    ) -> tuple[np.ndarray, np.ndarray]:
        """Triangle and barycentric coordinates of each point.

        Parameters
        ----------
        points : (n, 2) float array
        tol : float
            A point counts as inside when its smallest barycentric coordinate is >= -tol
            (points on shared edges pick one of the triangles).
        chunk : int
            Points handled per vectorised pass (bounds memory use).

        Returns
        -------
        face : (n,) int array
            Index into ``triangles``, -1 where no triangle contains the point.
        bary : (n, 3) float array
            Barycentric coordinates (clipped to >= 0 and renormalised); NaN where face is -1.
        """
        pts = np.asarray(points, dtype=float).reshape(-1, 2)
        face = np.full(len(pts), -1, dtype=np.int64)
        bary = np.full((len(pts), 3), np.nan)
        for s in range(0, len(pts), chunk):
            face[s : s + chunk], bary[s : s + chunk] = self._locate_chunk(pts[s : s + chunk], tol)
        return face, bary

    def _locate_chunk(self, pts: np.ndarray, tol: float) -> tuple[np.ndarray, np.ndarray]:
        n = len(pts)
        face = np.full(n, -1, dtype=np.int64)
        bary = np.full((n, 3), np.nan)
        if n == 0:
            return face, bary
        nx, ny = self.shape
        ij = np.floor((pts - self.origin) / self.cell).astype(np.int64)
        inside_grid = (ij[:, 0] >= 0) & (ij[:, 0] < nx) & (ij[:, 1] >= 0) & (ij[:, 1] < ny)
        # points just outside the grid by rounding still look in the border bucket
        ij = np.clip(ij, 0, [nx - 1, ny - 1])
        bucket = ij[:, 0] * ny + ij[:, 1]
        s, e = self.start[bucket], self.start[bucket + 1]
        cnt = np.where(inside_grid | self._near_grid(pts, tol), e - s, 0)
        total = int(cnt.sum())
        if total == 0:
            return face, bary
        first_of = np.cumsum(cnt) - cnt  # first candidate row of each point
        pid = np.repeat(np.arange(n), cnt)
        cand = self.members[np.arange(total) - np.repeat(first_of - s, cnt)]
        origin, inv = self._affine
        d = pts[pid] - origin[cand]
        l1 = inv[cand, 0, 0] * d[:, 0] + inv[cand, 0, 1] * d[:, 1]
        l2 = inv[cand, 1, 0] * d[:, 0] + inv[cand, 1, 1] * d[:, 1]
        l0 = 1.0 - l1 - l2
        score = np.nan_to_num(np.minimum(np.minimum(l0, l1), l2), nan=-np.inf)
        # best candidate per point (candidates of one point are contiguous): the first maximum
        has = cnt > 0
        best = np.full(n, -np.inf)
        best[has] = np.maximum.reduceat(score, first_of[has])
        is_best = score == best[pid]
        rows = np.flatnonzero(is_best)
        rows = rows[np.r_[True, pid[rows][1:] != pid[rows][:-1]]]
        ok = score[rows] >= -tol
        rows = rows[ok]
        hit = pid[rows]
        face[hit] = cand[rows]
        lam = np.clip(np.column_stack([l0[rows], l1[rows], l2[rows]]), 0.0, None)
        bary[hit] = lam / lam.sum(axis=1, keepdims=True)
        return face, bary

    def _near_grid(self, pts: np.ndarray, tol: float) -> np.ndarray:
        nx, ny = self.shape
        hi = self.origin + self.cell * np.array([nx, ny])
        pad = max(tol, 1e-9) * self.cell * 10.0
        return np.all((pts >= self.origin - pad) & (pts <= hi + pad), axis=1)
