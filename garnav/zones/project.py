"""Body zones → keep-outs on the pattern, through one drape (one pose).

A zone (:class:`~garnav.zones.model.BodyZone`) is the sub-level set ``g <= 0`` of its *excess*
``g(p) = f(p) - reach`` over world points p (mm): ``f`` is the distance to the sphere's centre or
to the capsule's axis segment (``reach`` = radius + distance), or minus the height above the
plane (``reach`` = distance). The fabric in the zone is ``{p on the drape : g(p) <= 0}``; its
pattern image is what the robot must keep out of.

Per drape triangle (the triangle → pattern map is affine, so a set cut in barycentric coordinates
is cut the same way in the pattern):

* every corner in the zone → the whole triangle is in (the zone is convex, the triangle is the
  convex hull of its corners);
* the plane zone: ``g`` is linear, so cutting the triangle at the zero of the linear interpolant
  of the corner values is exact (marching triangles);
* sphere and capsule: ``f`` is convex, so its linear interpolant ``I f`` lies above it, by at most
  ``M ρ² / 2`` where ``M`` bounds the second derivative and ``ρ`` is the radius of the smallest
  ball holding the triangle (Waldron, "The error in linear interpolation at the vertices of a
  simplex", SIAM J. Numer. Anal. 35(3), 1998 — from memory). The distance to a point or a
  segment has ``M <= 1 / r`` at distance ``r`` from it, so cutting at ``I g <= δ`` with
  ``δ = ρ² / (2 r_min)`` keeps every zone point; where ``r_min`` is not safely positive the whole
  triangle is taken;
* a triangle is a candidate at all only when ``g(m) - ρ <= 0`` at its enclosing-ball centre
  ``m`` (``g`` is 1-Lipschitz in 3D), or, for the plane, when a corner is in.

The cut pieces are joined per piece (shapely ``union_all``), holes are filled, and the outline is
simplified by :data:`SIMPLIFY_MM` and grown by the same amount (Douglas–Peucker keeps the original
within that distance of the simplified outline; the growth is divided by ``cos(π / 4q)`` because a
buffered polygon undercuts the round offset — DESIGN.md "Free space"). So each keep-out contains
every fabric point of the zone; it reaches at most about ``2·SIMPLIFY_MM + δ`` beyond it
(measured in the tests and docs/zones.md).
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np
import shapely

from garnav.errors import QueryError, did_you_mean
from garnav.model import BODY_ZONE_KIND, Garment, KeepOut, PolygonShape
from garnav.zones.model import BodyZone

if TYPE_CHECKING:
    from garnav.drape.drape import Drape

__all__ = [
    "SIMPLIFY_MM",
    "zone_anchor_points",
    "zone_excess",
    "zone_areas",
    "zone_keepouts",
    "with_zone_keepouts",
    "zone_of_keepout",
    "zone_report_lines",
]

#: Tolerance of the outline simplification and the outward growth that pays for it, mm.
SIMPLIFY_MM = 0.25
_QUAD_SEGS = 4


def zone_anchor_points(zone: BodyZone, garment: Garment, drape: Drape | None = None) -> np.ndarray:
    """(k, 3) world points (mm) of a zone's anchors: world points as given, body landmarks by
    their ``xyz``, pattern landmarks lifted through ``drape``.

    Raises
    ------
    QueryError
        An unknown landmark, or a pattern landmark without a drape.
    """
    out = []
    names = [m.name for m in garment.landmarks]
    for a in zone.anchors:
        if not isinstance(a, str):
            out.append(np.asarray(a, dtype=float))
            continue
        if a not in names:
            hint = did_you_mean(a, names)
            raise QueryError(f"body zone '{zone.name}': unknown landmark '{a}'" + (f"; {hint}" if hint else ""))
        lm = garment.landmark(a)
        if lm.xyz is not None:
            out.append(np.asarray(lm.xyz, dtype=float))
        elif drape is None or lm.piece is None:
            raise QueryError(f"body zone '{zone.name}': landmark '{a}' is on the pattern; a drape "
                             "is needed to place it on the body")
        else:
            out.append(drape.pattern_to_3d(lm.piece, np.array([[lm.x, lm.y]]), snap_mm=5.0)[0])
    return np.vstack(out).reshape(-1, 3)


def _plane(zone: BodyZone, pts: np.ndarray) -> tuple[np.ndarray, float]:
    """Unit normal (3,) pointing into the zone (up, +z side) and offset: height = n·p - c."""
    n = np.cross(pts[1] - pts[0], pts[2] - pts[0])
    norm = float(np.linalg.norm(n))
    if norm < 1e-9 or abs(n[2]) < 1e-6 * norm:
        raise QueryError(f"body zone '{zone.name}': the three anchors of an above_plane zone must "
                         "span a plane that is not vertical (so that 'above' means something)")
    n = n / norm
    if n[2] < 0:
        n = -n
    return n, float(n @ pts[0])


def _segment_distance(p: np.ndarray, a: np.ndarray, b: np.ndarray) -> np.ndarray:
    ab = b - a
    den = float(ab @ ab)
    t = np.zeros(len(p)) if den == 0 else np.clip((p - a) @ ab / den, 0.0, 1.0)
    return np.linalg.norm(p - (a + t[:, None] * ab), axis=1)


def zone_excess(zone: BodyZone, anchors: np.ndarray, points: np.ndarray) -> np.ndarray:
    """``g`` (n,) at world points (n, 3), mm: <= 0 inside the zone, else (for sphere and capsule)
    the straight-line distance to it; for the plane, the depth below the zone's lower face."""
    p = np.asarray(points, dtype=float).reshape(-1, 3)
    if zone.shape == "above_plane":
        n, c = _plane(zone, anchors)
        return -(p @ n - c) - float(zone.distance_mm or 0.0)
    a = anchors[0]
    b = anchors[1] if zone.shape == "capsule" else anchors[0]
    return _segment_distance(p, a, b) - zone.reach_mm


