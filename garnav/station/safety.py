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

__all__ = ["LINK_CAUTIONS", "station_caution_lines", "UnsafeRouteError", "hard_keepout_crossings", "check_route"]

#: What driving over the link adds to the project's cautions (:mod:`garnav.cautions`).
LINK_CAUTIONS = (
    "Emergency stop: space in the station window, Ctrl+C in the terminal, or closing the window "
    "stops every robot; a robot that hears nothing from the station for 1 s stops itself. Keep a "
    "physical power switch within reach too: a software stop needs a working link.",
    "The link has no authentication or encryption: anyone in range of an open radio link can read "
    "and command a robot. The station and robot-sim bind to 127.0.0.1 only; never expose them "
    "beyond this machine (docs/link.md).",
)


def station_caution_lines(width: int = 96) -> list[str]:
    """The project's cautions (:func:`garnav.cautions.caution_lines`) followed by the link's."""
    import textwrap

    from garnav.cautions import caution_lines

    lines = caution_lines(width)
    for text in LINK_CAUTIONS:
        lines.extend(textwrap.wrap(text, width=width, initial_indent="  - ", subsequent_indent="    "))
    return lines


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
