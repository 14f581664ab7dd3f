"""Free space of a disc robot on each pattern piece.

The robot is a disc of radius ``r``; planning moves its centre. On a piece the centre may go
anywhere in::

    piece polygon
      − every open edge (open runs and openings) grown by r + edge_margin
      − every HARD keep-out grown by r + its clearance
      − the same obstacles of a PARTNER piece that reach the seam, carried across it

Seam edges are not shrunk: the fabric goes on, and the centre may sit on the seam itself (that is
where it crosses). SOFT keep-outs grown the same way become cost zones.

Growing (Minkowski sum with a disc)
-----------------------------------
shapely's ``buffer`` replaces each round arc by a polygon *inscribed* in it, so a plain
``buffer(d)`` undercuts the true offset. How much depends on the angle step of the arc:

* a **circle** (a buffered point) is a regular polygon with ``4q`` sides for ``q`` segments per
  quarter circle: its sides undercut the circle by ``d·(1 − cos(π/(4q)))``. Circle keep-outs of
  radius R are grown by buffering the centre by ``(R + d)/cos(π/(4q))`` (:func:`grow_factor`);
  worst-case over-approximation ``(R + d)·(1/cos(π/(4q)) − 1)``: 0.48 % at q = 8.
* a **corner** of a polygon or polyline gets a fillet arc of angle θ split into
  ``round(θ / (π/(2q)))`` equal steps (GEOS ``OffsetSegmentGenerator``), so one step may reach
  1.5 × π/(2q) (θ just under 1.5 quanta gives a single step): the chord undercuts the arc by up to
  ``d·(1 − cos(3π/(8q)))``. Polygon keep-outs and open edges are therefore grown by
  ``d/cos(3π/(8q))`` (:func:`join_grow_factor`); worst-case over-approximation
  ``d·(1/cos(3π/(8q)) − 1)``: 1.09 % of d at q = 8 (0.25 mm for d = 23 mm), straight sides
  included. (Growing by ``d/cos(π/(4q))`` alone, as the nominal arc step suggests, left the
  offset at a thin triangle's corner 0.007 mm short; a property test found it.)

Either way a grown shape always *contains* the true round offset, so the robot never comes closer
than ``d`` to a keep-out or an open edge.

Across seams
------------
A keep-out or an open edge on piece B that comes within its growth distance of a seam also
constrains a robot centre on piece A that straddles the seam. Each such grown obstacle is carried
into A's frame by the seam correspondence, taken locally as the rigid motion that maps the partner
run's tangent frame onto A's run frame at the point of the run nearest to the raw obstacle (the
partner's side of the seam lands outside A). The carried shape is clipped to a band of the growth
width around A's run. Not handled: (1) on curved seams the rigid motion is exact only at that
nearest point, so the carried shape is a first-order picture of the fabric beyond the seam;
(2) ease (runs of different length) is ignored when carrying; (3) obstacles are carried over one
seam only, not over two seams meeting at a corner. Soft zones are carried the same way.
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass
from functools import cached_property

import numpy as np
import shapely
import shapely.ops
from shapely import affinity

from garnav.errors import Problem as SpecProblem
from garnav.errors import SpecError
from garnav.model import SEAM_SIDES, Circle, Garment, Robot, Seam, SeamRun, SeamSide, other_side
from garnav.plan.segtest import BoundaryIndex, boundary_index, segments_in_region
from garnav.polyline import cumulative_length, point_at_length, sub_polyline, tangent_at
from garnav.spec.geometry_checks import robot_problems

__all__ = [
    "DEFAULT_QUAD_SEGS",
    "grow_factor",
    "join_grow_factor",
    "grow",
    "Obstacle",
    "SoftZone",
    "PieceFreeSpace",
    "FreeSpace",
    "build_free_space",
    "run_frame",
    "seam_transform",
]

DEFAULT_QUAD_SEGS = 8


def grow_factor(quad_segs: int = DEFAULT_QUAD_SEGS) -> float:
    """Factor ``1/cos(π/(4q))`` by which buffer distances are scaled so that a buffered shape
    contains the true round offset.

    >>> round(grow_factor(8), 6)
    1.004839
    >>> round(10 * grow_factor(8) * math.cos(math.pi / 32), 12)   # inscribed radius back to 10
    10.0
    """
    return 1.0 / math.cos(math.pi / (4 * int(quad_segs)))


def join_grow_factor(quad_segs: int = DEFAULT_QUAD_SEGS) -> float:
    """Factor ``1/cos(3π/(8q))`` for buffers of polygons and lines, whose corner fillets may take
    steps of up to 1.5 × π/(2q) (see the module docstring).

    >>> round(join_grow_factor(8), 6)
    1.010942
    """
    return 1.0 / math.cos(3.0 * math.pi / (8 * int(quad_segs)))


def grow(shape, distance: float, quad_segs: int = DEFAULT_QUAD_SEGS) -> shapely.Geometry:
    """Grow a keep-out shape (model ``Circle``/``Rectangle``/``PolygonShape``) or a shapely
    geometry by ``distance`` mm so that the result contains the true round offset.

    Circles are buffered from their centre, so the result is one regular polygon.
    """
    if isinstance(shape, Circle):
        f = grow_factor(quad_segs)
        return shapely.Point(shape.cx, shape.cy).buffer((shape.radius + distance) * f, quad_segs=quad_segs)
    geom = shape if isinstance(shape, shapely.Geometry) else shape.exact_geometry()
    if distance <= 0:
        return geom
    return geom.buffer(distance * join_grow_factor(quad_segs), quad_segs=quad_segs)


@dataclass(frozen=True)
class Obstacle:
    """One thing the robot centre keeps away from, on one piece (in that piece's frame).

    Attributes
    ----------
    label : str
        For messages, e.g. ``"keep-out 'pocket'"`` or ``"open edge 'hem'"``; a carried obstacle
        says ``"... across seam 'side'"``.
    raw : shapely geometry
        The exact shape (a polygon; a line for open edges), mm.
    grown : shapely geometry
        ``raw`` grown by ``need_mm`` (never smaller than the true offset), mm.
    need_mm : float
        Distance the robot centre keeps from ``raw``: radius + clearance (or + edge margin).
    name : str
        The keep-out, edge or opening name alone.
    carried : bool
        True when the obstacle lies on a partner piece and was carried across a seam.
    """

    label: str
    raw: shapely.Geometry
    grown: shapely.Geometry
    need_mm: float
    name: str
    carried: bool = False


@dataclass(frozen=True)
class SoftZone:
    """A soft keep-out grown like a hard one: length driven inside costs ``cost_factor`` times.
    ``raw`` is the exact shape, ``need_mm`` the growth distance; ``carried`` as for Obstacle."""

    name: str
    grown: shapely.Geometry
    cost_factor: float
    raw: shapely.Geometry | None = None
    need_mm: float = 0.0
    carried: bool = False


@dataclass(frozen=True)
class PieceFreeSpace:
    """Free space of one piece.

    Attributes
    ----------
    piece : str
    region : shapely Polygon or MultiPolygon
        Where the robot centre may be (closed set), piece frame, mm. Prepared for fast predicates.
    obstacles : tuple of Obstacle
        Everything subtracted from the piece polygon.
    soft : tuple of SoftZone
    """

    piece: str
    region: shapely.Geometry
    obstacles: tuple[Obstacle, ...]
    soft: tuple[SoftZone, ...]

    @cached_property
    def boundary_index(self) -> BoundaryIndex | None:
        """The grid index of the region's boundary edges for batch segment tests, built on first
        use and kept with this free space (None for an empty or invalid region)."""
        return boundary_index(self.region)

    def segments_free(self, a: np.ndarray, b: np.ndarray) -> np.ndarray:
        """Whether each segment a[i] → b[i] (each (m, 2), mm) lies in the free space (boundary
        included), with this free space's own index; (m,) bool. Exact (see
        :mod:`garnav.plan.segtest`)."""
        return segments_in_region(self.region, a, b, index=self.boundary_index)

    def covers(self, points: np.ndarray) -> np.ndarray:
        """Whether each point (m, 2) lies in the free space (boundary included); (m,) bool."""
        pts = shapely.points(np.asarray(points, dtype=float).reshape(-1, 2))
        return shapely.covers(self.region, pts)

    def blocking(self, point: np.ndarray) -> list[Obstacle]:
        """The obstacles whose grown shape contains ``point`` (2,), in order."""
        p = shapely.Point(float(point[0]), float(point[1]))
        return [o for o in self.obstacles if o.grown.intersects(p)]

    def nearest_free(self, point: np.ndarray) -> np.ndarray | None:
        """The free point (2,) nearest to ``point``, or None when the piece has no free space."""
        if self.region.is_empty:
            return None
        p = shapely.Point(float(point[0]), float(point[1]))
        if self.region.covers(p):
            return np.array([p.x, p.y])
        q = shapely.ops.nearest_points(self.region, p)[0]
        return np.array([q.x, q.y])


@dataclass(frozen=True)
class FreeSpace:
    """Free space of every piece of a garment for one robot."""

    pieces: dict[str, PieceFreeSpace]
    robot: Robot
    quad_segs: int
    extra_clearance_mm: float

    def __getitem__(self, piece: str) -> PieceFreeSpace:
        return self.pieces[piece]


# --------------------------------------------------------------------------------------------
# seam frames


def run_frame(garment: Garment, run: SeamRun, fraction: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Point, unit tangent (travel direction) and unit inward normal (into the run's piece) of a
    seam run at ``fraction`` of its arc length. Each (2,), piece frame.

    Pieces run counter-clockwise, so the interior lies left of the edge direction; a reversed run
    has it on its right.
    """
    pts = garment.run_polyline(run)
    s = float(np.clip(fraction, 0.0, 1.0)) * cumulative_length(pts)[-1]
    point = point_at_length(pts, s)
    t = tangent_at(pts, s)
    left = np.array([-t[1], t[0]])
    normal = -left if run.reverse else left
    return point, t, normal


