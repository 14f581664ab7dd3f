"""Checks of a garment that need its geometry or cross-references.

:func:`garment_problems` works on any :class:`~garnav.model.Garment` — read from a file or built in
Python — and returns every problem found as a list of :class:`~garnav.errors.Problem` (empty when
the garment is sound). Ranges of numbers come from :mod:`garnav.spec.fields`.

Checked here: number ranges and finiteness; duplicate names; edges that do not chain; edges with
fewer than 2 points; outlines that cross themselves, run clockwise or have no area; openings
outside the piece or across its outline; placements that leave the sheet or overlap; seam runs on
missing pieces/edges, out of range, or covering an edge stretch that another run covers; keep-outs
on missing pieces, of unknown kind, with bad shapes, or (partly) outside their piece; landmarks on
missing pieces, outside their piece, or with both/neither of a pattern and a body position.
"""

from __future__ import annotations

import math
import re
from collections import Counter
from typing import Iterable

import numpy as np
import shapely

from garnav.errors import Problem, SpecError, did_you_mean
from garnav.model import KEEPOUT_KINDS, Circle, Garment, KeepOut, Piece, PolygonShape, Rectangle
from garnav.polyline import point_at_length
from garnav.spec.fields import MAX_ABS, ROBOT_SIDES, range_problem

__all__ = ["garment_problems", "check_garment", "geometry_problems", "robot_problems", "TOL_MM"]

TOL_MM = 1e-6
"""Distances below this (mm) count as zero: chained edge ends, run limits, overlaps."""

TOL_AREA_MM2 = 1e-6
"""Areas below this (mm²) count as zero: degenerate pieces, sheet overlaps."""


def garment_problems(garment: Garment, source: str = "<memory>") -> list["Problem"]:
    """Every geometric and cross-reference problem of ``garment``.

    Parameters
    ----------
    garment : Garment
    source : str
        File name used in the messages ("<memory>" for a garment built in Python).

    Returns
    -------
    list of Problem
        Empty when the garment is sound.
    """
    return geometry_problems(garment, source)


def check_garment(garment: Garment, source: str = "<memory>") -> Garment:
    """Return ``garment`` unchanged when it is sound; raise :class:`SpecError` listing every
    problem otherwise (for garments built in Python before they are planned on or saved)."""
    problems = garment_problems(garment, source)
    if problems:
        raise SpecError(problems)
    return garment


def geometry_problems(
    garment: Garment,
    source: str,
    broken_pieces: Iterable[str] = (),
    check_sheet: bool = True,
    check_pieces: bool = True,
) -> list[Problem]:
    """:func:`garment_problems` with two reader options.

    Parameters
    ----------
    broken_pieces : iterable of str
        Pieces named in the file that could not be built (already reported): references to them
        are not reported again.
    check_sheet : bool
        False when the sheet size itself was unreadable (already reported).
    check_pieces : bool
        False when a missing or malformed piece list was already reported.
    """
    return _Checker(garment, source, set(broken_pieces), check_sheet, check_pieces).run()


def robot_problems(robot, source: str = "<memory>", piece_names: Iterable[str] | None = None) -> list[Problem]:
    """Every problem of a robot profile: number ranges, side, and its physics
    (:func:`garnav.mechanics.profile.physics_problems`; with ``piece_names`` its per-piece gaps
    must name pieces of the garment)."""
    from garnav.mechanics.profile import physics_problems

    out = []
    for key in ("radius_mm", "wheel_base_mm", "speed_mm_s", "edge_margin_mm"):
        why = range_problem("robot", key, getattr(robot, key))
        if why:
            out.append(Problem(source, "robot", f"'{key}' {why}"))
    if robot.side not in ROBOT_SIDES:
        out.append(Problem(source, "robot", f"side '{robot.side}' is not one of {', '.join(ROBOT_SIDES)}",
                           hint=did_you_mean(str(robot.side), ROBOT_SIDES)))
    if getattr(robot, "physics", None) is not None:
        out.extend(Problem(source, "robot physics", why)
                   for why in physics_problems(robot.physics, piece_names))
    return out


def _fmt(v: float) -> str:
    return f"{v:.1f}"


def _pt(p) -> str:
    return f"({_fmt(p[0])}, {_fmt(p[1])})"


