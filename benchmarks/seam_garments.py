"""Seeded multi-piece garments for the cross-seam benchmarks, and their unfolding into one plane.

* :func:`chain_garment` — ``strips`` rectangular strips (default 10, each 300 × 200 mm) joined
  end to end by straight seams of equal length (the 200 mm short edges), a few seeded keep-outs
  per strip: a route from strip 0 to the last strip crosses ``strips − 1`` seams.
* :func:`tiled_garment` — ``k`` square pieces (200 × 200 mm) in a ``rows × cols`` grid
  (:func:`grid_shape`: the most square factorisation of k, e.g. 4 × 5 for k = 20), every shared
  edge a straight seam, seeded keep-outs per piece. The keep-outs of the piece in row r, column c
  are drawn from their own seed ``[seed, 37, r, c]``, so a piece is the same in every k.

Every seam has no ease (both runs of equal length), no crossing cost and **no crossing-angle limit**
(``min_crossing_angle_deg = 0``): laid edge to edge, the pieces are then one flat sheet — the
unfolding along the seams is a rigid placement (a translation per piece, ``layout``) — and a
route's cost is its length. That lets the reference of :mod:`benchmarks.refs`
(:class:`~benchmarks.refs.TangentVisibilityRef`) find the exact optimum over *all* seam sequences
as one shortest path in the free region of the union (:func:`unfolded_region`).

Keep-outs lie inside their piece and stay at least ``CORNER_CLEAR_MM`` (bounding circle) from every
piece corner: garnav carries an obstacle across one seam at a time, not across two seams meeting
at a corner (garnav/plan/freespace.py, "Not handled" (3)), so an obstacle near a corner shared by
four pieces would be missing from the diagonal piece's free space. With this clearance no grown
obstacle reaches a diagonal piece, and garnav's free space of every piece is the union's free space
restricted to that piece (up to the round-off of the carried shapes; the benchmark checks that
every garnav route lies in the union's free region).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import shapely
from shapely import affinity

from benchmarks import cases as C
from benchmarks.cases import ROBOT, random_keepouts
from garnav.model import Circle, Edge, Garment, KeepOut, Piece, Placement, PolygonShape, Rectangle, Robot, Seam, SeamRun

__all__ = [
    "SeamGarmentCase",
    "chain_garment",
    "tiled_garment",
    "grid_shape",
    "strip_garment",
    "as_one_piece",
    "unfolded_region",
    "to_unfolded",
    "route_unfolded",
    "STRIP_W_MM",
    "STRIP_H_MM",
    "STRIP_KEEPOUTS",
    "TILE_MM",
    "TILE_KEEPOUTS",
    "CORNER_CLEAR_MM",
    "UNFOLDED",
]

STRIP_W_MM = 300.0
STRIP_H_MM = 200.0
STRIP_KEEPOUTS = 8
TILE_MM = 200.0
TILE_KEEPOUTS = 6
#: Bounding-circle distance of every keep-out from every piece corner, mm: above the robot's
#: radius grown by garnav's largest growth factor (8 mm × 1.011; circles reach at most
#: 8 + 0.005 · 23 mm), so no grown keep-out reaches a piece that shares only a corner.
CORNER_CLEAR_MM = 10.0
#: Name of the single piece of :func:`as_one_piece`.
UNFOLDED = "unfolded"
SHEET_GAP_MM = 10.0


@dataclass(frozen=True)
class SeamGarmentCase:
    """A multi-piece garment whose pieces unfold rigidly into one plane.

    Attributes
    ----------
    name : str
    garment : Garment
    robot : Robot
    layout : dict piece → (dx, dy), mm
        The unfolded frame is the piece frame shifted by (dx, dy) (no rotation): pieces laid edge
        to edge along their seams.
    cells : dict piece → (row, col)
        Grid cell of each piece (a chain is one row).
    shape : (rows, cols)
    """

    name: str
    garment: Garment
    robot: Robot
    layout: dict[str, tuple[float, float]] = field(default_factory=dict)
    cells: dict[str, tuple[int, int]] = field(default_factory=dict)
    shape: tuple[int, int] = (1, 1)

    def grid_distance(self, a: str, b: str) -> int:
        """Manhattan distance of two pieces' grid cells: the fewest seams between them."""
        (ra, ca), (rb, cb) = self.cells[a], self.cells[b]
        return abs(ra - rb) + abs(ca - cb)


def _keepouts(piece: str, w: float, h: float, n: int, rng: np.random.Generator) -> list[KeepOut]:
    corners = [(0.0, 0.0, CORNER_CLEAR_MM), (w, 0.0, CORNER_CLEAR_MM), (w, h, CORNER_CLEAR_MM), (0.0, h, CORNER_CLEAR_MM)]
    return random_keepouts(n, rng, (0.0, 0.0, w, h), piece, avoid=corners, name_prefix=f"{piece}_k")