def seam_transform(garment: Garment, seam: Seam, to_side: SeamSide, fraction: float) -> np.ndarray:
    """Affine map (3, 3) from the partner piece's frame into the ``to_side`` piece's frame,
    aligning the two runs at ``fraction``: tangent onto tangent, and the partner's inward normal
    onto the *outward* normal of ``to_side`` (the partner's fabric continues beyond the seam).
    """
    this, other = seam.run(to_side), seam.run(other_side(to_side))
    pa, ta, na = run_frame(garment, this, fraction)
    pb, tb, nb = run_frame(garment, other, fraction)
    lin = np.outer(ta, tb) - np.outer(na, nb)
    out = np.eye(3)
    out[:2, :2] = lin
    out[:2, 2] = pa - lin @ pb
    return out


def _apply(geom: shapely.Geometry, mat: np.ndarray) -> shapely.Geometry:
    a, b, c, d = mat[0, 0], mat[0, 1], mat[1, 0], mat[1, 1]
    return affinity.affine_transform(geom, [a, b, c, d, mat[0, 2], mat[1, 2]])


def _run_fraction_nearest(garment: Garment, run: SeamRun, geom: shapely.Geometry) -> float:
    line = shapely.LineString(garment.run_polyline(run))
    near = shapely.ops.nearest_points(line, geom)[0]
    return float(line.project(near, normalized=True)) if line.length > 0 else 0.0