def _finite_points(points) -> bool:
    """All coordinates finite and within ±MAX_ABS (mm)."""
    arr = np.asarray(points, dtype=float)
    return bool((np.abs(arr) <= MAX_ABS).all())  # False for nan and inf too


_WHERE = re.compile(r"\[([-+0-9.eE]+|nan|inf) ([-+0-9.eE]+|nan|inf)\]")


def _reason_place(reason: str) -> tuple[str, tuple[float, float] | None]:
    """Split shapely's ``is_valid_reason`` text ("Self-intersection[0.5 0.5]") into words, place."""
    m = _WHERE.search(reason)
    if not m:
        return reason, None
    return reason[: m.start()].strip(), (float(m.group(1)), float(m.group(2)))


class _Checker:
    def __init__(
        self, garment: Garment, source: str, broken: set[str], check_sheet: bool, check_pieces: bool
    ):
        self.g = garment
        self.source = source
        self.broken = broken
        self.check_sheet = check_sheet
        self.check_pieces = check_pieces
        self.problems: list[Problem] = []
        self.polygons: dict[str, shapely.Polygon] = {}  # pieces with sound geometry
        self.pieces: dict[str, Piece] = {}  # first piece of each name

    def add(self, item: str, reason: str, where=None, hint: str | None = None) -> None:
        if where is not None:
            where = tuple(float(v) for v in where)
        self.problems.append(Problem(self.source, item, reason, where, hint))

    def number(self, section: str, key: str, value, item: str) -> bool:
        why = range_problem(section, key, value)
        if why:
            self.add(item, f"'{key}' {why}")
            return False
        return True

    def duplicates(self, kind: str, names: Iterable[str], scope: str = "") -> None:
        counts = Counter(names)
        for name in sorted(n for n, c in counts.items() if c > 1):
            where = f"{scope} " if scope else ""
            self.add(f"{where}{kind} '{name}'".strip(),
                     f"name is used by {counts[name]} {kind}s; names must be unique")

    # ------------------------------------------------------------------------------------------
    def run(self) -> list[Problem]:
        g = self.g
        if self.check_sheet and len(g.sheet_size_mm) != 2:
            self.add("top level", f"'sheet_size_mm' must be 2 numbers (width, height), "
                     f"found {len(g.sheet_size_mm)}")
            self.check_sheet = False
        if self.check_sheet:
            for value in g.sheet_size_mm:
                if not self.number("top", "sheet_size_mm", value, "top level"):
                    self.check_sheet = False
                    break
        if g.robot is not None:
            self.robot()
        self.duplicates("piece", (p.name for p in g.pieces))
        if not g.pieces and not self.broken and self.check_pieces:
            self.add("top level", "has no pieces; give at least one [[piece]]")
        for p in g.pieces:
            self.pieces.setdefault(p.name, p)
            poly = self.piece(p)
            if poly is not None and p.name not in self.polygons:
                self.polygons[p.name] = poly
        if self.check_sheet:
            self.sheet()
        self.seams()
        self.keepouts()
        self.landmarks()
        return self.problems

    def robot(self) -> None:
        pieces = [p.name for p in self.g.pieces] if self.check_pieces else None
        self.problems.extend(robot_problems(self.g.robot, self.source, pieces))

    # -- pieces --------------------------------------------------------------------------------
    def piece(self, p: Piece) -> shapely.Polygon | None:
        """Check one piece; return its polygon when its geometry is sound."""
        item = f"piece '{p.name}'"
        pl = p.placement
        for key in ("x", "y", "angle_deg"):
            self.number("placement", key, getattr(pl, key), f"{item} placement")
        if not p.edges:
            self.add(item, "has no edges; a piece needs an outline")
            return None
        self.duplicates("edge", (e.name for e in p.edges), scope=item)
        sound = True
        for e in p.edges:
            eitem = f"{item} edge '{e.name}'"
            if len(e.points) < 2:
                self.add(eitem, f"has {len(e.points)} point{'s' if len(e.points) != 1 else ''}; "
                         "an edge needs at least 2")
                sound = False
            elif not _finite_points(e.points):
                self.add(eitem, "has a point that is not a finite number within ±1e7 mm")
                sound = False
            elif e.length <= TOL_MM:
                self.add(eitem, "has zero length (all its points coincide)", where=e.points[0])
        if not sound:
            return None
        # chaining: edge i ends where edge i+1 starts (cyclically)
        n = len(p.edges)
        for i, e in enumerate(p.edges):
            nxt = p.edges[(i + 1) % n]
            end, start = np.asarray(e.points[-1]), np.asarray(nxt.points[0])
            gap = float(np.linalg.norm(end - start))
            if gap > TOL_MM:
                which = "the next edge" if i + 1 < n else "the first edge"
                self.add(f"{item} edge '{e.name}'",
                         f"ends at {_pt(end)} but {which} '{nxt.name}' starts at {_pt(start)}, "
                         f"a gap of {gap:.3f} mm",
                         hint="each edge must start where the previous one ends")
                sound = False
        if not sound:
            return None
        outline = p.outline
        if len(np.unique(np.round(outline, 9), axis=0)) < 3:
            self.add(item, "outline has fewer than 3 distinct corners; a piece needs an area")
            return None
        centred = outline - outline.mean(axis=0)
        scale = max(float(np.abs(centred).max()), 1.0)
        if np.linalg.matrix_rank(centred, tol=1e-9 * scale) < 2:
            self.add(item, "has zero area: all outline points lie on one line")
            return None
        ring = shapely.Polygon(outline)
        reason = shapely.is_valid_reason(ring)
        if reason != "Valid Geometry":
            self.bad_ring(item, reason, p)
            return None
        signed = _signed_area(outline)
        if abs(signed) <= TOL_AREA_MM2:
            self.add(item, "has zero area (its outline is degenerate)")
            return None
        if signed < 0:
            self.add(item, "outline runs clockwise; it must run counter-clockwise seen from the "
                     "garment's outside (face side)",
                     hint="reverse the order of the edges and of the points in each edge")
            return None
        return self.openings(p, item, ring)

    def bad_ring(self, item: str, reason: str, p: Piece) -> None:
        words, place = _reason_place(reason)
        if place is None:
            self.add(item, f"outline is not a valid polygon ({reason})")
            return
        near = [e.name for e in p.edges
                if shapely.LineString(e.points).distance(shapely.Point(place)) <= 1e-6]
        crossing = words.lower() == "self-intersection"
        verb = "cross" if crossing else "touch"
        on = ""
        if len(near) == 1:
            on = f" within edge '{near[0]}'"
        elif near:
            quoted = [f"'{n}'" for n in near]
            on = ": edges " + ", ".join(quoted[:-1]) + " and " + quoted[-1] + f" {verb}"
        if crossing:
            text = f"outline crosses itself{on}"
        elif "ring self-intersection" in words.lower():
            text = f"outline touches itself{on}"
        else:
            text = f"outline is not a valid polygon ({words}){on}"
        others = [c for c in _self_contacts(p.outline) if math.dist(c, place) > 1e-6]
        if others:
            shown = ", ".join(_pt(c) for c in others[:4]) + (", ..." if len(others) > 4 else "")
            text += f" (and at {len(others)} more place{'s' if len(others) > 1 else ''}: {shown})"
        self.add(item, text, where=place,
                 hint="an outline must be a simple loop; check the order of points and edges")

    def openings(self, p: Piece, item: str, ring: shapely.Polygon) -> shapely.Polygon | None:
        if not p.openings:
            return ring
        self.duplicates("opening", (o.name for o in p.openings), scope=item)
        for name in sorted({o.name for o in p.openings} & set(p.edge_names)):
            self.add(f"{item} opening '{name}'", f"has the name of an edge of piece '{p.name}'; "
                     "edge and opening names share one list of open edges and must differ")
        sound = True
        holes: list[tuple[str, shapely.Polygon]] = []
        for o in p.openings:
            oitem = f"{item} opening '{o.name}'"
            if len(o.points) < 3:
                self.add(oitem, f"has {len(o.points)} points; an opening needs at least 3")
                sound = False
                continue
            if not _finite_points(o.points):
                self.add(oitem, "has a point that is not a finite number within ±1e7 mm")
                sound = False
                continue
            hole = shapely.Polygon(o.points)
            reason = shapely.is_valid_reason(hole)
            if reason != "Valid Geometry":
                words, place = _reason_place(reason)
                self.add(oitem, f"is not a simple loop ({words.lower()})", where=place)
                sound = False
                continue
            if hole.area <= TOL_AREA_MM2:
                self.add(oitem, "has zero area")
                sound = False
                continue
            if not ring.contains_properly(hole):
                inside = ring.intersection(hole).area
                if inside <= TOL_AREA_MM2:
                    self.add(oitem, "lies outside the piece", where=_rep(hole))
                else:
                    crossing = ring.exterior.intersection(hole.exterior)
                    where = _rep(crossing) if not crossing.is_empty else None
                    verb = "touches" if ring.contains(hole) else "crosses"
                    self.add(oitem, f"{verb} the piece outline; an opening must lie inside the "
                             "piece", where=where)
                sound = False
                continue
            holes.append((o.name, hole))
        for i, (na, ha) in enumerate(holes):
            for nb, hb in holes[i + 1:]:
                if ha.intersects(hb):
                    self.add(f"{item} opening '{na}'", f"overlaps or touches opening '{nb}'",
                             where=_rep(ha.intersection(hb)))
                    sound = False
        if not sound:
            return None
        return p.polygon

    def sheet(self) -> None:
        w, h = self.g.sheet_size_mm
        placed: list[tuple[str, shapely.Geometry]] = []
        for name in sorted(self.polygons, key=[p.name for p in self.g.pieces].index):
            piece = self.pieces[name]
            if not _finite_points((piece.placement.x, piece.placement.y,
                                   piece.placement.angle_deg)):
                continue
            shell = piece.placement.to_sheet(piece.outline)
            sheet_poly = shapely.Polygon(shell, [piece.placement.to_sheet(o.array)
                                                 for o in piece.openings])
            minx, miny = shell.min(axis=0)
            maxx, maxy = shell.max(axis=0)
            out = []
            if minx < -TOL_MM:
                out.append(f"{-minx:.1f} mm past x = 0")
            if miny < -TOL_MM:
                out.append(f"{-miny:.1f} mm past y = 0")
            if maxx > w + TOL_MM:
                out.append(f"{maxx - w:.1f} mm past x = {w:g}")
            if maxy > h + TOL_MM:
                out.append(f"{maxy - h:.1f} mm past y = {h:g}")
            if out:
                self.add(f"piece '{name}'",
                         f"placement puts it off the sheet [0, {w:g}] × [0, {h:g}] mm: "
                         + ", ".join(out),
                         hint="move it with placement x, y or enlarge sheet_size_mm")
            placed.append((name, sheet_poly))
        for i, (na, pa) in enumerate(placed):
            for nb, pb in placed[i + 1:]:
                if not pa.intersects(pb):
                    continue
                overlap = pa.intersection(pb)
                if overlap.area > TOL_AREA_MM2:
                    c = _rep(overlap)
                    self.add(f"piece '{na}'",
                             f"overlaps piece '{nb}' on the sheet by {overlap.area:.1f} mm² "
                             f"around {_pt(c)} (sheet frame)",
                             hint="pieces must lie side by side on the sheet; change a placement")

    # -- seams ---------------------------------------------------------------------------------
    def seams(self) -> None:
        self.duplicates("seam", (s.name for s in self.g.seams))
        covered: dict[tuple[str, str], list[tuple[float, float, str]]] = {}
        for s in self.g.seams:
            item = f"seam '{s.name}'"
            self.number("seam", "crossing_cost_mm", s.crossing_cost_mm, item)
            self.number("seam", "min_crossing_angle_deg", s.min_crossing_angle_deg, item)
            for side, run in (("a", s.a), ("b", s.b)):
                ritem = f"{item} run {side}"
                edge = self.find_edge(run.piece, run.edge, ritem)
                if edge is None:
                    continue
                ok = True
                for key in ("from_mm", "to_mm"):
                    value = getattr(run, key)
                    if value is not None and not self.number("run", key, value, ritem):
                        ok = False
                if not ok:
                    continue
                length = edge.length
                s0, s1 = run.span(edge)
                if s0 > length + TOL_MM:
                    self.add(ritem, f"from_mm {s0:g} is past the end of edge '{run.edge}' "
                             f"(length {length:.1f} mm)")
                    continue
                if s1 > length + TOL_MM:
                    self.add(ritem, f"to_mm {s1:g} is past the end of edge '{run.edge}' "
                             f"(length {length:.1f} mm)",
                             hint="leave to_mm out to run to the edge's end")
                    continue
                if s0 >= s1 - TOL_MM:
                    self.add(ritem, f"from_mm ({s0:g}) must be less than to_mm ({s1:g}); use "
                             "reverse = true to run against the edge's direction")
                    continue
                covered.setdefault((run.piece, run.edge), []).append(
                    (s0, s1, f"seam '{s.name}' run {side}"))
        for (pname, ename), spans in sorted(covered.items()):
            spans.sort()
            reach, owner = spans[0][1], spans[0]
            for span in spans[1:]:
                if span[0] < reach - TOL_MM:
                    lap = min(reach, span[1]) - span[0]
                    edge = self.pieces[pname].edge(ename)
                    place = point_at_length(edge.array, span[0])
                    self.add(f"piece '{pname}' edge '{ename}'",
                             f"has a stretch in two seams: {owner[2]} covers "
                             f"{owner[0]:.1f}–{owner[1]:.1f} mm and {span[2]} covers "
                             f"{span[0]:.1f}–{span[1]:.1f} mm (overlap {lap:.1f} mm)",
                             where=place,
                             hint="an edge stretch can be sewn to one other stretch only")
                if span[1] > reach:
                    reach, owner = span[1], span
        return None

    def find_piece(self, name: str, item: str) -> Piece | None:
        if name in self.broken:
            return None
        piece = self.pieces.get(name)
        if piece is None:
            choices = list(self.pieces) + sorted(self.broken)
            self.add(item, f"piece '{name}' does not exist", hint=did_you_mean(name, choices))
        return piece

    def find_edge(self, piece_name: str, edge_name: str, item: str):
        piece = self.find_piece(piece_name, item)
        if piece is None or piece_name not in self.polygons:
            return None
        try:
            return piece.edge(edge_name)
        except KeyError:
            self.add(item, f"piece '{piece_name}' has no edge '{edge_name}'",
                     hint=did_you_mean(edge_name, piece.edge_names)
                     or f"its edges: {', '.join(piece.edge_names)}")
            return None

    # -- keep-outs -----------------------------------------------------------------------------
    def keepouts(self) -> None:
        self.duplicates("keepout", (k.name for k in self.g.keepouts))
        for k in self.g.keepouts:
            item = f"keepout '{k.name}'"
            if k.kind not in KEEPOUT_KINDS:
                self.add(item, f"unknown kind '{k.kind}'; valid kinds: {', '.join(KEEPOUT_KINDS)}",
                         hint=did_you_mean(str(k.kind), KEEPOUT_KINDS))
            self.number("keepout", "clearance_mm", k.clearance_mm, item)
            self.number("keepout", "cost_factor", k.cost_factor, item)
            with np.errstate(over="ignore", invalid="ignore"):  # huge sizes: reported, not warned
                geom = self.shape(k, item)
            piece = self.find_piece(k.piece, item)
            if geom is None or piece is None or k.piece not in self.polygons:
                continue
            self.inside_piece(item, geom, k.piece)

    def shape(self, k: KeepOut, item: str) -> shapely.Geometry | None:
        s = k.shape
        if isinstance(s, Circle):
            ok = self.number("keepout", "center", s.cx, item) & self.number(
                "keepout", "center", s.cy, item) & self.number("keepout", "radius", s.radius, item)
        elif isinstance(s, Rectangle):
            ok = (
                self.number("keepout", "center", s.cx, item)
                & self.number("keepout", "center", s.cy, item)
                & self.number("keepout", "size", s.width, item)
                & self.number("keepout", "size", s.height, item)
                & self.number("keepout", "angle_deg", s.angle_deg, item)
            )
        elif isinstance(s, PolygonShape):
            if len(s.points) < 3:
                self.add(item, f"polygon has {len(s.points)} points; it needs at least 3")
                return None
            if not _finite_points(s.points):
                self.add(item, "polygon has a point that is not a finite number within ±1e7 mm")
                return None
            poly = shapely.Polygon(s.points)
            reason = shapely.is_valid_reason(poly)
            if reason != "Valid Geometry":
                words, place = _reason_place(reason)
                self.add(item, f"polygon is not a simple loop ({words.lower()})", where=place)
                return None
            if poly.area <= TOL_AREA_MM2:
                self.add(item, "polygon has zero area")
                return None
            return poly
        else:
            self.add(item, f"shape must be a Circle, Rectangle or PolygonShape, "
                     f"found {type(s).__name__}")
            return None
        return s.exact_geometry() if ok else None

    def inside_piece(self, item: str, geom: shapely.Geometry, piece_name: str) -> None:
        poly = self.polygons[piece_name]
        outside = geom.difference(poly)
        if outside.area <= TOL_AREA_MM2:
            return
        if poly.intersection(geom).area <= TOL_AREA_MM2:
            self.add(item, f"lies entirely outside piece '{piece_name}'", where=_rep(geom))
            return
        pts = shapely.get_coordinates(outside)
        dist = shapely.distance(shapely.points(pts), poly)
        far = int(np.argmax(dist))
        self.add(item, f"sticks out of piece '{piece_name}' by {dist[far]:.1f} mm "
                 f"({outside.area:.1f} mm² outside)", where=pts[far],
                 hint="a keep-out must lie inside its piece (split it per piece if it spans a seam)")

    # -- landmarks -----------------------------------------------------------------------------
    def landmarks(self) -> None:
        self.duplicates("landmark", (m.name for m in self.g.landmarks))
        for m in self.g.landmarks:
            item = f"landmark '{m.name}'"
            pattern = m.piece is not None or m.x is not None or m.y is not None
            if pattern and m.xyz is not None:
                self.add(item, "has both a pattern position (piece, x, y) and a body position "
                         "(xyz); give one")
                continue
            if not pattern and m.xyz is None:
                self.add(item, "has neither a pattern position (piece + at) nor a body "
                         "position (xyz)")
                continue
            if m.xyz is not None:
                if len(m.xyz) != 3 or not _finite_points(m.xyz):
                    self.add(item, f"xyz must be 3 finite numbers within ±1e7 mm, found {m.xyz}")
                continue
            if m.piece is None or m.x is None or m.y is None:
                self.add(item, "a pattern landmark needs piece, x and y")
                continue
            if not _finite_points((m.x, m.y)):
                self.add(item, f"position ({m.x}, {m.y}) is not finite or beyond ±1e7 mm")
                continue
            piece = self.find_piece(m.piece, item)
            if piece is None or m.piece not in self.polygons:
                continue
            d = self.polygons[m.piece].distance(shapely.Point(m.x, m.y))
            if d > TOL_MM:
                self.add(item, f"lies outside piece '{m.piece}', {d:.1f} mm from it",
                         where=(m.x, m.y))


