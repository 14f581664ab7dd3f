"""What a pattern file says about its pieces, before garnav turns it into a garment.

The DXF and SVG readers both produce :class:`RawPattern`: per piece a flattened outline ring, the
marks on it (notches, turn points, a grain line) and inside it (keep-out zones, landmarks,
internal cut-outs), in one frame per piece (mm) with the rigid motion that lays that frame on the
sheet. :mod:`garnav.patterns.build` makes a :class:`~garnav.model.Garment` of it. No I/O here.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from garnav.errors import Problem, SpecError
from garnav.model import Placement

__all__ = ["RawKeepOut", "RawLandmark", "RawPiece", "RawPattern", "pattern_error"]


@dataclass(frozen=True)
class RawKeepOut:
    """A keep-out found in a file: a polygon (``points``) or a circle (``center`` + ``radius``).

    All lengths mm, in the piece's frame. ``name`` None means "name it after the piece".
    """

    source: str
    name: str | None
    kind: str = "custom"
    points: tuple[tuple[float, float], ...] | None = None
    center: tuple[float, float] | None = None
    radius: float | None = None
    hard: bool = True
    clearance_mm: float = 0.0
    cost_factor: float = 1.0


@dataclass(frozen=True)
class RawLandmark:
    """A named point (mm, piece frame)."""

    source: str
    name: str | None
    at: tuple[float, float]
    description: str = ""


@dataclass(frozen=True)
class RawPiece:
    """One piece as read from a file.

    Parameters
    ----------
    name : str
        Piece name (from the file's text, label or id).
    source : str
        How the piece is named in messages, e.g. ``"block 'FRONT'"`` or ``"<path id='front'>"``.
    outline : (n, 2) array
        Closed ring, first point not repeated, mm, either orientation.
    vertex_kind : (n,) bool array
        True where a vertex is an original vertex of the file (a possible corner, a "turn point"),
        False where it was made by flattening a curve (a "curve point", never a corner).
    placement : Placement
        Frame of ``outline`` → sheet frame.
    notches : tuple of (x, y)
        Notch positions near the outline (mm, same frame).
    turn_points : tuple of (x, y) or None
        Explicit corners (DXF layer 2); None means "find corners by angle".
    grain : ((x0, y0), (x1, y1)) or None
        Grain line from tail to head; the piece frame's +y will point along it.
    edge_names : tuple of (name, (x, y)) or None
        Edge names with each edge's start point, as garnav's own writers record them; None in
        files from elsewhere (edges are then split at corners and notches and numbered).
    openings : tuple of (m, 2) arrays
        Internal cut-outs (holes), mm, same frame.
    keepouts, landmarks :
        Zones and points inside the piece.
    quantity : int
        How many to cut; with ``mirror_pair`` a quantity of 2 makes a left and a right piece.
    bbox_origin : bool
        Put the piece frame's origin at the lower-left corner of the grain-aligned bounding box
        (SVG, where a piece has no frame of its own); False keeps the file's frame (DXF blocks).
    """

    name: str
    source: str
    outline: np.ndarray
    vertex_kind: np.ndarray
    placement: Placement = field(default_factory=Placement)
    notches: tuple[tuple[float, float], ...] = ()
    turn_points: tuple[tuple[float, float], ...] | None = None
    grain: tuple[tuple[float, float], tuple[float, float]] | None = None
    edge_names: tuple[tuple[str, tuple[float, float]], ...] | None = None
    openings: tuple[np.ndarray, ...] = ()
    opening_names: tuple[str, ...] | None = None
    keepouts: tuple[RawKeepOut, ...] = ()
    landmarks: tuple[RawLandmark, ...] = ()
    quantity: int = 1
    mirror_pair: bool = False
    bbox_origin: bool = False
    size: str = ""


@dataclass(frozen=True)
class RawPattern:
    """All pieces of one file, plus what the reader noticed.

    ``sheet_size_mm`` is the sheet the file declares (SVG canvas, DXF drawing limits), or None.
    """

    file: str
    name: str
    pieces: tuple[RawPiece, ...]
    sheet_size_mm: tuple[float, float] | None = None
    notes: tuple[str, ...] = ()
    units: str = "mm"


def pattern_error(file: str, item: str, reason: str, where=None, hint: str | None = None):
    """A :class:`SpecError` with one problem: file, the element or entity, the reason."""
    return SpecError([Problem(str(file), item, reason, where, hint)])


def checked_pattern_path(path, max_bytes: int, tolerance_mm: float) -> tuple[str, Path]:
    """(file name, path) of a pattern file that exists, is within ``max_bytes`` and is read with a
    positive finite chord tolerance; otherwise the :func:`pattern_error` that says which."""
    file = str(path)
    p = Path(path)
    if not p.is_file():
        raise pattern_error(file, "file", "not found")
    size = p.stat().st_size
    if size > max_bytes:
        raise pattern_error(file, "file", f"is {size} bytes, more than the {max_bytes} "
                            "bytes garnav reads from a pattern file")
    if not (tolerance_mm > 0 and math.isfinite(tolerance_mm)):
        raise pattern_error(file, "tolerance", f"chord tolerance must be > 0 mm, got {tolerance_mm}")
    return file, p
