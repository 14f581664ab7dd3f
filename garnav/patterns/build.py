"""From a :class:`~garnav.patterns.raw.RawPattern` to a :class:`~garnav.model.Garment`.

Per piece: check the outline (finite, closed, not crossing itself, with an area), make it
counter-clockwise, turn the piece frame so that +y runs along the grain line, snap notches onto
the outline, split the outline into edges at corners and notches, and carry keep-outs, landmarks
and cut-outs into the piece frame. A piece cut as a mirrored pair ("cut 2") becomes ``NAME_right``
(as drawn) and ``NAME_left`` (its mirror image about the grain line). Pieces that overlap on the
sheet are laid out again in one row. Seams are *not* made here: see :mod:`garnav.patterns.seams`.
"""

from __future__ import annotations

import math
from collections import Counter
from dataclasses import dataclass

import numpy as np
import shapely

from garnav.errors import SpecError
from garnav.model import (
    Circle,
    Edge,
    Garment,
    KeepOut,
    Landmark,
    Opening,
    Piece,
    Placement,
    PolygonShape,
)
from garnav.patterns.raw import RawPattern, RawPiece, pattern_error
from garnav.patterns.rings import (
    drop_repeats,
    insert_on_ring,
    rotate_points,
    signed_area,
    turning_angles_deg,
)

__all__ = ["BuildOptions", "PiecePoints", "BuiltPattern", "build_garment"]


@dataclass(frozen=True)
class BuildOptions:
    """Tolerances of the import (all mm or degrees).

    Parameters
    ----------
    corner_angle_deg : float
        An original vertex where the outline turns by at least this much is a corner (a "turn
        point"); 30° by default (our choice: curve flattening within 0.1 mm of a 3 mm radius turns
        by less than 30° per chord).
    notch_distance_mm : float
        A notch farther than this from the outline is an error.
    snap_mm : float
        A notch or edge start this close to an outline vertex uses that vertex.
    gap_mm : float
        Space between pieces when they are laid out again.
    """

    corner_angle_deg: float = 30.0
    notch_distance_mm: float = 1.0
    snap_mm: float = 0.05
    gap_mm: float = 20.0


@dataclass(frozen=True)
class PiecePoints:
    """Names of a built piece's edge boundaries: ``points[i]`` is where ``edges[i]`` starts.

    A boundary is a notch (``n1``, ``n2``, … in outline order) or a corner (``c1``, ``c2``, …).
    """

    piece: str
    points: tuple[str, ...]
    is_notch: tuple[bool, ...]


@dataclass(frozen=True)
class BuiltPattern:
    """The garment (no seams yet), the boundary names per piece, and notes for the user."""

    garment: Garment
    points: tuple[PiecePoints, ...]
    notes: tuple[str, ...]


def _finite(arr: np.ndarray) -> bool:
    return bool(np.all(np.isfinite(arr)))


def _piece_problem(file: str, raw: RawPiece, reason: str, where=None) -> SpecError:
    return pattern_error(file, f"piece '{raw.name}' ({raw.source})", reason, where)


def _check_outline(file: str, raw: RawPiece, opt: BuildOptions) -> tuple[np.ndarray, np.ndarray]:
    """Cleaned counter-clockwise ring and vertex kinds, or a SpecError naming the reason."""
    ring = np.asarray(raw.outline, dtype=float).reshape(-1, 2)
    if not _finite(ring):
        bad = int(np.argwhere(~np.isfinite(ring).all(axis=1))[0, 0])
        raise _piece_problem(file, raw, f"outline point {bad} is not a finite number (NaN or inf)")
    kinds = np.asarray(raw.vertex_kind, dtype=bool).reshape(-1)
    ring, kinds = drop_repeats(ring, kinds, 1e-9)
    if len(ring) < 3:
        raise _piece_problem(file, raw, "outline has fewer than 3 distinct points")
    lr = shapely.LinearRing(ring)
    if not lr.is_simple:
        reason = shapely.is_valid_reason(shapely.Polygon(ring))
        where = None
        if "[" in reason:
            try:
                where = tuple(float(v) for v in reason.split("[")[1].rstrip("]").split()[:2])
            except ValueError:
                where = None
        raise _piece_problem(file, raw, "outline crosses or touches itself", where)
    if abs(signed_area(ring)) < 1e-6:
        raise _piece_problem(file, raw, "outline has no area (all its points on one line)")
    if signed_area(ring) < 0:
        ring, kinds = ring[::-1].copy(), kinds[::-1].copy()
    return ring, kinds


