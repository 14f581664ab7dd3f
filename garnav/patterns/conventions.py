"""The layer numbers, text labels, units and SVG classes garnav reads and writes.

DXF values follow the apparel industry's pattern exchange convention (ASTM D6673, grown out of
the AAMA DXF convention) **as remembered here: the standard's text was not available**, so every
number below is marked "from memory" in docs/pattern-files.md. The SVG classes are garnav's own
convention. Unit lengths are exact by definition: 1 in = 25.4 mm (international yard and pound
agreement, 1959); CSS: 1 in = 96 px = 72 pt = 6 pc = 2.54 cm (CSS Values and Units Level 3, §6.2).
"""

from __future__ import annotations

__all__ = [
    "LAYER_BOUNDARY",
    "LAYER_TURN_POINTS",
    "LAYER_CURVE_POINTS",
    "LAYER_NOTCHES",
    "LAYER_MIRROR",
    "LAYER_GRAIN",
    "LAYER_INTERNAL",
    "LAYER_CUTOUTS",
    "LAYER_DRILL",
    "LAYER_LANDMARKS",
    "APPID",
    "INSUNITS_MM",
    "UNIT_TEXT_MM",
    "CSS_MM",
    "DEFAULT_TOLERANCE_MM",
    "MAX_DXF_BYTES",
    "MAX_SVG_BYTES",
    "SVG_CLASSES",
]

LAYER_BOUNDARY = "1"  # piece boundary (cut line)
LAYER_TURN_POINTS = "2"  # corners of the boundary
LAYER_CURVE_POINTS = "3"  # other boundary vertices
LAYER_NOTCHES = "4"
LAYER_MIRROR = "6"  # mirror (fold) line
LAYER_GRAIN = "7"
LAYER_INTERNAL = "8"  # internal lines
LAYER_CUTOUTS = "11"  # internal cut-outs (holes)
LAYER_DRILL = "13"  # drill holes
LAYER_LANDMARKS = "GARNAV_LANDMARKS"  # garnav's own, not a numbered layer: other programs skip it
APPID = "GARNAV"  # DXF application id of garnav's extended data (edge and zone names)

# $INSUNITS codes (DXF reference, header section) → mm; only lengths a pattern can be drawn in.
INSUNITS_MM = {1: 25.4, 2: 304.8, 4: 1.0, 5: 10.0, 6: 1000.0, 10: 914.4, 14: 100.0}
INSUNITS_NAMES = {0: "unitless", 1: "inches", 2: "feet", 4: "millimetres", 5: "centimetres",
                  6: "metres", 10: "yards", 14: "decimetres"}
# the standard's unit text, "UNITS: ENGLISH" (inches) or "UNITS: METRIC" (millimetres), from memory
UNIT_TEXT_MM = {"ENGLISH": 25.4, "METRIC": 1.0}

CSS_MM = {"": 25.4 / 96, "px": 25.4 / 96, "in": 25.4, "mm": 1.0, "cm": 10.0, "q": 0.25,
          "pt": 25.4 / 72, "pc": 25.4 / 6}

DEFAULT_TOLERANCE_MM = 0.1
"""Chord tolerance: a flattened curve stays within this distance (mm) of the true curve."""

MAX_DXF_BYTES = 64 * 1024 * 1024
MAX_SVG_BYTES = 16 * 1024 * 1024

SVG_CLASSES = {
    "piece": "a piece outline (any closed shape without one of the classes below is one too)",
    "notch": "a notch: the point of the mark nearest the outline",
    "grain": "the grain line, from its first point to its last",
    "keepout": "a keep-out zone; add a kind (pocket, button, …) and 'soft' as further classes",
    "landmark": "a named point: the centre of a circle or ellipse, or a path's first point",
    "cutout": "a hole in a piece (an opening)",
    "pair": "on a piece: cut as a mirrored pair (becomes NAME_left and NAME_right)",
    "ignore": "skipped, with everything inside it",
}
