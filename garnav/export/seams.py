"""Carrying a point and a heading across a seam (pure geometry, piece frames, mm).

A seam sews run ``a`` at fraction *t* of its arc length to run ``b`` at the same fraction. Both
pieces are seen from the garment's outside with counter-clockwise outlines, and the runs are given in
a common direction of travel, so near the crossing the two piece frames differ by a rotation that
takes run ``a``'s tangent onto run ``b``'s tangent. A robot driving straight over the seam keeps its
angle to the seam tangent (DESIGN.md, "Planning"): its heading turns by exactly that rotation.

The run frames (point, tangent, inward normal at a fraction of a run) are the planner's
(:func:`garnav.plan.freespace.run_frame`), so commands, replay and planned turns share one
convention.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
import numpy as np

from garnav.model import Garment, Seam, SeamSide, other_side
from garnav.plan.freespace import run_frame
from garnav.polyline import cumulative_length

__all__ = ["SeamTransfer", "locate_on_run", "seam_transfer", "snap_to_vertex", "VERTEX_SNAP_MM"]

# A crossing this close (mm) to a vertex of a seam run is taken at the vertex. A run is a polyline,
# so the heading's rotation over the seam jumps at its vertices; planned crossings often sit on
# one, and a go rounded to 0.01 mm and 0.01° (docs/commands.md) meets the run up to a few
# hundredths of a mm beside it. Snapping makes that crossing turn the heading as planned.
VERTEX_SNAP_MM = 0.1

@dataclass(frozen=True)
class SeamTransfer:
    """Where a point on one run of a seam lands on the other run.

    Attributes
    ----------
    seam : str
    side : {"a", "b"}
        The run the point starts on.
    from_piece, to_piece : str
    point_from, point_to : (2,) arrays, mm, piece frames of ``from_piece`` and ``to_piece``.
    fraction : float
        Position along the seam, 0..1 of either run's arc length (runs match fraction to fraction).
    rotation_rad : float
        Angle to add to a heading in ``from_piece``'s frame to get the same physical heading in
        ``to_piece``'s frame.
    tangent_from : (2,) array
        Unit tangent of the starting run at the point (run travel direction), ``from_piece`` frame.
    """

    seam: str
    side: SeamSide
    from_piece: str
    to_piece: str
    point_from: np.ndarray
    point_to: np.ndarray
    fraction: float
    rotation_rad: float
    tangent_from: np.ndarray


def locate_on_run(points: np.ndarray, point: np.ndarray) -> tuple[float, float]:
    """Closest position on a polyline (n, 2) to ``point`` (2,).

    Returns
    -------
    s : float
        Arc length of the closest position, mm.
    distance : float
        Distance from ``point`` to it, mm.
    """
    points = np.asarray(points, dtype=float)
    point = np.asarray(point, dtype=float)
    a, b = points[:-1], points[1:]
    d = b - a
    dd = np.einsum("ij,ij->i", d, d)
    t = np.where(dd > 0, np.einsum("ij,ij->i", point - a, d) / np.where(dd > 0, dd, 1.0), 0.0)
    t = np.clip(t, 0.0, 1.0)
    foot = a + t[:, None] * d
    dist = np.hypot(*(foot - point).T)
    k = int(np.argmin(dist))
    cum = cumulative_length(points)
    return float(cum[k] + t[k] * math.sqrt(dd[k])), float(dist[k])


def snap_to_vertex(points: np.ndarray, point: np.ndarray, snap_mm: float = VERTEX_SNAP_MM) -> np.ndarray:
    """``point`` (2,), or the nearest vertex of polyline ``points`` (n, 2) when it lies within
    ``snap_mm`` of it (mm)."""
    pts = np.asarray(points, dtype=float).reshape(-1, 2)
    q = np.asarray(point, dtype=float)
    d = np.hypot(*(pts - q).T)
    k = int(np.argmin(d))
    return pts[k].copy() if d[k] <= snap_mm else q.copy()


def seam_transfer(garment: Garment, seam: Seam, side: SeamSide, point: np.ndarray) -> SeamTransfer:
    """Carry ``point`` (on run ``side`` of ``seam``, mm) over to the other run.

    The point is first projected onto its run; its fraction of the run's arc length picks the
    partner point at the same fraction of the other run.
    """
    own, other = seam.run(side), seam.run(other_side(side))
    own_pts = garment.run_polyline(own)
    own_len = float(cumulative_length(own_pts)[-1])
    s, _ = locate_on_run(own_pts, point)
    fraction = s / own_len if own_len > 0 else 0.0
    _, t_own, _ = run_frame(garment, own, fraction)
    point_to, t_other, _ = run_frame(garment, other, fraction)
    rotation = math.atan2(t_other[1], t_other[0]) - math.atan2(t_own[1], t_own[0])
    rotation = math.remainder(rotation, 2.0 * math.pi)
    return SeamTransfer(
        seam=seam.name,
        side=side,
        from_piece=own.piece,
        to_piece=other.piece,
        point_from=np.asarray(point, dtype=float).copy(),
        point_to=np.asarray(point_to, dtype=float),
        fraction=fraction,
        rotation_rad=rotation,
        tangent_from=t_own,
    )
