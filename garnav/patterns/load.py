"""One entry point for pattern files: pick the reader by the file's suffix, build the garment."""

from __future__ import annotations

import os
from pathlib import Path

from garnav.errors import GarnavError
from garnav.patterns.build import BuildOptions, BuiltPattern, build_garment
from garnav.patterns.raw import pattern_error

__all__ = ["PATTERN_SUFFIXES", "read_pattern"]

PATTERN_SUFFIXES = (".dxf", ".svg")


def read_pattern(path: str | os.PathLike, options=None,
                 build: BuildOptions | None = None) -> BuiltPattern:
    """Read a ``.dxf`` or ``.svg`` pattern into a garment without seams.

    Parameters
    ----------
    options : DxfOptions or SvgOptions, optional
        Reader options; the defaults of the file's reader when None.
    build : BuildOptions
        Corner angle, notch distance and layout gap.
    """
    suffix = Path(path).suffix.lower()
    if suffix == ".dxf":
        from garnav.patterns.dxf_read import DxfOptions, read_dxf

        if options is not None and not isinstance(options, DxfOptions):
            raise GarnavError(f"{path}: a DXF file takes DxfOptions, not {type(options).__name__}")
        raw = read_dxf(path, options or DxfOptions())
    elif suffix == ".svg":
        from garnav.patterns.svg_read import SvgOptions, read_svg

        if options is not None and not isinstance(options, SvgOptions):
            raise GarnavError(f"{path}: an SVG file takes SvgOptions, not {type(options).__name__}")
        raw = read_svg(path, options or SvgOptions())
    else:
        raise pattern_error(str(path), "file", f"unknown pattern file type '{suffix}'",
                            hint="pattern files are .dxf or .svg")
    return build_garment(raw, build or BuildOptions())