# --------------------------------------------------------------------------------------------
# building


def _own_obstacles(
    garment: Garment, piece_name: str, robot: Robot, quad_segs: int, extra_clearance: float
) -> tuple[list[Obstacle], list[SoftZone]]:
    piece = garment.piece(piece_name)
    r = float(robot.radius_mm)
    edge_need = r + float(robot.edge_margin_mm)
    obstacles: list[Obstacle] = []
    for run in garment.open_runs():
        if run.piece != piece_name:
            continue
        line = shapely.LineString(sub_polyline(piece.edge(run.edge).array, run.from_mm, run.to_mm))
        obstacles.append(
            Obstacle(f"open edge '{run.edge}'", line, grow(line, edge_need, quad_segs), edge_need, run.edge)
        )
    for opening in piece.openings:
        ring = shapely.LinearRing(opening.array)
        obstacles.append(
            Obstacle(f"opening '{opening.name}'", ring, grow(ring, edge_need, quad_segs), edge_need, opening.name)
        )
    soft: list[SoftZone] = []
    for ko in garment.keepouts_on(piece_name):
        need = r + float(ko.clearance_mm) + float(extra_clearance)
        grown = grow(ko.shape, need, quad_segs)
        if ko.hard:
            obstacles.append(
                Obstacle(f"keep-out '{ko.name}'", ko.shape.exact_geometry(), grown, need, ko.name)
            )
        else:
            soft.append(SoftZone(ko.name, grown, float(ko.cost_factor), ko.shape.exact_geometry(), need))
    return obstacles, soft


