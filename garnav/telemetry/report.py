"""The ``garnav-track`` document of a replayed log, and the track lifted onto a drape."""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from garnav.model import Garment
from garnav.telemetry.track import PlanError, Track

__all__ = ["track_document", "track_lines", "sample_xyz", "FORMAT_NAME", "FORMAT_VERSION"]

FORMAT_NAME = "garnav-track"
FORMAT_VERSION = 1


def sample_xyz(drape, track: Track) -> np.ndarray:
    """(n, 3) world positions (mm) of the track's points on the drape."""
    path = track.path
    out = np.zeros((len(path.xy), 3))
    for pi, name in enumerate(path.pieces):
        sel = np.flatnonzero(path.piece_index == pi)
        if len(sel):
            out[sel] = drape.pattern_to_3d(name, path.xy[sel], snap_mm=1.0)
    return out


def _list(a) -> list:
    return [None if not math.isfinite(float(v)) else float(v) for v in np.asarray(a, dtype=float)]


def track_document(garment: Garment, track: Track, plan_error: PlanError | None = None,
                   xyz: np.ndarray | None = None, plan_source: str | None = None) -> dict[str, Any]:
    """The track as a JSON-ready dict (docs/telemetry.md)."""
    path = track.path
    heading = np.degrees(np.remainder(path.heading + math.pi, 2 * math.pi) - math.pi)
    d = np.hypot(*np.diff(path.xy, axis=0).T)
    for c in path.crossings:  # a crossing step's positions are in two frames
        d[c.sample] = np.nan
    doc: dict[str, Any] = {
        "format": FORMAT_NAME,
        "version": FORMAT_VERSION,
        "units": {"length": "mm", "angle": "deg", "time": "s"},
        "garment": garment.name,
        "log": track.source,
        "samples": {
            "time_s": _list(track.time_s),
            "piece": [path.piece_of(i) for i in range(len(path.xy))],
            "x": _list(path.xy[:, 0]),
            "y": _list(path.xy[:, 1]),
            "heading_deg": _list(heading),
            "xyz": None if xyz is None else [[float(v) for v in row] for row in xyz],
        },
        "crossings": [{"sample": c.sample, "seam": c.seam, "from_piece": c.from_piece, "to_piece": c.to_piece,
                       "from_mm": list(c.point_from), "to_mm": list(c.point_to)} for c in path.crossings],
        "end": {"piece": path.piece_of(len(path.xy) - 1), "x": float(path.xy[-1, 0]), "y": float(path.xy[-1, 1]),
                "heading_deg": float(heading[-1])},
        "plan": None,
    }
    if plan_error is not None:
        doc["plan"] = {
            "route": plan_source,
            "tolerance_mm": plan_error.tolerance_mm,
            "first_out_of_tolerance_s": plan_error.first_out_s,
            "max_cross_track_mm": plan_error.max_cross_mm,
            "max_along_track_mm": plan_error.max_along_mm,
            "along_track_mm": _list(plan_error.along_mm),
            "cross_track_mm": _list(plan_error.cross_mm),
        }
    return doc


def track_lines(doc: dict[str, Any]) -> list[str]:
    """A short text summary of a track document."""
    s = doc["samples"]
    e = doc["end"]
    seams = ", ".join(c["seam"] for c in doc["crossings"]) or "none"
    out = [
        f"track       {len(s['time_s'])} samples, {s['time_s'][-1]:.1f} s, seams crossed: {seams}",
        f"end         {e['piece']}:{e['x']:.1f},{e['y']:.1f} heading {e['heading_deg']:.1f}°",
    ]
    p = doc["plan"]
    if p is not None:
        first = "never" if p["first_out_of_tolerance_s"] is None else f"at {p['first_out_of_tolerance_s']:.1f} s"
        out.append(f"vs plan     cross-track max {p['max_cross_track_mm']:.2f} mm, along-track max "
                   f"{p['max_along_track_mm']:.2f} mm; out of ±{p['tolerance_mm']:g} mm {first}")
    return out
