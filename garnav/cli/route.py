"""``garnav route GARMENT --from POINT --to POINT``: plan a route and print a short summary.

Points are landmark names, ``PIECE:X,Y`` (pattern mm) or ``xyz:X,Y,Z`` (world mm; needs a drape).
With a drape — the spec's own ``drape`` file, or ``--drape MESH`` — the route is lifted onto it
(3D length and climb; ``--no-drape`` skips this). ``--json`` writes the route document
(``garnav-route``, docs/route-format.md; with ``length_3d_mm``, per-waypoint ``xyz`` and ``path3d``
when lifted), ``--csv`` its waypoint table and ``--commands`` the robot's turn-and-go commands
(docs/commands.md). All are written atomically.

With a robot physics profile (the spec's ``[robot.physics]``, or ``--robot ROBOT.toml``) and a
drape, the route is one the robot can drive in the chosen posture (``--posture NAME`` or
``--gravity X,Y,Z``): no segment below its grip, hold or drive margin, switchbacks where a climb
is too steep, and ``--cost length|time|energy`` (docs/physics.md). The summary adds energy,
battery, the worst margin and whether the nearest dock can still be reached; the JSON adds its
``physics`` object.

The navigation graph is kept in a per-user cache folder (``platformdirs.user_cache_dir``, or
``GARNAV_CACHE_DIR`` when set, or ``--cache-dir``) under a key of the content of spec, robot and
options, so a repeated call on the same garment skips the build; the linked drape of the spec (an
OBJ mesh) is kept beside it under a key of the mesh file's bytes and the spec
(:mod:`garnav.drape.cache`). ``--no-cache`` builds both afresh and writes nothing. Heavy modules
are imported inside :func:`run` so that the parser stays quick.
"""

from __future__ import annotations

import argparse
import contextlib
import dataclasses
import os
import sys
from pathlib import Path
from typing import TYPE_CHECKING

from garnav.cautions import caution_lines
from garnav.errors import MeshError, QueryError

if TYPE_CHECKING:
    from garnav.model import Robot
    from garnav.plan import Planner, Route

CACHE_ENV = "GARNAV_CACHE_DIR"


def default_cache_dir() -> Path:
    """Folder of the on-disk graph cache: ``$GARNAV_CACHE_DIR`` if set, else the per-user cache
    folder of the platform (``platformdirs.user_cache_dir("garnav")``) / ``navgraph``."""
    env = os.environ.get(CACHE_ENV)
    if env:
        return Path(env)
    import platformdirs

    return Path(platformdirs.user_cache_dir("garnav")) / "navgraph"

