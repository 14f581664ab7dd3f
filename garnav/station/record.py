"""A station run as an MCAP recording (``garnav station --record FILE.mcap``).

What the station saw, written through :class:`garnav.recording.McapRecorder` (docs/mcap.md): the
drape mesh, each robot's last plan (pattern plan and, lifted, its 3D path and poses) and each
robot's estimated track, dead-reckoned from telemetry in pattern space and lifted onto the drape
(``geometry_msgs/PoseStamped`` on ``/garnav/robots/<robot>/pose``, timed by the robot's own
clock, plus the ``track`` path). Without a drape only the pattern plans are written.
"""

from __future__ import annotations

import math
import os

import numpy as np

__all__ = ["record_station"]


def record_station(path: str | os.PathLike, station, drape=None) -> int:
    """Write the station's run to ``path`` (MCAP); returns the number of estimated poses written.

    Parameters
    ----------
    path : str or path-like
    station : garnav.station.controller.Station
    drape : Drape, optional
        The garment's drape; poses and 3D paths need it.
    """
    from garnav.drape.lift import lift_route
    from garnav.recording import McapRecorder

    poses = 0
    with McapRecorder(path) as rec:
        if drape is not None:
            rec.add_mesh(drape)
        for name, r in station.robots.items():
            if r.route is not None:
                lifted = lift_route(drape, station.garment, r.route) if drape is not None else None
                rec.add_route(r.route, lifted, robot=name)
            est = r.estimate
            if est is None or drape is None:
                continue
            poses += _record_track(rec, name, drape, est.track, est.track_time_s)
    return poses


def _record_track(rec, name: str, drape, track, times) -> int:
    """Lift the track points that carry a robot time (the placement has none) and write them as
    poses; each pose faces the next distinct lifted point (the last one keeps the previous way)."""
    from garnav.errors import GarnavError

    lifted: list[tuple[float, np.ndarray]] = []
    for (piece, x, y), t in zip(track, times, strict=True):
        if not math.isfinite(t):
            continue
        try:
            xyz = drape.pattern_to_3d(piece, np.array([[x, y]]), snap_mm=1.0)[0]
        except GarnavError:  # a point off the drape (a bad estimate): left out of the recording
            continue
        if np.all(np.isfinite(xyz)):
            lifted.append((float(t), xyz))
    forward = np.array([1.0, 0.0, 0.0])
    for k, (t, xyz) in enumerate(lifted):
        ahead = next((q for _, q in lifted[k + 1:] if np.linalg.norm(q - xyz) > 1e-6), None)
        if ahead is not None:
            forward = ahead - xyz
        rec.add_estimated_pose(name, t, xyz, forward)
    return len(lifted)
