"""Regions to sweep: where on the garment the sensor must pass, as areas on pattern pieces.

Every region kind resolves to the same thing: a mapping piece name → shapely polygon (piece frame,
mm). A region may lie on several pieces; the sweep planner joins its parts across seams.

Kinds
-----
* :class:`PolygonRegion` — a polygon on one piece (several of them make a region on several
  pieces; :class:`UnionRegion`).
* :class:`PiecesRegion` — whole pieces (the planner keeps to their free space).
* :class:`NearPointRegion` — the fabric within a straight-line distance of a 3D point (world mm),
  found through the drape: the distance is linear on each drape triangle's corners, so the set is
  the sub-level set ``d <= R`` of a piecewise linear function, cut triangle by triangle in the
  pattern (the marching-triangles construction of an iso-contour).
* :class:`ZoneRegion` — a named body zone (``[[body_zone]]``, :mod:`garnav.zones`): pass
  ``zones`` (name → region of any kind, e.g. :func:`garnav.zones.sources.zone_regions`) to
  :func:`resolve_region`. Without one it is a clear :class:`~garnav.errors.QueryError`.

Any object with a ``resolve(context) -> dict[str, shapely geometry]`` method is a region
(:class:`Region`), so new kinds need no change here.

Text form (``garnav sweep --region``, see :func:`parse_region`)::

    pieces:back,front                   whole pieces
    polygon:back:10,20;200,20;200,300   a polygon on one piece, vertices x,y mm
    near:0,-95,1400:120                 within 120 mm of world point (0, -95, 1400)
    zone:wound_site                     a named body zone of the spec (needs the drape)
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Any, Mapping, Protocol, Sequence

import numpy as np
import shapely

from garnav.errors import QueryError, did_you_mean
from garnav.model import Garment

__all__ = [
    "Region",
    "RegionContext",
    "PolygonRegion",
    "PiecesRegion",
    "NearPointRegion",
    "ZoneRegion",
    "UnionRegion",
    "resolve_region",
    "parse_region",
    "near_point_areas",
]

_NUM = r"[-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?"


@dataclass(frozen=True)
class RegionContext:
    """What regions may need to resolve: the garment, optionally a drape and a zone catalogue."""

    garment: Garment
    drape: Any = None
    zones: Mapping[str, Any] = field(default_factory=dict)


class Region(Protocol):
    """Anything that resolves to areas on pieces: piece name → polygon (piece frame, mm)."""

    def resolve(self, context: RegionContext) -> dict[str, shapely.Geometry]: ...


def _piece_polygon(garment: Garment, piece: str, what: str) -> shapely.Geometry:
    names = [p.name for p in garment.pieces]
    if piece not in names:
        hint = did_you_mean(piece, names)
        raise QueryError(f"{what}: unknown piece '{piece}'" + (f"; {hint}" if hint else f"; pieces: {', '.join(names)}"))
    return garment.piece(piece).polygon


@dataclass(frozen=True)
class PolygonRegion:
    """A polygon on one piece: ``points`` ((x, y) mm, piece frame), at least three, any orientation.

    The part outside the piece is dropped; a polygon that misses the piece is an error.
    """

    piece: str
    points: tuple[tuple[float, float], ...]

    def resolve(self, context: RegionContext) -> dict[str, shapely.Geometry]:
        what = f"region polygon on '{self.piece}'"
        outline = _piece_polygon(context.garment, self.piece, what)
        pts = np.asarray(self.points, dtype=float).reshape(-1, 2)
        if len(pts) < 3 or not np.all(np.isfinite(pts)):
            raise QueryError(f"{what}: needs at least three finite points x,y in mm, got {len(pts)}")
        poly = shapely.Polygon(pts)
        if not poly.is_valid:
            poly = shapely.make_valid(poly, method="structure")
        if poly.area <= 0:
            raise QueryError(f"{what}: the polygon has no area (are its points in a line?)")
        area = _polygonal(poly.intersection(outline))
        if area.is_empty:
            raise QueryError(f"{what}: the polygon lies outside the piece")
        return {self.piece: area}


@dataclass(frozen=True)
class PiecesRegion:
    """Whole pieces, by name."""

    pieces: tuple[str, ...]

    def resolve(self, context: RegionContext) -> dict[str, shapely.Geometry]:
        if not self.pieces:
            raise QueryError("region pieces: name at least one piece")
        return {p: _piece_polygon(context.garment, p, "region pieces") for p in self.pieces}


@dataclass(frozen=True)
class NearPointRegion:
    """The fabric within ``radius_mm`` (straight-line, world mm) of the world point ``xyz``."""

    xyz: tuple[float, float, float]
    radius_mm: float

    def resolve(self, context: RegionContext) -> dict[str, shapely.Geometry]:
        what = f"region near ({', '.join(f'{v:g}' for v in self.xyz)}) within {self.radius_mm:g} mm"
        if context.drape is None:
            raise QueryError(f"{what}: needs a drape (a 3D mesh of the garment) to find the fabric near a 3D point")
        if not (np.isfinite(self.radius_mm) and self.radius_mm > 0):
            raise QueryError(f"{what}: the distance must be a positive number of mm")
        areas = near_point_areas(context.drape, np.asarray(self.xyz, dtype=float), float(self.radius_mm))
        if not areas:
            raise QueryError(f"{what}: no fabric lies that close to the point")
        return areas


@dataclass(frozen=True)
class ZoneRegion:
    """A named body zone, looked up in ``context.zones`` (name → any region)."""

    name: str

    def resolve(self, context: RegionContext) -> dict[str, shapely.Geometry]:
        if not context.zones:
            raise QueryError(
                f"region zone '{self.name}': the spec defines no body zones ([[body_zone]], "
                f"docs/zones.md); give the region as pieces:, polygon: or near: instead"
            )
        if self.name not in context.zones:
            hint = did_you_mean(self.name, list(context.zones))
            raise QueryError(f"region zone '{self.name}': unknown zone" + (f"; {hint}" if hint else f"; zones: {', '.join(sorted(context.zones))}"))
        return context.zones[self.name].resolve(context)


@dataclass(frozen=True)
class UnionRegion:
    """The union of several regions (e.g. polygons on several pieces)."""

    parts: tuple[Any, ...]

    def resolve(self, context: RegionContext) -> dict[str, shapely.Geometry]:
        out: dict[str, shapely.Geometry] = {}
        for part in self.parts:
            for piece, geom in part.resolve(context).items():
                out[piece] = _polygonal(out[piece].union(geom)) if piece in out else geom
        return out


def resolve_region(
    garment: Garment, region: Any, *, drape: Any = None, zones: Mapping[str, Any] | None = None
) -> dict[str, shapely.Geometry]:
    """Areas of a region on the pieces, in garment piece order: piece → polygon (piece frame, mm).

    Pieces the region does not touch are left out.
    """
    ctx = RegionContext(garment, drape, dict(zones or {}))
    areas = region.resolve(ctx)
    return {p.name: areas[p.name] for p in garment.pieces if p.name in areas and not areas[p.name].is_empty}


# --------------------------------------------------------------------------- near a 3D point


def near_point_areas(drape, xyz: np.ndarray, radius_mm: float) -> dict[str, shapely.Geometry]:
    """Pattern areas of the drape's fabric within ``radius_mm`` of ``xyz`` (3,), world mm.

    The squared distance is not linear on a triangle, the distance nearly is for small triangles:
    each triangle is cut by the linear interpolant of its corner distances (marching triangles), in
    the piece frame. Returns piece → polygon, pieces without such fabric left out.
    """
    d = np.linalg.norm(np.asarray(drape.positions, dtype=float) - xyz[None, :], axis=1)
    corner_d = d[np.asarray(drape.faces)]  # (F, 3)
    inside = corner_d <= radius_mm
    faces = np.flatnonzero(inside.any(axis=1))
    polys: dict[int, list[shapely.Geometry]] = {}
    pattern = np.asarray(drape.corner_pattern, dtype=float)
    for f in faces.tolist():
        tri = pattern[f]
        if inside[f].all():
            ring = tri
        else:
            ring = _clip_triangle(tri, corner_d[f] - radius_mm)
            if len(ring) < 3:
                continue
        polys.setdefault(int(drape.face_piece[f]), []).append(shapely.Polygon(ring))
    out: dict[str, shapely.Geometry] = {}
    for pid, parts in sorted(polys.items()):
        geom = _polygonal(shapely.union_all(parts, grid_size=None).buffer(0))
        if not geom.is_empty and geom.area > 0:
            out[drape.piece_names[pid]] = geom
    return out


def _clip_triangle(tri: np.ndarray, value: np.ndarray) -> np.ndarray:
    """The part of a triangle (3, 2) where the linear interpolant of ``value`` (3,) is <= 0."""
    out = []
    for k in range(3):
        a, b = tri[k], tri[(k + 1) % 3]
        va, vb = value[k], value[(k + 1) % 3]
        if va <= 0:
            out.append(a)
        if (va <= 0) != (vb <= 0):
            t = va / (va - vb)
            out.append(a + t * (b - a))
    return np.array(out).reshape(-1, 2)


def _polygonal(geom: shapely.Geometry) -> shapely.Geometry:
    parts = [g for g in shapely.get_parts(geom) if isinstance(g, shapely.Polygon) and g.area > 0]
    if not parts:
        return shapely.MultiPolygon()
    return parts[0] if len(parts) == 1 else shapely.MultiPolygon(parts)


# --------------------------------------------------------------------------- text form


def parse_region(texts: str | Sequence[str]) -> Any:
    """A region from its text form (see the module docstring); several texts make a union.

    >>> parse_region("pieces:back,front")
    PiecesRegion(pieces=('back', 'front'))
    >>> parse_region("near:0,-95,1400:120")
    NearPointRegion(xyz=(0.0, -95.0, 1400.0), radius_mm=120.0)
    >>> parse_region("polygon:back:0,0;10,0;10,10").points
    ((0.0, 0.0), (10.0, 0.0), (10.0, 10.0))
    """
    if isinstance(texts, str):
        return _parse_one(texts)
    items = [_parse_one(t) for t in texts]
    if not items:
        raise QueryError("no region given: use --region pieces:NAME, polygon:PIECE:X,Y;..., near:X,Y,Z:MM or zone:NAME")
    return items[0] if len(items) == 1 else UnionRegion(tuple(items))


def _numbers(text: str, what: str, count: int | None = None) -> tuple[float, ...]:
    parts = [p.strip() for p in text.split(",")]
    if not all(re.fullmatch(_NUM, p) for p in parts) or (count is not None and len(parts) != count):
        want = f"{count} numbers" if count else "numbers"
        raise QueryError(f"{what}: expected {want} separated by commas, got '{text}'")
    return tuple(float(p) for p in parts)


def _parse_one(text: str) -> Any:
    kind, _, rest = text.strip().partition(":")
    kind = kind.strip().lower()
    what = f"region '{text}'"
    if kind == "pieces" or kind == "piece":
        names = tuple(n.strip() for n in rest.split(",") if n.strip())
        if not names:
            raise QueryError(f"{what}: expected pieces:NAME[,NAME...]")
        return PiecesRegion(names)
    if kind == "polygon":
        piece, _, pts = rest.rpartition(":")
        if not piece.strip():
            raise QueryError(f"{what}: expected polygon:PIECE:X,Y;X,Y;X,Y (mm)")
        points = tuple(_numbers(p, what, 2) for p in pts.split(";") if p.strip())
        return PolygonRegion(piece.strip(), tuple((p[0], p[1]) for p in points))
    if kind == "near":
        xyz, _, radius = rest.rpartition(":")
        if not xyz:
            raise QueryError(f"{what}: expected near:X,Y,Z:DISTANCE (world mm)")
        x, y, z = _numbers(xyz, what, 3)
        (r,) = _numbers(radius, what, 1)
        return NearPointRegion((x, y, z), r)
    if kind == "zone":
        if not rest.strip():
            raise QueryError(f"{what}: expected zone:NAME")
        return ZoneRegion(rest.strip())
    raise QueryError(
        f"{what}: unknown region kind '{kind}'; use pieces:NAME[,NAME], polygon:PIECE:X,Y;X,Y;X,Y, "
        f"near:X,Y,Z:MM or zone:NAME"
    )
