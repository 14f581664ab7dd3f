"""The 2D pattern sheet: every piece as laid on the sheet, with seams, keep-outs, landmarks, routes.

:func:`sheet_drawing` is pure: it turns a garment (and optionally routes and the planner's free
space) into a :class:`SheetDrawing` — a list of plain primitives (areas, lines, marks, labels) in
sheet millimetres, y up. Two renderers draw the same primitives: :func:`sheet_svg` builds SVG text
(to scale: ``width``/``height`` in mm, ``viewBox`` in mm, with a scale bar) and
:func:`sheet_png` draws with matplotlib's Agg canvas. The writers use :mod:`garnav.atomic`.

What is drawn, bottom to top: the paper; each piece (fill, outline; open edges heavier than seamed
ones); where known, the free space of the robot centre and the grown keep-outs; the keep-outs
themselves; seams with partner notches (the same count of notch ticks at the same fractions on both
runs, so matching marks show which edges are sewn together) and a name tag on each run; a grainline
arrow and the name of each piece; landmarks; routes (one path per leg, arrows along it, start and
goal marks, numbered crossing marks on both sides of each seam crossing); a scale bar.
"""

from __future__ import annotations

import io
import math
from dataclasses import dataclass, field
from typing import Sequence
from xml.sax.saxutils import escape, quoteattr

import numpy as np
import shapely

from garnav.atomic import write_bytes_atomic, write_text_atomic
from garnav.model import BODY_ZONE_KIND, Garment, Piece, Robot
from garnav.polyline import cumulative_length, point_at_length, sub_polyline, tangent_at
from garnav.preview.zone_layer import zone_items, zone_legend

__all__ = [
    "Area",
    "Line",
    "Mark",
    "Label",
    "SheetDrawing",
    "SheetStyle",
    "ROUTE_COLOURS",
    "sheet_drawing",
    "sheet_svg",
    "sheet_png",
    "write_sheet_svg",
    "write_sheet_png",
    "notch_fractions",
]

# Route colours, in order of the routes given (our own palette).
ROUTE_COLOURS = ("#c2185b", "#0277bd", "#ef6c00", "#2e7d32", "#6a1b9a", "#00838f")


@dataclass(frozen=True)
class SheetStyle:
    """Colours (hex) and sizes (mm on the sheet) of the drawing."""

    paper: str = "#fbf8f1"
    piece_fill: str = "#ece4d4"
    piece_edge: str = "#8c7b62"
    open_edge: str = "#5b4a36"
    free_fill: str = "#d9ead3"
    grown_fill: str = "#f4cccc"
    keepout_fill: str = "#e06666"
    soft_fill: str = "#f6b26b"
    coverage_fill: str = "#7fa7cf"
    seam: str = "#3d5a80"
    landmark: str = "#1b263b"
    text: str = "#2b2118"
    seam_width: float = 1.2
    open_width: float = 2.2
    edge_width: float = 0.6
    route_width: float = 2.0
    label_size: float = 9.0
    notch_len: float = 7.0
    notch_spacing: float = 80.0


@dataclass(frozen=True)
class Area:
    """A filled region: rings (k, 2) arrays, the first an outline, the rest holes (even-odd)."""

    rings: tuple[np.ndarray, ...]
    fill: str
    stroke: str | None = None
    width: float = 0.0
    opacity: float = 1.0
    kind: str = "area"
    info: tuple[tuple[str, str], ...] = ()


@dataclass(frozen=True)
class Line:
    """An open polyline (n, 2)."""

    points: np.ndarray
    stroke: str
    width: float
    dash: tuple[float, ...] = ()
    kind: str = "line"
    info: tuple[tuple[str, str], ...] = ()


@dataclass(frozen=True)
class Mark:
    """A point symbol: ``shape`` in {"circle", "square", "diamond", "arrow"}; ``angle`` (rad) for arrows."""

    at: tuple[float, float]
    shape: str
    size: float
    fill: str
    stroke: str | None = None
    angle: float = 0.0
    kind: str = "mark"
    info: tuple[tuple[str, str], ...] = ()


