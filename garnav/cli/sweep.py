"""``garnav sweep GARMENT --region ... --json OUT``: plan a route that covers a region with the sensor.

Regions (repeat ``--region`` for a union): ``pieces:NAME[,NAME]``, ``polygon:PIECE:X,Y;X,Y;...``
(pattern mm), ``near:X,Y,Z:MM`` (fabric within MM of a world point; needs a drape) and
``zone:NAME`` (the fabric of a named ``[[body_zone]]`` of the spec, through the drape). Writes the sweep's route document (``garnav-route``
with a ``sweep`` object of coverage figures, docs/sweeps.md), optionally its CSV, the robot
commands, the pattern sheet with the covered ground shaded and a 3D picture. All atomically.
"""

from __future__ import annotations

import argparse
import dataclasses
from pathlib import Path
from typing import Any

from garnav.errors import MeshError, QueryError

__all__ = ["register", "run", "check_stretches"]

CAUTION = (
    "caution: a sweep drives the robot over a whole area of the wearer's body. Keep magnets away "
    "from implanted devices, keep out of the neck and face, watch the battery, keep an emergency "
    "stop at hand; garnav plans routes and certifies nothing."
)


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "sweep",
        help="plan a route whose sensor covers a region of the garment",
        description="Plan a sweep: lanes spaced by the sensor swath over a region of the garment "
        "(boustrophedon cells, least-width lane direction, a headland lap along curved borders), "
        "joined by the route planner across seams, and print its coverage figures. REGION is "
        "pieces:NAME[,NAME], polygon:PIECE:X,Y;X,Y;X,Y (pattern mm), near:X,Y,Z:MM (fabric within "
        "MM of a world point, needs a drape) or zone:NAME (the fabric of one of the spec's body zones, "
        "needs a drape; the other zones stay keep-outs).",
        epilog=CAUTION,
    )
    parser.add_argument("garment", metavar="GARMENT", help="garment spec file (.toml) or a UV-mapped mesh")
    parser.add_argument("--region", action="append", required=True, metavar="REGION",
                        help="region to cover (repeatable: the union is swept)")
    parser.add_argument("--swath", type=float, metavar="MM",
                        help="sensor swath in mm (default: the robot's sensor_swath_mm)")
    parser.add_argument("--headland", choices=("auto", "on", "off"), default="auto",
                        help="headland lap along the region's border: auto (only where plain lanes "
                        "leave more than 1 %% uncovered), on or off (default: auto)")
    parser.add_argument("--start", metavar="POINT", help="where the robot starts (landmark, PIECE:X,Y or xyz:X,Y,Z)")
    parser.add_argument("--radius", type=float, metavar="MM", help="robot radius in mm (default: the spec's robot)")
    parser.add_argument("--clearance", type=float, default=0.0, metavar="MM", help="extra clearance added to every keep-out, mm")
    drape = parser.add_mutually_exclusive_group()
    drape.add_argument("--drape", metavar="MESH", nargs="?", const="",
                       help="the drape mesh (without MESH: the spec's own, used anyway when the spec names one)")
    drape.add_argument("--no-drape", action="store_true", help="do not use the spec's own drape")
    from garnav.zones.sources import add_ignore_zones_option

    add_ignore_zones_option(parser)
    parser.add_argument("--posture", metavar="NAME", help="wearer's posture for the energy figure (needs a "
                        "[robot.physics] profile and a drape): upright (default), or another of docs/physics.md")
    parser.add_argument("--robots", type=int, default=1, metavar="K",
                        help="also cut the sweep into K stretches of balanced time, one per robot, timed so that "
                        "no two robots meet (waits where needed), and write FILE.robot_J.json (and .cmd, with "
                        "the waits) for each and the timed schedule FILE.schedule.json (docs/sweeps.md)")
    parser.add_argument("--json", metavar="FILE", required=True, help="write the sweep's route document (JSON)")
    parser.add_argument("--csv", metavar="FILE", help="write the waypoints as CSV")
    parser.add_argument("--commands", metavar="FILE", help="write the robot commands as text (docs/commands.md)")
    from garnav.cli._routes import add_command_tolerance_option

    add_command_tolerance_option(parser)
    parser.add_argument("--sheet", metavar="FILE", help="write the pattern sheet with the covered ground shaded (.svg or .png)")
    parser.add_argument("--screenshot", metavar="PNG", help="write a 3D picture of the covered drape (needs a drape)")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from garnav.drape.inverse import pattern_locator
    from garnav.drape.lift import lift_route
    from garnav.drape.sources import spec_drape_locator
    from garnav.cli._routes import command_tolerance
    from garnav.export.commands import precision_comment, route_commands, write_commands

    tolerance = command_tolerance(args)  # a bad tolerance fails before any work
    from garnav.export.waypoints import write_route_csv, write_route_json
    from garnav.model import Robot
    from garnav.plan import Planner
    from garnav.sweep import coverage_face_mask, figures_lines, parse_region, plan_sweep, resolve_region, sweep_document
    from garnav.mechanics import parse_gravity
    from garnav.sweep.energy import sweep_energy_J
    from garnav.sweep.plan import swath_of

    if args.sheet and Path(args.sheet).suffix.lower() not in (".svg", ".png"):
        raise QueryError(f"--sheet {args.sheet}: use a .svg or .png file name")
    region = parse_region(args.region)
    garment, drape = _garment_and_drape(args)
    from garnav.zones.sources import apply_zones, ignored_zones_note, zone_regions

    plain = garment
    garment = apply_zones(garment, drape, args.garment, args.ignore_body_zones, except_zones=_zone_names(region))
    if (note := ignored_zones_note(garment, drape)) is not None:
        print(note)
    locate = pattern_locator(drape, garment) if drape is not None else spec_drape_locator(garment, Path(args.garment).parent)
    robot = garment.robot or Robot()
    if args.radius is not None:
        if not args.radius > 0:
            raise QueryError(f"--radius must be a positive number of mm, got {args.radius:g}")
        robot = dataclasses.replace(robot, radius_mm=float(args.radius))
    if not args.clearance >= 0:
        raise QueryError(f"--clearance must be zero or more mm, got {args.clearance:g}")
    posture, gravity = parse_gravity(None, args.posture)  # a bad posture fails before any work
    if args.robots < 1:
        raise QueryError(f"--robots must be 1 or more, got {args.robots}")
    if args.screenshot and drape is None:
        raise QueryError("--screenshot needs a drape (the spec's own drape, or --drape MESH)")
    swath_of(robot, args.swath)  # a missing or bad swath fails before the planner is built
    areas = resolve_region(garment, region, drape=drape, zones=zone_regions(plain))  # bad regions fail before the planner is built
    planner = Planner(garment, robot, extra_clearance_mm=args.clearance, locate_3d=locate)
    sweep = plan_sweep(garment, areas, swath_mm=args.swath, headland=args.headland, planner=planner,
                       drape=drape, start=args.start)
    lifted = lift_route(drape, garment, sweep.route) if drape is not None else None
    energy = sweep_energy_J(sweep, robot, drape, lifted, gravity)
    physics = getattr(robot, "physics", None)
    doc = sweep_document(sweep, garment, robot, lifted, region_text=args.region, energy_J=energy,
                         battery_j=physics.battery_j if physics is not None else None,
                         command_tolerance_mm=tolerance)
    print("\n".join(figures_lines(doc["sweep"])))
    write_route_json(args.json, doc)
    if args.csv:
        write_route_csv(args.csv, doc)
    if args.commands:
        comment = (f"sweep of {' + '.join(args.region)} on garment '{garment.name}', robot '{robot.name}'\n"
                   + precision_comment(tolerance))
        write_commands(args.commands, route_commands(sweep.route, garment, robot, tolerance_mm=tolerance),
                       comment=comment)
    if args.robots > 1:
        _write_split(args, garment, robot, drape, sweep)
    if args.sheet:
        from garnav.preview.sheet import sheet_drawing, write_sheet_png, write_sheet_svg

        drawing = sheet_drawing(garment, [sweep.route], planner.free, robot, route_names=["sweep"], coverage=sweep.covered)
        (write_sheet_svg if args.sheet.lower().endswith(".svg") else write_sheet_png)(args.sheet, drawing)
    if args.screenshot:
        from garnav.preview.scene import build_plotter, off_screen_environment, write_screenshot

        off_screen_environment()
        # the covered triangles only: the lanes' tube would hide the shading
        plotter = build_plotter(garment, drape, None, [], off_screen=True,
                                covered_faces=coverage_face_mask(drape, sweep.covered), labels=False)
        try:
            from garnav.preview.scene import set_view

            set_view(plotter, "back" if _mostly_back(doc) else "front")
            write_screenshot(args.screenshot, plotter)
        finally:
            plotter.close()
    print(CAUTION)
    return 0


