"""Shared by the dead-reckoning commands: the garment, robot and commands of a route document."""

from __future__ import annotations

from typing import TYPE_CHECKING

import dataclasses

from garnav.errors import QueryError
if TYPE_CHECKING:  # loaded when the command runs (a fast --help)
    from garnav.export.commands import CommandList
    from garnav.model import Garment, Robot

__all__ = ["route_inputs", "add_garment_option"]


def add_garment_option(parser) -> None:
    parser.add_argument("--garment", metavar="SPEC", help="the garment spec the route was planned on "
                        "(default: the built-in demo garment, when the route is on it)")


def route_inputs(route_path: str, garment_path: str | None) -> tuple[Garment, Robot, CommandList, dict]:
    """Read a route JSON and its garment; the robot is the garment's with the route's radius."""
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
    rd = doc.get("robot") or {}
    if isinstance(rd.get("radius_mm"), (int, float)):
        robot = dataclasses.replace(robot, radius_mm=float(rd["radius_mm"]))
    try:
        commands = route_commands(document_route(doc), garment, robot)
    except QueryError as exc:
        raise QueryError(f"{route_path}: {exc}") from None
    return garment, robot, commands, doc
