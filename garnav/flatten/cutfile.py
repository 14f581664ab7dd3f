"""The cut file (TOML) of ``garnav import MESH --cut CUTS.toml``: where to cut a 3D garment.

Format (docs/import-3d.md)::

    format = "garnav-cuts"
    snap_mm = 2.0            # optional: how far a point may lie from the mesh vertex it snaps to
    grain = [0, 0, 1]        # optional: world direction that becomes +y in every piece (up)
    normals = "outward"      # optional: the faces' normals point to the outside ("inward": inside)

    [[cut]]                  # a seam line, by mesh vertices (0-based, in the file's order) ...
    name = "side_left"
    vertices = [12, 40, 77]
    [[cut]]                  # ... or by 3D points (mm), each snapped to the nearest vertex
    name = "armhole_left"
    points = [[-160, 0, 1300], [-170, 60, 1250]]
    closed = true            # optional: the last point joins the first

    [[piece]]                # optional: name the piece that holds a point (mm)
    name = "front"
    at = [0, 120, 1100]

Consecutive vertices of a cut are joined by the shortest path along mesh edges.
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass
from typing import Any

import numpy as np

from garnav.errors import Problem, SpecError, did_you_mean

__all__ = ["CUTS_FORMAT", "CutCurve", "PieceName", "CutFile", "load_cut_file", "cut_file_from_dict"]

CUTS_FORMAT = "garnav-cuts"
_TOP_KEYS = ("format", "snap_mm", "grain", "normals", "cut", "piece")
_CUT_KEYS = ("name", "vertices", "points", "closed")
_PIECE_KEYS = ("name", "at")


@dataclass(frozen=True)
class CutCurve:
    """One seam line to cut along: mesh vertex ids of the file, or 3D points (mm), in order."""

    name: str
    vertices: tuple[int, ...] | None = None
    points: tuple[tuple[float, float, float], ...] | None = None
    closed: bool = False


@dataclass(frozen=True)
class PieceName:
    """The name of the piece holding the point ``at`` (world mm)."""

    name: str
    at: tuple[float, float, float]


@dataclass(frozen=True)
class CutFile:
    """A parsed cut file. ``grain`` is a unit world direction; ``snap_mm`` in mm."""

    cuts: tuple[CutCurve, ...] = ()
    pieces: tuple[PieceName, ...] = ()
    snap_mm: float = 2.0
    grain: tuple[float, float, float] = (0.0, 0.0, 1.0)
    normals: str = "outward"
    source: str = "<memory>"


def load_cut_file(path: str | os.PathLike) -> CutFile:
    """Read and check a cut file. Raises :class:`SpecError` with every problem found."""
    from garnav.spec import parse_toml
    from garnav.spec.reader import read_toml_text

    text, source = read_toml_text(path)
    return cut_file_from_dict(parse_toml(text, source), source)


def _is_num(x: Any) -> bool:
    return isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x)


def _point3(x: Any) -> tuple[float, float, float] | None:
    if isinstance(x, list) and len(x) == 3 and all(_is_num(c) for c in x):
        return (float(x[0]), float(x[1]), float(x[2]))
    return None


def _unknown(table: dict, keys: tuple[str, ...], source: str, item: str, out: list[Problem]) -> None:
    for key in table:
        if key not in keys:
            out.append(Problem(source, item, f"unknown key '{key}'", hint=did_you_mean(key, keys)))


def _cut(t: Any, i: int, source: str, out: list[Problem]) -> CutCurve | None:
    if not isinstance(t, dict):
        out.append(Problem(source, f"cut #{i + 1}", "must be a table ([[cut]])"))
        return None
    name = t.get("name", f"cut_{i + 1}")
    item = f"cut '{name}'"
    if not isinstance(name, str) or not name:
        out.append(Problem(source, f"cut #{i + 1}", "'name' must be a non-empty string"))
        return None
    _unknown(t, _CUT_KEYS, source, item, out)
    closed = t.get("closed", False)
    if not isinstance(closed, bool):
        out.append(Problem(source, item, "'closed' must be true or false"))
        return None
    has_v, has_p = "vertices" in t, "points" in t
    if has_v == has_p:
        out.append(Problem(source, item, "give either 'vertices' (mesh vertex indices) or "
                                         "'points' (3D points, mm), not both or neither"))
        return None
    raw = t["vertices" if has_v else "points"]
    least = 3 if closed else 2
    if not isinstance(raw, list) or len(raw) < least:
        out.append(Problem(source, item, f"needs a list of at least {least} "
                                         f"{'vertices' if has_v else 'points'}"))
        return None
    if has_v:
        if not all(isinstance(v, int) and not isinstance(v, bool) and v >= 0 for v in raw):
            out.append(Problem(source, item, "'vertices' must be vertex indices (integers >= 0, "
                                             "0 = the file's first vertex)"))
            return None
        return CutCurve(name, vertices=tuple(raw), closed=closed)
    pts = [_point3(p) for p in raw]
    bad = [k for k, p in enumerate(pts) if p is None]
    if bad:
        out.append(Problem(source, item, f"point #{bad[0] + 1} must be an array of 3 numbers "
                                         "[x, y, z] in mm"))
        return None
    return CutCurve(name, points=tuple(p for p in pts if p is not None), closed=closed)


def cut_file_from_dict(data: dict[str, Any], source: str = "<memory>") -> CutFile:
    """Build a :class:`CutFile` from parsed TOML; raise :class:`SpecError` with every problem."""
    out: list[Problem] = []
    _unknown(data, _TOP_KEYS, source, "file", out)
    if data.get("format") != CUTS_FORMAT:
        out.append(Problem(source, "format", f"is {data.get('format')!r}, expected "
                                             f"'{CUTS_FORMAT}'"))
    snap = data.get("snap_mm", 2.0)
    if not _is_num(snap) or snap <= 0:
        out.append(Problem(source, "snap_mm", f"must be a distance in mm > 0, got {snap!r}"))
        snap = 2.0
    grain = _point3(data.get("grain", [0, 0, 1]))
    if grain is None or np.linalg.norm(grain) == 0:
        out.append(Problem(source, "grain", "must be a non-zero world direction [x, y, z]"))
        grain = (0.0, 0.0, 1.0)
    g = np.asarray(grain) / np.linalg.norm(grain)
    normals = data.get("normals", "outward")
    if normals not in ("outward", "inward"):
        out.append(Problem(source, "normals", f"must be 'outward' or 'inward', got {normals!r}"))
        normals = "outward"
    cut_tables = data.get("cut", [])
    if not isinstance(cut_tables, list):
        out.append(Problem(source, "cut", "must be an array of tables ([[cut]])"))
        cut_tables = []
    cuts = [c for i, t in enumerate(cut_tables) if (c := _cut(t, i, source, out)) is not None]
    names = [c.name for c in cuts]
    for n in sorted({n for n in names if names.count(n) > 1}):
        out.append(Problem(source, f"cut '{n}'", "is named more than once"))
    piece_tables = data.get("piece", [])
    if not isinstance(piece_tables, list):
        out.append(Problem(source, "piece", "must be an array of tables ([[piece]])"))
        piece_tables = []
    pieces = []
    for i, t in enumerate(piece_tables):
        if not isinstance(t, dict) or not isinstance(t.get("name"), str) or not t.get("name"):
            out.append(Problem(source, f"piece #{i + 1}", "must be a table with a 'name' string"))
            continue
        item = f"piece '{t['name']}'"
        _unknown(t, _PIECE_KEYS, source, item, out)
        at = _point3(t.get("at"))
        if at is None:
            out.append(Problem(source, item, "'at' must be a point [x, y, z] in mm on the piece"))
            continue
        pieces.append(PieceName(t["name"], at))
    pnames = [p.name for p in pieces]
    for n in sorted({n for n in pnames if pnames.count(n) > 1}):
        out.append(Problem(source, f"piece '{n}'", "is named more than once"))
    if out:
        raise SpecError(out)
    return CutFile(tuple(cuts), tuple(pieces), float(snap), (float(g[0]), float(g[1]), float(g[2])),
                   normals, source)
