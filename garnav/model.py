"""The garment model: pieces, seams, keep-outs, landmarks and the robot profile.

Immutable objects with plain-tuple fields, so that two garments compare equal exactly when their
specs are equal (the spec round trip relies on it). Geometry accessors return fresh numpy arrays
or shapely geometries derived from those tuples.

Frames (see DEVELOPERS.md):

* **piece frame** — 2D, mm, seen from the garment's outside (face side), x across, y along the
  grainline towards the garment's top. A piece's edges run counter-clockwise around it.
* **sheet frame** — all pieces laid on one sheet; piece → sheet is the rigid motion
  :class:`Placement`. UV = sheet position / ``Garment.sheet_size_mm``.
* **world frame** — mm, right-handed: z up, y forward (where the wearer faces), x towards the
  wearer's right.

This module does no I/O and no validation beyond what construction needs; the spec reader
(:mod:`garnav.spec`) validates and reports every problem of a file at once.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field, replace
from functools import cached_property
from typing import TYPE_CHECKING, Literal

import numpy as np
import shapely

from garnav.errors import Problem, SpecError
from garnav.polyline import cumulative_length, point_at_length, rotation_matrix, sub_polyline

if TYPE_CHECKING:  # the profiles' own modules; imported only for type checkers
    from garnav.mechanics.profile import RobotPhysics
    from garnav.uncertainty.model import OdometryModel
    from garnav.zones.model import BodyZone
    from garnav.poses.model import Pose

__all__ = [
    "Point2",
    "Edge",
    "Opening",
    "Placement",
    "Piece",
    "SeamRun",
    "Seam",
    "SeamSide",
    "SEAM_SIDES",
    "other_side",
    "Circle",
    "PolygonShape",
    "Rectangle",
    "KeepOut",
    "KEEPOUT_KINDS",
    "BODY_ZONE_KIND",
    "ALL_KEEPOUT_KINDS",
    "Landmark",
    "Robot",
    "Garment",
    "OpenRun",
]

Point2 = tuple[float, float]

# Which run of a seam: "a" or "b". The one seam-side type of plan/ and export/ (a crossing records
# the side it leaves from; arrays that need an integer code use the index into SEAM_SIDES).
SeamSide = Literal["a", "b"]
SEAM_SIDES: tuple[SeamSide, SeamSide] = ("a", "b")


def other_side(side: SeamSide) -> SeamSide:
    """The other run of a seam: ``"b"`` for ``"a"`` and ``"a"`` for ``"b"``."""
    return "b" if side == "a" else "a"

KEEPOUT_KINDS = (
    "pocket",
    "button",
    "buttonhole",
    "zip",
    "label",
    "dart",
    "print",
    "sensor",
    "dock",
    "custom",
)

#: The kind of the keep-outs a drape projects from a ``[[body_zone]]`` (:mod:`garnav.zones`); never
#: written in a spec file, so not one of :data:`KEEPOUT_KINDS`.
BODY_ZONE_KIND = "body_zone"
#: Every kind a :class:`KeepOut` may have in memory.
ALL_KEEPOUT_KINDS = KEEPOUT_KINDS + (BODY_ZONE_KIND,)



def _check_numbers(item: str, **rules: tuple[object, str]) -> None:
    """Raise one :class:`SpecError` naming ``item`` for every value that breaks its rule.

    ``rules`` maps a field name to ``(value, rule)`` with rule ``"finite"``, ``"positive"``
    (finite and > 0) or ``"non-negative"`` (finite and >= 0): model objects built in Python are
    held to the reader's rule that every number is finite (ranges — radius > 0 and so on — are
    checked by :func:`garnav.spec.garment_problems`, and by the planner for the robot it is given).
    """
    problems = []
    for name, (value, rule) in rules.items():
        try:
            v = float(value)  # type: ignore[arg-type]
        except (TypeError, ValueError):
            problems.append(Problem("<memory>", item, f"'{name}' must be a number, found {value!r}"))
            continue
        if not math.isfinite(v):
            problems.append(Problem("<memory>", item, f"'{name}' must be a finite number, found {v!r}"))
        elif rule == "positive" and v <= 0:
            problems.append(Problem("<memory>", item, f"'{name}' must be > 0, found {v:g}"))
        elif rule == "non-negative" and v < 0:
            problems.append(Problem("<memory>", item, f"'{name}' must be >= 0, found {v:g}"))
    if problems:
        raise SpecError(problems)


@dataclass(frozen=True)
class Edge:
    """A named stretch of a piece's outline.

    ``points`` is a polyline (mm, piece frame) of at least two points, running in the outline's
    counter-clockwise order. Consecutive edges of a piece share their end and start points.
    """

    name: str
    points: tuple[Point2, ...]

    @cached_property
    def array(self) -> np.ndarray:
        """(n, 2) float array of the edge's points."""
        arr = np.array(self.points, dtype=float).reshape(-1, 2)
        arr.flags.writeable = False
        return arr

    @cached_property
    def length(self) -> float:
        """Arc length in mm."""
        return float(cumulative_length(self.array)[-1])