@dataclass(frozen=True)
class Label:
    """Text at a point (its centre), height ``size`` mm."""

    at: tuple[float, float]
    text: str
    size: float
    colour: str
    kind: str = "label"
    bold: bool = False


@dataclass(frozen=True)
class SheetDrawing:
    """Everything to draw, in sheet mm with y up, bottom layer first: ``layers`` is a tuple of
    (layer name, items)."""

    width_mm: float
    height_mm: float
    title: str
    paper: str
    layers: tuple[tuple[str, tuple], ...] = field(default_factory=tuple)

    def items(self, layer: str | None = None) -> list:
        return [it for name, items in self.layers for it in items if layer is None or name == layer]


# --------------------------------------------------------------------------- geometry helpers


def _polygon_areas(geom, fill, stroke=None, width=0.0, opacity=1.0, kind="area", info=()) -> list[Area]:
    out: list[Area] = []
    if geom is None or geom.is_empty:
        return out
    polys = [geom] if geom.geom_type == "Polygon" else [g for g in getattr(geom, "geoms", []) if g.geom_type == "Polygon"]
    for poly in polys:
        rings = (np.asarray(poly.exterior.coords),) + tuple(np.asarray(r.coords) for r in poly.interiors)
        out.append(Area(rings, fill, stroke, width, opacity, kind, tuple(info)))
    return out


def notch_fractions(length_a: float, length_b: float, spacing: float) -> np.ndarray:
    """Fractions (k,) along a seam where partner notches go: evenly spaced, about ``spacing`` mm
    apart on the shorter run, never at the ends, at least one.

    The shorter run is cut into ``round(length / spacing)`` equal gaps (at least two), with a
    notch between each two.

    >>> notch_fractions(300.0, 280.0, 100.0).tolist()  # 3 gaps of 93.3 mm on the 280 mm run
    [0.3333333333333333, 0.6666666666666666]
    >>> notch_fractions(40.0, 45.0, 100.0).tolist()  # a short seam still gets one
    [0.5]
    """
    gaps = max(2, int(round(min(length_a, length_b) / spacing)))
    return np.arange(1, gaps) / gaps


def _normal_at(points: np.ndarray, s: float) -> np.ndarray:
    """Unit left normal of a polyline at arc length ``s`` (+y where it has no direction)."""
    t = tangent_at(points, s)
    return np.array([-t[1], t[0]]) if t.any() else np.array([0.0, 1.0])


def _to_sheet(piece: Piece, pts) -> np.ndarray:
    return piece.placement.to_sheet(np.asarray(pts, dtype=float).reshape(-1, 2))


def _place(piece: Piece, geom: shapely.Geometry) -> shapely.Geometry:
    """A piece-frame geometry moved onto the sheet."""
    return shapely.transform(geom, lambda c: _to_sheet(piece, c))


# --------------------------------------------------------------------------- the drawing


