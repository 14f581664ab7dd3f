"""Reduced visibility graph of a free-space region, built with numpy and shapely array predicates.

Shortest paths among polygonal obstacles are polygonal lines that bend only at convex corners of
the obstacles, i.e. at *reflex* corners of the free space (Lozano-Pérez & Wesley, "An algorithm
for planning collision-free paths among polyhedral obstacles", CACM 22(10), 1979). An interior
vertex v of a shortest path is also *tangent*: the path does not cut into the obstacle at v, so
both obstacle edges at v lie on one side of each path segment through v. Keeping only edges that
are tangent at both ends (bitangents) leaves a graph on which shortest paths are still exact.

Construction (no Python loop over vertex pairs):

1. corners: every ring of the region is oriented with free space on its left; a vertex where the
   ring turns right is a reflex corner of free space (a convex obstacle corner) and becomes a node;
2. candidate pairs: tangency at both ends is evaluated for all pairs with numpy cross products,
   in row blocks;
3. visibility: segments that pass through a disc lying strictly inside a hole are dropped by a
   numpy distance test (cheap, certain); the rest are tested in batches against a grid index of
   the region's boundary edges (:mod:`garnav.plan.segtest`: certain proper crossings reject,
   segments touching nothing are decided by their midpoint, the few delicate ones by
   ``shapely.covers`` on the prepared region; exact, boundary contact allowed).

Query points (start, goal, seam portals) join the nodes they see, with tangency required at the
node end only.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import shapely

from garnav.plan.segtest import BoundaryIndex, segments_in_region

__all__ = [
    "Corners",
    "reflex_corners",
    "ring_corners",
    "zone_corners",
    "merge_corners",
    "tangent_mask",
    "segments_free",
    "bitangent_pairs",
    "inner_discs",
    "point_links",
]

_BLOCK = 512  # rows per block of the all-pairs tangency test


@dataclass(frozen=True)
class Corners:
    """Reflex corners of a free-space region.

    Attributes
    ----------
    xy, prev, next : (k, 2) float arrays
        Corner position and its two ring neighbours, mm.
    """

    xy: np.ndarray
    prev: np.ndarray
    next: np.ndarray

    def __len__(self) -> int:
        return len(self.xy)


def _rings(region: shapely.Geometry) -> list[np.ndarray]:
    """Rings (first point not repeated) oriented with the region on their left."""
    region = shapely.orient_polygons(region, exterior_cw=False)
    rings = []
    for poly in shapely.get_parts(region):
        if poly.is_empty:
            continue
        for ring in [poly.exterior, *poly.interiors]:
            xy = np.asarray(ring.coords)[:-1]
            if len(xy) >= 3:
                rings.append(xy)
    return rings


def ring_corners(rings: list[np.ndarray], tol: float = 1e-9) -> Corners:
    """Vertices where rings (each (n, 2), free side on the left) turn right: the corners a
    shortest path may bend around. ``tol`` is relative: near-straight vertices are skipped."""
    xs, ps, ns = [], [], []
    for ring in rings:
        prev = np.roll(ring, 1, axis=0)
        nxt = np.roll(ring, -1, axis=0)
        e1 = ring - prev
        e2 = nxt - ring
        cross = e1[:, 0] * e2[:, 1] - e1[:, 1] * e2[:, 0]
        scale = np.linalg.norm(e1, axis=1) * np.linalg.norm(e2, axis=1)
        keep = cross < -tol * scale
        xs.append(ring[keep])
        ps.append(prev[keep])
        ns.append(nxt[keep])
    if not xs:
        z = np.zeros((0, 2))
        return Corners(z, z, z)
    return Corners(np.vstack(xs), np.vstack(ps), np.vstack(ns))


def reflex_corners(region: shapely.Geometry, tol: float = 1e-9) -> Corners:
    """Reflex corners of free space (where its boundary turns right), in ring order."""
    return ring_corners(_rings(region), tol)


def zone_corners(region: shapely.Geometry, zones: list[shapely.Geometry], tol: float = 1e-9) -> Corners:
    """Convex corners of cost zones (seen from outside) that lie in the free region: a route may
    bend around a zone as around an obstacle."""
    rings = []
    for zone in zones:
        for poly in shapely.get_parts(shapely.orient_polygons(zone, exterior_cw=True)):
            if isinstance(poly, shapely.Polygon) and not poly.is_empty:
                rings.append(np.asarray(poly.exterior.coords)[:-1])
    c = ring_corners(rings, tol)
    if not len(c):
        return c
    inside = shapely.covers(region, shapely.points(c.xy))
    return Corners(c.xy[inside], c.prev[inside], c.next[inside])


def merge_corners(a: Corners, b: Corners) -> Corners:
    """Corners of ``a`` followed by those of ``b``."""
    return Corners(np.vstack([a.xy, b.xy]), np.vstack([a.prev, b.prev]), np.vstack([a.next, b.next]))


def tangent_mask(v: np.ndarray, u: np.ndarray, w: np.ndarray, p: np.ndarray, tol: float = 1e-9) -> np.ndarray:
    """Whether the line from corner ``v`` towards ``p`` is tangent at ``v``.

    Both ring neighbours ``u`` and ``w`` of ``v`` must lie (weakly) on one side of the line.
    Arrays broadcast against each other, last axis 2. Returns bool array of the broadcast shape.
    """
    d = p - v
    a = u - v
    b = w - v
    c1 = d[..., 0] * a[..., 1] - d[..., 1] * a[..., 0]
    c2 = d[..., 0] * b[..., 1] - d[..., 1] * b[..., 0]
    dn = np.hypot(d[..., 0], d[..., 1])
    e1 = tol * dn * np.hypot(a[..., 0], a[..., 1])
    e2 = tol * dn * np.hypot(b[..., 0], b[..., 1])
    s1 = np.where(np.abs(c1) <= e1, 0.0, np.sign(c1))
    s2 = np.where(np.abs(c2) <= e2, 0.0, np.sign(c2))
    return s1 * s2 >= 0


def segments_free(
    region: shapely.Geometry,
    a: np.ndarray,
    b: np.ndarray,
    chunk: int = 4096,
    index: BoundaryIndex | None = None,
) -> np.ndarray:
    """Whether each segment a[i] → b[i] lies in the (closed) region; (m,) bool.

    Exact: the same answer as ``shapely.covers(region, LineString)``, computed by a numpy crossing
    test against a bucket index of the region's boundary edges with ``covers`` kept for the few
    delicate segments (see :mod:`garnav.plan.segtest`). ``region`` should be prepared
    (``shapely.prepare``) for speed; ``index`` is its boundary index, kept by the region's owner
    (:attr:`garnav.plan.freespace.PieceFreeSpace.boundary_index`), built for the call when omitted.
    """
    return segments_in_region(region, a, b, chunk, index)


def _side_terms(corners: Corners) -> tuple[np.ndarray, ...]:
    """Per corner: normals of its two ring edges and their offsets, for linear side tests.

    ``cross(p − v, u − v) = p·n_u − v·n_u`` with ``n_u = ((u−v).y, −(u−v).x)``: the side of every
    other point is one matrix product.
    """
    xy = corners.xy
    a = corners.prev - xy
    b = corners.next - xy
    na = np.stack([a[:, 1], -a[:, 0]], axis=1)
    nb = np.stack([b[:, 1], -b[:, 0]], axis=1)
    scale = float(np.ptp(xy, axis=0).max()) if len(xy) else 1.0
    ea = 1e-9 * scale * np.linalg.norm(a, axis=1)
    eb = 1e-9 * scale * np.linalg.norm(b, axis=1)
    return na, nb, (xy * na).sum(1), (xy * nb).sum(1), ea, eb


def _not_tangent(c1: np.ndarray, c2: np.ndarray, e1: np.ndarray, e2: np.ndarray) -> np.ndarray:
    """Neighbours strictly on opposite sides of the line (cross products c1, c2, tolerances e)."""
    return ((c1 > e1) & (c2 < -e2)) | ((c1 < -e1) & (c2 > e2))


def bitangent_pairs(
    region: shapely.Geometry, corners: Corners, index: BoundaryIndex | None = None
) -> tuple[np.ndarray, np.ndarray]:
    """Edges (i, j), i < j, of the reduced visibility graph on ``corners``, sorted.

    Tangency at both ends is tested for all pairs by blocks of rows; each side test is a matrix
    product (see :func:`_side_terms`). Returns two (e,) int arrays.
    """
    k = len(corners)
    xy = corners.xy
    na, nb, ka, kb, ea, eb = _side_terms(corners)
    ii, jj = [], []
    for s in range(0, k, _BLOCK):
        e = min(s + _BLOCK, k)
        cols = xy[s:]  # only j >= s can satisfy j > i
        # tangent at row corner v (in s:e) towards column point p
        c1 = (cols @ na[s:e].T - ka[s:e]).T
        c2 = (cols @ nb[s:e].T - kb[s:e]).T
        bad = _not_tangent(c1, c2, ea[s:e, None], eb[s:e, None])
        # tangent at column corner p towards row point v
        d1 = xy[s:e] @ na[s:].T - ka[s:]
        d2 = xy[s:e] @ nb[s:].T - kb[s:]
        bad |= _not_tangent(d1, d2, ea[None, s:], eb[None, s:])
        bad |= np.arange(s, k)[None, :] <= np.arange(s, e)[:, None]
        r, c = np.nonzero(~bad)
        ii.append(r + s)
        jj.append(c + s)
    if not ii:
        return np.zeros(0, int), np.zeros(0, int)
    i = np.concatenate(ii)
    j = np.concatenate(jj)
    keep = ~_through_inner_discs(region, xy[i], xy[j])
    i, j = i[keep], j[keep]
    keep = segments_free(region, xy[i], xy[j], index=index)
    return i[keep], j[keep]


def inner_discs(region: shapely.Geometry) -> tuple[np.ndarray, np.ndarray]:
    """One open disc inside each hole of the region (centre (h, 2), radius (h,)): the hole's
    centroid and its distance to the hole's ring, where the centroid lies inside the hole."""
    rings = [shapely.Polygon(r) for poly in shapely.get_parts(region) if not poly.is_empty for r in poly.interiors]
    if not rings:
        return np.zeros((0, 2)), np.zeros(0)
    holes = np.array(rings, dtype=object)
    cent = shapely.centroid(holes)
    inside = shapely.contains_properly(holes, cent)
    radius = shapely.distance(cent, shapely.boundary(holes))
    ok = inside & (radius > 0)
    return shapely.get_coordinates(cent[ok]), radius[ok]


