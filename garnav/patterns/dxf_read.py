"""Read a pattern-exchange DXF (ASTM D6673 / AAMA conventions, from memory) into a RawPattern.

Pieces are blocks inserted in the model space. In each block: the boundary on layer 1 (one closed
curve, or lines, arcs, splines and polylines that chain into one loop), turn points on layer 2,
notches on layer 4 (points, or short lines whose end nearer the boundary is the notch), the grain
line on layer 7, internal lines on layer 8 (closed ones → keep-outs, by option), internal
cut-outs on layer 11 (→ openings), drill holes on layer 13 (→ keep-outs, landmarks or nothing, by
option), garnav's landmarks on layer ``GARNAV_LANDMARKS``, and text: ``Piece Name:``, ``Size:``,
``Quantity:``. Units from ``$INSUNITS``, else from the text ``UNITS: METRIC`` / ``UNITS: ENGLISH``.
Curves are flattened within the chord tolerance: arcs and bulges by the sagitta formula
s = r (1 − cos(Δθ/2)) (exact), splines and ellipses by ezdxf's adaptive flattening (asked for half
the tolerance, as it checks chord middles only). Chords are inscribed: a piece's area comes out
short by about 2/3 · tolerance · curved length.
"""

from __future__ import annotations

import math
import os
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from garnav.model import Placement
from garnav.patterns import conventions as cv
from garnav.patterns.extra import require
from garnav.patterns.flatten import arc_steps
from garnav.patterns.raw import RawKeepOut, RawLandmark, RawPattern, RawPiece, pattern_error, checked_pattern_path

__all__ = ["DxfOptions", "read_dxf", "arc_points"]


@dataclass(frozen=True)
class DxfOptions:
    """How to read a DXF pattern.

    Parameters
    ----------
    tolerance_mm : float
        Chord tolerance for flattening curves (mm).
    units : str or None
        "mm", "cm" or "in" to override (or supply) the file's units.
    internal : {"keepout", "ignore"}
        What closed internal lines (layer 8) become.
    drill : {"keepout", "landmark", "ignore"}
        What drill holes (layer 13) become.
    drill_radius_mm : float
        Radius of the keep-out made for a drill hole given as a point.
    pairs : bool
        Read ``Quantity: 2`` as a mirrored pair (left and right piece; cutting pairs from folded
        fabric is common practice, no source).
    max_bytes : int
        Larger files are refused.
    """

    tolerance_mm: float = cv.DEFAULT_TOLERANCE_MM
    units: str | None = None
    internal: str = "keepout"
    drill: str = "keepout"
    drill_radius_mm: float = 2.0
    pairs: bool = True
    max_bytes: int = cv.MAX_DXF_BYTES


UNIT_OVERRIDE_MM = {"mm": 1.0, "cm": 10.0, "in": 25.4}
CURVES = ("LINE", "ARC", "CIRCLE", "ELLIPSE", "LWPOLYLINE", "POLYLINE", "SPLINE")


def arc_points(center, radius: float, a0: float, a1: float, tol: float) -> np.ndarray:
    """Points on a counter-clockwise arc from angle ``a0`` to ``a1`` (rad), chords within ``tol``.

    The sagitta of a chord spanning Δθ is r (1 − cos(Δθ/2)); :func:`~garnav.patterns.flatten.
    arc_steps` picks the number of chords that keeps it below ``tol``. Returns (n + 1, 2).
    """
    sweep = (a1 - a0) % (2 * math.pi) or 2 * math.pi
    n = arc_steps(sweep, radius, tol)
    t = a0 + sweep * np.arange(n + 1) / n
    return np.column_stack([center[0] + radius * np.cos(t), center[1] + radius * np.sin(t)])


