"""Read an SVG pattern into a RawPattern (garnav's own SVG convention, docs/pattern-files.md).

The bytes are parsed by ``defusedxml`` first (no entity declarations or external references — the
billion-laughs and external-entity attacks), then by ``svgelements``, which applies the root's
units and viewBox and every nested transform (SVG 1.1 §7; CSS: 96 px per inch). Classes say what
an element is: ``piece`` (or any closed shape without a role), ``notch``, ``grain``, ``keepout``
(with a kind and ``soft`` as further classes), ``landmark``, ``cutout``; ``pair`` on a piece makes
a mirrored left and right; ``ignore`` skips an element and what it holds. Names come from
``data-name``, then ``inkscape:label``, then ``id``. Marks belong to the piece they lie on.
SVG's y axis points down; garnav's sheet frame has y up, so y_sheet = height − y_svg (mm).
"""

from __future__ import annotations

import io
import json
import math
import os
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import shapely

from garnav.model import KEEPOUT_KINDS
from garnav.patterns import conventions as cv
from garnav.patterns.extra import require
from garnav.patterns.flatten import arc_steps, bezier_points
from garnav.patterns.raw import RawKeepOut, RawLandmark, RawPattern, RawPiece, pattern_error, checked_pattern_path

__all__ = ["SvgOptions", "read_svg", "parse_svg_bytes", "check_xml"]

INKSCAPE_LABEL = "{http://www.inkscape.org/namespaces/inkscape}label"
PX_MM = 25.4 / 96.0  # svgelements works in CSS px at 96 per inch
_LENGTH = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*([A-Za-z%]*)\s*$")


@dataclass(frozen=True)
class SvgOptions:
    """How to read an SVG pattern.

    Parameters
    ----------
    tolerance_mm : float
        Chord tolerance for flattening curves (mm).
    max_bytes : int
        Larger files are refused.
    """

    tolerance_mm: float = cv.DEFAULT_TOLERANCE_MM
    max_bytes: int = cv.MAX_SVG_BYTES


def check_xml(file: str, data: bytes):
    """Parse ``data`` with defusedxml and return the root element, or raise a SpecError that says
    why the file is refused.

    Entity declarations (the "billion laughs" bomb, external entities such as
    ``SYSTEM "file:///etc/passwd"``) and external references are refused; a plain document type
    declaration without entities (drawing programs write SVG 1.1's) is allowed — the standard
    library's parser never fetches it.
    """
    defused = require("defusedxml")
    from defusedxml import ElementTree as DET  # noqa: N814

    try:
        return DET.fromstring(data, forbid_dtd=False, forbid_entities=True, forbid_external=True)
    except defused.EntitiesForbidden as exc:
        sysid = getattr(exc, "sysid", None)
        if sysid:
            raise pattern_error(file, f"XML external entity '{exc.name}' (SYSTEM '{sysid}')",
                                "refused: garnav does not read external entities (they can "
                                "expose local files or reach the network)") from None
        raise pattern_error(file, f"XML entity '{exc.name}'",
                            "refused: entity declarations are not read (nested entities make "
                            "XML bombs such as 'billion laughs')") from None
    except defused.ExternalReferenceForbidden as exc:
        raise pattern_error(file, "XML external reference",
                            f"refused: garnav does not read external references ({exc})") from None
    except defused.DefusedXmlException as exc:
        raise pattern_error(file, "XML", f"refused: {exc}") from None
    except DET.ParseError as exc:
        raise pattern_error(file, "XML", f"not well-formed XML ({exc})") from None


_GEOMETRY_ATTRS = ("d", "points", "x", "y", "width", "height", "cx", "cy", "r", "rx", "ry", "x1",
                   "y1", "x2", "y2", "transform", "viewBox")
_NOT_FINITE = re.compile(r"(?i)(?<![a-z])(nan|inf(inity)?)(?![a-z])")