@dataclass(frozen=True)
class Opening:
    """An interior hole in a piece (e.g. a neck hole cut from a yoke). Its boundary is open: a drop.

    ``points`` is a closed ring without the repeated first point (mm, piece frame), any orientation.
    """

    name: str
    points: tuple[Point2, ...]

    @cached_property
    def array(self) -> np.ndarray:
        """(n, 2) float array of the ring's points (first point not repeated)."""
        arr = np.array(self.points, dtype=float).reshape(-1, 2)
        arr.flags.writeable = False
        return arr


@dataclass(frozen=True)
class Placement:
    """Rigid motion piece frame → sheet frame: rotate by ``angle_deg`` (CCW) then shift by (x, y) mm."""

    x: float = 0.0
    y: float = 0.0
    angle_deg: float = 0.0

    def to_sheet(self, points: np.ndarray) -> np.ndarray:
        """Map piece-frame points (..., 2) to sheet-frame points (..., 2), mm."""
        rot = rotation_matrix(math.radians(self.angle_deg))
        return np.asarray(points, dtype=float) @ rot.T + np.array([self.x, self.y])

    def from_sheet(self, points: np.ndarray) -> np.ndarray:
        """Map sheet-frame points (..., 2) back to the piece frame (..., 2), mm."""
        rot = rotation_matrix(math.radians(self.angle_deg))
        return (np.asarray(points, dtype=float) - np.array([self.x, self.y])) @ rot


@dataclass(frozen=True)
class Piece:
    """A flat pattern piece.

    Parameters
    ----------
    name : str
    edges : tuple of Edge
        The outline as consecutive named edges, counter-clockwise; the last edge ends where the
        first begins.
    openings : tuple of Opening
        Interior holes.
    placement : Placement
        Where the piece lies on the sheet.
    """

    name: str
    edges: tuple[Edge, ...]
    openings: tuple[Opening, ...] = ()
    placement: Placement = field(default_factory=Placement)

    @cached_property
    def outline(self) -> np.ndarray:
        """(n, 2) outline ring, mm, counter-clockwise, first point not repeated.

        Vertex ``edge_starts[i]`` is the first point of ``edges[i]``.
        """
        parts = [e.array[:-1] for e in self.edges]
        arr = np.vstack(parts) if parts else np.zeros((0, 2))
        arr.flags.writeable = False
        return arr

    @cached_property
    def edge_starts(self) -> tuple[int, ...]:
        """Index into :attr:`outline` of each edge's first point."""
        starts, k = [], 0
        for e in self.edges:
            starts.append(k)
            k += len(e.points) - 1
        return tuple(starts)

    @cached_property
    def polygon(self) -> shapely.Polygon:
        """The piece as a shapely polygon (mm, piece frame), openings as holes."""
        return shapely.Polygon(self.outline, [o.array for o in self.openings])

    @property
    def area(self) -> float:
        """Area in mm² (openings excluded)."""
        return float(self.polygon.area)

    @property
    def perimeter(self) -> float:
        """Length of the outer outline in mm."""
        return float(sum(e.length for e in self.edges))

    def edge(self, name: str) -> Edge:
        """The edge called ``name``; KeyError if there is none."""
        for e in self.edges:
            if e.name == name:
                return e
        raise KeyError(name)

    @property
    def edge_names(self) -> tuple[str, ...]:
        return tuple(e.name for e in self.edges)


