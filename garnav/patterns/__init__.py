"""Pattern files in and out: DXF pattern exchange (ASTM D6673 / AAMA conventions) and SVG.

* :func:`read_pattern` reads a ``.dxf`` or ``.svg`` file into a garment (no seams) plus the names
  of every piece's edge boundaries (notches ``n1``…, corners ``c1``…) and notes;
* :mod:`garnav.patterns.seams` pairs edges into seams from a seams file and proposes pairs for the
  user to confirm;
* :func:`write_dxf` and :func:`write_svg` write a garment's pieces back in the same conventions.

Needs the optional packages of ``pip install garnav[patterns]`` (ezdxf, svgelements, defusedxml);
without them every entry point raises a :class:`~garnav.errors.GarnavError` saying so.
Conventions (layers, classes, units, tolerances): docs/pattern-files.md.
"""

from garnav.patterns.build import BuildOptions, BuiltPattern, PiecePoints, build_garment
from garnav.patterns.load import PATTERN_SUFFIXES, read_pattern
from garnav.patterns.dxf_read import DxfOptions, read_dxf
from garnav.patterns.dxf_write import dxf_text, write_dxf
from garnav.patterns.svg_read import SvgOptions, read_svg
from garnav.patterns.svg_write import svg_text, write_svg

__all__ = [
    "BuildOptions",
    "BuiltPattern",
    "PiecePoints",
    "build_garment",
    "read_pattern",
    "PATTERN_SUFFIXES",
    "DxfOptions",
    "read_dxf",
    "dxf_text",
    "write_dxf",
    "SvgOptions",
    "read_svg",
    "svg_text",
    "write_svg",
]
