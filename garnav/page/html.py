"""The plan page's HTML text (pure apart from reading the packaged viewer files).

One HTML5 file with everything inline: the styles, the pattern sheet as SVG, the route table,
the legend and toggles, the safety cautions, the scene data (JSON with base64 arrays, see
:mod:`garnav.page.encode`), the three.js bundle (``garnav/data/vendor/three``, MIT licence, its
notice repeated in the page) and garnav's viewer script (``garnav/data/page/viewer.js``).
A Content-Security-Policy of ``default-src 'none'`` in the page stops the browser from fetching
anything, so the page cannot reach the network even by mistake.
"""

from __future__ import annotations

import json
import re
from dataclasses import dataclass, field
from html import escape
from importlib import resources
from typing import Sequence

from garnav.cautions import CAUTIONS
from garnav.page.figures import RouteFigures, cell_text, table_columns
from garnav.page.geometry import ZONE_COLOUR
from garnav.preview.scene import PIECE_COLOURS, SceneStyle
from garnav.preview.sheet import SheetStyle

__all__ = ["PageText", "CAUTIONS", "page_html", "asset_text", "THREE_VERSION"]

#: The three.js release bundled in ``garnav/data/vendor/three`` (see BUILD.md there).
THREE_VERSION = "0.187.0"

#: The page's safety cautions: (heading, text) — the project's one caution text.


@dataclass(frozen=True)
class PageText:
    """What the page says, besides the 3D scene.

    Attributes
    ----------
    title : str
    garment : str
        The garment's name.
    robot : str
        One line about the robot (name, radius, speed).
    routes : sequence of RouteFigures
    sheet_svg : str
        The pattern sheet (``garnav.preview.sheet.sheet_svg``); its XML declaration is dropped.
    pieces : sequence of str
        Piece names in garment order (their colours in the legend).
    keepouts : (hard count, soft count)
    zones : int
        Number of body zones.
    landmarks : int
    has_body, has_drape : bool
    notes : sequence of str
        Lines for the "about this page" part (sizes, quantisation).
    version : str
        garnav's version.
    """

    title: str
    garment: str
    robot: str
    routes: Sequence[RouteFigures]
    sheet_svg: str
    pieces: Sequence[str] = ()
    keepouts: tuple[int, int] = (0, 0)
    zones: int = 0
    landmarks: int = 0
    has_body: bool = False
    has_drape: bool = False
    notes: Sequence[str] = field(default_factory=tuple)
    version: str = ""


def asset_text(name: str) -> str:
    """Text of a packaged page asset: ``page/viewer.js``, ``page/page.css``,
    ``vendor/three/three-bundle.min.js`` or ``vendor/three/LICENSE`` (under ``garnav/data``)."""
    return resources.files("garnav").joinpath("data").joinpath(name).read_text(encoding="utf-8")


def _script(text: str) -> str:
    if re.search(r"</script", text, re.IGNORECASE):  # would end the element early
        raise ValueError("script text contains '</script'")
    return text


def _json_for_script(obj) -> str:
    """JSON text safe inside a <script> element: '<', '>' and '&' as \\u escapes."""
    text = json.dumps(obj, separators=(",", ":"), allow_nan=False, ensure_ascii=True)
    return text.replace("<", "\\u003c").replace(">", "\\u003e").replace("&", "\\u0026")


def _swatch(colour: str, shape: str = "") -> str:
    return f'<span class="swatch{(" " + shape) if shape else ""}" style="background:{escape(colour)}"></span>'


def _toggle(group: str, label: str, swatches: str, svg_layers: Sequence[str] = (), checked: bool = True) -> str:
    layers = f' data-svg="{escape(" ".join(svg_layers))}"' if svg_layers else ""
    return (
        f'<li><label class="toggle"><input type="checkbox" data-toggle="{escape(group)}"{layers}'
        f'{" checked" if checked else ""}> {swatches}<span>{label}</span></label></li>'
    )