_LENGTH_ATTRS = ("x", "y", "width", "height", "cx", "cy", "r", "rx", "ry", "x1", "y1", "x2", "y2")


def _check_finite(file: str, root) -> None:
    """Refuse NaN or infinite numbers in geometry attributes (svgelements would drop them) and
    lengths in units CSS does not define (svgelements would read them as px)."""
    for el in root.iter():
        tag = str(el.tag).rsplit("}", 1)[-1]
        ident = f" id='{el.get('id')}'" if el.get("id") else ""
        for key in _GEOMETRY_ATTRS:
            value = el.get(key)
            if value is not None and _NOT_FINITE.search(value):
                raise pattern_error(file, f"<{tag}{ident}>", f"attribute '{key}' holds a number "
                                    "that is not finite (NaN or inf)")
        if tag == "svg":
            continue  # the root's width and height are checked on their own
        for key in _LENGTH_ATTRS:
            value = el.get(key)
            if value is None or value.strip() in ("", "auto"):
                continue
            m = _LENGTH.match(value)
            if m is None or (m.group(2).lower() not in cv.CSS_MM and m.group(2) != "%"):
                raise pattern_error(file, f"<{tag}{ident} {key}=\"{value}\">", "unknown units",
                                    hint="use a number with mm, cm, in, px, pt, pc, Q or %")


def _root_length(file: str, root, key: str) -> float | None:
    text = root.get(key)
    if text is None:
        return None
    m = _LENGTH.match(text)
    unit = m.group(2).lower() if m else None
    if m is None or unit not in cv.CSS_MM:
        raise pattern_error(file, f"<svg {key}=\"{text}\">", "unknown units",
                            hint="use a number with mm, cm, in, px, pt, pc or Q (96 px = 1 in)")
    value = float(m.group(1)) * cv.CSS_MM[unit]
    if not (math.isfinite(value) and value > 0):
        raise pattern_error(file, f"<svg {key}=\"{text}\">", "must be a positive finite length")
    return value


def _describe(e) -> str:
    attrs = e.values.get("attributes", {})
    tag = attrs.get("tag", type(e).__name__.lower())
    ident = attrs.get("id")
    name = attrs.get("data-name") or attrs.get(INKSCAPE_LABEL)
    bits = [tag]
    if ident:
        bits.append(f"id='{ident}'")
    if name:
        bits.append(f"name='{name}'")
    return "<" + " ".join(bits) + ">"


def _name(e) -> str | None:
    attrs = e.values.get("attributes", {})
    for key in ("data-name", INKSCAPE_LABEL, "id"):
        if attrs.get(key):
            return str(attrs[key])
    return None


def _classes(e) -> set[str]:
    return set(str(e.values.get("attributes", {}).get("class", "")).split())