def _enclosing_balls(tri: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Centre (F, 3) and radius (F,) of each triangle's smallest enclosing ball (world mm)."""
    a, b, c = tri[:, 0], tri[:, 1], tri[:, 2]
    e = np.stack([b - c, c - a, a - b], axis=1)  # edge opposite each corner
    l2 = np.einsum("fkd,fkd->fk", e, e)
    k = np.argmax(l2, axis=1)
    mid = 0.5 * (tri[np.arange(len(tri)), (k + 1) % 3] + tri[np.arange(len(tri)), (k + 2) % 3])
    r_mid = 0.5 * np.sqrt(l2[np.arange(len(tri)), k])
    # obtuse or right (or degenerate): the longest edge's midpoint; else the circumcentre
    obtuse = 2 * l2.max(axis=1) >= l2.sum(axis=1)
    u, v = a - c, b - c
    w = np.cross(u, v)
    w2 = np.einsum("fd,fd->f", w, w)
    safe = np.where(w2 > 0, w2, 1.0)
    cc = c + np.cross(np.einsum("fd,fd->f", u, u)[:, None] * v - np.einsum("fd,fd->f", v, v)[:, None] * u, w) / (2 * safe[:, None])
    r_cc = np.linalg.norm(cc - c, axis=1)
    use_mid = obtuse | (w2 <= 0)
    centre = np.where(use_mid[:, None], mid, cc)
    radius = np.where(use_mid, r_mid, r_cc) * (1 + 1e-12) + 1e-9
    return centre, radius


def _clip_polygons(corners: np.ndarray, values: np.ndarray) -> np.ndarray:
    """Marching triangles, vectorised: the part of each triangle (T, 3, 2) where the linear
    interpolant of ``values`` (T, 3) is <= 0, as (T, 4, 2) rings (a triangle repeats a point)."""
    slots = np.zeros((len(corners), 6, 2))
    keep = np.zeros((len(corners), 6), dtype=bool)
    for k in range(3):
        pa, pb = corners[:, k], corners[:, (k + 1) % 3]
        va, vb = values[:, k], values[:, (k + 1) % 3]
        slots[:, 2 * k] = pa
        keep[:, 2 * k] = va <= 0
        cross = (va <= 0) != (vb <= 0)
        t = np.where(cross, va / np.where(cross, va - vb, 1.0), 0.0)
        slots[:, 2 * k + 1] = pa + t[:, None] * (pb - pa)
        keep[:, 2 * k + 1] = cross
    order = np.argsort(~keep, axis=1, kind="stable")  # kept slots first, in ring order
    ring = np.take_along_axis(slots, order[:, :, None], axis=1)[:, :4]
    count = keep.sum(axis=1)  # 3 or 4 for every triangle handed in
    ring[count == 3, 3] = ring[count == 3, 2]
    return ring


def _face_polygons(zone: BodyZone, anchors: np.ndarray, drape: Drape, balls=None
                   ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Conservative pattern polygons of the zone's fabric: face ids (T,), rings (T, 4, 2) and
    whether each is the whole triangle (T,). ``balls``: :func:`_enclosing_balls` of the drape's
    triangles, when already computed."""
    faces = np.asarray(drape.faces)
    gv = zone_excess(zone, anchors, drape.positions)
    gc = gv[faces]  # (F, 3)
    if zone.shape == "above_plane":
        cand = np.flatnonzero((gc <= 0).any(axis=1))
        values = gc[cand]
        whole = (values <= 0).all(axis=1)
    else:
        if balls is None:
            balls = _enclosing_balls(np.asarray(drape.positions, dtype=float)[faces])
        centre, rho = balls
        g_centre = zone_excess(zone, anchors, centre)
        cand = np.flatnonzero(g_centre - rho <= 0)
        values = gc[cand]
        inside = (values <= 0).all(axis=1)
        r_min = g_centre[cand] + zone.reach_mm - rho[cand]  # lower bound of f on the triangle
        ok = r_min > rho[cand]  # else take the whole triangle
        delta = np.where(ok, rho[cand] ** 2 / (2 * np.where(ok, r_min, 1.0)), 0.0)
        whole = inside | ~ok
        values = np.where(whole[:, None], -1.0, values - delta[:, None])
        hit = (values <= 0).any(axis=1)
        cand, values, whole = cand[hit], values[hit], whole[hit]
    corners = np.asarray(drape.corner_pattern, dtype=float)[cand]
    return cand, _clip_polygons(corners, values), whole


def _union(whole: np.ndarray, cut: np.ndarray) -> shapely.Geometry:
    """Union of whole mesh triangles (k, 3, 2) — a coverage, joined by GEOS's fast coverage union
    (a plain union if they do not node exactly) — and cut triangles (m, 4, 2)."""
    parts = []
    if len(whole):
        tris = shapely.polygons(whole)
        try:
            parts.append(shapely.coverage_union_all(tris))
        except shapely.errors.GEOSException:
            parts.append(shapely.union_all(tris))
    if len(cut):
        polys = shapely.polygons(cut)
        parts.extend(polys[shapely.area(polys) > 0])
    return shapely.union_all(parts)


def zone_areas(zone: BodyZone, garment: Garment, drape: Drape, balls=None) -> dict[str, shapely.Geometry]:
    """The zone's fabric on each piece as a conservative polygon (piece frame, mm, holes filled):
    piece → polygon or multipolygon, pieces the zone misses left out."""
    anchors = zone_anchor_points(zone, garment, drape)
    ids, rings, whole = _face_polygons(zone, anchors, drape, balls)
    out: dict[str, shapely.Geometry] = {}
    if not len(ids):
        return out
    piece_of = np.asarray(drape.face_piece)[ids]
    grow = SIMPLIFY_MM / math.cos(math.pi / (4 * _QUAD_SEGS))
    corner_pattern = np.asarray(drape.corner_pattern, dtype=float)
    for pid in np.unique(piece_of).tolist():
        on = piece_of == pid
        union = _union(corner_pattern[ids[on & whole]], rings[on & ~whole])
        parts = []
        for part in shapely.get_parts(union):
            if not isinstance(part, shapely.Polygon) or part.is_empty:
                continue
            filled = shapely.Polygon(part.exterior)
            simple = shapely.simplify(filled, SIMPLIFY_MM, preserve_topology=True)
            parts.append(shapely.buffer(simple, grow, quad_segs=_QUAD_SEGS))
        geom = shapely.union_all(parts)
        filled_parts = [shapely.Polygon(g.exterior) for g in shapely.get_parts(geom) if isinstance(g, shapely.Polygon)]
        if filled_parts:
            geom = filled_parts[0] if len(filled_parts) == 1 else shapely.MultiPolygon(filled_parts)
            out[drape.piece_names[pid]] = geom
    return {p.name: out[p.name] for p in garment.pieces if p.name in out}


def zone_keepouts(garment: Garment, drape: Drape, zones: tuple[BodyZone, ...] | None = None) -> tuple[KeepOut, ...]:
    """Keep-outs (kind ``body_zone``) of the garment's body zones on this drape (pure).

    Each zone gives one keep-out per connected part per piece, named ``ZONE@PIECE`` (and
    ``ZONE@PIECE#2``, ... for further parts), hard or soft as the zone is, with the zone's
    ``clearance_mm`` (a drift allowance; the zone's distance is already in the polygon, and the
    planner adds the robot's radius as for any keep-out).

    Parameters
    ----------
    garment : Garment
    drape : Drape
        One pose of the garment, linked to its pieces.
    zones : tuple of BodyZone, optional
        Default: ``garment.body_zones``.
    """
    out: list[KeepOut] = []
    todo = garment.body_zones if zones is None else zones
    balls = None
    if any(z.shape != "above_plane" for z in todo):  # shared by every sphere and capsule
        balls = _enclosing_balls(np.asarray(drape.positions, dtype=float)[np.asarray(drape.faces)])
    for zone in todo:
        for piece, geom in zone_areas(zone, garment, drape, balls).items():
            for k, part in enumerate(shapely.get_parts(geom)):
                pts = np.asarray(part.exterior.coords)[:-1]
                name = f"{zone.name}@{piece}" + (f"#{k + 1}" if k else "")
                shape = PolygonShape(tuple((float(x), float(y)) for x, y in pts))
                out.append(KeepOut(name, piece, BODY_ZONE_KIND, shape, zone.clearance_mm, zone.hard,
                                   zone.cost_factor))
    return tuple(out)


def with_zone_keepouts(garment: Garment, drape: Drape) -> Garment:
    """The garment with its body zones' keep-outs on this drape added (unchanged without zones)."""
    if not garment.body_zones:
        return garment
    return garment.with_keepouts(zone_keepouts(garment, drape))


def zone_report_lines(garment: Garment, drape: Drape) -> list[str]:
    """Lines for ``garnav check --drape``: per zone the pieces and area it covers, and every pattern
    or body landmark whose place on this drape lies in it (a route there would be refused)."""
    from garnav.drape.inverse import locate_3d

    keepouts = zone_keepouts(garment, drape)
    out = []
    for zone in garment.body_zones:
        mine = [k for k in keepouts if k.name.split("@", 1)[0] == zone.name]
        where = ", ".join(f"{k.piece} {k.shape.exact_geometry().area / 100:.0f} cm²" for k in mine) or "no fabric"
        out.append(f"body zone '{zone.name}' ({zone.kind}, {zone.distance_mm:g} mm): {where}")
        for lm in garment.landmarks:
            try:
                piece, x, y = (lm.piece, lm.x, lm.y) if lm.on_pattern else locate_3d(drape, garment, lm.xyz)[:3]
            except QueryError:
                continue
            pt = shapely.Point(x, y)
            if any(k.piece == piece and k.shape.exact_geometry().covers(pt) for k in mine):
                out.append(f"  note: landmark '{lm.name}' lies in body zone '{zone.name}': no route may "
                           "start or end there")
    return out


def zone_of_keepout(garment: Garment, keepout: KeepOut) -> BodyZone | None:
    """The body zone a projected keep-out came from (by its ``ZONE@PIECE`` name), or None."""
    if keepout.kind != BODY_ZONE_KIND:
        return None
    name = keepout.name.split("@", 1)[0]
    for z in garment.body_zones:
        if z.name == name:
            return z
    return None