def _grain_turn(file: str, raw: RawPiece) -> float:
    """Angle (rad) to rotate the piece frame by so that the grain line points along +y."""
    if raw.grain is None:
        return 0.0
    g = np.asarray(raw.grain, dtype=float)
    if not _finite(g):
        raise _piece_problem(file, raw, "grain line has a coordinate that is not a finite number")
    d = g[1] - g[0]
    if float(np.hypot(*d)) < 1e-6:
        raise _piece_problem(file, raw, "grain line has zero length")
    turn = math.pi / 2 - math.atan2(d[1], d[0])
    # round to the nearest 1e-9 degree so that a file written by garnav comes back exactly
    deg = round(math.degrees(turn), 9)
    return math.radians(deg)


def _normal_deg(angle: float) -> float:
    a = math.fmod(angle, 360.0)
    if a > 180.0:
        a -= 360.0
    if a <= -180.0:
        a += 360.0
    return 0.0 if abs(a) < 1e-9 else a


@dataclass(frozen=True)
class _Shaped:
    """One piece in its final frame, before naming and mirroring."""

    ring: np.ndarray
    breaks: tuple[int, ...]
    notch_at: frozenset[int]
    names: tuple[str, ...] | None
    openings: tuple[np.ndarray, ...]
    keepouts: tuple
    landmarks: tuple
    placement: Placement