__all__ = ["register", "run", "route_summary", "default_cache_dir"]


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "route",
        help="plan the shortest safe route between two points of a garment",
        description="Plan the shortest route for the garment's robot between two points, around "
        "keep-outs and across seams, and print its length, seams crossed, turns and driving time. "
        "POINT is a landmark name, PIECE:X,Y (pattern mm) or xyz:X,Y,Z (world mm, needs a drape). "
        "When the spec names its own drape (drape = ... in the TOML), or with --drape MESH, the "
        "route is also lifted onto the drape: the summary adds its 3D length and climb, and the "
        "--json document adds length_3d_mm, per-waypoint xyz and path3d. --no-drape skips the lift.",
    )
    parser.add_argument(
        "garment",
        metavar="GARMENT",
        help="garment spec file (.toml), or a UV-mapped mesh (.obj, .gltf, .glb, .ply) whose UV "
        "islands become the pieces",
    )
    parser.add_argument("--from", dest="start", required=True, metavar="POINT", help="start point")
    parser.add_argument("--to", dest="goal", required=True, metavar="POINT", help="goal point")
    parser.add_argument("--via", action="append", default=[], metavar="POINT", help="pass through this point (repeatable, in order)")
    parser.add_argument("--radius", type=float, metavar="MM", help="robot radius in mm (default: the spec's robot)")
    parser.add_argument("--clearance", type=float, default=0.0, metavar="MM", help="extra clearance added to every keep-out, mm")
    parser.add_argument("--snap", action="store_true", help="move points the robot cannot stand on to the nearest free point")
    drape = parser.add_mutually_exclusive_group()
    drape.add_argument(
        "--drape",
        metavar="MESH",
        nargs="?",
        const="",
        help="lift the route onto this UV-mapped drape mesh (without MESH: the spec's own drape, "
        "which is used anyway when the spec names one) and print its 3D length and climb",
    )
    drape.add_argument(
        "--no-drape",
        action="store_true",
        help="do not lift the route onto the spec's own drape (world points xyz:... still snap "
        "through it)",
    )
    from garnav.zones.sources import add_ignore_zones_option

    add_ignore_zones_option(parser)
    from garnav.cli._poses import add_pose_options

    add_pose_options(parser)
    parser.add_argument("--robot", metavar="ROBOT.toml", help="use the robot of this robot file (a [robot] table, "
                        "optionally with [robot.physics]) instead of the spec's (docs/physics.md)")
    parser.add_argument("--cost", choices=("length", "time", "energy"), default=None,
                        help="what the route minimises (default length); time and energy need a robot "
                        "physics profile and a drape")
    gravity = parser.add_mutually_exclusive_group()
    gravity.add_argument("--posture", metavar="NAME", help="wearer's posture for gravity: upright (default), "
                         "supine, prone, left_side, right_side, seated (docs/physics.md)")
    gravity.add_argument("--gravity", metavar="X,Y,Z", help="gravity direction in the body frame (any length)")
    parser.add_argument("--json", metavar="FILE", help="write the route document as JSON (docs/route-format.md)")
    parser.add_argument("--csv", metavar="FILE", help="write the waypoints as CSV")
    parser.add_argument("--commands", metavar="FILE", help="write the robot commands as text (docs/commands.md)")
    from garnav.cli._routes import add_command_tolerance_option

    add_command_tolerance_option(parser)
    parser.add_argument("--mcap", metavar="FILE", help="write the plan, the lifted route, poses along it and the "
                        "garment mesh as an MCAP file of ROS 2 messages (docs/mcap.md; needs garnav[mcap])")
    parser.add_argument(
        "--confidence",
        type=float,
        metavar="P",
        help="grow clearances and re-plan until the Monte Carlo contact probability of the robot's "
        "odometry model is at most 1 - P (e.g. 0.99; docs/uncertainty.md)",
    )
    cache = parser.add_mutually_exclusive_group()
    cache.add_argument(
        "--cache-dir",
        metavar="DIR",
        help=f"folder of the cache of navigation graphs and linked drapes (default: ${CACHE_ENV}, else "
        "the per-user cache folder)",
    )
    cache.add_argument("--no-cache", action="store_true", help="build the navigation graph and link the drape afresh; "
                       "read and write no cache")
    parser.add_argument(
        "--exact-seams",
        action="store_true",
        help="choose seams and crossings by the certified (slower) branch-and-bound search (docs/planning.md)",
    )
    parser.add_argument("--quiet", action="store_true", help="do not print the safety cautions (shown once per run on "
                        "standard error otherwise)")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from garnav.drape.inverse import pattern_locator
    from garnav.drape.lift import lift_route
    from garnav.drape.sources import spec_drape_locator
    from garnav.cli._routes import command_tolerance
    from garnav.export.commands import precision_comment, route_commands, write_commands
    from garnav.export.waypoints import route_document, write_route_csv, write_route_json
    from garnav.model import Robot
    from garnav.plan import Planner

    tolerance = command_tolerance(args)  # a bad tolerance fails before any work

    if getattr(args, "posture", None) or getattr(args, "gravity", None):
        from garnav.mechanics.gravity import parse_gravity

        parse_gravity(args.gravity, args.posture)  # a bad posture fails before any work
    from garnav.cli._poses import choose_poses, wants_poses

    cache_dir = None
    if not getattr(args, "no_cache", False):
        cache_dir = Path(args.cache_dir) if getattr(args, "cache_dir", None) else default_cache_dir()
    choice = None
    if wants_poses(args):  # --pose NAME|all, --robust: docs/poses.md
        from garnav.drape.sources import garment_and_drape, is_mesh_path

        if is_mesh_path(args.garment):
            raise QueryError(f"--pose/--robust: {args.garment} is a mesh, one drape; poses are [[pose]] "
                             "tables of a garment spec (docs/poses.md)")
        as_read, _ = garment_and_drape(args.garment, None)
        choice = choose_poses(args, as_read, getattr(args, "drape", None))
        garment, drape = choice.garment, choice.drape
    else:
        garment, drape = _garment_and_drape(args, cache_dir)
        from garnav.zones.sources import apply_zones, ignored_zones_note

        garment = apply_zones(garment, drape, args.garment, getattr(args, "ignore_body_zones", False))
        if (note := ignored_zones_note(garment, drape)) is not None:
            print(note)
    if drape is not None:
        locate = pattern_locator(drape, garment)
    else:
        locate = spec_drape_locator(garment, Path(args.garment).parent, cache_dir=cache_dir)
    robot = garment.robot or Robot()
    if getattr(args, "robot", None):
        from garnav.spec.robot import load_robot

        robot = load_robot(args.robot)
    if args.radius is not None:
        if not args.radius > 0:
            raise QueryError(f"--radius must be a positive number of mm, got {args.radius:g}")
        robot = dataclasses.replace(robot, radius_mm=float(args.radius))
    if not args.clearance >= 0:
        raise QueryError(f"--clearance must be zero or more mm, got {args.clearance:g}")
    planner = Planner(
        garment,
        robot,
        extra_clearance_mm=args.clearance,
        locate_3d=locate,
        cache_dir=cache_dir,
        exact_seams=getattr(args, "exact_seams", False),
    )
    texts = [args.start, *args.via, args.goal]
    roles = ["start"] + ["via point"] * len(args.via) + ["goal"]
    stops = [planner.point(t, snap=args.snap, role=r) for t, r in zip(texts, roles, strict=False)]
    physics = _physics_planner(args, planner, drape, robot, None if choice is None else choice.posture)
    mechanics = dock = None
    confident = None
    lifted = None
    with _search_progress(planner):  # a bar on stderr for the exact seam search's rounds
        if getattr(args, "confidence", None) is not None:  # dead reckoning: garnav.uncertainty.confidence
            if physics is not None:
                raise QueryError("--confidence plans for length and contact risk only, not yet together with "
                                 "the robot's physics profile: add --no-drape to plan without mechanics, or "
                                 "leave out --confidence (docs/uncertainty.md)")
            from garnav.uncertainty.confidence import confident_route

            route = planner.route(stops[0], stops[-1], via=stops[1:-1])
            confident = confident_route(garment, robot, stops, args.confidence, base_clearance_mm=args.clearance,
                                        locate_3d=locate, first=(planner, route), command_tolerance_mm=tolerance)
            route = confident.route
        elif physics is None:
            route = planner.route(stops[0], stops[-1], via=stops[1:-1])
        else:
            planned = physics.route(stops[0], stops[-1], via=stops[1:-1])
            route, lifted, mechanics = planned.route, planned.lifted, planned.mechanics
            dock = physics.dock_check(planned, stops[-1])
    reports = ()
    if choice is not None and choice.report:
        from garnav.cli._poses import report_poses

        planned_before = planned if physics is not None else None
        route, planned, reports = report_poses(args, choice, as_read, planner, physics, stops, route,
                                               planned_before)
        if physics is not None and planned is not planned_before:  # --robust took another route
            lifted, mechanics = planned.lifted, planned.mechanics
            dock = physics.dock_check(planned, stops[-1])
    print(route_summary(route, args.start, args.goal))
    if confident is not None:
        print("\n".join(confident.lines()))
    for text, pp in zip(texts, stops, strict=False):
        if pp.label.endswith("(snapped)"):
            print(f"note: {text} moved to the nearest free point {pp.piece}:{pp.x:.1f},{pp.y:.1f}")
    search = planner.last_search
    if search is not None and search.limited:  # bounded work (garnav.plan.exact.MAX_SPLIT_WINDOWS)
        from garnav.plan.exact import MAX_SPLIT_WINDOWS

        gap = max(search.cost_mm - search.lower_mm, 0.0)
        print(f"note: --exact-seams: the search stopped at its limit of {MAX_SPLIT_WINDOWS} split seam windows "
              f"before certifying the route; it is at most {gap:.3g} mm ({100.0 * gap / max(search.cost_mm, 1e-9):.2g} %) "
              "longer than the shortest")
    if lifted is None and drape is not None:
        lifted = lift_route(drape, garment, route)
    if lifted is not None:
        print("\n".join(lifted.lines()))
    for rep in reports:
        print(rep.line())
    if mechanics is not None:
        print("\n".join(mechanics.lines()))
        print(dock_line(dock))
        if planned.shortest is not None:
            print(f"note: the shortest route ({planned.shortest_route.length_mm:.1f} mm) is not drivable "
                  f"({planned.shortest.unsafe[0][1]}); this longer one keeps every margin")
    if args.json or args.csv:
        doc = route_document(route, garment, robot, lifted, mechanics, command_tolerance_mm=tolerance)
        if mechanics is not None:
            doc["physics"]["return_to_dock"] = dock
        if reports:
            doc["poses"] = [rep.to_dict() for rep in reports]
        if args.json:
            write_route_json(args.json, doc)
        if args.csv:
            write_route_csv(args.csv, doc)
    if args.commands:
        comment = (f"{args.start} to {args.goal} on garment '{garment.name}', robot '{robot.name}'\n"
                   + precision_comment(tolerance))
        write_commands(args.commands, route_commands(route, garment, robot, tolerance_mm=tolerance), comment=comment)
    if getattr(args, "mcap", None):
        from garnav.recording import McapRecorder

        with McapRecorder(args.mcap) as recording:
            if drape is not None:
                recording.add_mesh(drape)
            recording.add_route(route, lifted)
    if not getattr(args, "quiet", False):
        print("\n".join(caution_lines()), file=sys.stderr)
    return 0


