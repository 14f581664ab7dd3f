"""Write a garment's pieces as SVG in garnav's own convention (docs/pattern-files.md).

The canvas is the sheet: ``width``/``height`` in mm and a viewBox in mm, so one user unit is one
millimetre. Each piece is a group whose transform is its placement (with the y axis flipped: SVG's
y points down, the sheet's up); in it the outline (class ``piece``, edge names and their first
vertex in ``data-edges``), notches at edge boundaries where the outline runs on smoothly, the grain
line along the piece frame's +y, cut-outs, keep-outs (class ``keepout`` plus the kind, ``soft`` for
soft zones) and landmarks (small circles). Names go in ``data-name``. Written through
:mod:`garnav.atomic`; the result is checked to be well-formed XML before it is written.
"""

from __future__ import annotations

import json
import math
import os
import re
from pathlib import Path
from xml.sax.saxutils import quoteattr

import numpy as np

from garnav.atomic import write_text_atomic
from garnav.errors import GarnavError
from garnav.model import Circle, Garment, Piece, PolygonShape, Rectangle
from garnav.patterns.dxf_write import NOTCH_LENGTH_MM, boundary_kinds

__all__ = ["svg_text", "write_svg"]

_BAD_XML = re.compile("[^\t\n\r\x20-\ud7ff\ue000-\ufffd\U00010000-\U0010ffff]")


def _num(v: float) -> str:
    return repr(float(v)) if abs(v) >= 1e-12 else "0"


def _attr(text: str, what: str) -> str:
    if _BAD_XML.search(text):
        raise GarnavError(f"{what}: the name {text!r} has characters XML cannot hold; rename it")
    return quoteattr(text)


def _pts(points) -> str:
    return " ".join(f"{_num(x)},{_num(y)}" for x, y in points)


def _piece_group(garment: Garment, piece: Piece, index: int, sheet_h: float,
                 corner_angle_deg: float) -> list[str]:
    pl = piece.placement
    c, s = math.cos(math.radians(pl.angle_deg)), math.sin(math.radians(pl.angle_deg))
    # svg = F (R p + t), F = diag(1, -1) with the origin at the sheet's top
    matrix = (c, -s, -s, -c, pl.x, sheet_h - pl.y)
    out = [f'  <g id="piece{index + 1}" transform="matrix({" ".join(_num(v) for v in matrix)})">']
    name = _attr(piece.name, f"piece '{piece.name}'")
    out.append(f"    <title>{name[1:-1]}</title>")
    ring = piece.outline
    edges = json.dumps([[e.name, int(k)] for e, k in zip(piece.edges, piece.edge_starts, strict=True)],
                       ensure_ascii=False)
    d = "M " + " L ".join(f"{_num(x)} {_num(y)}" for x, y in ring) + " Z"
    out.append(f'    <path class="piece" data-name={name} data-edges={_attr(edges, "edges")} '
               f'fill="none" stroke="black" stroke-width="0.5" d="{d}"/>')
    for is_notch, start in zip(boundary_kinds(piece, corner_angle_deg), piece.edge_starts,
                               strict=True):
        if not is_notch:
            continue
        p = ring[start]
        dvec = ring[(start + 1) % len(ring)] - ring[start - 1]
        inward = np.array([-dvec[1], dvec[0]]) / (np.hypot(*dvec) or 1.0)
        q = p + NOTCH_LENGTH_MM * inward
        out.append(f'    <line class="notch" x1="{_num(p[0])}" y1="{_num(p[1])}" '
                   f'x2="{_num(q[0])}" y2="{_num(q[1])}" stroke="red" stroke-width="0.5"/>')
    lo, hi = ring.min(axis=0), ring.max(axis=0)
    rp = piece.polygon.representative_point()
    half = 0.25 * float(hi[1] - lo[1])
    out.append(f'    <line class="grain" x1="{_num(rp.x)}" y1="{_num(rp.y - half)}" '
               f'x2="{_num(rp.x)}" y2="{_num(rp.y + half)}" stroke="blue" stroke-width="0.5"/>')
    for o in piece.openings:
        out.append(f'    <polygon class="cutout" data-name={_attr(o.name, "opening")} '
                   f'fill="none" stroke="black" stroke-width="0.5" points="{_pts(o.points)}"/>')
    for k in garment.keepouts_on(piece.name):
        cls = f"keepout {k.kind}" + ("" if k.hard else " soft")
        common = (f'class="{cls}" data-name={_attr(k.name, "keepout")} '
                  f'data-clearance-mm="{_num(k.clearance_mm)}" '
                  f'data-cost-factor="{_num(k.cost_factor)}" fill="none" stroke="orange" '
                  'stroke-width="0.5"')
        sh = k.shape
        if isinstance(sh, Circle):
            out.append(f'    <circle {common} cx="{_num(sh.cx)}" cy="{_num(sh.cy)}" '
                       f'r="{_num(sh.radius)}"/>')
        elif isinstance(sh, (PolygonShape, Rectangle)):
            pts = sh.points if isinstance(sh, PolygonShape) else \
                list(sh.exact_geometry().exterior.coords)[:-1]
            out.append(f'    <polygon {common} points="{_pts(pts)}"/>')
    for m in garment.landmarks:
        if m.piece == piece.name and m.x is not None and m.y is not None:
            desc = f" data-description={_attr(m.description, 'landmark')}" if m.description else ""
            out.append(f'    <circle class="landmark" data-name={_attr(m.name, "landmark")}{desc} '
                       f'cx="{_num(m.x)}" cy="{_num(m.y)}" r="1.5" fill="green"/>')
    out.append("  </g>")
    return out


def svg_text(garment: Garment, corner_angle_deg: float = 30.0) -> str:
    """The garment's pieces as SVG text (1 user unit = 1 mm)."""
    w, h = (float(v) for v in garment.sheet_size_mm)
    lines = [
        '<?xml version="1.0" encoding="UTF-8"?>',
        f'<svg xmlns="http://www.w3.org/2000/svg" width="{_num(w)}mm" height="{_num(h)}mm" '
        f'viewBox="0 0 {_num(w)} {_num(h)}" data-garment={_attr(garment.name, "garment")}>',
    ]
    for i, piece in enumerate(garment.pieces):
        lines += _piece_group(garment, piece, i, h, corner_angle_deg)
    lines.append("</svg>")
    text = "\n".join(lines) + "\n"
    from xml.etree import ElementTree

    ElementTree.fromstring(text.encode("utf-8"))  # well-formed, or fail before writing
    return text


def write_svg(garment: Garment, path: str | os.PathLike, corner_angle_deg: float = 30.0) -> Path:
    """Write the garment's pieces to ``path`` as SVG (atomically). Returns the path."""
    return write_text_atomic(path, svg_text(garment, corner_angle_deg))
