"""Split straight pattern segments at the triangle edges they cross, many segments at once.

The triangles a segment can meet are those listed in the grid buckets it passes through (the
bucket grid of :class:`~garnav.drape.locate.TriangleLocator`; the cells a segment passes through
are enumerated column by column, a "supercover" of the segment: Amanatides & Woo, *A fast voxel
traversal algorithm for ray tracing*, Eurographics 1987, list the same cells one by one). For
every such (segment, triangle) pair the barycentric coordinates λ of the segment's two ends are
computed in one vectorised pass; λ is affine along the segment, so the segment crosses the
triangle's edge k (opposite corner k) where λ_k changes sign, at t = λ_k(p) / (λ_k(p) − λ_k(q)),
and that crossing lies on the edge when the other two coordinates are >= 0 there. The crossing
parameters are sorted per segment and merged when closer than ``merge_mm`` (an edge seen from
both of its triangles, the edges meeting at a vertex the segment passes through). Each piece
between consecutive split points lies in one triangle: among the triangles whose crossings bound
the piece, the one that holds both ends of the piece most deeply.

Nothing here walks the mesh, so the result needs no neighbour table; :mod:`garnav.drape.lift`
checks that every piece lies in its triangle and handles pieces outside all triangles.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from garnav.drape.locate import TriangleLocator

__all__ = ["SegmentSplits", "split_segments", "segment_candidates"]


@dataclass(frozen=True, eq=False)
class SegmentSplits:
    """Split points of segments p[s] → q[s] and the triangle of each piece between them.

    Attributes
    ----------
    seg : (G,) int array
        Segment of each split point; split points are sorted by segment, then along it.
    t : (G,) float array
        Parameter along the segment, 0 at p, 1 at q; every segment has its t = 0 and its t = 1
        point (different points, even for a zero-length segment).
    xy : (G, 2) float array
        Position (same frame as p, q; mm): p + t (q − p), exactly p at t = 0 and q at t = 1.
    piece_face : (G,) int array
        Triangle (locator index) that best holds the piece from point g to point g + 1: the
        candidate where the piece's smallest barycentric coordinate is largest; -1 for the last
        point of each segment.
    piece_score : (G,) float array
        That smallest coordinate (unitless; 0 or more: the piece lies in the triangle, slightly
        negative: up to rounding; -inf: no candidate).
    """

    seg: np.ndarray
    t: np.ndarray
    xy: np.ndarray
    piece_face: np.ndarray
    piece_score: np.ndarray

    @property
    def is_piece(self) -> np.ndarray:
        """(G,) bool: point g starts a piece (it is not the last point of its segment)."""
        out = np.zeros(len(self.seg), dtype=bool)
        out[:-1] = self.seg[1:] == self.seg[:-1]
        return out


def _bary_rows(rows: np.ndarray, pts: np.ndarray) -> np.ndarray:
    """(n, 3) barycentric coordinates of pts (n, 2) in triangles given by their
    :attr:`TriangleLocator.affine_rows` rows (n, 6), unclipped."""
    dx = pts[:, 0] - rows[:, 0]
    dy = pts[:, 1] - rows[:, 1]
    out = np.empty((len(pts), 3))
    out[:, 1] = rows[:, 2] * dx + rows[:, 3] * dy
    out[:, 2] = rows[:, 4] * dx + rows[:, 5] * dy
    out[:, 0] = 1.0 - out[:, 1] - out[:, 2]
    return out


def _min3(a: np.ndarray) -> np.ndarray:
    """Row minima of an (n, 3) array (faster than ``a.min(axis=1)``)."""
    return np.minimum(np.minimum(a[:, 0], a[:, 1]), a[:, 2])


def _bary_change(rows: np.ndarray, vec: np.ndarray) -> np.ndarray:
    """(n, 3) change of the barycentric coordinates along vectors vec (n, 2)."""
    out = np.empty((len(vec), 3))
    out[:, 1] = rows[:, 2] * vec[:, 0] + rows[:, 3] * vec[:, 1]
    out[:, 2] = rows[:, 4] * vec[:, 0] + rows[:, 5] * vec[:, 1]
    out[:, 0] = -out[:, 1] - out[:, 2]
    return out


def _ranges(lo: np.ndarray, hi: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Flatten integer ranges lo[i]..hi[i] (inclusive; empty when hi < lo): (owner i, value)."""
    count = np.maximum(hi - lo + 1, 0)
    owner = np.repeat(np.arange(len(lo)), count)
    value = lo[owner] + np.arange(int(count.sum())) - np.repeat(np.cumsum(count) - count, count)
    return owner, value