def check_stretches(garment, robot, routes):
    """The fleet checker's closest approach of sweep stretches driven at once from t = 0
    (:func:`garnav.sweep.split.stretch_moves` as :class:`garnav.fleet.Move` s)."""
    from garnav.fleet import Move, RobotPlan, Schedule, check_schedule
    from garnav.sweep.split import stretch_moves

    plans = tuple(
        RobotPlan(f"robot_{j + 1}", robot, tuple(Move(*m) for m in stretch_moves(r, robot)), 0.0, 0.0)
        for j, r in enumerate(routes)
    )
    schedule = Schedule(plans, 0.0, tuple(p.name for p in plans), 0, 0.0,
                        "sweep stretches, all starting at t = 0 (not coordinated)")
    return check_schedule(garment, schedule)


def _write_split(args: argparse.Namespace, garment, robot, drape, sweep) -> None:
    """Per-robot route documents (and commands, with waits) of the sweep cut into --robots
    stretches and timed apart (:func:`garnav.sweep.schedule.schedule_sweep`), and the schedule."""
    from garnav.drape.lift import lift_route
    from garnav.export.commands import precision_comment, write_commands
    from garnav.export.waypoints import route_document, write_route_json
    from garnav.fleet.document import write_schedule_json
    from garnav.sweep.schedule import schedule_sweep

    timed = schedule_sweep(garment, sweep, args.robots, robot)
    stem = Path(args.json)
    for j, route in enumerate(timed.routes, start=1):
        lifted: Any = lift_route(drape, garment, route) if drape is not None else None
        out = stem.with_name(f"{stem.stem}.robot_{j}{stem.suffix or '.json'}")
        write_route_json(out, route_document(route, garment, robot, lifted, command_tolerance_mm=0.0))
        line = f"robot {j}: {route.length_mm:.0f} mm -> {out}"
        if args.commands:
            cstem = Path(args.commands)
            cout = cstem.with_name(f"{cstem.stem}.robot_{j}{cstem.suffix or '.cmd'}")
            write_commands(cout, timed.commands(garment, j - 1),
                           comment=f"sweep stretch {j} of {args.robots}, with its waits for the others\n"
                           + precision_comment(0.0))
            line += f", {cout}"
        print(line)
    sched = stem.with_name(f"{stem.stem}.schedule{stem.suffix or '.json'}")
    write_schedule_json(sched, garment, timed.schedule, timed.check)
    print("\n".join(timed.lines()))
    print(f"schedule -> {sched}")