def sheet_drawing(
    garment: Garment,
    routes: Sequence = (),
    free_space=None,
    robot: Robot | None = None,
    style: SheetStyle = SheetStyle(),
    route_names: Sequence[str] | None = None,
    coverage=None,
) -> SheetDrawing:
    """Build the sheet drawing of a garment.

    Parameters
    ----------
    garment : Garment
    routes : sequence of garnav.plan.Route
        Drawn in :data:`ROUTE_COLOURS` order.
    free_space : garnav.plan.FreeSpace, optional
        Its ``pieces[name].region`` is shaded as free space and each obstacle's ``grown`` shape as a
        grown keep-out. Without it only the keep-outs themselves are drawn.
    robot : Robot, optional
        Unused unless ``free_space`` is missing: then each keep-out's grown outline (radius +
        clearance) is drawn dashed, as a guide.
    style : SheetStyle
    route_names : sequence of str, optional
        Names written beside each route's start.
    coverage : mapping piece -> shapely geometry, optional
        Ground a sweep covers (piece frame, mm; :attr:`garnav.sweep.Sweep.covered`), shaded under
        the routes.

    Returns
    -------
    SheetDrawing
    """
    robot = robot or garment.robot
    pieces = {p.name: p for p in garment.pieces}
    layers: list[tuple[str, tuple]] = [
        ("pieces", _layer_pieces(garment, style)),
        ("open-edges", _layer_open_edges(garment, pieces, style)),
        ("free-space", _layer_free_space(free_space, pieces, style)),
        ("keepouts", _layer_keepouts(garment, pieces, free_space, robot, style)),
        ("body-zones", tuple(zone_items(garment, _to_sheet, Area, Label, style.label_size * 0.6))),
        ("seams", _layer_seams(garment, pieces, style)),
        ("names", _layer_names(garment, style)),
        ("landmarks", _layer_landmarks(garment, pieces, style)),
    ]
    if coverage:
        layers.append(("coverage", _layer_coverage(coverage, pieces, style)))
    for ri, route in enumerate(routes):
        layers.append((f"route-{ri}", tuple(_route_items(route, ri, pieces, style, route_names))))

    layers.append(("scale", tuple(_scale_bar(garment.sheet_size_mm, style))))
    legend = zone_legend(garment, garment.sheet_size_mm, Area, Label, style.label_size)
    if legend:
        layers.append(("zone-legend", tuple(legend)))
    w, h = garment.sheet_size_mm
    return SheetDrawing(float(w), float(h), garment.name, style.paper, tuple(layers))


def _layer_pieces(garment: Garment, style: SheetStyle) -> tuple:
    """The pieces, their openings cut out."""
    base = []
    for p in garment.pieces:
        poly = shapely.Polygon(_to_sheet(p, p.outline), [_to_sheet(p, o.array) for o in p.openings])
        base += _polygon_areas(poly, style.piece_fill, style.piece_edge, style.edge_width, kind="piece",
                               info=(("piece", p.name),))
    return tuple(base)


def _layer_open_edges(garment: Garment, pieces: dict[str, Piece], style: SheetStyle) -> tuple:
    """Open edges (hems, cuffs, openings): heavier lines."""
    opens = []
    for run in garment.open_runs():
        p = pieces[run.piece]
        edge = p.edge(run.edge)
        pts = sub_polyline(edge.array, run.from_mm, run.to_mm)
        opens.append(Line(_to_sheet(p, pts), style.open_edge, style.open_width, kind="open-edge",
                          info=(("piece", p.name), ("edge", run.edge))))
    for p in garment.pieces:
        for o in p.openings:
            ring = np.vstack([o.array, o.array[:1]])
            opens.append(Line(_to_sheet(p, ring), style.open_edge, style.open_width, kind="open-edge",
                              info=(("piece", p.name), ("opening", o.name))))
    return tuple(opens)


def _layer_free_space(free_space, pieces: dict[str, Piece], style: SheetStyle) -> tuple:
    """The planner's free space, grown keep-outs and soft zones (empty without a free space)."""
    zones = []
    if free_space is not None:
        for name in sorted(free_space.pieces):
            pfs = free_space.pieces[name]
            p = pieces[name]
            for ob in pfs.obstacles:
                zones += _polygon_areas(_place(p, ob.grown.intersection(p.polygon)), style.grown_fill, opacity=0.9,
                                        kind="grown", info=(("piece", name), ("obstacle", ob.name)))
            for sz in pfs.soft:
                zones += _polygon_areas(_place(p, sz.grown.intersection(p.polygon)), style.soft_fill, opacity=0.45,
                                        kind="soft", info=(("piece", name), ("zone", sz.name)))
            zones += _polygon_areas(_place(p, pfs.region), style.free_fill, opacity=0.75, kind="free",
                                    info=(("piece", name),))
    return tuple(zones)