def _subpaths(file: str, e, tol_px: float, px_mm: float = PX_MM) -> list[tuple[np.ndarray, np.ndarray, bool]]:
    """Flattened sub-paths of a shape: (points (n, 2) px, vertex kinds (n,), closed)."""
    se = require("svgelements")
    path = e if isinstance(e, se.Path) else se.Path(e)
    out = []
    for sub in path.as_subpaths():
        pts: list = []
        kinds: list[bool] = []
        closed = False
        for seg in sub.segments():
            if isinstance(seg, se.Move):
                if seg.end is not None:
                    pts, kinds = [np.array([seg.end.x, seg.end.y])], [True]
                continue
            start = np.array([seg.start.x, seg.start.y], float)
            end = np.array([seg.end.x, seg.end.y], float)
            if isinstance(seg, se.Close):
                closed = True
                if pts and float(np.hypot(*(end - pts[-1]))) > 0:
                    pts.append(end)
                    kinds.append(True)
                continue
            if isinstance(seg, se.Line):
                new = [end]
                new_k = [True]
            elif isinstance(seg, (se.CubicBezier, se.QuadraticBezier)):
                ctrl = [seg.start] + ([seg.control1, seg.control2] if isinstance(seg, se.CubicBezier)
                                      else [seg.control]) + [seg.end]
                arr = np.array([[c.x, c.y] for c in ctrl], float)
                if not np.all(np.isfinite(arr)):
                    raise pattern_error(file, _describe(e), "a coordinate is not a finite number")
                if float(np.max(np.hypot(*(arr - arr[0]).T))) == 0.0:
                    raise pattern_error(file, _describe(e), "zero-length curve segment",
                                        (float(arr[0, 0]) * px_mm, float(arr[0, 1]) * px_mm))
                b = bezier_points(arr, tol_px)
                new = list(b[1:])
                new_k = [False] * (len(b) - 2) + [True]
            elif isinstance(seg, se.Arc):
                if seg.sweep == 0 or not math.isfinite(seg.sweep):
                    raise pattern_error(file, _describe(e), "zero-length arc")
                n = arc_steps(seg.sweep, max(abs(seg.rx), abs(seg.ry)), tol_px)
                ts = np.linspace(0.0, 1.0, n + 1)[1:]
                arr = np.array([[p.x, p.y] for p in (seg.point(float(t)) for t in ts)], float)
                arr[-1] = end
                new = list(arr)
                new_k = [False] * (len(arr) - 1) + [True]
            else:
                raise pattern_error(file, _describe(e), f"unknown path segment {type(seg).__name__}")
            if not pts:
                pts, kinds = [start], [True]
            pts += new
            kinds += new_k
        if not pts:
            continue
        arr = np.array(pts, float).reshape(-1, 2)
        if not np.all(np.isfinite(arr)):
            raise pattern_error(file, _describe(e), "a coordinate is not a finite number (NaN or inf)")
        k = np.array(kinds, bool)
        if closed or (len(arr) > 2 and float(np.hypot(*(arr[-1] - arr[0]))) <= 1e-9 * max(1.0, float(np.abs(arr).max()))):
            if len(arr) > 1 and float(np.hypot(*(arr[-1] - arr[0]))) <= 1e-12 * max(1.0, float(np.abs(arr).max())):
                arr, k = arr[:-1], k[:-1]
            closed = True
        out.append((arr, k, closed))
    return out


def _walk(group, out: list) -> None:
    se = require("svgelements")
    for child in group:
        if not isinstance(child, se.SVGElement):
            continue
        if "ignore" in _classes(child):
            continue
        if isinstance(child, se.Group):
            _walk(child, out)
        elif isinstance(child, se.Shape):
            out.append(child)


def parse_svg_bytes(file: str, data: bytes, options: SvgOptions = SvgOptions()) -> RawPattern:
    """Read SVG pattern bytes (already size-checked); see :func:`read_svg`."""
    root = check_xml(file, data)
    if not str(root.tag).endswith("svg"):
        raise pattern_error(file, f"<{root.tag}>", "the root element is not <svg>")
    _check_finite(file, root)
    width = _root_length(file, root, "width")
    height = _root_length(file, root, "height")
    se = require("svgelements")
    try:
        doc = se.SVG.parse(io.BytesIO(data), reify=True, ppi=96.0)
    except Exception as exc:  # svgelements raises many kinds on broken values
        raise pattern_error(file, "SVG", f"cannot be read ({type(exc).__name__}: {exc})") from None
    # svgelements converts mm with a rounded factor (3.7795296 px/mm, 5e-7 off 96/25.4): measure
    # its factor on the root size we parsed ourselves
    px_mm = PX_MM
    if width is not None and float(doc.width) > 0:
        px_mm = width / float(doc.width)
    elif height is not None and float(doc.height) > 0:
        px_mm = height / float(doc.height)
    if height is None:
        vb = doc.viewbox
        height = float(vb.height) * px_mm if vb is not None else None
    shapes: list = []
    _walk(doc, shapes)
    tol_px = options.tolerance_mm / px_mm
    flat = []
    ymax = 0.0
    for e in shapes:
        subs = _subpaths(file, e, tol_px, px_mm)
        mm = [(s[0] * px_mm, s[1], s[2]) for s in subs]
        for pts, _, _ in mm:
            ymax = max(ymax, float(pts[:, 1].max()))
        flat.append((e, mm))
    h = height if height is not None else ymax

    def up(pts: np.ndarray) -> np.ndarray:
        return np.column_stack([pts[:, 0], h - pts[:, 1]])

    pieces, marks = [], []
    for e, subs in flat:
        cls = _classes(e)
        subs = [(up(p), k, c) for p, k, c in subs]
        roles = cls & {"notch", "grain", "keepout", "landmark", "cutout"}
        if roles:
            marks.append((e, sorted(roles)[0], subs))
            continue
        if not subs:
            continue
        if not subs[0][2]:
            raise pattern_error(file, _describe(e), "open boundary: the outline is not closed",
                                tuple(float(v) for v in subs[0][0][-1]),
                                hint="close it (Z), or give it class 'ignore' or a mark class")
        pieces.append((e, subs))
    raws = _pieces(file, pieces, marks, options)
    name = Path(file).stem
    title = root.get("data-garment")
    if title:
        name = title
    sheet = (width, height) if width is not None and height is not None else None
    return RawPattern(file, name, tuple(raws), sheet, (), "svg")


