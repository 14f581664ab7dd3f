"""What the station says and refuses for safety: the cautions, and routes that cross hard keep-outs.

A route from the planner keeps the robot's radius and clearance off every hard keep-out, so this
check is a second, independent line: the planned legs themselves (the robot's centre line) are
tested against the keep-outs' own outlines, not the grown free space, with shapely predicates.
A route that touches a hard keep-out — a planner bug, a hand-made route, a start estimated inside
one — is never sent.
"""

from __future__ import annotations

import shapely

from garnav.errors import GarnavError
from garnav.model import Garment

__all__ = ["CAUTIONS", "UnsafeRouteError", "hard_keepout_crossings", "check_route"]

CAUTIONS = (
    "Caution: garnav drives robots on a person. Magnets can disturb pacemakers, defibrillators, "
    "neurostimulators, insulin pumps and other implanted devices — keep them away from wearers with "
    "such devices unless a qualified professional says otherwise.",
    "Keep robots out of the neck, face and hair zones (mark them as hard keep-outs) and do not rely "
    "on a plan or on dead reckoning alone.",
    "Use protected lithium cells; never charge on the body unattended; stop a robot that gets warm.",
    "Emergency stop: press the stop key (space) in the window or Ctrl+C in the terminal; a robot "
    "that hears nothing from the station also stops itself.",
    "The radio link has no authentication or encryption: anyone in range can command a robot. The "
    "station binds to 127.0.0.1 only; never expose it beyond this machine (docs/link.md).",
    "garnav plans routes; it certifies nothing. Follow the device maker, clinicians, the standards "
    "that apply and qualified professionals.",
)


class UnsafeRouteError(GarnavError):
    """A route the station refuses to send (it crosses a hard keep-out)."""


def hard_keepout_crossings(garment: Garment, route) -> list[str]:
    """Names of the hard keep-outs whose outline a leg of ``route`` touches (sorted, unique)."""
    hits: set[str] = set()
    for leg in route.legs:
        line = shapely.LineString(leg.points) if len(leg.points) > 1 else shapely.Point(leg.points[0])
        for k in garment.keepouts:
            if k.piece == leg.piece and k.hard and line.intersects(k.shape.exact_geometry()):
                hits.add(k.name)
    return sorted(hits)


def check_route(garment: Garment, route, robot_name: str) -> None:
    """Raise :class:`UnsafeRouteError` when ``route`` crosses a hard keep-out."""
    hits = hard_keepout_crossings(garment, route)
    if hits:
        raise UnsafeRouteError(f"robot '{robot_name}': the route crosses hard keep-out(s) {', '.join(hits)}; "
                               "not sent (re-plan from a pose outside them, or check the spec)")