@contextlib.contextmanager
def _search_progress(planner):
    """With ``--exact-seams``, a progress bar on stderr (on a terminal only) for the rounds of the
    certified seam search, which can take a minute on a whole garment: windows added and the gap
    between the route and its lower bound."""
    if not planner.exact_seams:
        yield
        return
    from tqdm import tqdm

    with tqdm(desc="exact seam search", unit="round", leave=False, disable=None) as bar:
        planner.seam_search.progress = lambda rounds, windows, lower, upper: (
            bar.set_postfix_str(f"{windows} windows, gap {upper - lower:.3g} mm"), bar.update(1))
        try:
            yield
        finally:
            planner.seam_search.progress = None


def _physics_planner(args: argparse.Namespace, planner: Planner, drape, robot: Robot, pose_posture: str | None = None):
    """A PhysicsPlanner when the robot has a physics profile and there is a drape; None when
    planning for length only. Physics options without a profile or a drape are refused.
    ``pose_posture`` (a chosen pose's) is the posture when neither --posture nor --gravity is given."""
    asked = [o for o, v in (("--cost", getattr(args, "cost", None)), ("--posture", getattr(args, "posture", None)),
                            ("--gravity", getattr(args, "gravity", None))) if v is not None]
    if robot.physics is None or drape is None:
        if asked and (asked != ["--cost"] or args.cost != "length"):
            why = ("the robot has no physics profile ([robot.physics] in the spec, or --robot ROBOT.toml)"
                   if robot.physics is None else "there is no drape to read slopes from (give --drape MESH)")
            raise QueryError(f"{', '.join(asked)}: {why}; see docs/physics.md")
        return None
    from garnav.mechanics.gravity import parse_gravity
    from garnav.mechanics.planning import PhysicsPlanner

    posture, g = parse_gravity(getattr(args, "gravity", None), getattr(args, "posture", None) or
                               (None if getattr(args, "gravity", None) else pose_posture))
    return PhysicsPlanner(planner, drape, gravity=g, posture=posture, cost=getattr(args, "cost", None) or "length")