def _side_seam(left: str, right: str) -> Seam:
    """``left``'s right edge (bottom → top) sewn to ``right``'s left edge (run reversed: also bottom
    → top), so fraction t meets fraction t at the same height."""
    return Seam(f"{left}|{right}", SeamRun(left, "right"), SeamRun(right, "left", reverse=True))


def _stack_seam(lower: str, upper: str) -> Seam:
    """``lower``'s top edge (right → left) sewn to ``upper``'s bottom edge (run reversed: also right
    → left)."""
    return Seam(f"{lower}/{upper}", SeamRun(lower, "top"), SeamRun(upper, "bottom", reverse=True))


def chain_garment(strips: int = 10, seed: int = 0, keepouts_per_strip: int = STRIP_KEEPOUTS,
                  width_mm: float = STRIP_W_MM, height_mm: float = STRIP_H_MM) -> SeamGarmentCase:
    """``strips`` strips ``s0 … s{strips-1}`` of ``width_mm`` × ``height_mm`` joined end to end (right
    edge of strip i to left edge of strip i + 1), ``keepouts_per_strip`` seeded keep-outs each
    (squares, octagons, circles, 6–30 mm, as in :mod:`benchmarks.cases`), robot of
    :data:`benchmarks.cases.ROBOT` (radius 8 mm, edge margin 2 mm)."""
    w, h = float(width_mm), float(height_mm)
    pieces, keepouts, layout, cells = [], [], {}, {}
    for i in range(strips):
        name = f"s{i}"
        pieces.append(C.rect_piece(name, w, h, Placement(SHEET_GAP_MM + i * (w + SHEET_GAP_MM), SHEET_GAP_MM)))
        keepouts += _keepouts(name, w, h, keepouts_per_strip, np.random.default_rng([seed, 31, i]))
        layout[name] = (i * w, 0.0)
        cells[name] = (0, i)
    seams = tuple(_side_seam(f"s{i}", f"s{i + 1}") for i in range(strips - 1))
    sheet = (SHEET_GAP_MM + strips * (w + SHEET_GAP_MM), h + 2 * SHEET_GAP_MM)
    g = Garment(f"chain_{strips}", tuple(pieces), seams=seams, keepouts=tuple(keepouts), robot=ROBOT, sheet_size_mm=sheet)
    return SeamGarmentCase(g.name, g, ROBOT, layout, cells, (1, strips))


def strip_garment(seed: int = 0, keepouts: int = STRIP_KEEPOUTS, width_mm: float = STRIP_W_MM,
                  height_mm: float = STRIP_H_MM) -> SeamGarmentCase:
    """One strip-sized piece (all edges open) with as many keep-outs as a chain strip: the
    single-piece reference of the chain case (its own seed)."""
    w, h = float(width_mm), float(height_mm)
    kos = _keepouts("strip", w, h, keepouts, np.random.default_rng([seed, 41]))
    g = Garment("strip", (C.rect_piece("strip", w, h, Placement(SHEET_GAP_MM, SHEET_GAP_MM)),), keepouts=tuple(kos), robot=ROBOT,
                sheet_size_mm=(w + 2 * SHEET_GAP_MM, h + 2 * SHEET_GAP_MM))
    return SeamGarmentCase("strip", g, ROBOT, {"strip": (0.0, 0.0)}, {"strip": (0, 0)}, (1, 1))


def grid_shape(k: int) -> tuple[int, int]:
    """(rows, cols) with rows · cols = k, rows ≤ cols, rows as large as possible: 2 → 1 × 2,
    5 → 1 × 5, 10 → 2 × 5, 20 → 4 × 5."""
    if k < 1:
        raise ValueError(f"a tiled garment needs at least one piece, got k = {k}")
    rows = max(r for r in range(1, int(math.isqrt(k)) + 1) if k % r == 0)
    return rows, k // rows