class _Entities:
    """Flattening of one block's entities, with messages naming file, block, entity and layer."""

    def __init__(self, file: str, block: str, tol: float):
        self.file, self.block, self.tol = file, block, tol
        self.ezdxf = require("ezdxf")

    def item(self, e) -> str:
        return f"block '{self.block}' {e.dxftype()} #{e.dxf.handle} on layer {e.dxf.layer}"

    def fail(self, e, reason: str, where=None):
        return pattern_error(self.file, self.item(e), reason, where)

    def check(self, e, pts: np.ndarray) -> np.ndarray:
        if not np.all(np.isfinite(pts)):
            raise self.fail(e, "a coordinate is not a finite number (NaN or inf)")
        return pts

    def polyline_vertices(self, e) -> tuple[list[tuple[float, float, float]], bool]:
        if e.dxftype() == "LWPOLYLINE":
            return [(float(x), float(y), float(b)) for x, y, b in e.get_points("xyb")], bool(e.closed)
        verts = [(float(v.dxf.location.x), float(v.dxf.location.y), float(v.dxf.bulge))
                 for v in e.vertices]
        return verts, bool(e.is_closed)

    def curve(self, e) -> tuple[np.ndarray, np.ndarray, bool]:
        """(points (n, 2), vertex kinds (n,), closed) of a curve entity; kinds True at the
        entity's own vertices (possible corners)."""
        kind = e.dxftype()
        tol = self.tol
        if kind == "LINE":
            pts = np.array([[e.dxf.start.x, e.dxf.start.y], [e.dxf.end.x, e.dxf.end.y]], float)
            self.check(e, pts)
            if float(np.hypot(*(pts[1] - pts[0]))) == 0.0:
                raise self.fail(e, "zero-length line", tuple(pts[0]))
            return pts, np.array([True, True]), False
        if kind in ("ARC", "CIRCLE"):
            c = (float(e.dxf.center.x), float(e.dxf.center.y))
            r = float(e.dxf.radius)
            self.check(e, np.array([c[0], c[1], r]))
            if r <= 0:
                raise self.fail(e, f"zero-length curve (radius {r:g})", c)
            if kind == "CIRCLE":
                pts = arc_points(c, r, 0.0, 2 * math.pi, tol)[:-1]
                return pts, np.zeros(len(pts), bool), True
            a0, a1 = math.radians(e.dxf.start_angle), math.radians(e.dxf.end_angle)
            if not (math.isfinite(a0) and math.isfinite(a1)):
                raise self.fail(e, "an angle is not a finite number")
            if abs(((a1 - a0) + math.pi) % (2 * math.pi) - math.pi) < 1e-12:
                raise self.fail(e, "zero-length curve (start angle = end angle)", c)
            pts = arc_points(c, r, a0, a1, tol)
            kinds = np.zeros(len(pts), bool)
            kinds[[0, -1]] = True
            return pts, kinds, False
        if kind in ("LWPOLYLINE", "POLYLINE"):
            verts, closed = self.polyline_vertices(e)
            arr = np.array(verts, float).reshape(-1, 3)
            self.check(e, arr)
            if len(arr) < 2 or np.all(np.hypot(*(arr[:, :2] - arr[0, :2]).T) == 0):
                raise self.fail(e, "zero-length polyline (fewer than two distinct points)")
            pts_out, kinds_out = [], []
            n = len(arr)
            segs = n if closed else n - 1
            for i in range(segs):
                p0, p1, b = arr[i, :2], arr[(i + 1) % n, :2], arr[i, 2]
                pts_out.append(p0)
                kinds_out.append(True)
                if b != 0 and float(np.hypot(*(p1 - p0))) > 0:
                    centre, sa, ea, r = self.ezdxf.math.bulge_to_arc(p0, p1, b)
                    arc = arc_points((centre.x, centre.y), r, sa, ea, tol)
                    if float(np.hypot(*(arc[0] - p0))) > float(np.hypot(*(arc[-1] - p0))):
                        arc = arc[::-1]
                    pts_out += list(arc[1:-1])
                    kinds_out += [False] * (len(arc) - 2)
            if not closed:
                pts_out.append(arr[-1, :2])
                kinds_out.append(True)
            return np.array(pts_out), np.array(kinds_out), closed
        if kind in ("SPLINE", "ELLIPSE"):
            try:
                # ezdxf checks the distance at each chord's middle only: ask for half the
                # tolerance so that the whole chord stays within it
                pts = np.array([(v.x, v.y) for v in e.flattening(0.5 * tol)], float)
            except Exception as exc:  # ezdxf raises several types for broken splines
                raise self.fail(e, f"cannot evaluate the curve: {exc}") from None
            self.check(e, pts)
            if len(pts) < 2 or float(np.max(np.hypot(*(pts - pts[0]).T))) == 0.0:
                raise self.fail(e, "zero-length curve (all its points coincide)")
            closed = float(np.hypot(*(pts[-1] - pts[0]))) <= 1e-9
            if closed:
                pts = pts[:-1]
            kinds = np.zeros(len(pts), bool)
            if not closed:
                kinds[[0, -1]] = True
            return pts, kinds, closed
        raise self.fail(e, "not a curve garnav reads (LINE, ARC, CIRCLE, ELLIPSE, LWPOLYLINE, "
                           "POLYLINE, SPLINE)")