def _legend(text: PageText) -> str:
    scene, sheet = SceneStyle(), SheetStyle()
    rows = []
    for i, r in enumerate(text.routes):
        rows.append(_toggle(f"route-{i}", f"Route <b>{escape(r.name)}</b>", _swatch(r.colour),
                            (f"layer-route-{i}",)))
    if text.has_drape:
        pieces = "".join(_swatch(PIECE_COLOURS[i % len(PIECE_COLOURS)]) for i in range(len(text.pieces)))
        rows.append(_toggle("garment", "Garment pieces: " + escape(", ".join(text.pieces)), pieces))
        hard, soft = text.keepouts
        if hard or soft:
            sw = (_swatch(scene.keepout) if hard else "") + (_swatch(sheet.soft_fill) if soft else "")
            what = " and ".join(x for x in (f"{hard} hard" if hard else "", f"{soft} soft" if soft else "") if x)
            rows.append(_toggle("keepouts", f"Keep-outs ({what})", sw, ("layer-keepouts",)))
        rows.append(_toggle("edges", "Seams (blue) and open edges (brown)",
                            _swatch(scene.seam) + _swatch(scene.open_edge), ("layer-seams", "layer-open-edges")))
        if text.landmarks:
            rows.append(_toggle("landmarks", f"Landmarks ({text.landmarks}) and their labels",
                                _swatch(scene.landmark, "dot"), ("layer-landmarks",)))
    if text.zones:
        rows.append(_toggle("zones", f"Body zones ({text.zones})", _swatch(ZONE_COLOUR)))
    if text.has_body:
        rows.append(_toggle("body", "Mannequin", _swatch(scene.body)))
    marks = (
        '<p class="marks">On every route: a ball marks the start, a cube the goal, cones point the way. '
        'On the sheet: a dot marks the start, a square the goal, numbered rings the seam crossings.</p>'
    )
    return '<ul class="toggles">' + "".join(rows) + "</ul>" + marks


def _table(routes: Sequence[RouteFigures]) -> str:
    rows = list(routes)
    if not rows:
        return '<p>No routes were given.</p>'
    cols = table_columns(rows)
    head = "".join(f'<th scope="col">{escape(h)}</th>' for _, h in cols)
    body = []
    for r in rows:
        cells = []
        for key, _ in cols:
            value = escape(cell_text(r, key))
            if key == "name":  # long file stems may break after an underscore
                cells.append(f'<th scope="row">{_swatch(r.colour)}{value.replace("_", "_<wbr>")}</th>')
            else:
                label = escape(dict(cols)[key])
                kind = "wide" if key == "seams" else "wrap" if key in ("energy", "battery", "margin", "risk") else "num"
                cells.append(f'<td class="{kind}" data-label="{label}">{value}</td>')
        body.append("<tr>" + "".join(cells) + "</tr>")
        if r.more:
            body.append(f'<tr class="more"><td colspan="{len(cols)}" data-label="More figures">'
                        f'{escape(cell_text(r, "more"))}</td></tr>')
    return f'<div class="table-wrap"><table><thead><tr>{head}</tr></thead><tbody>{"".join(body)}</tbody></table></div>'


def _margin_note(routes: Sequence[RouteFigures]) -> str:
    notes = []
    if any(r.margins for r in routes):
        notes.append(" A margin is what the robot has over what it needs (grip: friction over the force to hold "
                     "its track; hold: magnet pull over the weight pulling it off; drive: tractive force over "
                     "the force needed); the tightest is the one closest to the factor it must reach.")
    if any(r.risk is not None for r in routes):
        notes.append(" Contact risk is the simulated chance that the robot's disc touches a hard keep-out or "
                     "an open edge, from its dead-reckoning error model.")
    return escape("".join(notes))


def _sheet_legend() -> str:
    s = SheetStyle()
    items = (
        (s.free_fill, "free space of the robot's centre"),
        (s.grown_fill, "keep-out grown by the robot's radius and clearance"),
        (s.keepout_fill, "hard keep-out"),
        (s.soft_fill, "soft keep-out (entered at a cost)"),
        (s.seam, "seam (dashed: not crossable), with matching notches"),
        (s.open_edge, "open edge: hem, cuff, neckline (the robot keeps off)"),
    )
    return '<ul class="sheet-legend">' + "".join(f"<li>{_swatch(c)}{escape(t)}</li>" for c, t in items) + "</ul>"