def _shape_piece(file: str, raw: RawPiece, opt: BuildOptions) -> _Shaped:
    ring, kinds = _check_outline(file, raw, opt)
    turn = _grain_turn(file, raw)

    def to_frame(pts) -> np.ndarray:
        return rotate_points(np.asarray(pts, dtype=float).reshape(-1, 2), turn)

    ring = to_frame(ring)
    place = raw.placement
    angle = place.angle_deg - math.degrees(turn)
    origin = np.zeros(2)
    if raw.bbox_origin:
        origin = ring.min(axis=0)
        ring = ring - origin
    # sheet = R(a) p_file + t, p_file = R(-turn) (p + origin) → sheet = R(a - turn) p + R(a - turn) origin + t
    shift = Placement(0.0, 0.0, angle).to_sheet(origin[None])[0]
    placement = Placement(place.x + float(shift[0]), place.y + float(shift[1]), _normal_deg(angle))

    def local(pts) -> np.ndarray:
        return to_frame(pts) - origin

    # notches: snap onto the outline
    notch_idx: list[int] = []
    for k, q in enumerate(raw.notches):
        qq = np.asarray(q, dtype=float)
        if not _finite(qq):
            raise _piece_problem(file, raw, f"notch {k + 1} has a coordinate that is not a finite number")
        ring_before = len(ring)
        ring, kinds, idx, dist = insert_on_ring(ring, kinds, local(qq)[0], opt.snap_mm)
        if dist > opt.notch_distance_mm:
            raise _piece_problem(
                file, raw,
                f"notch {k + 1} lies {dist:.2f} mm from the outline (at most "
                f"{opt.notch_distance_mm:g} mm allowed)", tuple(float(v) for v in qq),
            )
        if len(ring) > ring_before:  # an inserted vertex shifts the later indices
            notch_idx = [i + 1 if i >= idx else i for i in notch_idx]
        notch_idx.append(idx)
    names: tuple[str, ...] | None = None
    if raw.edge_names:
        starts: list[tuple[int, str]] = []
        for nm, p in raw.edge_names:
            ring_before = len(ring)
            ring, kinds, idx, dist = insert_on_ring(ring, kinds, local(p)[0], opt.snap_mm)
            if len(ring) > ring_before:
                notch_idx = [i + 1 if i >= idx else i for i in notch_idx]
                starts = [(i + 1 if i >= idx else i, n) for i, n in starts]
            starts.append((idx, nm))
        starts.sort()
        if len({i for i, _ in starts}) != len(starts):
            raise _piece_problem(file, raw, "two edges start at the same outline point")
        breaks = tuple(i for i, _ in starts)
        names = tuple(n for _, n in starts)
        # the recorded first edge comes first
        first = breaks.index(dict((n, i) for i, n in starts)[raw.edge_names[0][0]])
        breaks = breaks[first:] + breaks[:first]
        names = names[first:] + names[:first]
    else:
        corners: set[int] = set()
        if raw.turn_points is not None:
            for q in raw.turn_points:
                ring_before = len(ring)
                ring, kinds, idx, dist = insert_on_ring(ring, kinds, local(q)[0], opt.snap_mm)
                if len(ring) > ring_before:
                    notch_idx = [i + 1 if i >= idx else i for i in notch_idx]
                    corners = {i + 1 if i >= idx else i for i in corners}
                if dist <= opt.notch_distance_mm:
                    corners.add(idx)
        else:
            ang = turning_angles_deg(ring)
            corners = {int(i) for i in np.flatnonzero(kinds & (ang >= opt.corner_angle_deg))}
        cut = sorted(corners | set(notch_idx))
        if not cut:
            cut = [int(np.lexsort((ring[:, 0], ring[:, 1]))[0])]
        # start at the lowest (then leftmost) boundary point
        lows = sorted(cut, key=lambda i: (round(float(ring[i, 1]), 6), round(float(ring[i, 0]), 6)))
        first = cut.index(lows[0])
        breaks = tuple(cut[first:] + cut[:first])
    openings = tuple(local(o) for o in raw.openings)
    keepouts = tuple((k, local(k.points) if k.points is not None else None,
                      local(k.center)[0] if k.center is not None else None) for k in raw.keepouts)
    landmarks = tuple((m, local(m.at)[0]) for m in raw.landmarks)
    return _Shaped(ring, breaks, frozenset(notch_idx), names, openings, keepouts, landmarks,
                   placement)


def _edges(ring: np.ndarray, breaks: tuple[int, ...], names: tuple[str, ...]) -> tuple[Edge, ...]:
    n = len(ring)
    out = []
    for k, (b0, nm) in enumerate(zip(breaks, names, strict=True)):
        b1 = breaks[(k + 1) % len(breaks)]
        stop = b1 if b1 > b0 else b1 + n
        if len(breaks) == 1:
            stop = b0 + n
        idx = [i % n for i in range(b0, stop + 1)]
        out.append(Edge(nm, tuple((float(x), float(y)) for x, y in ring[idx])))
    return tuple(out)


def _point_names(breaks, notch_at) -> tuple[tuple[str, ...], tuple[bool, ...]]:
    names, flags, nn, nc = [], [], 0, 0
    for b in breaks:
        if b in notch_at:
            nn += 1
            names.append(f"n{nn}")
            flags.append(True)
        else:
            nc += 1
            names.append(f"c{nc}")
            flags.append(False)
    return tuple(names), tuple(flags)


def _mirror(piece: Piece) -> Piece:
    """The mirror image of a piece about its grain line (x → −x), outline kept counter-clockwise."""
    edges = tuple(Edge(e.name, tuple((-x, y) for x, y in reversed(e.points)))
                  for e in reversed(piece.edges))
    openings = tuple(Opening(o.name, tuple((-x, y) for x, y in o.points)) for o in piece.openings)
    return Piece(piece.name, edges, openings, piece.placement)


def _pt(p) -> tuple[float, float]:
    return float(p[0]), float(p[1])