@dataclass(frozen=True)
class SeamRun:
    """One side of a seam: a stretch of one piece edge, with a direction.

    The run covers arc lengths ``from_mm .. to_mm`` measured along the edge in its own
    (counter-clockwise) direction; ``None`` means the edge's start or end. ``reverse`` runs it
    the other way. The two runs of a seam are matched by *fraction* of their arc length, so runs
    of different lengths (ease) are matched proportionally.
    """

    piece: str
    edge: str
    from_mm: float | None = None
    to_mm: float | None = None
    reverse: bool = False

    def span(self, edge: Edge) -> tuple[float, float]:
        """(start, end) arc lengths along the edge's own direction, ``start <= end``."""
        s0 = 0.0 if self.from_mm is None else float(self.from_mm)
        s1 = edge.length if self.to_mm is None else float(self.to_mm)
        return s0, s1

    def polyline(self, edge: Edge) -> np.ndarray:
        """(m, 2) points of the run in travel order (piece frame, mm)."""
        s0, s1 = self.span(edge)
        pts = sub_polyline(edge.array, s0, s1)
        return pts[::-1].copy() if self.reverse else pts


@dataclass(frozen=True)
class Seam:
    """Two edge runs sewn together. Run ``a`` at fraction t meets run ``b`` at fraction t.

    Parameters
    ----------
    crossable : bool
        Whether the robot may drive over it.
    crossing_cost_mm : float
        Extra cost of one crossing, in mm of driving.
    min_crossing_angle_deg : float
        Smallest allowed angle between the route and the seam tangent (0 = any angle; 90 = only
        square on).
    """

    name: str
    a: SeamRun
    b: SeamRun
    crossable: bool = True
    crossing_cost_mm: float = 0.0
    min_crossing_angle_deg: float = 0.0

    def run(self, side: SeamSide) -> SeamRun:
        """Run ``side`` ("a" or "b") of the seam."""
        return self.a if side == "a" else self.b


@dataclass(frozen=True)
class Circle:
    """A disc: centre (cx, cy) and radius, mm, piece frame."""

    cx: float
    cy: float
    radius: float

    kind = "circle"

    def __post_init__(self) -> None:
        _check_numbers("circle", cx=(self.cx, "finite"), cy=(self.cy, "finite"), radius=(self.radius, "finite"))

    def exact_geometry(self) -> shapely.Geometry:
        """A dense polygon of the circle (for drawing and area checks, not for safety margins)."""
        return shapely.Point(self.cx, self.cy).buffer(self.radius, quad_segs=64)


@dataclass(frozen=True)
class PolygonShape:
    """A simple polygon given by its vertices (mm, piece frame), first point not repeated."""

    points: tuple[Point2, ...]

    kind = "polygon"

    def __post_init__(self) -> None:
        for k, point in enumerate(self.points):
            _check_numbers(f"polygon point {k}", **{f"points[{k}][{j}]": (v, "finite") for j, v in enumerate(point)})

    def exact_geometry(self) -> shapely.Geometry:
        return shapely.Polygon(self.points)


@dataclass(frozen=True)
class Rectangle:
    """A rectangle: centre, width (along its x), height (along its y), rotation CCW in degrees."""

    cx: float
    cy: float
    width: float
    height: float
    angle_deg: float = 0.0

    kind = "rectangle"

    def __post_init__(self) -> None:
        _check_numbers("rectangle", cx=(self.cx, "finite"), cy=(self.cy, "finite"), width=(self.width, "finite"),
                       height=(self.height, "finite"), angle_deg=(self.angle_deg, "finite"))

    def exact_geometry(self) -> shapely.Geometry:
        hw, hh = self.width / 2.0, self.height / 2.0
        corners = np.array([[-hw, -hh], [hw, -hh], [hw, hh], [-hw, hh]])
        corners = corners @ rotation_matrix(math.radians(self.angle_deg)).T + [self.cx, self.cy]
        return shapely.Polygon(corners)


