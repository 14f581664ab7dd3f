"""Shared by the dead-reckoning commands: the garment, robot and commands of a route document."""

from __future__ import annotations

from typing import TYPE_CHECKING

import dataclasses

from garnav.errors import QueryError
if TYPE_CHECKING:  # loaded when the command runs (a fast --help)
    from garnav.export.commands import CommandList
    from garnav.model import Garment, Robot

__all__ = ["route_inputs", "add_garment_option", "add_command_tolerance_option", "command_tolerance",
           "with_body_zones"]

# The default of --command-tolerance as the help text states it (garnav.export.steer.DEFAULT_TOLERANCE_MM;
# tests/test_export_merge.py checks they agree). Kept here so that --help loads no geometry.
COMMAND_TOLERANCE_HELP_DEFAULT = 0.5


def add_command_tolerance_option(parser) -> None:
    """``--command-tolerance MM``: how far the written commands may stray from the route."""
    from garnav.cli import finite_float

    parser.add_argument("--command-tolerance", type=finite_float, default=None, metavar="MM",
                        help="merge chains of tiny turns along arcs into fewer turn/go pairs whose path stays "
                        f"within MM of the planned route (default {COMMAND_TOLERANCE_HELP_DEFAULT:g}; 0 keeps "
                        "every planned vertex); turns and distances are written to 0.01 deg and 0.01 mm "
                        "(docs/commands.md)")


def command_tolerance(args) -> float:
    """The ``--command-tolerance`` of ``args`` (its default when not given), checked >= 0."""
    from garnav.export.steer import DEFAULT_TOLERANCE_MM

    value = getattr(args, "command_tolerance", None)
    if value is None:
        return DEFAULT_TOLERANCE_MM
    if not value >= 0:
        raise QueryError(f"--command-tolerance must be zero or more mm, got {value:g}")
    return float(value)


def add_garment_option(parser) -> None:
    parser.add_argument("--garment", metavar="SPEC", help="the garment spec the route was planned on "
                        "(default: the built-in demo garment, when the route is on it)")


def route_inputs(route_path: str, garment_path: str | None) -> tuple[Garment, Robot, CommandList, dict]:
    """Read a route JSON and its garment; the robot is the garment's with the route's radius.

    The commands are rebuilt with the document's ``command_tolerance_mm`` (0 when it has none, as
    in documents written before it existed), so they are the document's own."""
    from garnav.export.commands import route_commands
    from garnav.export.waypoints import document_route, read_route_document
    from garnav.model import Robot

    doc = read_route_document(route_path)
    name = doc["garment"]["name"]
    if garment_path:
        from garnav.spec import load_garment

        garment = load_garment(garment_path)
    else:
        from garnav.demo.pattern import build_design

        garment = build_design().garment
        if garment.name != name:
            raise QueryError(f"{route_path}: the route is on garment '{name}'; name its spec with --garment SPEC")
    if garment.name != name:
        raise QueryError(f"{route_path}: the route is on garment '{name}', not on '{garment.name}' ({garment_path})")
    from garnav.export.route_checks import check_route_on_garment

    check_route_on_garment(doc, garment, route_path)  # unknown pieces, off-piece points: before replaying
    robot = garment.robot or Robot()
    rd = doc.get("robot") or {}  # an object with finite sizes: read_route_document checked it
    if "radius_mm" in rd:
        robot = dataclasses.replace(robot, radius_mm=float(rd["radius_mm"]))
    try:
        tol = doc.get("command_tolerance_mm", 0.0)
        tol = float(tol) if isinstance(tol, (int, float)) and not isinstance(tol, bool) else 0.0
        commands = route_commands(document_route(doc), garment, robot, tolerance_mm=tol)
    except QueryError as exc:
        raise QueryError(f"{route_path}: {exc}") from None
    return garment, robot, commands, doc


def with_body_zones(garment: Garment, garment_path: str | None, allow_without_zones: bool = False
                    ) -> tuple[Garment, str | None]:
    """``garment`` with its body zones as keep-outs through its drape (the spec's own, or the
    built-in demo's drape), so that contact with a zone counts like contact with any keep-out.

    Returns the garment and a warning line (None when nothing to say). Without a drape, a garment
    with zones is refused; ``allow_without_zones`` (``--ignore-body-zones``) leaves the zones out.
    """
    if not garment.body_zones:
        return garment, None
    if allow_without_zones:
        names = ", ".join(z.name for z in garment.body_zones)
        return garment, (f"warning: body zones NOT applied ({names}) because of --ignore-body-zones: "
                         "contact with them is not counted")
    from garnav.zones.sources import apply_zones, ignored_zones_note

    drape = None
    if garment_path:
        from pathlib import Path

        if garment.drape is not None and (Path(garment_path).parent / garment.drape).is_file():
            from garnav.drape import load_drape

            drape = load_drape(garment, None, str(Path(garment_path).parent))
    else:  # the built-in demo garment: its drape is built in memory
        from garnav.demo.run import demo_scene

        drape = demo_scene().drape
    zoned = apply_zones(garment, drape, garment_path or "the demo garment", allow_without_zones)
    return zoned, ignored_zones_note(zoned, drape)