def _layer_keepouts(garment: Garment, pieces: dict[str, Piece], free_space, robot: Robot | None, style: SheetStyle) -> tuple:
    """The keep-outs themselves (and, without a free space, their grown outline as a guide)."""
    kos = []
    for k in garment.keepouts:
        if k.kind == BODY_ZONE_KIND:  # drawn in their own style (garnav.preview.zone_layer)
            continue
        p = pieces[k.piece]
        exact = k.shape.exact_geometry()
        geom = _place(p, exact)
        fill = style.keepout_fill if k.hard else style.soft_fill
        kos += _polygon_areas(geom, fill, style.text, 0.3, opacity=0.85, kind="keepout",
                              info=(("piece", k.piece), ("keepout", k.name), ("hard", str(k.hard).lower())))
        if free_space is None and robot is not None:
            grown = exact.buffer(robot.radius_mm + k.clearance_mm)
            ring = _to_sheet(p, np.asarray(grown.exterior.coords))
            kos.append(Line(ring, fill, 0.5, dash=(3.0, 2.0), kind="keepout-grown", info=(("keepout", k.name),)))
        c = _to_sheet(p, [[exact.centroid.x, exact.centroid.y]])[0]
        kos.append(Label((float(c[0]), float(c[1])), k.name, style.label_size * 0.6, style.text))
    return tuple(kos)


def _layer_seams(garment: Garment, pieces: dict[str, Piece], style: SheetStyle) -> tuple:
    """Seam runs, partner notches and seam names."""
    seams = []
    for seam in garment.seams:
        runs = [garment.run_polyline(seam.a), garment.run_polyline(seam.b)]
        lengths = [float(cumulative_length(r)[-1]) for r in runs]
        fracs = notch_fractions(lengths[0], lengths[1], style.notch_spacing)
        for side, run, pts, length in (("a", seam.a, runs[0], lengths[0]), ("b", seam.b, runs[1], lengths[1])):
            p = pieces[run.piece]
            info = (("seam", seam.name), ("side", side), ("piece", run.piece))
            seams.append(Line(_to_sheet(p, pts), style.seam, style.seam_width,
                              dash=() if seam.crossable else (4.0, 2.0), kind="seam", info=info))
            for f in fracs:
                s = f * length
                q = point_at_length(pts, s)
                n = _normal_at(pts, s)
                # a notch: a tick across the run, reaching into the piece
                inward = n if p.polygon.contains(shapely.Point(*(q + n * 0.5))) else -n
                tick = np.array([q - inward * 0.2 * style.notch_len, q + inward * style.notch_len])
                seams.append(Line(_to_sheet(p, tick), style.seam, style.seam_width * 0.9, kind="notch",
                                  info=info + (("fraction", f"{f:.6f}"),)))
            mid = point_at_length(pts, 0.5 * length)
            n = _normal_at(pts, 0.5 * length)
            inward = n if p.polygon.contains(shapely.Point(*(mid + n * 0.5))) else -n
            at = _to_sheet(p, [mid + inward * (style.notch_len + style.label_size)])[0]
            seams.append(Label((float(at[0]), float(at[1])), seam.name, style.label_size * 0.55, style.seam))
    return tuple(seams)


def _layer_names(garment: Garment, style: SheetStyle) -> tuple:
    """Piece names with their grainline arrows."""
    names = []
    for p in garment.pieces:
        rp = p.polygon.representative_point()
        c = np.array([rp.x, rp.y])
        span = min(80.0, 0.25 * (p.polygon.bounds[3] - p.polygon.bounds[1]))
        arrow = _to_sheet(p, [c - [0, span], c + [0, span]])
        names.append(Line(arrow, style.piece_edge, 0.8, kind="grainline", info=(("piece", p.name),)))
        d = arrow[1] - arrow[0]
        names.append(Mark((float(arrow[1][0]), float(arrow[1][1])), "arrow", 5.0, style.piece_edge,
                          angle=math.atan2(d[1], d[0]), kind="grainline-head"))
        at = _to_sheet(p, [c + [0, span + 1.6 * style.label_size]])[0]
        names.append(Label((float(at[0]), float(at[1])), p.name, style.label_size * 1.3, style.text, bold=True))
    return tuple(names)