def _self_contacts(ring: np.ndarray) -> list[tuple[float, float]]:
    """Points where non-neighbouring sides of a closed ring (n, 2) cross or touch, sorted.

    Neighbouring sides share a corner and are not compared; collinear overlaps give the
    overlap's end points.
    """
    n = len(ring)
    segs = shapely.linestrings(np.stack([ring, np.roll(ring, -1, axis=0)], axis=1))
    tree = shapely.STRtree(segs)
    i, j = tree.query(segs, predicate="intersects")
    gap = (j - i) % n
    keep = (i < j) & (gap > 1) & (gap < n - 1)
    if not keep.any():
        return []
    meet = shapely.intersection(segs[i[keep]], segs[j[keep]])
    pts = np.unique(np.round(shapely.get_coordinates(meet), 9), axis=0)
    return [(float(x), float(y)) for x, y in pts]


def _signed_area(ring: np.ndarray) -> float:
    """Shoelace signed area of a closed ring (n, 2) without repeated first point; > 0 when CCW."""
    x, y = ring[:, 0], ring[:, 1]
    return 0.5 * float(np.dot(x, np.roll(y, -1)) - np.dot(np.roll(x, -1), y))


def _rep(geom: shapely.Geometry) -> tuple[float, float]:
    """A representative point inside (or on) a geometry."""
    p = geom.representative_point() if not geom.is_empty else shapely.Point(0, 0)
    return (p.x, p.y)