def tiled_garment(k: int, seed: int = 0, keepouts_per_piece: int = TILE_KEEPOUTS, tile_mm: float = TILE_MM) -> SeamGarmentCase:
    """``k`` pieces ``p{r}_{c}`` of ``tile_mm`` × ``tile_mm`` in a :func:`grid_shape` grid, every
    shared edge a seam (horizontal neighbours right ↔ left, vertical neighbours top ↔ bottom), the
    outer edges open, ``keepouts_per_piece`` seeded keep-outs per piece."""
    rows, cols = grid_shape(k)
    s = float(tile_mm)
    pieces, keepouts, layout, cells = [], [], {}, {}
    for r in range(rows):
        for c in range(cols):
            name = f"p{r}_{c}"
            pieces.append(C.rect_piece(name, s, s, Placement(SHEET_GAP_MM + c * (s + SHEET_GAP_MM), SHEET_GAP_MM + r * (s + SHEET_GAP_MM))))
            keepouts += _keepouts(name, s, s, keepouts_per_piece, np.random.default_rng([seed, 37, r, c]))
            layout[name] = (c * s, r * s)
            cells[name] = (r, c)
    seams = [_side_seam(f"p{r}_{c}", f"p{r}_{c + 1}") for r in range(rows) for c in range(cols - 1)]
    seams += [_stack_seam(f"p{r}_{c}", f"p{r + 1}_{c}") for r in range(rows - 1) for c in range(cols)]
    sheet = (SHEET_GAP_MM + cols * (s + SHEET_GAP_MM), SHEET_GAP_MM + rows * (s + SHEET_GAP_MM))
    g = Garment(f"tiled_{k}", tuple(pieces), seams=tuple(seams), keepouts=tuple(keepouts), robot=ROBOT, sheet_size_mm=sheet)
    return SeamGarmentCase(g.name, g, ROBOT, layout, cells, (rows, cols))


# --------------------------------------------------------------------------------------------
# unfolding


def _shift_shape(shape, dx: float, dy: float):
    if isinstance(shape, Circle):
        return Circle(shape.cx + dx, shape.cy + dy, shape.radius)
    if isinstance(shape, Rectangle):
        return Rectangle(shape.cx + dx, shape.cy + dy, shape.width, shape.height, shape.angle_deg)
    if isinstance(shape, PolygonShape):
        return PolygonShape(tuple((x + dx, y + dy) for x, y in shape.points))
    raise TypeError(f"keep-out shape {type(shape).__name__} cannot be shifted")


def as_one_piece(case: SeamGarmentCase, pieces: list[str] | None = None) -> Garment:
    """The pieces (default: all) laid out in the unfolded frame as one piece :data:`UNFOLDED`
    whose every outline segment is an open edge, with their keep-outs shifted along.

    The union of the laid-out pieces must be one polygon without holes. Outline segments of the
    union that are seams to a piece left out become open edges too (the robot keeps its edge
    margin there): the free region of a subset is then a subset of the whole garment's, and a
    shortest path in it is never shorter than the optimum over all pieces.
    """
    names = [p.name for p in case.garment.pieces] if pieces is None else list(pieces)
    polys = [affinity.translate(case.garment.piece(n).polygon, *case.layout[n]) for n in names]
    union = shapely.union_all(polys)
    if not isinstance(union, shapely.Polygon) or len(union.interiors):
        raise ValueError(f"{case.name}: pieces {names} do not lay out into one polygon without holes")
    ring = np.asarray(shapely.orient_polygons(union).exterior.coords)[:-1]
    edges = tuple(Edge(f"e{i}", (tuple(map(float, ring[i])), tuple(map(float, ring[(i + 1) % len(ring)])))) for i in range(len(ring)))
    keep = set(names)
    kos = tuple(
        KeepOut(ko.name, UNFOLDED, ko.kind, _shift_shape(ko.shape, *case.layout[ko.piece]), ko.clearance_mm, ko.hard, ko.cost_factor)
        for ko in case.garment.keepouts
        if ko.piece in keep
    )
    x0, y0, x1, y1 = union.bounds
    return Garment(f"{case.name}_unfolded", (Piece(UNFOLDED, edges),), keepouts=kos, robot=case.robot,
                   sheet_size_mm=(float(x1 + SHEET_GAP_MM), float(y1 + SHEET_GAP_MM)))


def unfolded_region(case: SeamGarmentCase, pieces: list[str] | None = None, robot: Robot | None = None) -> shapely.Geometry:
    """Free region (Polygon or MultiPolygon, unfolded frame, mm) of the robot centre on the
    laid-out pieces: :func:`as_one_piece` through garnav's *single-piece* free space
    (:func:`garnav.plan.freespace.build_free_space`, the growth the single-piece benchmarks
    compare against; no seam, portal or carried obstacle is involved)."""
    from garnav.plan.freespace import build_free_space

    one = as_one_piece(case, pieces)
    return build_free_space(one, robot or case.robot)[UNFOLDED].region


def to_unfolded(case: SeamGarmentCase, piece: str, xy) -> np.ndarray:
    """Piece-frame point(s) (..., 2) of ``piece`` in the unfolded frame (..., 2), mm."""
    return np.asarray(xy, dtype=float) + np.asarray(case.layout[piece], dtype=float)


def route_unfolded(case: SeamGarmentCase, route) -> np.ndarray:
    """A garnav route's legs as one polyline (n, 2) in the unfolded frame, mm (a crossing's two
    sides are the same unfolded point)."""
    return np.vstack([to_unfolded(case, leg.piece, np.asarray(leg.points, dtype=float)) for leg in route.legs])
