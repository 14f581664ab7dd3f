"""Query points: landmark names, ``PIECE:X,Y`` (pattern mm) and ``xyz:X,Y,Z`` (world mm).

World points need a drape: pass ``locate_3d(xyz) -> (piece, x, y)`` (the drape module provides one);
without it an ``xyz`` point is a QueryError. Body landmarks (given by ``xyz`` in the spec) go the
same way.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Any, Callable, Union

import numpy as np
import shapely

from garnav.errors import QueryError, did_you_mean
from garnav.model import Garment

__all__ = ["PiecePoint", "PointLike", "parse_point", "resolve_point"]

_NUM = r"[-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?"
_PIECE_RE = re.compile(rf"^\s*([^:]+?)\s*:\s*({_NUM})\s*,\s*({_NUM})\s*$")
_XYZ_RE = re.compile(rf"^\s*xyz\s*:\s*({_NUM})\s*,\s*({_NUM})\s*,\s*({_NUM})\s*$", re.IGNORECASE)


@dataclass(frozen=True)
class PiecePoint:
    """A point on a pattern piece: piece name and (x, y) in its frame, mm; ``label`` for messages."""

    piece: str
    x: float
    y: float
    label: str = ""

    @property
    def xy(self) -> np.ndarray:
        return np.array([self.x, self.y], dtype=float)

    def describe(self) -> str:
        where = f"({self.x:.1f}, {self.y:.1f}) mm on piece '{self.piece}'"
        return f"{self.label} at {where}" if self.label else where


PointLike = Union[str, PiecePoint, tuple]


def parse_point(text: str) -> tuple[str, Any]:
    """Classify a point text: ("xyz", (x, y, z)), ("piece", (piece, x, y)) or ("landmark", name).

    >>> parse_point("front:120,85.5")
    ('piece', ('front', 120.0, 85.5))
    >>> parse_point("xyz:0,-95,1455")
    ('xyz', (0.0, -95.0, 1455.0))
    >>> parse_point("wrist_left")
    ('landmark', 'wrist_left')
    """
    m = _XYZ_RE.match(text)
    if m:
        return "xyz", tuple(float(v) for v in m.groups())
    if text.strip().lower().startswith("xyz:"):
        raise QueryError(f"point '{text}': expected xyz:X,Y,Z with three numbers in mm")
    m = _PIECE_RE.match(text)
    if m:
        return "piece", (m.group(1), float(m.group(2)), float(m.group(3)))
    if ":" in text:
        raise QueryError(f"point '{text}': expected PIECE:X,Y with two numbers in mm")
    return "landmark", text.strip()


def resolve_point(
    garment: Garment,
    spec: PointLike,
    *,
    locate_3d: Callable | None = None,
) -> PiecePoint:
    """Turn a point spec into a PiecePoint on a known piece, inside its outline.

    ``spec`` may be a PiecePoint, a tuple (piece, x, y), or a text (see :func:`parse_point`).
    """
    if isinstance(spec, PiecePoint):
        pp = spec
    elif isinstance(spec, tuple):
        pp = PiecePoint(str(spec[0]), float(spec[1]), float(spec[2]))
    else:
        kind, value = parse_point(str(spec))
        if kind == "xyz":
            pp = _from_xyz(value, locate_3d, f"point '{spec}'")
        elif kind == "piece":
            pp = PiecePoint(value[0], value[1], value[2], label=f"point '{spec}'")
        else:
            names = [lm.name for lm in garment.landmarks]
            try:
                lm = garment.landmark(value)
            except KeyError:
                hint = did_you_mean(value, names)
                extra = f"; {hint}" if hint else (f"; known landmarks: {', '.join(sorted(names))}" if names else "; the garment has no landmarks")
                raise QueryError(f"unknown landmark '{value}'{extra}") from None
            if lm.on_pattern:
                assert lm.piece is not None and lm.x is not None and lm.y is not None  # on_pattern says so
                pp = PiecePoint(lm.piece, float(lm.x), float(lm.y), label=f"landmark '{lm.name}'")
            else:
                pp = _from_xyz(lm.xyz, locate_3d, f"landmark '{lm.name}'")
    return _check_on_piece(garment, pp)


def _from_xyz(xyz, locate_3d, label: str) -> PiecePoint:
    if locate_3d is None:
        raise QueryError(f"{label}: xyz points need a drape (a 3D mesh of the garment) to find their place on the pattern")
    piece, x, y = locate_3d(np.asarray(xyz, dtype=float))
    return PiecePoint(str(piece), float(x), float(y), label=label)


def _check_on_piece(garment: Garment, pp: PiecePoint) -> PiecePoint:
    names = [p.name for p in garment.pieces]
    if pp.piece not in names:
        hint = did_you_mean(pp.piece, names)
        raise QueryError(f"{pp.label or 'point'}: unknown piece '{pp.piece}'" + (f"; {hint}" if hint else f"; pieces: {', '.join(names)}"))
    if not np.all(np.isfinite(pp.xy)):
        raise QueryError(f"{pp.describe()}: coordinates must be finite numbers")
    poly = garment.piece(pp.piece).polygon
    if not poly.covers(shapely.Point(pp.x, pp.y)):
        d = poly.boundary.distance(shapely.Point(pp.x, pp.y))
        raise QueryError(f"{pp.describe()} lies outside the piece ({d:.1f} mm from its outline)")
    return pp