def _chain(ents: _Entities, curves: list, join: float) -> tuple[np.ndarray, np.ndarray]:
    """Chain curves (entity, points, kinds, closed) into one closed ring, or fail clearly."""
    closed = [c for c in curves if c[3]]
    if closed:
        if len(curves) > 1:
            raise ents.fail(closed[0][0], f"the boundary (layer {cv.LAYER_BOUNDARY}) has "
                            f"{len(curves)} curves and this one is closed on its own; a piece has "
                            "one boundary loop")
        e, pts, kinds, _ = closed[0]
        return pts, kinds
    todo = list(curves)
    e0, pts, kinds, _ = todo.pop(0)
    ring, rk = [pts], [kinds]
    end = pts[-1]
    while todo:
        best = None
        for k, (_e, p, _kd, _) in enumerate(todo):
            for rev in (False, True):
                q = p[-1] if rev else p[0]
                d = float(np.hypot(*(q - end)))
                if best is None or d < best[0]:
                    best = (d, k, rev)
        assert best is not None
        d, k, rev = best
        if d > join:
            raise ents.fail(e0, f"open boundary: the curves on layer {cv.LAYER_BOUNDARY} leave a "
                            f"gap of {d:.3f} mm after this point", tuple(float(v) for v in end))
        e, p, kd, _ = todo.pop(k)
        if rev:
            p, kd = p[::-1], kd[::-1]
        ring.append(p[1:])
        rk.append(kd[1:])
        end = p[-1]
    first = ring[0][0]
    gap = float(np.hypot(*(end - first)))
    if gap > join:
        raise ents.fail(e0, f"open boundary: it does not close, a gap of {gap:.3f} mm",
                        tuple(float(v) for v in end))
    pts, kinds = np.vstack(ring), np.concatenate(rk)
    if len(pts) > 1 and float(np.hypot(*(pts[-1] - pts[0]))) <= join:
        kinds[0] = kinds[0] or kinds[-1]
        pts, kinds = pts[:-1], kinds[:-1]
    return pts, kinds


def _xdata(e) -> list | None:
    try:
        if e.has_xdata(cv.APPID):
            return [v for _, v in e.get_xdata(cv.APPID)]
    except Exception:  # malformed extended data: read the entity without it
        return None
    return None