def _pieces(file: str, pieces, marks, options: SvgOptions) -> list[RawPiece]:
    polys = [shapely.Polygon(subs[0][0]) for _, subs in pieces]
    buckets: list[dict] = [{"notches": [], "grain": None, "keepouts": [], "landmarks": [],
                            "cutouts": [], "cutout_names": []} for _ in pieces]

    def owner(e, point) -> int:
        p = shapely.Point(point)
        hits = [i for i, poly in enumerate(polys) if poly.buffer(options.tolerance_mm).covers(p)]
        if not hits:
            raise pattern_error(file, _describe(e), "lies on no piece",
                                tuple(float(v) for v in point))
        return min(hits, key=lambda i: polys[i].area)

    for e, role, subs in marks:
        if not polys:
            raise pattern_error(file, _describe(e), "lies on no piece (the file has no pieces)")
        if not subs:
            raise pattern_error(file, _describe(e), "the mark has no points")
        pts, _, closed = subs[0]
        attrs = e.values.get("attributes", {})
        if role == "notch":
            # the piece the mark points into (its middle lies inside), else the nearest outline;
            # the notch is the mark's point nearest that outline
            mid = shapely.Point(pts.mean(axis=0))
            inside = [i for i, poly in enumerate(polys) if poly.contains(mid)]
            if inside:
                i = min(inside, key=lambda k: polys[k].area)
            else:
                i = min(range(len(polys)), key=lambda k: polys[k].exterior.distance(mid))
            ring = polys[i].exterior
            q = min(pts, key=lambda v: ring.distance(shapely.Point(v)))
            buckets[i]["notches"].append((float(q[0]), float(q[1])))
        elif role == "grain":
            mid = 0.5 * (pts[0] + pts[-1])
            i = owner(e, mid)
            if buckets[i]["grain"] is not None:
                raise pattern_error(file, _describe(e), "a second grain line on the same piece")
            buckets[i]["grain"] = (tuple(map(float, pts[0])), tuple(map(float, pts[-1])))
        elif role == "landmark":
            se = require("svgelements")
            centre = 0.5 * (pts.min(axis=0) + pts.max(axis=0)) if isinstance(e, (se.Circle, se.Ellipse)) else pts[0]
            i = owner(e, centre)
            buckets[i]["landmarks"].append(RawLandmark(_describe(e), _name(e),
                                                       (float(centre[0]), float(centre[1])),
                                                       str(attrs.get("data-description", ""))))
        else:
            if not closed:
                raise pattern_error(file, _describe(e), f"a {role} must be a closed shape")
            i = owner(e, shapely.Polygon(pts).representative_point().coords[0])
            if role == "cutout":
                buckets[i]["cutouts"].append(pts)
                buckets[i]["cutout_names"].append(_name(e) or f"cutout{len(buckets[i]['cutouts'])}")
            else:
                buckets[i]["keepouts"].append(_keepout(file, e, pts))
    out: list[RawPiece] = []
    for (e, subs), b in zip(pieces, buckets, strict=True):
        cls = _classes(e)
        name = _name(e) or f"piece{len(out) + 1}"
        ring, kinds, _ = subs[0]
        cutouts = list(b["cutouts"]) + [p for p, _, c in subs[1:] if c]
        cut_names = list(b["cutout_names"]) + [f"cutout{k + 1 + len(b['cutouts'])}"
                                               for k in range(len(cutouts) - len(b["cutouts"]))]
        out.append(RawPiece(
            name=name, source=_describe(e), outline=ring, vertex_kind=kinds,
            notches=tuple(b["notches"]), grain=b["grain"],
            edge_names=_edge_names(e, ring),
            openings=tuple(cutouts), opening_names=tuple(cut_names) or None,
            keepouts=tuple(b["keepouts"]), landmarks=tuple(b["landmarks"]),
            quantity=2 if "pair" in cls else 1, mirror_pair="pair" in cls, bbox_origin=True,
        ))
    return out


