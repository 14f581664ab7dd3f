"""``garnav track GARMENT LOG.csv --start POINT --heading DEG``: a telemetry log back into a track.

Integrates the encoder ticks and gyro rate of a log (docs/telemetry.md) on the pattern, across seams,
lifted onto the drape when there is one; with ``--plan`` compares it with the planned route and
draws both (``--sheet``, ``--screenshot``). A dead-reckoned track shows where the robot believes it
went, not where it was: check the robot, not the plot.
"""

from __future__ import annotations

import argparse
import json
from pathlib import Path

from garnav.atomic import write_text_atomic
from garnav.errors import MeshError, QueryError

__all__ = ["register", "run"]


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "track",
        help="replay a telemetry log into a track on the garment; compare it with a plan",
        description="Integrate a telemetry log (encoder ticks, gyro rate; docs/telemetry.md) from a "
        "start pose into a track in pattern space, crossing seams through the garment's map and "
        "lifted onto the drape when the spec names one. With --plan ROUTE.json it reports along- "
        "and cross-track error and the first time the track leaves --tolerance, and --sheet / "
        "--screenshot draw plan and track together.",
    )
    parser.add_argument("garment", metavar="GARMENT", help="garment spec file (.toml)")
    parser.add_argument("log", metavar="LOG.csv", help="telemetry log")
    parser.add_argument("--start", metavar="POINT", help="start point (landmark, PIECE:X,Y or xyz:X,Y,Z); default: the plan's start")
    parser.add_argument("--heading", type=float, metavar="DEG", help="start heading, degrees CCW from the piece's +x; default: the plan's")
    parser.add_argument("--plan", metavar="ROUTE.json", help="the planned route to compare with")
    parser.add_argument("--tolerance", type=float, default=10.0, metavar="MM", help="along/cross-track tolerance, mm (default 10)")
    parser.add_argument("--no-drape", action="store_true", help="do not lift the track onto the spec's drape")
    parser.add_argument("--json", metavar="OUT", help="write the track document as JSON")
    parser.add_argument("--sheet", metavar="FILE", help="draw plan and track on the pattern sheet (.svg or .png)")
    parser.add_argument("--screenshot", metavar="PNG", help="render plan and track on the drape to a PNG, front and back views side by side (needs a drape)")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from garnav.telemetry.logfile import TelemetryError, read_log
    from garnav.telemetry.report import sample_xyz, track_document, track_lines
    from garnav.telemetry.track import compare_to_plan, track_log
    from garnav.uncertainty.model import OdometryModel
    from garnav.model import Robot

    from garnav.drape.sources import garment_and_drape

    if not args.tolerance > 0:
        raise QueryError(f"--tolerance must be a positive number of mm, got {args.tolerance:g}")
    if args.sheet and Path(args.sheet).suffix.lower() not in (".svg", ".png"):
        raise QueryError(f"--sheet {args.sheet}: use a .svg or .png file name")
    garment, drape = garment_and_drape(args.garment, None if args.no_drape else "", optional=True)
    if args.screenshot and drape is None:
        raise MeshError(f"{args.garment}: --screenshot needs a drape, and the spec names none (or --no-drape was given)")
    robot = garment.robot or Robot()
    model = robot.odometry or OdometryModel()
    plan = plan_doc = None
    if args.plan:
        from garnav.cli._routes import route_inputs
        from garnav.uncertainty.plan_ops import compile_commands

        _, robot_p, commands, plan_doc = route_inputs(args.plan, args.garment)
        plan = compile_commands(garment, commands, robot_p)
    if args.start is None or args.heading is None:
        if plan is None:
            raise QueryError("give --start POINT and --heading DEG, or --plan ROUTE.json to start where it starts")
    if args.start is not None:
        from garnav.plan.points import resolve_point

        locate = None
        if drape is not None:
            from garnav.drape.inverse import pattern_locator

            locate = pattern_locator(drape, garment)
        try:
            pp = resolve_point(garment, args.start, locate_3d=locate)
        except QueryError as exc:
            raise TelemetryError(f"{args.log}: row 1: --start {args.start}: {exc}") from None
        start = (pp.piece, pp.x, pp.y)
    else:
        assert plan is not None
        start = plan.start[:3]
    heading = args.heading
    if heading is None:
        import math

        assert plan is not None
        heading = math.degrees(plan.start[3])
    log = read_log(args.log, model.encoder_bits)
    track = track_log(garment, robot, log, start, heading, model, plan)
    err = compare_to_plan(track, plan, args.tolerance) if plan is not None else None
    xyz = sample_xyz(drape, track) if drape is not None else None
    doc = track_document(garment, track, err, xyz, args.plan)
    print("\n".join(track_lines(doc)))
    if args.json:
        write_text_atomic(args.json, json.dumps(doc, indent=1, allow_nan=False) + "\n")
    if args.sheet or args.screenshot:
        _draw(args, garment, drape, track, plan_doc)
    return 0


def _draw(args, garment, drape, track, plan_doc) -> None:
    from garnav.export.waypoints import document_route

    shapes = [track.path.legs()]
    names = ["track"]
    if plan_doc is not None:
        shapes.insert(0, document_route(plan_doc))
        names.insert(0, "plan")
    if args.sheet:
        from garnav.preview.sheet import sheet_drawing, write_sheet_png, write_sheet_svg

        drawing = sheet_drawing(garment, shapes, robot=garment.robot, route_names=names)
        (write_sheet_png if Path(args.sheet).suffix.lower() == ".png" else write_sheet_svg)(args.sheet, drawing)
        print(f"sheet       {args.sheet}")
    if args.screenshot:
        from garnav.drape.lift import lift_route
        from garnav.atomic import write_bytes_atomic
        from garnav.preview.scene import SceneRoute, build_plotter, off_screen_environment, views_png

        off_screen_environment()
        routes = []
        for name, shape in zip(names, shapes, strict=True):
            lifted = lift_route(drape, garment, shape)
            routes.append(SceneRoute(name, lifted.points, lifted.normals))
        plotter = build_plotter(garment, drape, None, routes, off_screen=True, size=(900, 900))
        try:
            write_bytes_atomic(args.screenshot, views_png(plotter, ("front", "back")))
        finally:
            plotter.close()
        print(f"3D view     {args.screenshot}")