def segment_candidates(
    loc: TriangleLocator, p: np.ndarray, q: np.ndarray, pad: float = 1e-6
) -> tuple[np.ndarray, np.ndarray]:
    """Every (segment, triangle) pair where the triangle is listed in a bucket the segment meets.

    A triangle that holds a point of a segment lists the bucket of that point, so the pairs include
    every triangle the segment passes through.

    Parameters
    ----------
    loc : TriangleLocator
    p, q : (S, 2) float array
        Segment ends, same frame as the locator's triangles.
    pad : float
        Buckets within this many bucket widths of the segment count as met (rounding).

    Returns
    -------
    seg : (m,) int array
    tri : (m,) int array
        Unique pairs, sorted by segment, then triangle.
    """
    nx, ny = loc.shape
    gp = (p - loc.origin) / loc.cell
    gq = (q - loc.origin) / loc.cell
    xlo, xhi = np.minimum(gp[:, 0], gq[:, 0]), np.maximum(gp[:, 0], gq[:, 0])
    ylo, yhi = np.minimum(gp[:, 1], gq[:, 1]), np.maximum(gp[:, 1], gq[:, 1])
    c0 = np.clip(np.floor(xlo - pad), 0, nx - 1).astype(np.int64)
    c1 = np.clip(np.floor(xhi + pad), 0, nx - 1).astype(np.int64)
    s, col = _ranges(c0, c1)
    # the segment's y range over each column's x span
    xa = np.clip(col, xlo[s], xhi[s])
    xb = np.clip(col + 1.0, xlo[s], xhi[s])
    dx, dy = gq[:, 0] - gp[:, 0], gq[:, 1] - gp[:, 1]
    steep = dx == 0.0
    slope = np.where(steep, 0.0, dy / np.where(steep, 1.0, dx))
    ya = gp[s, 1] + (xa - gp[s, 0]) * slope[s]
    yb = gp[s, 1] + (xb - gp[s, 0]) * slope[s]
    y0 = np.where(steep[s], ylo[s], np.clip(np.minimum(ya, yb), ylo[s], yhi[s]))
    y1 = np.where(steep[s], yhi[s], np.clip(np.maximum(ya, yb), ylo[s], yhi[s]))
    r0 = np.clip(np.floor(y0 - pad), 0, ny - 1).astype(np.int64)
    r1 = np.clip(np.floor(y1 + pad), 0, ny - 1).astype(np.int64)
    k, row = _ranges(r0, r1)
    bucket = col[k] * ny + row
    owner, pos = _ranges(loc.start[bucket], loc.start[bucket + 1] - 1)
    seg = s[k][owner]
    tri = loc.members[pos]
    n_tri = len(loc.triangles)
    key = np.unique(seg * n_tri + tri)
    return key // n_tri, key % n_tri


