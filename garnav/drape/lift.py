"""Lift pattern-space polylines onto the draped 3D surface.

A straight pattern segment is mapped affinely inside each triangle, so its image is a straight 3D
segment per triangle, bending where it crosses a triangle edge. :func:`lift_polyline` inserts a
point at every edge crossing, so that the 3D polyline lies on the surface: all segments of the
polyline are split at once (:mod:`garnav.drape.split`: crossings with the edges of the triangles
in the grid buckets each segment passes through). Should a piece between split points not lie in
its triangle, the polyline is walked triangle by triangle instead ("straight walk"; Devillers,
Pion, Teillaud, *Walking in a triangulation*, Int. J. Found. Comput. Sci. 13(2), 2002).
:func:`lift_route` lifts every leg of a planned route and joins legs at their seam crossings;
:func:`lift_route_poses` lifts one route onto several drapes of one pattern (poses), the pattern
side once.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np

from garnav.drape.drape import Drape
from garnav.drape.locate import barycentric_2d
from garnav.drape.split import split_segments
from garnav.errors import QueryError
from garnav.model import Garment

__all__ = ["LiftedPath", "LiftedRoute", "lift_polyline", "lift_route", "lift_route_poses"]

#: Barycentric slack when deciding that a point is inside a triangle (relative, unitless).
_EPS = 1e-12
#: A piece between split points lies in a triangle when no barycentric coordinate of its ends
#: is below -_TOL (unitless); otherwise it runs outside the island (a hair outside its boundary).
_TOL = 1e-9
#: Split points closer than this (mm) along a segment are one point.
_MERGE_MM = 1e-10


@dataclass(frozen=True, eq=False)
class LiftedPath:
    """A pattern polyline on one piece, densified at triangle edges.

    Attributes
    ----------
    piece : str
    pattern : (M, 2) float array
        Dense points, piece frame, mm.
    face : (M,) int array
        Drape triangle of each point.
    bary : (M, 3) float array
        Barycentric coordinates of each point in its triangle.
    waypoint_index : (n,) int array
        Index into the dense points of each input point.
    snap : (n,) float array
        How far (mm, pattern) each input point was moved onto the mesh (0 inside the mesh).
    """

    piece: str
    pattern: np.ndarray
    face: np.ndarray
    bary: np.ndarray
    waypoint_index: np.ndarray
    snap: np.ndarray


def _bary(tri: list, x: float, y: float) -> tuple[float, float, float]:
    (ax, ay), (bx, by), (cx, cy) = tri
    v0x, v0y, v1x, v1y = bx - ax, by - ay, cx - ax, cy - ay
    den = v0x * v1y - v1x * v0y
    px, py = x - ax, y - ay
    l1 = (px * v1y - v1x * py) / den
    l2 = (v0x * py - px * v0y) / den
    return 1.0 - l1 - l2, l1, l2


def _norm_bary(lam) -> list[float]:
    lam = [max(v, 0.0) for v in lam]
    s = sum(lam)
    return [v / s for v in lam]


def lift_polyline(
    drape: Drape, piece: str, points: np.ndarray, snap_mm: float = 1.0
) -> LiftedPath:
    """Densify a piece-frame polyline at every triangle edge it crosses.

    All segments are split at once (:func:`garnav.drape.split.split_segments`: the crossings of
    each segment with the edges of the triangles in the grid buckets it passes through). A
    stretch outside the piece's triangles is moved onto the island's boundary; should a piece
    between split points not lie in its triangle (a mesh that is not a proper triangulation),
    the polyline is walked triangle by triangle instead.

    Parameters
    ----------
    drape : Drape
    piece : str
    points : (n, 2) float array
        Piece frame, mm, n >= 1.
    snap_mm : float
        Points (and stretches of a segment) at most this far (mm) outside the mesh's UV island are
        moved onto its boundary: a curved pattern outline is cut by the mesh's straight chords.

    Returns
    -------
    LiftedPath

    Raises
    ------
    QueryError
        Unknown piece, or a point or segment stretch farther than ``snap_mm`` outside the mesh.
    """
    pts = np.asarray(points, dtype=float).reshape(-1, 2)
    if len(pts) == 0:
        raise QueryError(f"{drape.source}: nothing to lift on piece '{piece}' (no points)")
    hits = drape.locate(piece, pts, snap_mm)
    target = drape.to_pattern(hits.face, hits.bary)
    if len(pts) == 1:
        xy, face, bary, wp = target, hits.face, hits.bary, np.array([0])
    else:
        try:
            dense = _lift_split(drape, piece, hits, target, snap_mm)
        except QueryError:  # confirmed (or not) by the walk, which raises the same message
            dense = None
        if dense is None:
            dense = _lift_walk(drape, piece, hits, target, snap_mm)
        xy, face, bary, wp = dense
    # drop repeated points (a walk through a vertex), never a waypoint
    is_wp = np.zeros(len(xy), dtype=bool)
    is_wp[wp] = True
    same_next = np.all(np.abs(np.diff(xy, axis=0)) <= 1e-12, axis=1)  # point j equals j + 1
    keep = np.ones(len(xy), dtype=bool)
    keep[1:] &= ~(same_next & ~is_wp[1:])
    keep[:-1] &= ~(same_next & ~is_wp[:-1] & is_wp[1:])
    new_index = np.cumsum(keep) - 1
    return LiftedPath(
        piece=piece,
        pattern=xy[keep],
        face=np.asarray(face, dtype=np.int64)[keep],
        bary=bary[keep],
        waypoint_index=new_index[np.asarray(wp)],
        snap=np.asarray(hits.snap),
    )


def _clipped_bary(drape: Drape, face: np.ndarray, xy: np.ndarray) -> np.ndarray:
    """(n, 3) barycentric coordinates of xy (n, 2) in faces (n,), clipped to >= 0, summing to 1."""
    lam = np.clip(barycentric_2d(drape.corner_pattern[face], xy), 0.0, None)
    return lam / lam.sum(axis=1, keepdims=True)


def _lift_split(drape: Drape, piece: str, hits, target: np.ndarray, snap_mm: float):
    """Dense points of the polyline through ``target`` (n >= 2, on the mesh) by splitting all its
    segments at once. Returns (xy (M, 2), face (M,), bary (M, 3), waypoint rows (n,)), or None
    when a piece between split points does not lie in its triangle (then walk)."""
    pl = drape.piece_locator(piece)
    ids, loc = pl.faces, pl.locator
    local = np.searchsorted(ids, hits.face)
    sp = split_segments(loc, target[:-1], target[1:], local[:-1], local[1:], _TOL, _MERGE_MM)
    n_g = len(sp.seg)
    is_piece = sp.is_piece
    face = sp.piece_face
    length = np.linalg.norm(sp.xy[np.minimum(np.arange(n_g) + 1, n_g - 1)] - sp.xy, axis=1)
    inside = (sp.piece_score >= -_TOL) | (length <= 2.0 * _MERGE_MM)
    outside = is_piece & ~inside
    if np.any(outside):
        # a piece off its best triangle must lie off every triangle: if its midpoint is in one
        # (beyond rounding), the split missed a crossing
        out = np.flatnonzero(outside)
        hit, _ = loc.locate(0.5 * (sp.xy[out] + sp.xy[out + 1]), tol=-_TOL)
        if np.any(hit >= 0):
            return None
    gface = np.where(outside, -1, ids[np.maximum(face, 0)])

    last = ~is_piece
    first = np.ones(n_g, dtype=bool)
    first[1:] = last[:-1]
    prev = np.maximum(np.arange(n_g) - 1, 0)
    # a split point between two outside pieces is replaced by the boundary; the first point of a
    # segment after the first is the previous segment's last point
    keep = ~(first & (sp.seg > 0)) & ~(~first & ~last & outside & outside[prev])
    pt_face = np.where(outside[prev], gface, gface[prev])
    wp_group = np.flatnonzero((first & (sp.seg == 0)) | last)  # waypoint j is group wp_group[j]
    mid = np.flatnonzero(keep & ~first & ~last)
    xy = sp.xy
    face_out = np.empty(n_g, dtype=np.int64)
    bary = np.empty((n_g, 3))
    face_out[wp_group] = hits.face
    bary[wp_group] = hits.bary
    face_out[mid] = pt_face[mid]
    bary[mid] = _clipped_bary(drape, pt_face[mid], xy[mid])

    kept = np.flatnonzero(keep)
    pos_of = np.cumsum(keep) - 1  # row in the kept arrays of each kept group
    xy_k, face_k, bary_k = xy[kept], face_out[kept], bary[kept]
    wp_rows = pos_of[wp_group]
    runs = np.flatnonzero(outside & ~(outside[prev] & ~first))  # first outside piece of each run
    if len(runs):
        segs, seg_face, seg_k = drape.boundary_segments(piece)
        at, add_xy, add_face = [], [], []
        for ga in runs.tolist():
            gb = ga + 1
            while outside[gb]:
                gb += 1
            start, end = xy[ga], xy[gb]
            _check_stretch(drape, piece, segs, start, end, snap_mm)
            for x, y, f in _boundary_vertices_along(segs, seg_face, seg_k, start, end, snap_mm):
                at.append(int(pos_of[ga]) + 1)
                add_xy.append((x, y))
                add_face.append(f)
        if at:
            add_xy_a = np.array(add_xy)
            add_face_a = np.array(add_face, dtype=np.int64)
            xy_k = np.insert(xy_k, at, add_xy_a, axis=0)
            face_k = np.insert(face_k, at, add_face_a)
            bary_k = np.insert(bary_k, at, _clipped_bary(drape, add_face_a, add_xy_a), axis=0)
            wp_rows = wp_rows + np.searchsorted(np.array(at), wp_rows, side="right")
    return xy_k, face_k, bary_k, wp_rows


def _check_stretch(drape: Drape, piece: str, segs, start, end, snap_mm: float) -> None:
    """Refuse a straight stretch outside the island that comes farther than snap_mm from it."""
    deviation = _stretch_deviation(segs, start, end, snap_mm)
    if deviation > snap_mm:
        raise QueryError(
            f"{drape.source}: the path on piece '{piece}' leaves the drape's triangles at "
            f"({start[0]:.1f}, {start[1]:.1f}) mm for {float(np.linalg.norm(end - start)):.1f} mm, "
            f"up to {deviation:.1f} mm away (allowed: {snap_mm:g} mm)"
        )


def _lift_walk(drape: Drape, piece: str, hits, target: np.ndarray, snap_mm: float):
    """Dense points by walking the triangles along each segment, one triangle at a time.

    The fallback of :func:`_lift_split` (same result on a proper triangulation, about 9 µs per
    dense point). Returns (xy, face, bary, waypoint rows) like it.
    """
    cp = drape.corner_pattern
    nb = drape.topology.neighbor
    segs, seg_face, seg_k = drape.boundary_segments(piece)
    max_steps = 4 * len(drape.faces) + 16

    out_xy: list[tuple[float, float]] = [tuple(target[0])]
    out_face: list[int] = [int(hits.face[0])]
    out_bary: list[list[float]] = [hits.bary[0].tolist()]
    wp = [0]
    for i in range(len(target) - 1):
        f = int(hits.face[i])
        px, py = target[i].tolist()
        bx, by = target[i + 1].tolist()
        entered = -1  # edge of f we came in through (not an exit candidate)
        steps = 0
        while True:
            steps += 1
            if steps > max_steps:
                raise QueryError(
                    f"{drape.source}: cannot walk from ({px:.2f}, {py:.2f}) to ({bx:.2f}, {by:.2f}) "
                    f"mm on piece '{piece}' (the mesh's UV island is not a proper triangulation)"
                )
            tri = cp[f].tolist()
            lb = _bary(tri, bx, by)
            if min(lb) >= -1e-9:
                break
            lp = _bary(tri, px, py)
            tau, k_exit = _exit_edge(lp, lb, entered)
            if k_exit < 0:  # rounding at a vertex: allow leaving through the entry edge
                tau, k_exit = _exit_edge(lp, lb, -1)
            if k_exit < 0:
                break
            x, y = px + tau * (bx - px), py + tau * (by - py)
            lam = [lp[j] + tau * (lb[j] - lp[j]) for j in range(3)]
            lam[k_exit] = 0.0
            out_xy.append((x, y))
            out_face.append(f)
            out_bary.append(_norm_bary(lam))
            g = int(nb[f, k_exit])
            if g >= 0:
                back = nb[g].tolist()
                entered = back.index(f) if back.count(f) == 1 else _entry_edge(cp[g].tolist(), x, y)
                f, px, py = g, x, y
                continue
            # left the island: find where the rest of the segment comes back, if it does
            f, px, py, entered = _reenter(
                drape, piece, segs, seg_face, seg_k, (x, y), (bx, by), snap_mm, out_xy, out_face, out_bary
            )
            if f < 0:
                break
        # the segment's end point, exactly as located
        out_xy.append((float(bx), float(by)))
        out_face.append(int(hits.face[i + 1]))
        out_bary.append(hits.bary[i + 1].tolist())
        wp.append(len(out_xy) - 1)
    return np.array(out_xy), np.array(out_face, dtype=np.int64), np.array(out_bary), np.array(wp)


def _exit_edge(lp, lb, skip: int) -> tuple[float, int]:
    """Where the segment p → b leaves the triangle: (τ along p → b, edge k), or (2, -1).

    ``lp``, ``lb`` are the barycentric coordinates of p and b; edge k is opposite corner k, and
    the segment crosses it where the (linear) coordinate k reaches 0.
    """
    tau, k_exit = 2.0, -1
    for k in range(3):
        if k == skip or lb[k] >= 0.0 or lb[k] >= lp[k]:
            continue
        t = max(lp[k], 0.0) / (lp[k] - lb[k])
        if t < tau:
            tau, k_exit = t, k
    return tau, k_exit


def _entry_edge(tri: list, x: float, y: float) -> int:
    lam = _bary(tri, x, y)
    return int(np.argmin(np.abs(lam)))


def _reenter(drape, piece, segs, seg_face, seg_k, xy, b, snap_mm, out_xy, out_face, out_bary):
    """After the walk left the island at ``xy``, continue at the next boundary crossing towards b.

    The stretch outside (up to that crossing, or up to b) is allowed when no point of it lies
    farther than ``snap_mm`` from the island; it is then moved onto the island's boundary: the
    boundary vertices that are the nearest boundary points of the stretch are inserted, so that a
    path running along the boundary (a route hugging a seam edge, a few µm outside after the
    mesh file's rounding) follows the boundary's bends in 3D instead of cutting across.

    Returns (face, x, y, entered_edge), or face -1 when the rest of the segment stays outside (its
    end was snapped onto the mesh already). Raises QueryError when the stretch lies farther than
    ``snap_mm`` from the island.
    """
    x0, y0 = xy
    bx, by = b
    dx, dy = bx - x0, by - y0
    length = float(np.hypot(dx, dy))
    if length <= snap_mm:
        return -1, x0, y0, -1
    # intersect the rest of the segment with all boundary segments of the piece
    a = segs[:, 0]
    e = segs[:, 1] - segs[:, 0]
    den = dx * e[:, 1] - dy * e[:, 0]
    with np.errstate(divide="ignore", invalid="ignore"):
        t = ((a[:, 0] - x0) * e[:, 1] - (a[:, 1] - y0) * e[:, 0]) / den
        u = ((a[:, 0] - x0) * dy - (a[:, 1] - y0) * dx) / den
    ok = np.isfinite(t) & (t > 1e-9) & (t <= 1.0) & (u >= -1e-9) & (u <= 1.0 + 1e-9)
    j = int(np.flatnonzero(ok)[np.argmin(t[ok])]) if np.any(ok) else -1
    t_end = float(t[j]) if j >= 0 else 1.0
    end = np.array([x0 + t_end * dx, y0 + t_end * dy])
    start = np.array([x0, y0])
    _check_stretch(drape, piece, segs, start, end, snap_mm)
    for x, y, f in _boundary_vertices_along(segs, seg_face, seg_k, start, end, snap_mm):
        out_xy.append((x, y))
        out_face.append(f)
        out_bary.append(_norm_bary(_bary(drape.corner_pattern[f].tolist(), x, y)))
    if j < 0:
        return -1, x0, y0, -1
    x, y = float(end[0]), float(end[1])
    f = int(seg_face[j])
    lam = list(_bary(drape.corner_pattern[f].tolist(), x, y))
    k = int(seg_k[j])
    lam[k] = 0.0
    out_xy.append((x, y))
    out_face.append(f)
    out_bary.append(_norm_bary(lam))
    return f, x, y, k


def _point_segment_distance(p: np.ndarray, segs: np.ndarray) -> np.ndarray:
    """(n, B) distances from points p (n, 2) to segments segs (B, 2, 2), mm."""
    a = segs[None, :, 0]
    e = segs[None, :, 1] - a
    ee = np.maximum(np.einsum("...i,...i->...", e, e), 1e-300)
    w = p[:, None, :] - a
    s = np.clip(np.einsum("...i,...i->...", w, e) / ee, 0.0, 1.0)
    return np.linalg.norm(w - s[..., None] * e, axis=-1)


def _near(segs: np.ndarray, start: np.ndarray, end: np.ndarray, reach: float) -> np.ndarray:
    """Boundary segments whose bounding box comes within ``reach`` of the stretch's box."""
    lo = np.minimum(start, end) - reach
    hi = np.maximum(start, end) + reach
    smin = segs.min(axis=1)
    smax = segs.max(axis=1)
    return np.all((smax >= lo) & (smin <= hi), axis=1)


def _stretch_deviation(segs: np.ndarray, start: np.ndarray, end: np.ndarray, snap_mm: float) -> float:
    """Largest distance (mm) from a straight stretch outside the island to the island's boundary.

    The distance to a set is 1-Lipschitz along the stretch, so sampling it every h mm finds the
    largest value to within h/2; h = snap_mm / 8 (at most 4000 samples; a longer stretch is
    sampled more coarsely).
    """
    length = float(np.linalg.norm(end - start))
    h = max(snap_mm / 8.0, length / 4000.0, 1e-9)
    n = int(np.ceil(length / h)) + 1
    near = _near(segs, start, end, snap_mm + h)
    if not np.any(near):
        return float("inf")
    tt = np.linspace(0.0, 1.0, n)[:, None]
    samples = start + tt * (end - start)
    return float(_point_segment_distance(samples, segs[near]).min(axis=1).max())


def _boundary_vertices_along(segs, seg_face, seg_k, start, end, snap_mm):
    """Boundary vertices (x, y, face) that are the nearest boundary points of a stretch outside
    the island, in order along it: the stretch moved onto the boundary, bend by bend."""
    near = np.flatnonzero(_near(segs, start, end, snap_mm))
    if len(near) == 0:
        return []
    d = end - start
    dd = float(d @ d)
    if dd <= 0.0:
        return []
    v = segs[near, 0]  # every boundary vertex starts one boundary segment
    t = (v - start) @ d / dd
    q = start + t[:, None] * d  # foot of each vertex on the stretch
    dist = np.linalg.norm(v - q, axis=1)
    inside = (t > 1e-9) & (t < 1.0 - 1e-9) & (dist <= snap_mm)
    if not np.any(inside):
        return []
    idx = np.flatnonzero(inside)
    nearest = _point_segment_distance(q[idx], segs[near]).min(axis=1)
    keep = idx[dist[idx] <= nearest + 1e-9]
    out = []
    for i in keep[np.argsort(t[keep], kind="stable")]:
        j = int(near[i])
        out.append((float(v[i, 0]), float(v[i, 1]), int(seg_face[j])))
    return out


@dataclass(frozen=True, eq=False)
class LiftedRoute:
    """A route on the 3D surface.

    Attributes
    ----------
    points : (M, 3) float array
        World positions, mm, on the drape's surface.
    normals : (M, 3) float array
        Unit outside surface normals (interpolated vertex normals).
    piece_index : (M,) int array
        Index into ``piece_names`` of each point's piece.
    piece_names : tuple of str
    pattern : (M, 2) float array
        Each point in its piece's frame, mm.
    face : (M,) int array
        Drape triangle of each point.
    bary : (M, 3) float array
        Barycentric coordinates in that triangle.
    waypoint_index : (K,) int array
        Dense index of every point of every leg, leg by leg (a crossing is the last point of one
        leg and the first of the next; both map to the same dense point when the seam closes).
    max_snap_mm : float
        Largest distance a route point had to be moved onto the mesh (pattern mm).
    """

    points: np.ndarray
    normals: np.ndarray
    piece_index: np.ndarray
    piece_names: tuple[str, ...]
    pattern: np.ndarray
    face: np.ndarray
    bary: np.ndarray
    waypoint_index: np.ndarray
    max_snap_mm: float = 0.0

    @cached_property
    def segment_length(self) -> np.ndarray:
        """(M-1,) 3D length of each segment, mm."""
        return np.linalg.norm(np.diff(self.points, axis=0), axis=1)

    @cached_property
    def segment_climb(self) -> np.ndarray:
        """(M-1,) rise of each segment along world +z, mm (negative going down)."""
        return np.diff(self.points[:, 2])

    @property
    def length_3d_mm(self) -> float:
        return float(self.segment_length.sum())

    @property
    def climb_up_mm(self) -> float:
        return float(np.clip(self.segment_climb, 0.0, None).sum())

    @property
    def climb_down_mm(self) -> float:
        return float(np.clip(-self.segment_climb, 0.0, None).sum())

    @property
    def pieces(self) -> tuple[str, ...]:
        """Piece name of every point."""
        return tuple(self.piece_names[i] for i in self.piece_index)

    def lines(self) -> list[str]:
        """A short summary in the style of the route table: 3D length, climbs, points."""
        z = self.points[:, 2]
        rows = [
            ("3D length", f"{self.length_3d_mm:.1f} mm on the drape"),
            ("climb", f"up {self.climb_up_mm:.1f} mm, down {self.climb_down_mm:.1f} mm "
             f"(height {z.min():.0f}..{z.max():.0f} mm)"),
            ("3D points", f"{len(self.points)}"),
        ]
        width = max(len(k) for k, _ in rows)
        return [f"{k:<{width}}  {v}" for k, v in rows]


def lift_route(
    drape: Drape, garment: Garment, route, snap_mm: float = 1.0, seam_tol_mm: float = 0.01
) -> LiftedRoute:
    """Lift a planned route (``garnav.plan`` Route: legs joined by seam crossings) onto the drape.

    Each leg is lifted with :func:`lift_polyline`. At a crossing the next leg starts at the
    partner point on the other piece, which is the same 3D point when the drape's seam closes; it
    becomes a separate dense point only when the two images are more than ``seam_tol_mm`` apart.

    Parameters
    ----------
    drape : Drape
    garment : Garment
        The garment the drape was linked to.
    route : Route
        Anything with ``legs`` (each with ``piece`` and ``points`` (n, 2)).
    snap_mm : float
        See :func:`lift_polyline`.
    seam_tol_mm : float
        Crossing images closer than this (mm) are one point.

    Returns
    -------
    LiftedRoute
    """
    return lift_route_poses((drape,), garment, route, snap_mm, seam_tol_mm)[0]


def lift_route_poses(
    drapes, garment: Garment, route, snap_mm: float = 1.0, seam_tol_mm: float = 0.01
) -> tuple[LiftedRoute, ...]:
    """Lift one route onto several drapes of one pattern (a garment's poses).

    Result for result the same as ``lift_route(d, garment, route, ...)`` for each drape ``d``, but
    the pattern side of the lift (:func:`lift_polyline` of every leg: location, the splits at
    triangle edges, the island boundary) runs once per distinct :attr:`Drape.pattern_key`: drapes of
    the same UV link share it, and only the 3D side (positions, normals, the joins at seams) is
    done per drape.

    ``drapes``: a sequence of Drape; the other parameters as :func:`lift_route`'s. Returns one
    LiftedRoute per drape.
    """
    names = tuple(p.name for p in garment.pieces)
    for drape in drapes:
        if names != drape.piece_names:
            raise QueryError(
                f"{drape.source}: the drape was linked to pieces {list(drape.piece_names)}, "
                f"not to this garment's {list(names)}"
            )
    if not route.legs:
        raise QueryError("the route has no legs to lift")
    done: dict[bytes, list[LiftedPath]] = {}
    out = []
    for drape in drapes:
        key = drape.pattern_key if len(drapes) > 1 else b""  # one drape: no digest to compute
        paths = done.get(key)
        if paths is None:
            paths = done[key] = [lift_polyline(drape, g.piece, g.points, snap_mm) for g in route.legs]
        out.append(_joined(drape, names, route.legs, paths, seam_tol_mm))
    return tuple(out)


def _joined(drape: Drape, names: tuple[str, ...], legs, paths: list[LiftedPath], seam_tol_mm: float) -> LiftedRoute:
    """The legs' lifted paths on ``drape`` joined at their seam crossings."""
    pattern, face, bary, pidx, wps, snaps = [], [], [], [], [], []
    count = 0
    for leg, path in zip(legs, paths):
        skip = 0
        if count:
            prev = drape.to_3d(np.array([face[-1][-1]]), bary[-1][-1:])
            here = drape.to_3d(path.face[:1], path.bary[:1])
            skip = 1 if float(np.linalg.norm(prev - here)) <= seam_tol_mm else 0
        pattern.append(path.pattern[skip:])
        face.append(path.face[skip:])
        bary.append(path.bary[skip:])
        pidx.append(np.full(len(path.face) - skip, names.index(leg.piece)))
        wps.append(np.maximum(path.waypoint_index - skip, -1) + count)
        snaps.append(path.snap)
        count += len(path.face) - skip
    face_all = np.concatenate(face)
    bary_all = np.vstack(bary)
    return LiftedRoute(
        points=drape.to_3d(face_all, bary_all),
        normals=drape.normals_at(face_all, bary_all),
        piece_index=np.concatenate(pidx),
        piece_names=names,
        pattern=np.vstack(pattern),
        face=face_all,
        bary=bary_all,
        waypoint_index=np.concatenate(wps),
        max_snap_mm=float(max(np.max(s) for s in snaps)),
    )
