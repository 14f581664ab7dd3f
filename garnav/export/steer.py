"""From a route's polylines to rounded turn-and-go motions that still end where the route ends.

Two steps turn the planned polylines into a short command list a person can read:

1. **Merging.** Each leg (the part of a route on one piece, between seam crossings) is simplified
   by the Douglas–Peucker algorithm (D. H. Douglas and T. K. Peucker, "Algorithms for the reduction
   of the number of points required to represent a digitized line or its caricature", *The
   Canadian Cartographer* 10(2), 112–122, 1973): a stretch of vertices is replaced by the chord
   between its ends when every vertex lies within ``tolerance_mm`` of that chord, else it is split
   at the farthest vertex. Distances are to the chord *segment*, as GEOS (shapely's ``simplify``)
   measures them. The leg's ends — the start, the seam crossings and the goal — are always kept,
   and a chord that would leave the piece (and so meet a seam or an open edge the route does not
   cross there) is split further. The simplified polyline lies within ``tolerance_mm`` of the
   planned one both ways (Hausdorff distance): every dropped vertex is within the tolerance of its
   chord, and the tolerance band around a chord is convex, so the dropped stretch stays in it and
   passes every point of the chord.
2. **Rounding in closed loop.** Turns are written to 0.01°, distances to 0.01 mm. Rounding each
   motion on its own lets the heading errors add up (30 turns of ±0.005° are ±0.15°, 1.3 mm
   sideways after 500 mm). Instead each turn and go is chosen, then rounded, from the pose the
   *rounded* motions so far lead to — the same integration the replay does
   (:mod:`garnav.export.replay`), seam transfers included — towards the next planned vertex: the
   planned direction of the step, corrected towards the vertex by at most 0.1° (so a short step
   after a long go does not swing round to absorb that go's rounding). The error at each vertex is
   then about that of one rounded motion: 0.005 mm along and ``L·tan(0.005°)`` = 8.7e-5·L sideways
   for a go of length L, and it does not grow along the route.

At a seam the model follows the replay's rules: the go meets the seam where the line first leaves
the piece's outline; a crossing within :data:`~garnav.export.seams.VERTEX_SNAP_MM` of a vertex of
the seam run is carried over at that vertex; a go ending within :data:`NOTICE_TOL_MM` of an
announced seam ends on it. Inner vertices within :data:`INSET_MM` of the outline (a route touching
a seam, or running along one) are moved that far inside first, so that rounding cannot carry the
robot over a seam the route only touches.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import shapely
import shapely.geometry
import shapely.ops

from garnav.export.path import ZERO_STEP_MM
from garnav.export.seams import seam_transfer, snap_to_vertex
from garnav.model import Garment, Seam, SeamSide

__all__ = [
    "DISTANCE_DECIMALS",
    "ANGLE_DECIMALS",
    "POSITION_DECIMALS",
    "TIME_DECIMALS",
    "DEFAULT_TOLERANCE_MM",
    "round_mm",
    "round_deg",
    "round_position",
    "round_s",
    "douglas_peucker",
    "merge_tolerance",
    "ROUNDING_ALLOWANCE_MM",
    "NOTICE_TOL_MM",
    "simplify_leg",
    "Steering",
]

DISTANCE_DECIMALS = 2  # go, cross at, lead: 0.01 mm
ANGLE_DECIMALS = 2  # turn, crossing angle, start heading: 0.01°
POSITION_DECIMALS = 3  # start x, y on the pattern: 0.001 mm
TIME_DECIMALS = 3  # wait: 0.001 s (the fleet's schedule is checked every 10 ms)
# Default merge tolerance, mm: 2.5 % of the default robot's 20 mm radius, a tenth of its 5 mm edge
# margin and ~4 % of the 2σ dead-reckoning spread of the demo routes (10–15 mm, `garnav drift`).
DEFAULT_TOLERANCE_MM = 0.5
# Part of the tolerance kept for the rounding (mm): one rounded go strays 0.005 mm + 8.7e-5 × its
# length, 0.092 mm for a 1 m go. Douglas–Peucker gets the rest (half the tolerance below 0.2 mm).
ROUNDING_ALLOWANCE_MM = 0.1
# Largest aim correction (degrees) towards the planned vertex on top of the planned direction: a
# short step after a long go would otherwise turn sharply to absorb the go's sideways rounding.
MAX_CORRECTION_DEG = 0.1
# How close a seam met by a go must be to a notice's announced distance to match it, mm: one unit
# of the written precision, twice its rounding; a go ending this close to an announced seam ends on
# it (the replay's rule, garnav.export.replay).
NOTICE_TOL_MM = 1e-2
_HALF_UNIT_MM = 0.5 * 10.0**-DISTANCE_DECIMALS  # a vertex this close is reached
_HIT_SEARCH_MM = 2.0  # how far along the go the outline is looked for around the planned crossing
# Inner vertices closer than this to the piece outline (a route touching or running along a seam)
# are moved this far inside, so that rounded motions do not cross the seam there (mm).
INSET_MM = 0.02


def round_mm(value: float) -> float:
    """``value`` rounded to the written distance precision (0.01 mm); never ``-0.0``."""
    return round(float(value), DISTANCE_DECIMALS) + 0.0


def round_deg(value: float) -> float:
    """``value`` rounded to the written angle precision (0.01°); never ``-0.0``."""
    return round(float(value), ANGLE_DECIMALS) + 0.0


def round_position(value: float) -> float:
    """A start coordinate rounded to 0.001 mm."""
    return round(float(value), POSITION_DECIMALS) + 0.0


def round_s(value: float) -> float:
    """A time rounded to 0.001 s."""
    return round(float(value), TIME_DECIMALS) + 0.0


def merge_tolerance(tolerance_mm: float) -> float:
    """The Douglas–Peucker tolerance (mm) for a stated command tolerance: what the rounding leaves."""
    return float(tolerance_mm) - min(ROUNDING_ALLOWANCE_MM, 0.5 * float(tolerance_mm))


def douglas_peucker(points: np.ndarray, tolerance_mm: float, accept=None) -> np.ndarray:
    """Indices of the vertices Douglas–Peucker (1973) keeps, first and last always included.

    Parameters
    ----------
    points : (n, 2) array
        Polyline vertices, mm.
    tolerance_mm : float
        Largest distance of a dropped vertex from the chord that replaces it (>= 0).
    accept : callable, optional
        ``accept(i, j) -> bool``: whether the chord from vertex i to vertex j may replace the
        vertices between them (a chord it refuses is split at its farthest vertex, as one too far
        from its vertices is).

    Returns
    -------
    (m,) int array
        Increasing indices into ``points``.
    """
    pts = np.asarray(points, dtype=float).reshape(-1, 2)
    n = len(pts)
    if n <= 2:
        return np.arange(n)
    keep = np.zeros(n, dtype=bool)
    keep[0] = keep[-1] = True
    stack = [(0, n - 1)]
    while stack:
        i, j = stack.pop()
        if j <= i + 1:
            continue
        a, b = pts[i], pts[j]
        ab = b - a
        inner = pts[i + 1 : j]
        den = float(ab @ ab)
        if den > 0.0:
            s = np.clip(((inner - a) @ ab) / den, 0.0, 1.0)
            dist = np.hypot(*(inner - (a + s[:, None] * ab)).T)
        else:
            dist = np.hypot(*(inner - a).T)
        k = int(np.argmax(dist))  # the first farthest vertex, as GEOS picks it
        if dist[k] <= tolerance_mm and (accept is None or accept(i, j)):
            continue
        mid = i + 1 + k
        keep[mid] = True
        stack += [(mid, j), (i, mid)]
    return np.flatnonzero(keep)


def simplify_leg(points: np.ndarray, tolerance_mm: float, piece_polygon, keep_first_step: bool = False,
                 keep_last_step: bool = False) -> np.ndarray:
    """A leg's polyline merged within ``tolerance_mm``, its chords inside ``piece_polygon``.

    Parameters
    ----------
    points : (n, 2) array
        The leg, mm, piece frame.
    tolerance_mm : float
        0 keeps every vertex.
    piece_polygon : shapely Polygon
        The piece (openings as holes); a chord that leaves it (by more than 1e-6 mm) is not used.
    keep_first_step, keep_last_step : bool
        Keep the second (last but one) vertex too, so the step leaving (reaching) a seam crossing
        keeps its planned direction and the seam is crossed at its planned angle.

    Returns
    -------
    (m, 2) array
        A subset of ``points``, first and last kept.
    """
    pts = _inset(np.asarray(points, dtype=float).reshape(-1, 2), piece_polygon)
    n = len(pts)
    if tolerance_mm <= 0.0 or n <= 2:
        return pts
    region = shapely.buffer(piece_polygon, 1e-6)
    shapely.prepare(region)
    fixed = sorted({0, n - 1} | ({1} if keep_first_step else set()) | ({n - 2} if keep_last_step else set()))
    kept: list[int] = [0]
    for lo, hi in zip(fixed[:-1], fixed[1:]):
        part = pts[lo : hi + 1]

        def inside(i: int, j: int, part=part) -> bool:
            return bool(region.covers(shapely.LineString([part[i], part[j]]))) if j > i + 1 else True

        kept += [lo + int(k) for k in douglas_peucker(part, tolerance_mm, inside)[1:]]
    return pts[kept]


def _inset(pts: np.ndarray, piece_polygon) -> np.ndarray:
    """``pts`` with the inner vertices (not the first or last) that lie within INSET_MM of the
    piece outline moved INSET_MM inside it (to the nearest point of the inset piece)."""
    if len(pts) <= 2:
        return pts
    inner = shapely.points(pts[1:-1])
    near = np.flatnonzero(shapely.distance(shapely.boundary(piece_polygon), inner) < INSET_MM)
    if near.size == 0:
        return pts
    inset = shapely.buffer(piece_polygon, -INSET_MM)
    out = pts.copy()
    for k in near:
        _, q = shapely.ops.nearest_points(shapely.Point(pts[k + 1]), inset)
        out[k + 1] = (q.x, q.y)
    return out


def _outline(piece_polygon) -> tuple[np.ndarray, np.ndarray]:
    """Segment starts and vectors (m, 2) of a piece's outline, oriented with the fabric on the left."""
    poly = shapely.geometry.polygon.orient(piece_polygon, 1.0)
    starts, vecs = [], []
    for ring in (poly.exterior, *poly.interiors):
        c = np.asarray(ring.coords, dtype=float)
        starts.append(c[:-1])
        vecs.append(np.diff(c, axis=0))
    return np.vstack(starts), np.vstack(vecs)


