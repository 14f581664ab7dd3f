"""Outputs for robots and programs: the route document (JSON + CSV), robot commands, replay.

* :mod:`~garnav.export.waypoints` — :func:`route_document` (pure) and its JSON/CSV writers; the
  JSON Schema ships as ``garnav/data/route.schema.json`` (docs/route-format.md).
* :mod:`~garnav.export.commands` — turn / go / cross commands and the ``garnav-commands`` text
  format (docs/commands.md).
* :mod:`~garnav.export.replay` — drive a command list on the flat pattern, across seams.
* :mod:`~garnav.export.seams` — carrying a point and heading over a seam.
* :mod:`~garnav.export.path` — a route's waypoints with pieces and headings.
"""

from garnav.export.commands import (
    CommandList,
    CommandSyntaxError,
    Cross,
    Go,
    Start,
    Turn,
    format_commands,
    parse_commands,
    read_commands,
    route_commands,
    write_commands,
)
from garnav.export.path import Waypoint, route_waypoints
from garnav.export.replay import Pose, Replay, ReplayError, replay_commands
from garnav.export.waypoints import (
    document_csv,
    document_json,
    read_route_document,
    route_document,
    route_schema,
    write_route_csv,
    write_route_json,
)

__all__ = [
    "CommandList",
    "CommandSyntaxError",
    "Cross",
    "Go",
    "Pose",
    "Replay",
    "ReplayError",
    "Start",
    "Turn",
    "Waypoint",
    "document_csv",
    "document_json",
    "format_commands",
    "parse_commands",
    "read_commands",
    "read_route_document",
    "replay_commands",
    "route_commands",
    "route_document",
    "route_schema",
    "route_waypoints",
    "write_commands",
    "write_route_csv",
    "write_route_json",
]