def _units(file: str, doc, texts: list[str], override: str | None) -> tuple[float, str]:
    """mm per drawing unit, and its name."""
    if override is not None:
        if override not in UNIT_OVERRIDE_MM:
            raise pattern_error(file, "units", f"unknown unit '{override}'",
                                hint="use mm, cm or in")
        return UNIT_OVERRIDE_MM[override], override
    code = doc.header.get("$INSUNITS", 0)
    text_units = None
    for t in texts:
        m = re.match(r"\s*UNITS\s*:\s*(\w+)", t, re.I)
        if m:
            word = m.group(1).upper()
            if word not in cv.UNIT_TEXT_MM:
                raise pattern_error(file, f"text '{t.strip()}'", f"unknown units '{m.group(1)}'",
                                    hint="the standard's unit text is METRIC or ENGLISH; or "
                                    "give --units")
            text_units = word
    if code not in (0, None):
        if code not in cv.INSUNITS_MM:
            raise pattern_error(file, "header $INSUNITS", f"unknown or unsuitable units code {code}",
                                hint="patterns are read in mm, cm, m, in, ft or yd; or give --units")
        f = cv.INSUNITS_MM[code]
        if text_units is not None and cv.UNIT_TEXT_MM[text_units] != f:
            raise pattern_error(file, "header $INSUNITS",
                                f"says {cv.INSUNITS_NAMES[code]} but the text says UNITS: "
                                f"{text_units}", hint="give --units to choose")
        return f, cv.INSUNITS_NAMES[code]
    if text_units is not None:
        return cv.UNIT_TEXT_MM[text_units], "inches" if text_units == "ENGLISH" else "millimetres"
    raise pattern_error(file, "units", "unknown units: $INSUNITS is unset (0) and there is no "
                        "'UNITS: METRIC' or 'UNITS: ENGLISH' text", hint="give --units mm|cm|in")


def _text(e) -> str:
    return e.plain_text() if e.dxftype() == "MTEXT" else str(e.dxf.text)


def _label(texts: list[str], key: str) -> str | None:
    for t in texts:
        m = re.match(rf"\s*{key}\s*:\s*(.*?)\s*$", t, re.I | re.S)
        if m:
            return m.group(1)
    return None


def _placement(ins, f: float):
    """(linear map (2, 2) applied to block points, Placement) of an INSERT, in mm."""
    m = ins.matrix44()
    o = m.transform((0.0, 0.0, 0.0))
    ex, ey = m.transform_direction((1.0, 0.0, 0.0)), m.transform_direction((0.0, 1.0, 0.0))
    a = np.array([[ex.x, ey.x], [ex.y, ey.y]], float)
    t = (float(o.x) * f, float(o.y) * f)
    if np.allclose(a.T @ a, np.eye(2), atol=1e-9) and np.linalg.det(a) > 0:
        angle = math.degrees(math.atan2(a[1, 0], a[0, 0]))
        return np.eye(2), Placement(t[0], t[1], round(angle, 9))
    return a, Placement(t[0], t[1], 0.0)