def page_html(text: PageText, scene: dict | None) -> str:
    """The whole page as HTML text (deterministic).

    Parameters
    ----------
    text : PageText
    scene : dict or None
        The packed scene (:func:`garnav.page.encode.pack_scene`); None for a page without 3D
        (no drape and no body).
    """
    svg = re.sub(r"^\s*<\?xml[^>]*\?>\s*", "", text.sheet_svg)
    cautions = "".join(f"<li><b>{escape(h)}.</b> {escape(t)}</li>" for h, t in CAUTIONS)
    notes = "".join(f"<li>{escape(n)}</li>" for n in text.notes)
    if scene is not None:
        viewer = (
            '<div id="viewer" data-state="loading" role="img" aria-label="3D view of the garment and routes">'
            '<p id="viewer-status">Drawing the 3D view…</p><div id="viewer-labels"></div></div>'
            '<div class="views"><button type="button" data-view="front">Front</button>'
            '<button type="button" data-view="back">Back</button>'
            '<button type="button" data-view="top">Above</button></div>'
            '<p class="hint">Drag to turn, scroll or pinch to zoom, right-drag or two fingers to move.</p>'
        )
        scripts = (
            f'<script type="application/json" id="garnav-scene">{_json_for_script(scene)}</script>\n'
            f"<script>{_script(asset_text('vendor/three/three-bundle.min.js'))}</script>\n"
            f"<script>{_script(asset_text('page/viewer.js'))}</script>\n"
        )
    else:
        viewer = '<p class="no3d">No drape or mannequin was given, so there is no 3D view; the sheet below shows the plan.</p>'
        scripts = f"<script>{_script(asset_text('page/viewer.js'))}</script>\n"
    licence = escape(asset_text("vendor/three/LICENSE"))
    return f"""<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta http-equiv="Content-Security-Policy" content="default-src 'none'; script-src 'unsafe-inline'; style-src 'unsafe-inline'">
<meta name="generator" content="garnav {escape(text.version)}">
<title>{escape(text.title)}</title>
<style>{asset_text('page/page.css')}</style>
</head>
<body>
<header>
<h1>{escape(text.title)}</h1>
<p class="sub">Garment <b>{escape(text.garment)}</b> · {escape(text.robot)} · {len(text.routes)} route{"" if len(text.routes) == 1 else "s"}.
This file works offline: everything it shows is inside it.</p>
</header>
<main>
<section class="cautions" aria-labelledby="cautions-h">
<h2 id="cautions-h">Before a robot goes on a person</h2>
<ul>{cautions}</ul>
</section>
<section class="stage" aria-labelledby="view-h">
<div class="stage-view">
<h2 id="view-h">The garment and routes in 3D</h2>
{viewer}
</div>
<aside class="legend" aria-labelledby="legend-h">
<h2 id="legend-h">Show and colours</h2>
{_legend(text)}
</aside>
</section>
<section aria-labelledby="fig-h">
<h2 id="fig-h">Route figures</h2>
{_table(text.routes)}
<p class="note">Length on pattern is what the wheel encoders count; the 3D length is the route on the draped
garment. Climbs are height gained and lost (world z, the wearer upright). Times are driving plus turning in
place at the robot's cruise speed, without acceleration. Figures are estimates from a model of the robot and
the garment, not measurements.{_margin_note(text.routes)}</p>
</section>
<section class="sheet" aria-labelledby="sheet-h">
<h2 id="sheet-h">Pattern sheet</h2>
<p class="hint">Every piece laid flat, seen from the outside, to scale (mm). Enlarge it to read the labels;
it scrolls inside its box.</p>
<div class="views zoom"><button type="button" data-zoom="1" aria-pressed="true">Whole sheet</button>
<button type="button" data-zoom="2" aria-pressed="false">Enlarge ×2</button>
<button type="button" data-zoom="4" aria-pressed="false">Enlarge ×4</button></div>
<div class="sheet-wrap">
{svg}
</div>
{_sheet_legend()}
</section>
</main>
<footer>
<h2>About this page</h2>
<ul>{notes}</ul>
<details><summary>three.js {THREE_VERSION} licence (the 3D viewer's library, included in this file)</summary>
<pre>{licence}</pre></details>
</footer>
{scripts}</body>
</html>
"""
