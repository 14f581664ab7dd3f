"""Write a garment's pieces as a pattern-exchange DXF (ASTM D6673 / AAMA conventions, from memory).

One block per piece in its own frame (block base point = piece origin), inserted at the piece's
placement on the sheet; in the block: the boundary (layer 1, with garnav's edge names as extended
data), turn points at corners (layer 2), notches at the other edge boundaries (layer 4, short lines
pointing into the piece), the grain line along the frame's +y (layer 7), keep-outs as closed
internal lines (layer 8), openings as internal cut-outs (layer 11), landmarks as points on garnav's
own layer, and the piece name and quantity as text. Units: millimetres ($INSUNITS = 4 and
"UNITS: METRIC"); the sheet size goes in garnav's extended data. Written through
:mod:`garnav.atomic`.
"""

from __future__ import annotations

import io
import os
import re
from pathlib import Path

import numpy as np

from garnav.atomic import write_text_atomic
from garnav.model import Circle, Garment, KeepOut, Piece, PolygonShape, Rectangle
from garnav.patterns import conventions as cv
from garnav.patterns.extra import require
from garnav.patterns.rings import turning_angles_deg

__all__ = ["dxf_text", "write_dxf", "NOTCH_LENGTH_MM", "boundary_kinds"]

NOTCH_LENGTH_MM = 5.0
"""Length of a written notch mark (our choice; common practice is about 1/4 in, no source)."""


def boundary_kinds(piece: Piece, corner_angle_deg: float = 30.0) -> list[bool]:
    """For each edge start of the piece: True for a notch, False for a corner (turn point).

    An edge boundary where the outline turns by less than ``corner_angle_deg`` is a notch.
    """
    ring = piece.outline
    ang = turning_angles_deg(ring) if len(ring) >= 3 else np.zeros(len(ring))
    return [bool(ang[i] < corner_angle_deg) for i in piece.edge_starts]


def _block_name(index: int, name: str) -> str:
    safe = re.sub(r"[^A-Za-z0-9_-]", "_", name)[:40]
    return f"P{index + 1}_{safe}"


def _inward(ring: np.ndarray, i: int) -> np.ndarray:
    """Unit vector into a counter-clockwise piece at vertex i (left of the outline direction)."""
    d = ring[(i + 1) % len(ring)] - ring[i - 1]
    n = np.array([-d[1], d[0]])
    return n / (np.hypot(*n) or 1.0)


def _xdata(entity, *pairs) -> None:
    entity.set_xdata(cv.APPID, list(pairs))


def _keepout_entity(block, k: KeepOut):
    s = k.shape
    attrs = {"layer": cv.LAYER_INTERNAL}
    if isinstance(s, Circle):
        ent = block.add_circle((s.cx, s.cy), s.radius, dxfattribs=attrs)
    elif isinstance(s, (PolygonShape, Rectangle)):
        pts = list(s.points) if isinstance(s, PolygonShape) else \
            list(s.exact_geometry().exterior.coords)[:-1]
        ent = block.add_lwpolyline(pts, close=True, dxfattribs=attrs)
    else:  # pragma: no cover - the model has no other shapes
        return
    _xdata(ent, (1000, "keepout"), (1000, k.name), (1000, k.kind),
           (1070, int(k.hard)), (1040, float(k.clearance_mm)), (1040, float(k.cost_factor)))