def _read_block(file, doc, ins, f, opt: DxfOptions, notes: list[str]) -> RawPiece:
    name = ins.dxf.name
    block = doc.blocks.get(name)
    if block is None:
        raise pattern_error(file, f"INSERT #{ins.dxf.handle}", f"refers to a missing block '{name}'")
    lin, placement = _placement(ins, f)
    ents = _Entities(file, name, opt.tolerance_mm / f)

    def mm(pts) -> np.ndarray:
        return (np.asarray(pts, float).reshape(-1, 2) @ lin.T) * f

    boundary, turn, notches, grain, cutouts, keepouts, landmarks, texts = [], [], [], None, [], [], [], []
    opening_names: list[str] = []
    skipped_open = mirror_lines = 0
    edge_names = None
    display = None
    for e in block:
        layer = str(e.dxf.layer).strip()
        kind = e.dxftype()
        if kind in ("TEXT", "MTEXT"):
            texts.append(_text(e))
            xd = _xdata(e)
            if xd and xd[0] == "name" and len(xd) > 1:
                display = str(xd[1])
            continue
        if layer == cv.LAYER_BOUNDARY:
            if kind == "POINT":
                continue
            pts, kinds, closed = ents.curve(e)
            boundary.append((e, mm(pts), kinds, closed))
            xd = _xdata(e)
            if xd and xd[0] == "edges":
                vals = xd[1:]
                edge_names = tuple((str(vals[i]), tuple(mm([vals[i + 1][0], vals[i + 1][1]])[0]))
                                   for i in range(0, len(vals) - 1, 2))
        elif layer == cv.LAYER_TURN_POINTS and kind == "POINT":
            turn.append(tuple(mm([e.dxf.location.x, e.dxf.location.y])[0]))
        elif layer == cv.LAYER_NOTCHES:
            if kind == "POINT":
                notches.append(("point", mm([e.dxf.location.x, e.dxf.location.y])[0], e))
            elif kind == "LINE":
                notches.append(("line", mm([[e.dxf.start.x, e.dxf.start.y],
                                            [e.dxf.end.x, e.dxf.end.y]]), e))
        elif layer == cv.LAYER_GRAIN and kind in CURVES:
            pts, _, _ = ents.curve(e)
            grain = (tuple(mm(pts[0])[0]), tuple(mm(pts[-1])[0]))
        elif layer in (cv.LAYER_INTERNAL, cv.LAYER_CUTOUTS) and kind in CURVES:
            pts, _, closed = ents.curve(e)
            xd = _xdata(e) or []
            if layer == cv.LAYER_CUTOUTS:
                if not closed:
                    raise ents.fail(e, "an internal cut-out must be a closed curve")
                cutouts.append(mm(pts))
                opening_names.append(str(xd[1]) if len(xd) > 1 and xd[0] == "opening" else "")
            elif closed and opt.internal == "keepout":
                keepouts.append(_keepout(ents.item(e), e, mm(pts), xd, lin, f))
            elif not closed:
                skipped_open += 1
        elif layer == cv.LAYER_MIRROR:
            mirror_lines += 1
        elif layer == cv.LAYER_DRILL and opt.drill != "ignore":
            if kind == "POINT":
                c = mm([e.dxf.location.x, e.dxf.location.y])[0]
                r = opt.drill_radius_mm
            elif kind == "CIRCLE":
                c, r = mm([e.dxf.center.x, e.dxf.center.y])[0], float(e.dxf.radius) * f
            else:
                continue
            ents.check(e, np.array([*c, r]))
            if opt.drill == "landmark":
                landmarks.append(RawLandmark(ents.item(e), None, (float(c[0]), float(c[1])),
                                             "drill hole"))
            else:
                keepouts.append(RawKeepOut(ents.item(e), None, "custom",
                                           center=(float(c[0]), float(c[1])), radius=r))
        elif layer == cv.LAYER_LANDMARKS and kind == "POINT":
            xd = _xdata(e) or []
            c = mm([e.dxf.location.x, e.dxf.location.y])[0]
            nm = str(xd[1]) if len(xd) > 1 and xd[0] == "landmark" else None
            desc = str(xd[2]) if len(xd) > 2 else ""
            landmarks.append(RawLandmark(ents.item(e), nm, (float(c[0]), float(c[1])), desc))
    if not boundary:
        raise pattern_error(file, f"block '{name}'",
                            f"no boundary: nothing on layer {cv.LAYER_BOUNDARY}")
    ring, kinds = _chain(ents, boundary, max(10 * opt.tolerance_mm, 0.01))
    piece_name = display or _label(texts, "Piece Name") or name
    if skipped_open:
        notes.append(f"piece '{piece_name}': {skipped_open} open internal line(s) on layer "
                     f"{cv.LAYER_INTERNAL} skipped (only closed ones become keep-outs)")
    if mirror_lines:
        notes.append(f"piece '{piece_name}': mirror line on layer {cv.LAYER_MIRROR} ignored; "
                     "unfold a cut-on-fold piece before importing it")
    size = _label(texts, "Size") or ""
    qty_text = _label(texts, "Quantity")
    quantity = 1
    if qty_text:
        try:
            quantity = int(qty_text)
        except ValueError:
            raise pattern_error(file, f"block '{name}' text 'Quantity: {qty_text}'",
                                "the quantity is not a whole number") from None
    # notches: a line's end nearer the boundary; refuse non-finite values
    notch_pts = []
    import shapely

    lr = shapely.LinearRing(ring) if np.all(np.isfinite(ring)) and len(ring) >= 3 else None
    for kind_, val, e in notches:
        ents.check(e, np.asarray(val))
        if kind_ == "line" and lr is not None:
            d0 = lr.distance(shapely.Point(val[0]))
            d1 = lr.distance(shapely.Point(val[1]))
            notch_pts.append(tuple(val[0] if d0 <= d1 else val[1]))
        else:
            notch_pts.append(tuple(np.atleast_2d(val)[0]))
    return RawPiece(
        name=piece_name,
        source=f"block '{name}'",
        outline=ring,
        vertex_kind=kinds,
        placement=placement,
        notches=tuple((float(x), float(y)) for x, y in notch_pts),
        turn_points=tuple(turn) if turn else None,
        grain=grain,
        edge_names=edge_names,
        openings=tuple(cutouts),
        opening_names=tuple(n or f"cutout{k + 1}" for k, n in enumerate(opening_names)) or None,
        keepouts=tuple(keepouts),
        landmarks=tuple(landmarks),
        quantity=quantity,
        mirror_pair=opt.pairs and quantity == 2,
        size=size,
    )