def _edge_names(e, ring: np.ndarray):
    """Edge names and starts from garnav's ``data-edges`` (vertex indices of a polygon path)."""
    text = e.values.get("attributes", {}).get("data-edges")
    if not text:
        return None
    try:
        items = json.loads(text)
        names = tuple((str(n), (float(ring[int(i), 0]), float(ring[int(i), 1]))) for n, i in items)
    except (ValueError, TypeError, IndexError, KeyError, RecursionError):
        return None
    return names or None


def _keepout(file: str, e, pts: np.ndarray) -> RawKeepOut:
    se = require("svgelements")
    cls = _classes(e)
    attrs = e.values.get("attributes", {})
    kinds = [k for k in KEEPOUT_KINDS if k in cls]
    kind = kinds[0] if kinds else "custom"

    def number(key: str, default: float) -> float:
        text = attrs.get(key)
        if text is None:
            return default
        try:
            v = float(text)
        except ValueError:
            v = math.nan
        if not math.isfinite(v):
            raise pattern_error(file, _describe(e), f"{key}=\"{text}\" is not a finite number")
        return v

    hard = "soft" not in cls
    clearance = number("data-clearance-mm", 0.0)
    cost = number("data-cost-factor", 1.0)
    if isinstance(e, (se.Circle, se.Ellipse)):
        lo, hi = pts.min(axis=0), pts.max(axis=0)
        r = 0.5 * (hi - lo)
        if abs(r[0] - r[1]) <= 1e-6 * max(1.0, float(r.max())):
            c = 0.5 * (lo + hi)
            # the polygon is inscribed in the circle; the true radius is the distance to a vertex
            rr = float(np.max(np.hypot(*(pts - c).T)))
            return RawKeepOut(_describe(e), _name(e), kind, center=(float(c[0]), float(c[1])),
                              radius=rr, hard=hard, clearance_mm=clearance, cost_factor=cost)
    return RawKeepOut(_describe(e), _name(e), kind,
                      points=tuple((float(x), float(y)) for x, y in pts), hard=hard,
                      clearance_mm=clearance, cost_factor=cost)


def read_svg(path: str | os.PathLike, options: SvgOptions = SvgOptions()) -> RawPattern:
    """Read an SVG pattern file.

    Raises
    ------
    SpecError
        Naming the file, the element (tag, id, name) and the reason: too large, XML bombs and
        external entities, unknown units, open outlines, zero-length curves, NaN, marks that lie
        on no piece.
    """
    file, p = checked_pattern_path(path, options.max_bytes, options.tolerance_mm)
    return parse_svg_bytes(file, p.read_bytes(), options)