def _garment_and_drape(args: argparse.Namespace):
    """The garment and its drape: --drape MESH, else the spec's own (unless --no-drape)."""
    from garnav.drape.sources import garment_and_drape, is_mesh_path

    if is_mesh_path(args.garment):
        if args.no_drape:
            raise QueryError(f"--no-drape: {args.garment} is a mesh, which is its own drape")
        return garment_and_drape(args.garment)
    if args.no_drape:
        return garment_and_drape(args.garment, None)
    if args.drape is not None:
        return garment_and_drape(args.garment, args.drape)
    try:
        return garment_and_drape(args.garment, "", optional=True)
    except MeshError as exc:
        raise MeshError(f"{exc} (the spec names this drape; --no-drape plans without it)") from None


def _zone_names(region) -> tuple[str, ...]:
    """Names of the body zones a region is made of (``zone:NAME``): they are swept, not kept out."""
    from garnav.sweep.region import UnionRegion, ZoneRegion

    parts = region.parts if isinstance(region, UnionRegion) else (region,)
    return tuple(p.name for p in parts if isinstance(p, ZoneRegion))


def _mostly_back(doc: dict) -> bool:
    path = doc.get("path3d")
    if not path:
        return False
    ys = [p[1] for p in path]
    return sum(ys) / len(ys) < 0  # world y forward: the back of the body is at negative y