def _layer_landmarks(garment: Garment, pieces: dict[str, Piece], style: SheetStyle) -> tuple:
    """Landmarks on the pattern."""
    lms = []
    for lm in garment.landmarks:
        if not lm.on_pattern or lm.piece not in pieces:
            continue
        at = _to_sheet(pieces[lm.piece], [[lm.x, lm.y]])[0]
        lms.append(Mark((float(at[0]), float(at[1])), "diamond", 5.0, style.landmark, kind="landmark",
                        info=(("landmark", lm.name),)))
        lms.append(Label((float(at[0]), float(at[1]) - 0.9 * style.label_size), lm.name, style.label_size * 0.6,
                         style.landmark))
    return tuple(lms)


def _layer_coverage(coverage, pieces: dict[str, Piece], style: SheetStyle) -> tuple:
    """The ground a sweep's sensor covers (piece -> polygon, piece frame, mm), shaded."""
    cov = []
    for name, geom in coverage.items():
        if name in pieces:
            cov += _polygon_areas(_place(pieces[name], geom.intersection(pieces[name].polygon)), style.coverage_fill,
                                  opacity=0.55, kind="coverage", info=(("piece", name),))
    return tuple(cov)


def _route_items(route, ri: int, pieces: dict[str, Piece], style: SheetStyle, names) -> list:
    colour = ROUTE_COLOURS[ri % len(ROUTE_COLOURS)]
    items: list = []
    for li, leg in enumerate(route.legs):
        p = pieces[leg.piece]
        pts = _to_sheet(p, leg.points)
        items.append(Line(pts, colour, style.route_width, kind="route-leg",
                          info=(("route", str(ri)), ("leg", str(li)), ("piece", leg.piece))))
        # direction arrows at segment middles (segments long enough to carry one)
        for a, b in zip(pts[:-1], pts[1:]):
            d = b - a
            if np.hypot(*d) >= 25.0:
                m = 0.5 * (a + b)
                items.append(Mark((float(m[0]), float(m[1])), "arrow", 8.0, colour, angle=math.atan2(d[1], d[0]),
                                  kind="route-arrow"))
    for ci, c in enumerate(route.crossings):
        for piece, pt in ((c.from_piece, c.point_from), (c.to_piece, c.point_to)):
            at = _to_sheet(pieces[piece], [pt])[0]
            items.append(Mark((float(at[0]), float(at[1])), "circle", 3.5, style.paper, colour, kind="crossing",
                              info=(("route", str(ri)), ("seam", c.seam), ("crossing", str(ci + 1)))))
            items.append(Label((float(at[0]) + 5.0, float(at[1]) + 5.0), str(ci + 1), style.label_size * 0.55, colour))
    first, last = route.legs[0], route.legs[-1]
    s = _to_sheet(pieces[first.piece], [first.points[0]])[0]
    g = _to_sheet(pieces[last.piece], [last.points[-1]])[0]
    items.append(Mark((float(s[0]), float(s[1])), "circle", 4.0, colour, style.paper, kind="start"))
    items.append(Mark((float(g[0]), float(g[1])), "square", 4.5, colour, style.paper, kind="goal"))
    if names and ri < len(names):
        items.append(Label((float(s[0]), float(s[1]) + 1.2 * style.label_size), names[ri], style.label_size * 0.7,
                           colour, bold=True))
    return items