def _through_inner_discs(region: shapely.Geometry, a: np.ndarray, b: np.ndarray, chunk: int = 2048) -> np.ndarray:
    """Segments that certainly leave the region: they pass through a disc strictly inside a hole
    (a cheap numpy test done before the exact one). (m,) bool."""
    centres, radii = inner_discs(region)
    out = np.zeros(len(a), dtype=bool)
    if not len(radii):
        return out
    r2 = (radii * (1.0 - 1e-9)) ** 2
    for s in range(0, len(a), chunk):
        p, q = a[s : s + chunk, None, :], b[s : s + chunk, None, :]
        d = q - p
        dd = np.maximum((d * d).sum(-1), 1e-300)
        t = np.clip(((centres[None] - p) * d).sum(-1) / dd, 0.0, 1.0)
        near = p + t[..., None] * d - centres[None]
        out[s : s + chunk] = ((near * near).sum(-1) < r2[None]).any(axis=1)
    return out


def point_links(
    region: shapely.Geometry,
    corners: Corners,
    points: np.ndarray,
    allowed: np.ndarray | None = None,
    index: BoundaryIndex | None = None,
) -> tuple[np.ndarray, np.ndarray]:
    """Visible links from query points to corners, tangent at the corner end.

    Parameters
    ----------
    points : (m, 2) array
    allowed : (m, k) bool array, optional
        Extra filter applied before the visibility test (e.g. a seam-angle limit).
    index : BoundaryIndex, optional
        The region's boundary index (see :func:`segments_free`).

    Returns
    -------
    (q, n) : two (e,) int arrays, point index and corner index, sorted by point then corner.
    """
    points = np.asarray(points, dtype=float).reshape(-1, 2)
    k = len(corners)
    if k == 0 or len(points) == 0:
        return np.zeros(0, int), np.zeros(0, int)
    ok = tangent_mask(corners.xy[None], corners.prev[None], corners.next[None], points[:, None, :])
    if allowed is not None:
        ok &= allowed
    q, n = np.nonzero(ok)
    keep = segments_free(region, points[q], corners.xy[n], index=index)
    return q[keep], n[keep]