def _marks(file: str, raw: RawPiece, shaped: _Shaped, piece: str, sign: float):
    """Keep-outs and landmarks of one built piece (sign −1: mirrored)."""
    suffix = ""
    if raw.mirror_pair:
        suffix = "_left" if sign < 0 else "_right"
    keepouts, landmarks = [], []
    for k, (ko, pts, centre) in enumerate(shaped.keepouts):
        name = (ko.name or f"{raw.name}_{ko.kind}{k + 1}") + suffix
        if pts is not None:
            arr = np.asarray(pts) * [sign, 1.0]
            if not _finite(arr):
                raise pattern_error(file, ko.source, "a coordinate is not a finite number")
            shape: PolygonShape | Circle = PolygonShape(
                tuple(_pt(p) for p in (arr if sign > 0 else arr[::-1])))
        else:
            c = np.asarray(centre) * [sign, 1.0]
            if not (_finite(c) and ko.radius is not None and math.isfinite(ko.radius)):
                raise pattern_error(file, ko.source, "a coordinate is not a finite number")
            shape = Circle(float(c[0]), float(c[1]), float(ko.radius))
        keepouts.append(KeepOut(name, piece, ko.kind, shape, ko.clearance_mm, ko.hard,
                                ko.cost_factor))
    for k, (lm, at) in enumerate(shaped.landmarks):
        if not _finite(np.asarray(at)):
            raise pattern_error(file, lm.source, "a coordinate is not a finite number")
        name = (lm.name or f"{raw.name}_point{k + 1}") + suffix
        landmarks.append(Landmark(name, piece=piece, x=float(at[0]) * sign, y=float(at[1]),
                                  description=lm.description))
    return keepouts, landmarks


def _sheet_polygon(piece: Piece) -> shapely.Polygon:
    return shapely.Polygon(piece.placement.to_sheet(piece.outline))


def _layout_row(pieces: list[Piece], y0: float, gap: float) -> list[Piece]:
    """Pieces side by side from x = gap at height y0 (each keeps its rotation)."""
    out, x = [], gap
    for p in pieces:
        at0 = Placement(0.0, 0.0, p.placement.angle_deg)
        pts = at0.to_sheet(p.outline)
        lo, hi = pts.min(axis=0), pts.max(axis=0)
        out.append(Piece(p.name, p.edges, p.openings,
                         Placement(x - float(lo[0]), y0 - float(lo[1]), p.placement.angle_deg)))
        x += float(hi[0] - lo[0]) + gap
    return out


def _overlapping(pieces: list[Piece]) -> bool:
    polys = [_sheet_polygon(p) for p in pieces]
    tree = shapely.STRtree(polys)
    left, right = tree.query(polys, predicate="intersects")
    for i, j in zip(left, right, strict=True):
        if i < j and polys[i].intersection(polys[j]).area > 1e-6:
            return True
    return False