def _piece_block(doc, garment: Garment, index: int, piece: Piece, corner_angle_deg: float):
    name = _block_name(index, piece.name)
    block = doc.blocks.new(name=name)
    ring = piece.outline
    boundary = block.add_lwpolyline([tuple(p) for p in ring], close=True,
                                    dxfattribs={"layer": cv.LAYER_BOUNDARY})
    tags: list[tuple[int, object]] = [(1000, "edges")]
    for e in piece.edges:
        tags += [(1000, e.name), (1010, (e.points[0][0], e.points[0][1], 0.0))]
    _xdata(boundary, *tags)
    for is_notch, start in zip(boundary_kinds(piece, corner_angle_deg), piece.edge_starts,
                               strict=True):
        p = ring[start]
        if is_notch:
            q = p + NOTCH_LENGTH_MM * _inward(ring, start)
            block.add_line(tuple(p), tuple(q), dxfattribs={"layer": cv.LAYER_NOTCHES})
        else:
            block.add_point(tuple(p), dxfattribs={"layer": cv.LAYER_TURN_POINTS})
    # grain line: along +y through the piece's representative point, half its height long
    lo, hi = ring.min(axis=0), ring.max(axis=0)
    c = piece.polygon.representative_point()
    half = 0.25 * float(hi[1] - lo[1])
    block.add_line((c.x, c.y - half), (c.x, c.y + half), dxfattribs={"layer": cv.LAYER_GRAIN})
    for o in piece.openings:
        ent = block.add_lwpolyline(list(o.points), close=True, dxfattribs={"layer": cv.LAYER_CUTOUTS})
        _xdata(ent, (1000, "opening"), (1000, o.name))
    for zone in garment.keepouts_on(piece.name):
        _keepout_entity(block, zone)
    for m in garment.landmarks:
        if m.piece == piece.name and m.x is not None and m.y is not None:
            ent = block.add_point((m.x, m.y), dxfattribs={"layer": cv.LAYER_LANDMARKS})
            _xdata(ent, (1000, "landmark"), (1000, m.name), (1000, m.description))
    text_h = max(2.0, min(10.0, 0.03 * float(hi[1] - lo[1])))
    for k, line in enumerate((f"Piece Name: {piece.name}", "Quantity: 1")):
        t = block.add_text(line, height=text_h, dxfattribs={"layer": cv.LAYER_BOUNDARY})
        t.set_placement((c.x, c.y - half - (k + 1) * 1.5 * text_h))
        if k == 0:
            _xdata(t, (1000, "name"), (1000, piece.name))
    return name


def dxf_text(garment: Garment, corner_angle_deg: float = 30.0) -> str:
    """The garment's pieces as DXF text (R2013, UTF-8, mm).

    Parameters
    ----------
    corner_angle_deg : float
        Edge boundaries where the outline turns by at least this much are written as turn points
        (layer 2), the others as notches (layer 4).
    """
    ezdxf = require("ezdxf")
    doc = ezdxf.new("R2013")
    doc.header["$INSUNITS"] = 4
    doc.header["$MEASUREMENT"] = 1
    w, h = garment.sheet_size_mm
    doc.appids.add(cv.APPID)
    for layer in (cv.LAYER_BOUNDARY, cv.LAYER_TURN_POINTS, cv.LAYER_NOTCHES, cv.LAYER_GRAIN,
                  cv.LAYER_INTERNAL, cv.LAYER_CUTOUTS, cv.LAYER_LANDMARKS):
        if layer not in doc.layers:
            doc.layers.add(layer)
    msp = doc.modelspace()
    msp.add_text("UNITS: METRIC", height=5.0, dxfattribs={"layer": cv.LAYER_BOUNDARY}) \
        .set_placement((0.0, -10.0))
    t = msp.add_text(f"Style: {garment.name}", height=5.0, dxfattribs={"layer": cv.LAYER_BOUNDARY})
    t.set_placement((0.0, -20.0))
    _xdata(t, (1000, "garment"), (1000, garment.name), (1040, float(w)), (1040, float(h)))
    for i, piece in enumerate(garment.pieces):
        name = _piece_block(doc, garment, i, piece, corner_angle_deg)
        pl = piece.placement
        msp.add_blockref(name, (pl.x, pl.y), dxfattribs={"rotation": float(pl.angle_deg)})
    buf = io.StringIO()
    doc.write(buf)
    return buf.getvalue()


def write_dxf(garment: Garment, path: str | os.PathLike, corner_angle_deg: float = 30.0) -> Path:
    """Write the garment's pieces to ``path`` as DXF (atomically). Returns the path."""
    return write_text_atomic(path, dxf_text(garment, corner_angle_deg))