def split_segments(
    loc: TriangleLocator,
    p: np.ndarray,
    q: np.ndarray,
    face_p: np.ndarray,
    face_q: np.ndarray,
    tol: float = 1e-9,
    merge_mm: float = 1e-10,
) -> SegmentSplits:
    """Split segments p[s] → q[s] at every triangle edge they cross.

    Parameters
    ----------
    loc : TriangleLocator
        The triangles (one piece's, in its frame, mm).
    p, q : (S, 2) float array
        Segment ends, mm.
    face_p, face_q : (S,) int array
        A triangle (locator index) holding p[s], q[s] (for pieces that touch no crossing).
    tol : float
        Barycentric slack (unitless): a crossing counts as on an edge when no coordinate is below
        -tol there; an edge whose line stays within tol of the segment (the segment runs along
        it) gives no crossing.
    merge_mm : float
        Split points closer than this (mm) along one segment are one point.

    Returns
    -------
    SegmentSplits
    """
    p = np.asarray(p, dtype=float).reshape(-1, 2)
    q = np.asarray(q, dtype=float).reshape(-1, 2)
    n_seg = len(p)
    d = q - p
    length = np.hypot(d[:, 0], d[:, 1])
    s, tri = segment_candidates(loc, p, q)
    aff = loc.affine_rows
    rows = aff[tri]
    lp = _bary_rows(rows, p[s])
    dl = _bary_change(rows, d[s])
    lq = lp + dl
    # edge k is crossed where coordinate k changes sign (an edge along the segment is not)
    cross = (lp * lq <= 0.0) & (np.maximum(np.abs(lp), np.abs(lq)) > tol) & (dl != 0.0)
    r, k = np.nonzero(cross)
    rec_t = -lp[r, k] / dl[r, k]
    # ... on the edge itself: the other two coordinates are >= 0 there
    at = lp[r] + rec_t[:, None] * dl[r]
    at[np.arange(len(r)), k] = 0.0
    on_edge = _min3(at) >= -tol
    rec_t = rec_t[on_edge]
    rec_seg = s[r[on_edge]]
    rec_tri = tri[r[on_edge]]
    # crossings within merge_mm of an end are that end; a segment shorter than two merge
    # distances is not split at all
    rec_len = length[rec_seg]
    keep = rec_len > 2.0 * merge_mm
    rec_t = np.where(rec_t * rec_len <= merge_mm, 0.0, rec_t)
    rec_t = np.where((1.0 - rec_t) * rec_len <= merge_mm, 1.0, rec_t)
    ends = np.arange(n_seg)
    all_seg = np.concatenate([rec_seg[keep], ends, ends])
    all_t = np.concatenate([rec_t[keep], np.zeros(n_seg), np.ones(n_seg)])
    all_tri = np.concatenate([rec_tri[keep], np.asarray(face_p, dtype=np.int64), np.asarray(face_q, dtype=np.int64)])
    order = np.lexsort((all_t, all_seg))
    r_seg, r_t, r_tri = all_seg[order], all_t[order], all_tri[order]
    with np.errstate(divide="ignore"):
        eps_t = np.minimum(merge_mm / length, 0.5)
    new = np.ones(len(r_seg), dtype=bool)
    new[1:] = (r_seg[1:] != r_seg[:-1]) | (r_t[1:] - r_t[:-1] > eps_t[r_seg[1:]])
    gid = np.cumsum(new) - 1
    g_seg = r_seg[new]
    g_t = r_t[new].copy()
    last = np.ones(len(g_seg), dtype=bool)
    last[:-1] = g_seg[1:] != g_seg[:-1]
    g_t[last] = 1.0
    xy = p[g_seg] + g_t[:, None] * d[g_seg]
    first = np.ones(len(g_seg), dtype=bool)
    first[1:] = last[:-1]
    xy[first] = p[g_seg[first]]
    xy[last] = q[g_seg[last]]
    # candidate triangles of piece g (from point g to g + 1): those with a crossing at either end
    n_g = len(g_seg)
    is_piece = ~last
    c_piece = np.concatenate([gid, gid - 1])
    c_tri = np.concatenate([r_tri, r_tri])
    ok = (c_piece >= 0) & (c_tri >= 0)
    ok[ok] &= is_piece[c_piece[ok]]
    c_piece, c_tri = c_piece[ok], c_tri[ok]
    srt = np.argsort(c_piece, kind="stable")
    c_piece, c_tri = c_piece[srt], c_tri[srt]
    # λ is affine along a piece, so its smallest coordinate over the piece is taken at an end
    nxt = np.minimum(np.arange(n_g) + 1, n_g - 1)
    c_rows = aff[c_tri]
    lam_a = _bary_rows(c_rows, xy[c_piece])
    lam_b = _bary_rows(c_rows, xy[nxt[c_piece]])
    score = np.minimum(_min3(lam_a), _min3(lam_b))
    score[np.isnan(score)] = -np.inf  # a degenerate triangle holds nothing
    piece_face = np.full(n_g, -1, dtype=np.int64)
    piece_score = np.full(n_g, -np.inf)
    if len(c_piece):
        starts = np.flatnonzero(np.r_[True, c_piece[1:] != c_piece[:-1]])
        best = np.maximum.reduceat(score, starts)
        owner = c_piece[starts]
        piece_score[owner] = best
        win = np.flatnonzero(score == np.repeat(best, np.diff(np.r_[starts, len(score)])))
        win = win[np.r_[True, c_piece[win][1:] != c_piece[win][:-1]]]
        piece_face[c_piece[win]] = c_tri[win]
    return SegmentSplits(seg=g_seg, t=g_t, xy=xy, piece_face=piece_face, piece_score=piece_score)