def _first_exit(outline: tuple[np.ndarray, np.ndarray], p: np.ndarray, u: np.ndarray, lo: float,
                hi: float) -> float | None:
    """Smallest t in [lo, hi] where the line ``p + t·u`` leaves the piece through its outline."""
    a, e = outline
    den = u[0] * e[:, 1] - u[1] * e[:, 0]
    leaving = den > 1e-12 * np.maximum(np.hypot(e[:, 0], e[:, 1]), 1e-300)
    safe = np.where(leaving, den, 1.0)
    w = a - p
    t = (w[:, 0] * e[:, 1] - w[:, 1] * e[:, 0]) / safe
    s = (w[:, 0] * u[1] - w[:, 1] * u[0]) / safe
    hit = leaving & (s >= -1e-9) & (s <= 1.0 + 1e-9) & (t >= lo) & (t <= hi)
    return float(t[hit].min()) if hit.any() else None


@dataclass
class Steering:
    """Rounded motions towards planned vertices, integrated as the replay drives them.

    Call :meth:`toward` for each planned vertex, :meth:`cross` at each seam crossing and
    :meth:`finish` at the end; ``ops`` then holds ``("turn", piece-frame degrees)``, ``("go", mm)``
    and ``("cross", seam, at_mm, heading_rad, tangent)`` in order (notices before their go), and
    ``start`` the rounded start pose ``(piece, x, y, heading_deg)`` (None until the first motion).
    Headings are radians in the frame of the piece the robot is on.
    """

    garment: Garment
    piece: str
    p: np.ndarray  # where the robot would be if the pending go ended here (unrounded), mm
    heading: float | None = None
    start: tuple[str, float, float, float] | None = None
    ops: list[tuple] = field(default_factory=list)
    go_len: float = 0.0  # unrounded length of the pending go, mm
    notices: list[tuple] = field(default_factory=list)
    cross_at: float | None = None  # go_len at the pending go's last crossing
    cross_to: np.ndarray | None = None  # the point it led to

    def _u(self) -> np.ndarray:
        assert self.heading is not None
        return np.array([math.cos(self.heading), math.sin(self.heading)])

    def _end(self) -> np.ndarray:
        """Where the pending go ends once its length is rounded."""
        d = round_mm(self.go_len)
        if self.cross_at is not None and self.cross_to is not None and d - self.cross_at <= NOTICE_TOL_MM:
            return self.cross_to  # the replay ends a go within 0.01 mm of an announced seam on it
        return self.p + (d - self.go_len) * self._u() if self.heading is not None else self.p

    def _flush(self) -> None:
        d = round_mm(self.go_len)
        self.p = self._end()
        if d > 0.0 or self.notices:
            self.ops += [("cross", s, min(round_mm(at), d), h, t) for s, at, h, t in self.notices]
            self.ops.append(("go", d))
        self.go_len, self.notices, self.cross_at, self.cross_to = 0.0, [], None, None

    def toward(self, v: np.ndarray, prev: np.ndarray) -> None:
        """Turn (if the rounded turn is not 0) and drive towards planned vertex ``v``, which the
        plan reaches from ``prev`` (same piece frame): the heading is the planned direction,
        corrected by at most MAX_CORRECTION_DEG towards ``v``."""
        v = np.asarray(v, dtype=float)
        if self.heading is None:
            d = v - self.p
            if math.hypot(*d) <= max(ZERO_STEP_MM, _HALF_UNIT_MM):
                return
            heading_deg = round_deg(math.degrees(math.atan2(d[1], d[0])))
            self.heading = math.radians(heading_deg)
            if self.start is None:
                self.p = np.array([round_position(self.p[0]), round_position(self.p[1])])
                self.start = (self.piece, float(self.p[0]), float(self.p[1]), heading_deg)
        end = self._end()
        d = v - end
        if math.hypot(*d) <= _HALF_UNIT_MM:
            return
        aim = math.atan2(d[1], d[0])
        step_vec = v - np.asarray(prev, dtype=float)
        if math.hypot(*step_vec) > _HALF_UNIT_MM:
            planned = math.atan2(step_vec[1], step_vec[0])
            limit = math.radians(MAX_CORRECTION_DEG)
            aim = planned + min(max(math.remainder(aim - planned, 2.0 * math.pi), -limit), limit)
        turn = round_deg(math.degrees(math.remainder(aim - self.heading, 2.0 * math.pi)))
        if turn != 0.0:
            self._flush()
            self.ops.append(("turn", turn))
            self.heading += math.radians(turn)
        step = float((v - self.p) @ self._u())
        if step > 0.0:
            self.p = self.p + step * self._u()
            self.go_len += step

    def cross(self, seam: Seam, side: SeamSide, planned_from: np.ndarray, first_heading: float) -> str:
        """Drive over ``seam`` (run ``side`` on the current piece) near ``planned_from``; returns the
        piece beyond. ``first_heading`` (rad, current frame) is used when nothing has moved yet."""
        if self.heading is None:  # crossing before any motion: notice at 0, heading of the next step
            tr = seam_transfer(self.garment, seam, side, planned_from)
            self.notices.append((seam.name, 0.0, first_heading, tr.tangent_from))
            self.piece, self.p = tr.to_piece, np.asarray(tr.point_to, dtype=float).copy()
            return tr.to_piece
        u = self._u()
        run = self.garment.run_polyline(seam.run(side))
        # where the replay meets the outline: the first exit near the planned crossing
        outline = _outline(self.garment.piece(self.piece).polygon)
        t = _first_exit(outline, self.p, u, -min(self.go_len, _HIT_SEARCH_MM), _HIT_SEARCH_MM)
        if t is None:  # the go runs along the seam here: cross where the plan does
            t = max(float((planned_from - self.p) @ u), -self.go_len)
        hit = self.p + t * u
        self.go_len += t
        tr = seam_transfer(self.garment, seam, side, snap_to_vertex(run, hit))
        # the notice's angle to the seam as planned (at a vertex of the run the tangent is ambiguous)
        planned_tangent = seam_transfer(self.garment, seam, side, planned_from).tangent_from
        self.notices.append((seam.name, self.go_len, self.heading, planned_tangent))
        self.cross_at, self.cross_to = self.go_len, np.asarray(tr.point_to, dtype=float).copy()
        self.piece, self.p = tr.to_piece, self.cross_to.copy()
        self.heading += tr.rotation_rad
        return tr.to_piece

    def finish(self) -> None:
        """End the pending go."""
        self._flush()