Shape = Circle | PolygonShape | Rectangle


@dataclass(frozen=True)
class KeepOut:
    """A zone on one piece that the robot keeps out of.

    Parameters
    ----------
    kind : str
        One of :data:`KEEPOUT_KINDS`.
    shape : Circle | PolygonShape | Rectangle
    clearance_mm : float
        Extra distance kept beyond the robot's radius.
    hard : bool
        Hard zones are never entered; soft zones are entered at a cost.
    cost_factor : float
        For soft zones: length driven inside the (grown) zone counts this many times (>= 1).
    """

    name: str
    piece: str
    kind: str
    shape: Shape
    clearance_mm: float = 0.0
    hard: bool = True
    cost_factor: float = 1.0

    def __post_init__(self) -> None:
        _check_numbers(f"keepout '{self.name}'", clearance_mm=(self.clearance_mm, "finite"),
                       cost_factor=(self.cost_factor, "finite"))


@dataclass(frozen=True)
class Landmark:
    """A named point: on the pattern (``piece``, ``x``, ``y`` in mm) or on the body (``xyz``, world mm).

    A body landmark is snapped to the garment once a drape is known.
    """

    name: str
    piece: str | None = None
    x: float | None = None
    y: float | None = None
    xyz: tuple[float, float, float] | None = None
    description: str = ""

    def __post_init__(self) -> None:
        values = {k: (v, "finite") for k, v in (("x", self.x), ("y", self.y)) if v is not None}
        if self.xyz is not None:
            values.update({f"xyz[{k}]": (v, "finite") for k, v in enumerate(self.xyz)})
        _check_numbers(f"landmark '{self.name}'", **values)

    @property
    def on_pattern(self) -> bool:
        return self.piece is not None


@dataclass(frozen=True)
class Robot:
    """A two-wheeled, disc-shaped robot.

    Parameters
    ----------
    radius_mm : float
        Radius of the disc that covers the robot's footprint.
    wheel_base_mm : float
        Distance between the wheel contact points.
    speed_mm_s : float
        Cruise speed, for time estimates.
    side : {"outside", "inside"}
        Which face of the garment it drives on. Inside, every piece is seen mirrored.
    edge_margin_mm : float
        Extra distance kept from open edges (hems, cuffs, necklines) beyond the radius.
    sensor_swath_mm : float, optional
        Width of the strip a sensor carried across the robot covers as it drives, mm, centred on
        the wheel axle (for sweeps, :mod:`garnav.sweep`); None when the robot carries none.
    odometry : garnav.uncertainty.OdometryModel, optional
        Dead-reckoning error model (``[robot.odometry]``; docs/uncertainty.md).
    physics : RobotPhysics, optional
        Mass, magnet hold, grip, drive and battery (:mod:`garnav.mechanics.profile`); None: the
        robot's physics are unknown and routes are planned for length only.
    """

    name: str = "robot"
    radius_mm: float = 20.0
    wheel_base_mm: float = 30.0
    speed_mm_s: float = 20.0
    side: Literal["outside", "inside"] = "outside"
    edge_margin_mm: float = 5.0
    sensor_swath_mm: float | None = None
    odometry: OdometryModel | None = None
    physics: RobotPhysics | None = None

    def __post_init__(self) -> None:
        _check_numbers(f"robot '{self.name}'", radius_mm=(self.radius_mm, "finite"),
                       wheel_base_mm=(self.wheel_base_mm, "finite"), speed_mm_s=(self.speed_mm_s, "finite"),
                       edge_margin_mm=(self.edge_margin_mm, "finite"))
        if self.sensor_swath_mm is not None:
            _check_numbers(f"robot '{self.name}'", sensor_swath_mm=(self.sensor_swath_mm, "finite"))