def _carried(garment: Garment, own: dict[str, list], quad_segs: int) -> dict[str, list]:
    """Obstacles (or soft zones) of partner pieces that reach a seam, carried across it into each
    piece's frame and clipped to the band of their growth width along the seam."""
    carried: dict[str, list] = {p.name: [] for p in garment.pieces}
    for seam in sorted(garment.seams, key=lambda s: s.name):
        for side in SEAM_SIDES:
            this, other = seam.run(side), seam.run(other_side(side))
            other_line = shapely.LineString(garment.run_polyline(other))
            this_line = shapely.LineString(garment.run_polyline(this))
            for item in own[other.piece]:
                if not item.grown.intersects(other_line):
                    continue
                t = _run_fraction_nearest(garment, other, item.raw)
                mat = seam_transform(garment, seam, side, t)
                grown = _apply(item.grown, mat).intersection(grow(this_line, item.need_mm, quad_segs))
                grown = _polygonal(grown)
                if grown.is_empty:
                    continue
                changes = {"raw": _apply(item.raw, mat), "grown": grown, "carried": True}
                if isinstance(item, Obstacle):
                    changes["label"] = f"{item.label} across seam '{seam.name}'"
                carried[this.piece].append(dataclasses.replace(item, **changes))
    return carried


def build_free_space(
    garment: Garment,
    robot: Robot | None = None,
    *,
    quad_segs: int = DEFAULT_QUAD_SEGS,
    extra_clearance_mm: float = 0.0,
) -> FreeSpace:
    """Free space of every piece for a disc robot.

    Parameters
    ----------
    garment : Garment
    robot : Robot, optional
        Defaults to ``garment.robot`` (or a default :class:`Robot`).
    quad_segs : int
        Segments per quarter circle of every grown shape; the over-approximation is at most
        ``d·(1/cos(3π/(8q)) − 1)`` for a growth distance d (circles: ``(R + d)·(1/cos(π/(4q)) − 1)``).
    extra_clearance_mm : float
        Added to every keep-out's clearance (not to the edge margin).

    Returns
    -------
    FreeSpace
    """
    robot = robot or garment.robot or Robot()
    bad = robot_problems(robot)  # a robot built in Python is held to the spec's ranges (radius > 0, ...)
    if bad:
        raise SpecError(bad)
    if not (math.isfinite(extra_clearance_mm) and extra_clearance_mm >= 0):
        raise SpecError([SpecProblem("<memory>", "clearance", f"extra clearance must be a finite number >= 0, found {extra_clearance_mm!r}")])
    own: dict[str, list[Obstacle]] = {}
    soft: dict[str, list[SoftZone]] = {}
    for p in garment.pieces:
        own[p.name], soft[p.name] = _own_obstacles(garment, p.name, robot, quad_segs, extra_clearance_mm)
    carried = _carried(garment, own, quad_segs)
    carried_soft = _carried(garment, soft, quad_segs)
    out: dict[str, PieceFreeSpace] = {}
    for p in garment.pieces:
        obstacles = tuple(own[p.name] + carried[p.name])
        blocked = shapely.union_all([o.grown for o in obstacles]) if obstacles else shapely.Polygon()
        region = p.polygon.difference(blocked)
        region = shapely.make_valid(region) if not region.is_valid else region
        region = _polygonal(region)
        shapely.prepare(region)
        out[p.name] = PieceFreeSpace(p.name, region, obstacles, tuple(soft[p.name] + carried_soft[p.name]))
    return FreeSpace(out, robot, int(quad_segs), float(extra_clearance_mm))


def _polygonal(geom: shapely.Geometry) -> shapely.Geometry:
    """Keep only the polygonal parts of a geometry (drop stray lines and points)."""
    if geom.is_empty:
        return shapely.MultiPolygon()
    parts = [g for g in shapely.get_parts(geom) if isinstance(g, shapely.Polygon) and not g.is_empty]
    if len(parts) == 1:
        return parts[0]
    return shapely.MultiPolygon(parts)