def _scale_bar(size, style: SheetStyle) -> list:
    w, h = size
    length = 100.0 if w >= 250 else 10.0 * max(1, int(w / 50))
    x0, y0 = 0.03 * w, 0.03 * h
    items: list = [
        Line(np.array([[x0, y0], [x0 + length, y0]]), style.text, 1.5, kind="scale-bar"),
        Line(np.array([[x0, y0 - 2], [x0, y0 + 2]]), style.text, 1.0, kind="scale-tick"),
        Line(np.array([[x0 + length, y0 - 2], [x0 + length, y0 + 2]]), style.text, 1.0, kind="scale-tick"),
        Label((x0 + 0.5 * length, y0 + 0.9 * style.label_size), f"{length:g} mm", style.label_size * 0.7, style.text),
    ]
    return items


# --------------------------------------------------------------------------- SVG


def _f(v: float) -> str:
    text = f"{float(v):.3f}".rstrip("0").rstrip(".")
    return "0" if text in ("-0", "") else text


def _mark_polygon(m: Mark) -> np.ndarray:
    s = m.size / 2
    if m.shape == "square":
        pts = np.array([[-s, -s], [s, -s], [s, s], [-s, s]])
    elif m.shape == "diamond":
        pts = np.array([[0, -s * 1.3], [s, 0], [0, s * 1.3], [-s, 0]])
    elif m.shape == "arrow":
        base = np.array([[s * 1.2, 0.0], [-s * 0.8, s * 0.8], [-s * 0.4, 0.0], [-s * 0.8, -s * 0.8]])
        c, si = math.cos(m.angle), math.sin(m.angle)
        pts = base @ np.array([[c, si], [-si, c]])
    else:  # circle as a polygon (for matplotlib); SVG draws a true circle
        t = np.linspace(0, 2 * math.pi, 33)[:-1]
        pts = s * np.column_stack([np.cos(t), np.sin(t)])
    return pts + np.asarray(m.at)


def _attrs(info) -> str:
    return "".join(f" data-{k}={quoteattr(v)}" for k, v in info)


def sheet_svg(drawing: SheetDrawing) -> str:
    """SVG text of a sheet drawing, to scale in mm (deterministic)."""
    w, h = drawing.width_mm, drawing.height_mm

    def xy(p) -> str:
        return f"{_f(p[0])},{_f(h - p[1])}"

    def path_d(pts, close: bool) -> str:
        d = "M" + " L".join(xy(p) for p in pts)
        return d + (" Z" if close else "")

    out = [
        '<?xml version="1.0" encoding="UTF-8"?>',
        f'<svg xmlns="http://www.w3.org/2000/svg" version="1.1" width="{_f(w)}mm" height="{_f(h)}mm" '
        f'viewBox="0 0 {_f(w)} {_f(h)}" font-family="sans-serif">',
        f"<title>{escape(drawing.title)} — pattern sheet</title>",
        f'<rect class="paper" x="0" y="0" width="{_f(w)}" height="{_f(h)}" fill="{drawing.paper}"/>',
    ]
    for name, items in drawing.layers:
        out.append(f"<g id={quoteattr('layer-' + name)}>")
        for it in items:
            if isinstance(it, Area):
                d = " ".join(path_d(r, True) for r in it.rings)
                stroke = f' stroke="{it.stroke}" stroke-width="{_f(it.width)}"' if it.stroke else ' stroke="none"'
                out.append(
                    f'<path class="{it.kind}" d="{d}" fill="{it.fill}" fill-rule="evenodd" '
                    f'fill-opacity="{_f(it.opacity)}"{stroke}{_attrs(it.info)}/>'
                )
            elif isinstance(it, Line):
                dash = f' stroke-dasharray="{" ".join(_f(v) for v in it.dash)}"' if it.dash else ""
                out.append(
                    f'<path class="{it.kind}" d="{path_d(it.points, False)}" fill="none" stroke="{it.stroke}" '
                    f'stroke-width="{_f(it.width)}" stroke-linecap="round" stroke-linejoin="round"{dash}{_attrs(it.info)}/>'
                )
            elif isinstance(it, Mark):
                stroke = f' stroke="{it.stroke}" stroke-width="{_f(it.size * 0.25)}"' if it.stroke else ""
                if it.shape == "circle":
                    out.append(
                        f'<circle class="{it.kind}" cx="{_f(it.at[0])}" cy="{_f(h - it.at[1])}" r="{_f(it.size / 2)}" '
                        f'fill="{it.fill}"{stroke}{_attrs(it.info)}/>'
                    )
                else:
                    out.append(
                        f'<path class="{it.kind}" d="{path_d(_mark_polygon(it), True)}" fill="{it.fill}"{stroke}{_attrs(it.info)}/>'
                    )
            elif isinstance(it, Label):
                weight = ' font-weight="bold"' if it.bold else ""
                out.append(
                    f'<text class="{it.kind}" x="{_f(it.at[0])}" y="{_f(h - it.at[1])}" font-size="{_f(it.size)}" '
                    f'fill="{it.colour}" text-anchor="middle" dominant-baseline="middle"{weight}>{escape(it.text)}</text>'
                )
        out.append("</g>")
    out.append("</svg>")
    return "\n".join(out) + "\n"


