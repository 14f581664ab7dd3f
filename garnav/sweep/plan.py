"""The sweep planner: a route whose sensor footprint covers a region of the garment.

Steps, per piece the region touches (piece frame, mm; ``w`` = swath, sensor centred on the axle):

1. **Reachable region** ``R = A ∩ (F ⊕ w/2)``: the part of the region ``A`` the sensor can reach
   when the robot's centre keeps to the planner's free space ``F`` (a strip of width ``w`` across
   the robot reaches ``w/2`` beyond the centre). Coverage is reported as a fraction of ``R``.
2. **Centre domain** ``C = (A ⊖ w/2) ∩ F``: lanes are kept ``w/2`` inside the region's border, so
   a lane's footprint ends on the border.
3. **Headland lap**: lanes cut by a curved or slanted border leave crescents at their ends (plain
   lanes on a disc of 200 mm cover only ~84 %). A lap along ``∂C`` covers the band ``w/2`` either
   side of it; the lanes still run to ``∂C`` (so they overlap the lap by ``w/2``) and the
   outermost lanes lie ``w/2`` inside the part's extremes, where the lap covers the tips.
   ``headland="auto"`` laps a part only when its plain lanes would cover less than
   ``coverage_target`` of it. Gaps still left (the tip of an acute corner lies beyond the reach of
   a centre kept ``w/2`` inside the region) get a short straight **spur** from the centre domain
   towards the gap's farthest point, within the free space.
4. **Cells and lanes**: boustrophedon cells (Choset 2000) in the direction that needs the fewest
   lanes over the part (for a convex part the least-width direction, Huang 2001), each cell
   re-aimed to its own least-width direction when that needs fewer lanes; see
   :mod:`garnav.sweep.cells`.
5. **Order and joins**: greedy nearest next item (cell, from any of its four corners, or lap,
   from its nearest vertex), by straight-line distance on the current piece and by the route
   planner's cost (:meth:`garnav.plan.Planner.nearest`) to other pieces; each join is a straight
   step when it stays in free space, else a route of :class:`garnav.plan.Planner` (across seams
   when the next item is on another piece).

A differential-drive robot turns in place, so turns cost time (each wheel travels θ·b/2), not a
radius: the time figure is the route document's (docs/route-format.md).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any, Literal, Mapping

import numpy as np
import shapely
import shapely.ops

from garnav.errors import QueryError
from garnav.model import Garment, Robot
from garnav.plan import PiecePoint, Planner, Route
from garnav.plan.route import Leg, join_routes, make_route
from garnav.sweep.cells import best_direction, boustrophedon_cells, cell_path, from_frame, min_width_direction, to_frame
from garnav.sweep.coverage import covered_area, footprint
from garnav.sweep.region import resolve_region

__all__ = ["Sweep", "SweepItem", "plan_sweep", "swath_of", "DEFAULT_COVERAGE_TARGET"]

DEFAULT_COVERAGE_TARGET = 0.99

# Turns above this (degrees) are counted apart: the lane ends' turns, not the small ones along a
# curved border.
SHARP_TURN_DEG = 45.0

Headland = Literal["auto", "on", "off"]


@dataclass(frozen=True, eq=False)
class SweepItem:
    """One piece of coverage work: a cell's boustrophedon variants or a closed lap.

    ``variants`` are (m, 2) polylines (piece frame, mm) covering the same ground; a lap (``closed``)
    may start at any of its vertices.
    """

    piece: str
    variants: tuple[np.ndarray, ...]
    closed: bool = False
    lanes: int = 0

    def entries(self, limit: int = 24) -> list[tuple[int, int]]:
        """(variant, start vertex) choices: the four corners of a cell, or up to ``limit`` evenly
        spread vertices of a lap."""
        if not self.closed:
            return [(k, 0) for k in range(len(self.variants))]
        n = len(self.variants[0]) - 1
        step = max(1, n // limit)
        return [(0, i) for i in range(0, n, step)]

    def path(self, variant: int, start: int) -> np.ndarray:
        pts = self.variants[variant]
        if not self.closed or start == 0:
            return pts
        ring = pts[:-1]
        ring = np.vstack([ring[start:], ring[:start]])
        return np.vstack([ring, ring[:1]])


@dataclass(frozen=True, eq=False)
class Sweep:
    """A planned sweep: the route and what it covers.

    Attributes
    ----------
    route : garnav.plan.Route
    swath_mm : float
    region, reachable, centre_domain, covered : dict piece → shapely geometry
        The region asked for, its part the sensor can reach, where lanes may run, and the ground
        the footprint covers (the route buffered by ``w/2``, flat ends), piece frame, mm.
    cells, lanes, laps, spurs : int
        Boustrophedon cells, lanes, headland laps and corner spurs planned.
    """

    route: Route
    swath_mm: float
    region: dict[str, shapely.Geometry]
    reachable: dict[str, shapely.Geometry]
    centre_domain: dict[str, shapely.Geometry]
    covered: dict[str, shapely.Geometry]
    cells: int
    lanes: int
    laps: int
    headland: str = "auto"
    spurs: int = 0
    notes: tuple[str, ...] = field(default_factory=tuple)

    @property
    def region_area_mm2(self) -> float:
        return float(sum(g.area for g in self.region.values()))

    @property
    def reachable_area_mm2(self) -> float:
        return float(sum(g.area for g in self.reachable.values()))

    @property
    def covered_area_mm2(self) -> float:
        """Area of the reachable region under the footprint, mm²."""
        return float(sum(self.covered[p].intersection(g).area for p, g in self.reachable.items() if p in self.covered))

    @property
    def covered_fraction(self) -> float:
        """Covered part of the reachable region, 0..1."""
        a = self.reachable_area_mm2
        return self.covered_area_mm2 / a if a > 0 else 0.0

    def figures(self, summary: Mapping[str, Any] | None = None, energy_J: float | None = None,
                battery_j: float | None = None) -> dict:
        """Coverage figures (JSON-ready). ``summary`` is the route document's summary (turns and
        time); ``energy_J`` comes from a physics profile when there is one (None otherwise), and
        ``battery_j`` (the battery's capacity, J) turns it into the share of the battery used."""
        length = float(self.route.length_mm)
        reach = self.reachable_area_mm2
        bound = reach / self.swath_mm
        out = {
            "swath_mm": float(self.swath_mm),
            "headland": self.headland,
            "pieces": list(self.region),
            "region_area_mm2": self.region_area_mm2,
            "reachable_area_mm2": reach,
            "covered_area_mm2": self.covered_area_mm2,
            "covered_fraction": self.covered_fraction,
            "covered_fraction_of_region": self.covered_area_mm2 / self.region_area_mm2 if self.region_area_mm2 > 0 else 0.0,
            "cells": int(self.cells),
            "lanes": int(self.lanes),
            "headland_laps": int(self.laps),
            "corner_spurs": int(self.spurs),
            "length_mm": length,
            "area_over_swath_mm": bound,
            "length_ratio": length / bound if bound > 0 else None,
            "turn_count": None if summary is None else int(summary["turn_count"]),
            "turn_total_deg": None if summary is None else float(summary["turn_total_deg"]),
            "sharp_turn_count": int(np.sum(np.abs(self.route.turns_deg) > SHARP_TURN_DEG)),
            "time_s": None if summary is None else float(summary["estimated_time_s"]),
            "energy_J": energy_J,
            "battery_used_fraction": energy_J / battery_j if energy_J is not None and battery_j else None,
        }
        return out


# --------------------------------------------------------------------------- building items


def _parts(geom: shapely.Geometry) -> list[shapely.Polygon]:
    parts = [g for g in shapely.get_parts(geom) if isinstance(g, shapely.Polygon) and g.area > 1e-9]
    return sorted(parts, key=lambda g: (g.bounds[1], g.bounds[0]))


def _cell_items(piece: str, domain: shapely.Polygon, w: float, inset: float = 0.0) -> list[SweepItem]:
    """Boustrophedon items of one connected domain (extreme lanes ``inset`` inside it)."""
    angle = best_direction(domain, w, inset)
    items = []
    for cell in boustrophedon_cells(domain, w, angle, inset):
        cell = _reaim(domain, cell, w, inset)
        variants = tuple(cell_path(cell, reverse_lanes=r, start_right=s) for r in (False, True) for s in (False, True))
        items.append(SweepItem(piece, variants, lanes=len(cell.lanes)))
    return items


def _reaim(domain: shapely.Polygon, cell, w: float, inset: float):
    """The cell swept in its own least-width direction when that needs fewer lanes (Huang 2001)."""
    if len(cell.lanes) < 3:
        return cell
    y, a, b = cell.lanes.T
    strips = shapely.union_all([shapely.box(x0, yy - w / 2, x1, yy + w / 2) for yy, x0, x1 in zip(y, a, b, strict=True)])
    framed = to_frame(domain, cell.angle_rad).intersection(strips)
    area = _parts(framed)
    if len(area) != 1:
        return cell
    ring = from_frame(np.asarray(area[0].exterior.coords), cell.angle_rad)
    own = shapely.Polygon(ring).intersection(domain)
    own_parts = _parts(own)
    if len(own_parts) != 1:
        return cell
    angle, _ = min_width_direction(own_parts[0], w)
    if abs(math.remainder(angle - cell.angle_rad, math.pi)) < 1e-9:
        return cell
    cells = boustrophedon_cells(own_parts[0], w, angle, inset)
    if len(cells) == 1 and len(cells[0].lanes) < len(cell.lanes):
        return cells[0]
    return cell


def _lap_items(piece: str, domain: shapely.Polygon, free: shapely.Geometry, w: float) -> list[SweepItem]:
    """One closed lap along each ring of the domain. A ring is simplified (Douglas–Peucker,
    tolerance w/100) where the simpler ring still lies in the free space: a curved border drawn with
    many short edges then costs far fewer small turns, and the footprint moves by at most w/100."""
    items = []
    for ring in [domain.exterior, *domain.interiors]:
        pts = np.asarray(ring.coords, dtype=float)
        simple = shapely.LinearRing(pts).simplify(w / 100.0, preserve_topology=True)
        if len(simple.coords) >= 4 and free.covers(shapely.LineString(simple.coords)):
            pts = np.asarray(simple.coords, dtype=float)
        if len(pts) >= 4:
            items.append(SweepItem(piece, (pts,), closed=True))
    return items


def _plain_coverage(items: list[SweepItem], target: shapely.Geometry, w: float) -> float:
    paths = [it.variants[0] for it in items]
    if not paths or target.area <= 0:
        return 0.0
    cov = shapely.union_all([footprint(p, w) for p in paths])
    return float(cov.intersection(target).area / target.area)


def _piece_items(piece: str, domain: shapely.Geometry, reach: shapely.Geometry, free: shapely.Geometry, w: float,
                 headland: str, target: float):
    items: list[SweepItem] = []
    laps = 0
    for part in _parts(domain):
        plain = _cell_items(piece, part, w)
        want_lap = headland == "on"
        if headland == "auto":
            local = reach.intersection(part.buffer(w / 2, cap_style="flat", join_style="mitre"))
            want_lap = _plain_coverage(plain, local, w) < target
        if not want_lap:
            items += plain
            continue
        lap = _lap_items(piece, part, free, w)
        laps += len(lap)
        items += lap
        # lanes over the whole part, the outermost w/2 inside its extremes: the lap covers the
        # band w/2 either side of the border, so no crescent is left at lane ends or tips
        items += _cell_items(piece, part, w, inset=w / 2)
    return items, laps


def _spur_items(piece: str, items: list[SweepItem], reach: shapely.Geometry, domain: shapely.Geometry,
                free: shapely.Geometry, w: float, min_area_w2: float = 0.1) -> list[SweepItem]:
    """Short straight runs into the gaps the lanes and laps leave (the tip of an acute corner of the
    region lies beyond the reach of a centre kept w/2 inside it): for every gap of at least
    ``min_area_w2 · w²``, a run from the nearest point of the centre domain to the gap's point
    farthest from it (pulled into the free space), driven out and on from there."""
    paths = [it.variants[0] for it in items]
    if not paths:
        return []
    gaps = reach.difference(shapely.union_all([footprint(p, w) for p in paths]))
    out = []
    for gap in _parts(gaps):
        if gap.area < min_area_w2 * w * w:
            continue
        ring = np.asarray(gap.exterior.coords)
        far = ring[int(np.argmax(shapely.distance(domain, shapely.points(ring))))]
        t = shapely.Point(*far)
        if not free.covers(t):
            t = shapely.ops.nearest_points(free, t)[0]
        q = shapely.ops.nearest_points(domain, t)[0]
        a, b = np.array([q.x, q.y]), np.array([t.x, t.y])
        if np.hypot(*(b - a)) < 1e-6 or not free.buffer(1e-6).covers(shapely.LineString([a, b])):
            continue
        out.append(SweepItem(piece, (np.array([a, b]), np.array([b, a]))))
    return out


# --------------------------------------------------------------------------- ordering and joins


def swath_of(robot: Robot, swath_mm: float | None = None) -> float:
    """The swath to use (mm): ``swath_mm`` when given, else the robot's ``sensor_swath_mm``.

    Raises QueryError when neither is given or the value is not a positive number.
    """
    w = swath_mm if swath_mm is not None else robot.sensor_swath_mm
    if w is None:
        raise QueryError(
            f"robot '{robot.name}' has no sensor_swath_mm: give the swath (--swath MM) or add "
            f"sensor_swath_mm to the spec's [robot] table"
        )
    if not (math.isfinite(w) and w > 0):
        raise QueryError(f"the sensor swath must be a positive number of mm, got {w:g}")
    return float(w)


def plan_sweep(
    garment: Garment,
    region: Any,
    robot: Robot | None = None,
    *,
    swath_mm: float | None = None,
    headland: Headland = "auto",
    coverage_target: float = DEFAULT_COVERAGE_TARGET,
    planner: Planner | None = None,
    drape: Any = None,
    zones: Mapping[str, Any] | None = None,
    start: Any = None,
    corner_spurs: bool = True,
) -> Sweep:
    """Plan a sweep of ``region`` (see :mod:`garnav.sweep.region`) for the garment's robot.

    Parameters
    ----------
    garment : Garment
    region : region object or dict
        Anything with ``resolve(context)``, e.g. ``parse_region("pieces:back")``; or its areas
        already resolved (piece → polygon, :func:`garnav.sweep.resolve_region`).
    robot : Robot, optional
        Defaults to the planner's, ``garment.robot`` or ``Robot()``.
    swath_mm : float, optional
        Sensor swath; defaults to ``robot.sensor_swath_mm``.
    headland : {"auto", "on", "off"}
    coverage_target : float
        For ``headland="auto"``: lap a part when plain lanes cover less than this fraction of it.
    planner : Planner, optional
        Reused when given (built once per garment and robot otherwise).
    drape : Drape, optional
        For regions given in 3D.
    zones : mapping, optional
        Body-zone catalogue for ``zone:`` regions.
    start : point, optional
        Where the robot starts (landmark, ``PIECE:X,Y``, ...); default: the first item's start.
    corner_spurs : bool
        Reach into corners the lanes and laps leave uncovered (see :func:`_spur_items`); not with
        ``headland="off"``, which plans plain lanes only.

    Returns
    -------
    Sweep
    """
    if headland not in ("auto", "on", "off"):
        raise QueryError(f"headland must be one of auto, on, off; got '{headland}'")
    if planner is None:
        robot = robot or garment.robot or Robot()
        planner = Planner(garment, robot)
    robot = planner.robot
    w = swath_of(robot, swath_mm)
    areas = dict(region) if isinstance(region, Mapping) else resolve_region(garment, region, drape=drape, zones=zones)
    if not areas:
        raise QueryError("the region covers no fabric")
    free = planner.free
    reachable, domains, items = {}, {}, []
    laps = n_spurs = 0
    for piece, area in areas.items():
        fs = free[piece].region
        reachable[piece] = area.intersection(fs.buffer(w / 2))
        domains[piece] = area.buffer(-w / 2).intersection(fs)
        got, n = _piece_items(piece, domains[piece], reachable[piece], fs, w, headland, coverage_target)
        spurs = _spur_items(piece, got, reachable[piece], domains[piece], fs, w) if corner_spurs and headland != "off" else []
        items += got + spurs
        laps += n
        n_spurs += len(spurs)
    if not items:
        raise QueryError(
            f"the robot cannot sweep this region: no point of it lies {w / 2:g} mm inside both the "
            f"region and the robot's free space"
        )
    parts = _order_and_join(garment, planner, items, start)
    route = parts[0] if len(parts) == 1 else join_routes(garment, robot, parts)
    covered = covered_area(route, w)
    cells = sum(1 for it in items if not it.closed and it.lanes > 0)
    lanes = sum(it.lanes for it in items)
    return Sweep(route, w, areas, reachable, domains, covered, cells, lanes, laps, headland, spurs=n_spurs)


def _single(garment: Garment, robot: Robot, piece: str, pts: np.ndarray) -> Route:
    length = float(np.hypot(*np.diff(pts, axis=0).T).sum())
    return make_route(garment, robot, [Leg(piece, np.asarray(pts, dtype=float))], [], length)


class _Free:
    """Free-space tests for the joins, with the slightly grown and shrunk regions built once per
    piece: a straight step is free when it lies in the free space grown by 1e-6 mm (lane ends are
    computed on its border), and a point that misses it (or its piece's outline) by rounding is
    moved up to 1e-5 mm inside so that the planner accepts it."""

    def __init__(self, free, garment: Garment):
        self.free = free
        self.garment = garment
        self.grown: dict[str, shapely.Geometry] = {}
        self.inner: dict[str, shapely.Geometry] = {}

    def _cached(self, cache: dict, piece: str, distance: float) -> shapely.Geometry:
        if piece not in cache:
            cache[piece] = self.free[piece].region.buffer(distance)
            shapely.prepare(cache[piece])
        return cache[piece]

    def segment(self, piece: str, p: np.ndarray, q: np.ndarray) -> bool:
        if np.hypot(*(q - p)) < 1e-9:
            return True
        line = shapely.LineString([p, q])
        return bool(self.free[piece].region.covers(line) or self._cached(self.grown, piece, 1e-6).covers(line))

    def point(self, piece: str, xy: np.ndarray, label: str = "sweep") -> PiecePoint:
        p = shapely.Point(float(xy[0]), float(xy[1]))
        if not (self.free[piece].region.covers(p) and self.garment.piece(piece).polygon.covers(p)):
            inner = self._cached(self.inner, piece, -1e-5)
            if not inner.is_empty and inner.distance(p) < 1e-3:
                q = shapely.ops.nearest_points(inner, p)[0]
                return PiecePoint(piece, float(q.x), float(q.y), label=label)
        return PiecePoint(piece, float(xy[0]), float(xy[1]), label=label)


def _order_and_join(garment: Garment, planner: Planner, items: list[SweepItem], start: Any) -> list[Route]:
    robot = planner.robot
    free = _Free(planner.free, garment)
    remaining = list(range(len(items)))
    parts: list[Route] = []
    here: PiecePoint | None = None
    if start is not None:
        here = planner.point(start, snap=True, role="start")
    while remaining:
        pick = None
        if here is not None:
            same = [i for i in remaining if items[i].piece == here.piece]
            if same:
                best = None
                for i in same:
                    for v, s in items[i].entries():
                        d = float(np.hypot(*(items[i].path(v, s)[0] - here.xy)))
                        if best is None or d < best[0]:
                            best = (d, i, v, s)
                assert best is not None
                pick = best[1:]
            else:
                cands = [(i, v, s) for i in remaining for v, s in items[i].entries()]
                goals = [free.point(items[i].piece, items[i].path(v, s)[0], "sweep item") for i, v, s in cands]
                k, _ = planner.nearest(free.point(here.piece, here.xy), goals, snap=True)
                pick = cands[k]
        else:
            pick = (remaining[0], 0, 0)
        i, v, s = pick
        remaining.remove(i)
        path = items[i].path(v, s)
        if here is not None:
            p0 = path[0]
            if here.piece == items[i].piece and free.segment(here.piece, here.xy, p0):
                if np.hypot(*(p0 - here.xy)) > 1e-9:
                    parts.append(_single(garment, robot, here.piece, np.vstack([here.xy, p0])))
            else:
                parts.append(planner.route(free.point(here.piece, here.xy), free.point(items[i].piece, p0, "sweep item"), snap=True))
        parts.append(_joined_item(garment, planner, free, items[i].piece, path))
        end = path[-1]
        here = PiecePoint(items[i].piece, float(end[0]), float(end[1]), label="sweep")
    return parts


def _joined_item(garment: Garment, planner: Planner, free: _Free, piece: str, path: np.ndarray) -> Route:
    """An item's polyline as a route; a step that leaves the free space (a lane change past a
    concave corner) is replaced by a planner route."""
    robot = planner.robot
    chunks: list[Route] = []
    run = [path[0]]
    for a, b in zip(path[:-1], path[1:], strict=True):
        if free.segment(piece, a, b):
            run.append(b)
            continue
        if len(run) >= 2:
            chunks.append(_single(garment, robot, piece, np.array(run)))
        chunks.append(planner.route(free.point(piece, a), free.point(piece, b), snap=True))
        run = [b]
    if len(run) >= 2:
        chunks.append(_single(garment, robot, piece, np.array(run)))
    return chunks[0] if len(chunks) == 1 else join_routes(garment, robot, chunks)