def _keepout(item: str, e, pts: np.ndarray, xd: list, lin, f: float) -> RawKeepOut:
    name, kind, hard, clearance, cost = None, "custom", True, 0.0, 1.0
    if len(xd) >= 6 and xd[0] == "keepout":
        name, kind, hard, clearance, cost = str(xd[1]), str(xd[2]), bool(xd[3]), float(xd[4]), \
            float(xd[5])
    if e.dxftype() == "CIRCLE" and np.allclose(lin, np.eye(2)):
        c = np.array([e.dxf.center.x, e.dxf.center.y], float) * f
        return RawKeepOut(item, name, kind, center=(float(c[0]), float(c[1])),
                          radius=float(e.dxf.radius) * f, hard=hard, clearance_mm=clearance,
                          cost_factor=cost)
    return RawKeepOut(item, name, kind, points=tuple((float(x), float(y)) for x, y in pts),
                      hard=hard, clearance_mm=clearance, cost_factor=cost)


def read_dxf(path: str | os.PathLike, options: DxfOptions = DxfOptions()) -> RawPattern:
    """Read a DXF pattern file.

    Raises
    ------
    SpecError
        Naming the file, the block and entity (handle, layer) and the reason: too large,
        unreadable, unknown units, no pieces, open boundaries, zero-length curves, NaN.
    """
    ezdxf = require("ezdxf")
    file, p = checked_pattern_path(path, options.max_bytes, options.tolerance_mm)
    try:
        doc = ezdxf.readfile(p)
    except (OSError, ezdxf.DXFError, UnicodeDecodeError, ValueError) as exc:
        raise pattern_error(file, "file", f"not a readable DXF file ({exc})") from None
    msp = doc.modelspace()
    texts = [_text(e) for e in msp.query("TEXT MTEXT")]
    f, unit_name = _units(file, doc, texts, options.units)
    notes: list[str] = []
    garment_name = Path(file).stem
    sheet = None
    for e in msp.query("TEXT"):
        xd = _xdata(e)
        if xd and xd[0] == "garment" and len(xd) > 1:
            garment_name = str(xd[1])
            if len(xd) >= 4:
                sheet = (float(xd[2]) * f, float(xd[3]) * f)
    inserts = list(msp.query("INSERT"))
    if not inserts:
        notes.append("no pieces: a pattern DXF has one block per piece, inserted in the model space")
    pieces = tuple(_read_block(file, doc, ins, f, options, notes) for ins in inserts)
    return RawPattern(file, garment_name, pieces, sheet, tuple(notes), unit_name)