# --------------------------------------------------------------------------- PNG (matplotlib)


def sheet_png(drawing: SheetDrawing, width_px: int = 1600) -> bytes:
    """PNG bytes of a sheet drawing, ``width_px`` wide (height to scale), drawn with matplotlib."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from matplotlib.patches import PathPatch
    from matplotlib.path import Path as MplPath

    w, h = drawing.width_mm, drawing.height_mm
    dpi = 100.0
    height_px = max(1, int(round(width_px * h / w)))
    fig = Figure(figsize=(width_px / dpi, height_px / dpi), dpi=dpi)
    FigureCanvasAgg(fig)
    ax = fig.add_axes((0, 0, 1, 1))
    ax.set_xlim(0, w)
    ax.set_ylim(0, h)
    ax.set_aspect("equal")
    ax.axis("off")
    fig.patch.set_facecolor(drawing.paper)
    pt_per_mm = width_px / w * 72.0 / dpi  # line widths and font sizes are in points

    def ring_path(rings):
        verts, codes = [], []
        for r in rings:
            r = np.asarray(r)
            verts += list(r) + [r[0]]
            codes += [MplPath.MOVETO] + [MplPath.LINETO] * (len(r) - 1) + [MplPath.CLOSEPOLY]
        return MplPath(np.array(verts), codes)

    z = 0
    for _, items in drawing.layers:
        for it in items:
            z += 1
            if isinstance(it, Area):
                ax.add_patch(PathPatch(ring_path(it.rings), facecolor=it.fill, alpha=it.opacity,
                                       edgecolor=it.stroke or "none", linewidth=it.width * pt_per_mm, zorder=z))
            elif isinstance(it, Line):
                ls = (0, tuple(v * 1.0 for v in it.dash)) if it.dash else "solid"
                ax.plot(it.points[:, 0], it.points[:, 1], color=it.stroke, linewidth=it.width * pt_per_mm,
                        linestyle=ls, solid_capstyle="round", zorder=z)
            elif isinstance(it, Mark):
                ax.add_patch(PathPatch(ring_path([_mark_polygon(it)]), facecolor=it.fill,
                                       edgecolor=it.stroke or "none", linewidth=it.size * 0.25 * pt_per_mm, zorder=z))
            elif isinstance(it, Label):
                ax.text(it.at[0], it.at[1], it.text, fontsize=max(it.size * pt_per_mm, 1.0), color=it.colour,
                        ha="center", va="center", fontweight="bold" if it.bold else "normal", zorder=z)
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=dpi, facecolor=drawing.paper, metadata={"Software": None})
    return buf.getvalue()


def write_sheet_svg(path, drawing: SheetDrawing):
    """Write the SVG of a sheet drawing atomically. Returns the path."""
    return write_text_atomic(path, sheet_svg(drawing))


def write_sheet_png(path, drawing: SheetDrawing, width_px: int = 1600):
    """Write the PNG of a sheet drawing atomically. Returns the path."""
    return write_bytes_atomic(path, sheet_png(drawing, width_px))