def build_garment(raw: RawPattern, options: BuildOptions = BuildOptions()) -> BuiltPattern:
    """Make the garment of a read pattern file (no seams; see :mod:`garnav.patterns.seams`).

    Raises
    ------
    SpecError
        Naming the file, the piece (and its element or entity) and the reason: no pieces,
        duplicate piece names, non-finite coordinates, an outline that crosses itself or has no
        area, a notch off the outline, and every problem :func:`garnav.spec.garment_problems`
        finds in the result (keep-outs outside their piece, for instance).
    """
    file = raw.file
    if not raw.pieces:
        raise pattern_error(file, "pattern", "no pieces found", hint=raw.notes[0] if raw.notes else None)
    counts = Counter(p.name for p in raw.pieces)
    for p in raw.pieces:
        if counts[p.name] > 1:
            same = [q for q in raw.pieces if q.name == p.name]
            sizes = sorted({q.size for q in same if q.size})
            hint = (f"the file holds several sizes ({', '.join(sizes)}): export one size"
                    if len(sizes) > 1 else None)
            raise pattern_error(file, f"piece '{p.name}'",
                                f"the name is used by {counts[p.name]} pieces "
                                f"({', '.join(q.source for q in same)}); piece names must be unique",
                                hint=hint)
    notes = list(raw.notes)
    pieces: list[Piece] = []
    mirrored: list[Piece] = []
    points: list[PiecePoints] = []
    keepouts: list[KeepOut] = []
    landmarks: list[Landmark] = []
    for r in raw.pieces:
        shaped = _shape_piece(file, r, options)
        if r.grain is None:
            notes.append(f"piece '{r.name}': no grain line; the file's own y axis is taken as the grain")
        pnames, flags = _point_names(shaped.breaks, shaped.notch_at)
        enames = shaped.names or tuple(f"e{k + 1}" for k in range(len(shaped.breaks)))
        edges = _edges(shaped.ring, shaped.breaks, enames)
        onames = r.opening_names or tuple(f"cutout{k + 1}" for k in range(len(shaped.openings)))
        openings = tuple(Opening(nm, tuple(_pt(q) for q in o))
                         for nm, o in zip(onames, shaped.openings, strict=True))
        base = Piece(r.name, edges, openings, shaped.placement)
        copies = [(base, 1.0)]
        if r.mirror_pair and r.quantity >= 2:
            right = Piece(f"{r.name}_right", edges, openings, shaped.placement)
            image = _mirror(right)
            left = Piece(f"{r.name}_left", image.edges, image.openings, shaped.placement)
            copies = [(right, 1.0), (left, -1.0)]
        elif r.quantity >= 2:
            notes.append(f"piece '{r.name}': quantity {r.quantity} but not marked as a mirrored "
                         "pair; imported once")
        for piece, sign in copies:
            (mirrored if sign < 0 else pieces).append(piece)
            if sign < 0:
                points.append(PiecePoints(piece.name, tuple(reversed(pnames[1:] + pnames[:1])),
                                          tuple(reversed(flags[1:] + flags[:1]))))
            else:
                points.append(PiecePoints(piece.name, pnames, flags))
            ks, ls = _marks(file, r, shaped, piece.name, sign)
            keepouts += ks
            landmarks += ls
    all_names = Counter(p.name for p in pieces + mirrored)
    dup = sorted(n for n, c in all_names.items() if c > 1)
    if dup:
        raise pattern_error(file, f"piece '{dup[0]}'", "the name is used twice after making mirrored "
                            "pairs (NAME_left, NAME_right); rename one piece")
    if _overlapping(pieces):
        notes.append("pieces overlap on the sheet as placed in the file; laid out again in one row")
        pieces = _layout_row(pieces, options.gap_mm, options.gap_mm)
    if mirrored:
        top = max(float(_sheet_polygon(p).bounds[3]) for p in pieces) + options.gap_mm
        mirrored = _layout_row(mirrored, top, options.gap_mm)
    placed = pieces + mirrored
    bounds = np.array([_sheet_polygon(p).bounds for p in placed])
    lo, hi = bounds[:, :2].min(axis=0), bounds[:, 2:].max(axis=0)
    shift = np.where(lo < -1e-7, options.gap_mm - lo, 0.0)
    if np.any(shift):
        placed = [Piece(p.name, p.edges, p.openings,
                        Placement(p.placement.x + float(shift[0]), p.placement.y + float(shift[1]),
                                  p.placement.angle_deg)) for p in placed]
        hi = hi + shift
    if raw.sheet_size_mm is not None and np.all(hi <= np.asarray(raw.sheet_size_mm) + 1e-7) \
            and not np.any(shift):
        sheet = (float(raw.sheet_size_mm[0]), float(raw.sheet_size_mm[1]))
    else:
        sheet = (float(math.ceil(hi[0] + options.gap_mm)), float(math.ceil(hi[1] + options.gap_mm)))
    order = {p.name: i for i, p in enumerate(placed)}
    points.sort(key=lambda pp: order[pp.piece])
    garment = Garment(raw.name, tuple(placed), keepouts=tuple(keepouts),
                      landmarks=tuple(landmarks), sheet_size_mm=sheet)
    from garnav.spec import garment_problems

    problems = garment_problems(garment, file)
    if problems:
        raise SpecError(problems)
    return BuiltPattern(garment, tuple(points), tuple(notes))