@dataclass(frozen=True)
class OpenRun:
    """A stretch of a piece edge that no seam covers: a drop (hem, cuff, neckline)."""

    piece: str
    edge: str
    from_mm: float
    to_mm: float


@dataclass(frozen=True)
class Garment:
    """A whole garment: pieces, seams, keep-outs, landmarks and (optionally) a robot and a drape.

    ``sheet_size_mm`` is the (width, height) of the sheet in mm: UV = sheet position / size.
    ``drape`` and ``body`` are mesh paths relative to the spec file (or None). ``body_zones``
    are zones on the body (world frame, :mod:`garnav.zones.model`); a drape turns them into
    keep-outs (:func:`garnav.zones.with_zone_keepouts`). ``poses`` are drapes of the same pattern
    in other poses of the wearer (:mod:`garnav.poses`); ``drape``/``body`` are the default pose's.
    """

    name: str
    pieces: tuple[Piece, ...]
    seams: tuple[Seam, ...] = ()
    keepouts: tuple[KeepOut, ...] = ()
    landmarks: tuple[Landmark, ...] = ()
    robot: Robot | None = None
    sheet_size_mm: tuple[float, float] = (1000.0, 1000.0)
    drape: str | None = None
    body: str | None = None
    description: str = ""
    body_zones: tuple[BodyZone, ...] = ()
    poses: tuple[Pose, ...] = ()

    def piece(self, name: str) -> Piece:
        """The piece called ``name``; KeyError if there is none."""
        for p in self.pieces:
            if p.name == name:
                return p
        raise KeyError(name)

    def seam(self, name: str) -> Seam:
        for s in self.seams:
            if s.name == name:
                return s
        raise KeyError(name)

    def landmark(self, name: str) -> Landmark:
        for lm in self.landmarks:
            if lm.name == name:
                return lm
        raise KeyError(name)

    def with_keepouts(self, extra: tuple[KeepOut, ...]) -> Garment:
        """The same garment with the keep-outs ``extra`` added after its own."""
        return replace(self, keepouts=self.keepouts + tuple(extra))

    def body_zone(self, name: str) -> BodyZone:
        for z in self.body_zones:
            if z.name == name:
                return z
        raise KeyError(name)

    def keepouts_on(self, piece: str) -> tuple[KeepOut, ...]:
        return tuple(k for k in self.keepouts if k.piece == piece)

    def run_polyline(self, run: SeamRun) -> np.ndarray:
        """(m, 2) points of a seam run in travel order, piece frame, mm."""
        return run.polyline(self.piece(run.piece).edge(run.edge))

    def run_length(self, run: SeamRun) -> float:
        s0, s1 = run.span(self.piece(run.piece).edge(run.edge))
        return s1 - s0

    def seam_partner(self, seam: Seam, side: SeamSide, fraction: np.ndarray) -> np.ndarray:
        """Points (m, 2) on the *other* run at the given fractions (m,) of run ``side``.

        Fractions are in [0, 1] along the run's travel direction; runs match fraction to fraction.
        """
        pts = self.run_polyline(seam.run(other_side(side)))
        return point_at_length(pts, np.asarray(fraction) * cumulative_length(pts)[-1])

    def open_runs(self) -> tuple[OpenRun, ...]:
        """Every stretch of every piece edge not covered by a seam run, in piece and edge order."""
        covered: dict[tuple[str, str], list[tuple[float, float]]] = {}
        for s in self.seams:
            for run in (s.a, s.b):
                edge = self.piece(run.piece).edge(run.edge)
                covered.setdefault((run.piece, run.edge), []).append(run.span(edge))
        out: list[OpenRun] = []
        tol = 1e-6
        for p in self.pieces:
            for e in p.edges:
                spans = sorted(covered.get((p.name, e.name), []))
                cursor = 0.0
                for s0, s1 in spans:
                    if s0 > cursor + tol:
                        out.append(OpenRun(p.name, e.name, cursor, s0))
                    cursor = max(cursor, s1)
                if e.length > cursor + tol:
                    out.append(OpenRun(p.name, e.name, cursor, e.length))
        return tuple(out)