def dock_line(dock: dict | None) -> str:
    """One summary line about the way back to the nearest dock."""
    if dock is None:
        return "dock      no dock landmark to return to (or the route ends on it)"
    if dock["reachable"]:
        return (f"dock      '{dock['dock']}' still reachable: {dock['length_mm']:.0f} mm, "
                f"{dock['energy_j']:.1f} J, {100 * dock['charge_left_fraction']:.1f} % charge left after it")
    return f"dock      '{dock['dock']}' NOT reachable after this route: {dock['reason']}"


def _garment_and_drape(args: argparse.Namespace, cache_dir: Path | None = None):
    """The garment and the drape to lift onto: --drape MESH, else the spec's own drape (when it
    names one and --no-drape is not given), else none; a mesh GARMENT is its own drape. A spec's
    drape goes through the drape cache in ``cache_dir`` (None: none)."""
    from garnav.drape.sources import garment_and_drape, is_mesh_path

    given = getattr(args, "drape", None)  # None: not given; "": the spec's own; else a mesh file
    if is_mesh_path(args.garment):
        if getattr(args, "no_drape", False):
            raise QueryError(f"--no-drape: {args.garment} is a mesh, which is its own drape")
        return garment_and_drape(args.garment)
    if getattr(args, "no_drape", False):
        return garment_and_drape(args.garment, None)
    if given is not None:
        return garment_and_drape(args.garment, given, cache_dir=cache_dir)
    try:
        return garment_and_drape(args.garment, "", optional=True, cache_dir=cache_dir)
    except MeshError as exc:
        raise MeshError(f"{exc} (the spec names this drape; --no-drape plans without it)") from None


def route_summary(route: Route, start: str, goal: str) -> str:
    """A short table: length, cost, seams crossed, turns, driving time."""
    seams = ", ".join(route.seams_crossed) if route.crossings else "none"
    rows = [
        ("from", start),
        ("to", goal),
        ("length", f"{route.length_mm:.1f} mm"),
        ("cost", f"{route.cost:.1f} mm"),
        ("seams crossed", f"{len(route.crossings)} ({seams})"),
        ("turns", f"{route.turn_count()} (total {sum(abs(route.turns_deg)):.0f}°)"),
        ("time", f"{route.time_s:.1f} s at {route.speed_mm_s:g} mm/s"),
    ]
    width = max(len(k) for k, _ in rows)
    return "\n".join(f"{k:<{width}}  {v}" for k, v in rows)
