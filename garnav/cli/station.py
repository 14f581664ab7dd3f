"""``garnav station SPEC --robot NAME=URL ...``: drive robots live — click a spot, the robot goes there.

Opens the pyvista window on the draped garment: each robot's estimated pose (dead-reckoned from
its telemetry on the pattern, lifted onto the drape) with its 2σ uncertainty ellipse, a panel with
battery, margins and progress; click the garment to send the selected robot there; space stops
every robot. ``--headless`` runs without a window: ``--goto NAME:POINT`` (repeatable; several
robots go through the fleet planner) and ``--until-arrived`` exits 0 when every robot arrived.
``--log`` writes every message and event as JSON lines. Protocol and safety: docs/link.md.
"""

from __future__ import annotations

import argparse
from pathlib import Path

from garnav.errors import QueryError

__all__ = ["register", "run", "parse_robot_option", "parse_named_point", "EXIT_CODES"]

EXIT_CODES = ("exit status: 0 every robot arrived (--headless --until-arrived; without it, every plan done) or "
              "the window was closed; 1 a robot did not arrive — lost, an error, a stop, the time limit — and "
              "every robot was stopped; 2 bad input or a link that cannot be opened; 130 interrupted (robots stopped)")


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "station",
        help="the base station: send robots to points on the garment and track them live",
        description="Connect to robots over the garnav-link protocol (UDP on loopback or serial; "
        "docs/link.md), show their estimated poses on the draped garment, plan and send routes to "
        "clicked points, and track them. With --headless there is no window: --goto NAME:POINT "
        "sends each robot, --until-arrived exits 0 only when every robot arrived. Space in the "
        "window, Ctrl+C in the terminal: emergency stop of every robot.",
        epilog=EXIT_CODES,
    )
    parser.add_argument("garment", metavar="SPEC", help="garment spec file (.toml)")
    parser.add_argument("--robot", action="append", required=True, metavar="NAME=URL",
                        help="a robot and its link: udp://127.0.0.1:PORT or serial:///dev/DEVICE?baud=N (repeatable)")
    parser.add_argument("--at", action="append", default=[], metavar="NAME:POINT[@DEG]",
                        help="where a robot was put down (default: what its profile says), heading in degrees")
    parser.add_argument("--goto", action="append", default=[], metavar="NAME:POINT",
                        help="send robot NAME to POINT (landmark, PIECE:X,Y or xyz:X,Y,Z) at start (repeatable)")
    parser.add_argument("--headless", action="store_true", help="no window: send the --goto goals, track, exit")
    parser.add_argument("--until-arrived", action="store_true", help="exit 0 only when every robot arrived (headless)")
    parser.add_argument("--timeout", type=float, default=120.0, metavar="S", help="give up after S s of tracking (default 120)")
    parser.add_argument("--stop-after", type=float, metavar="S", help="emergency stop every robot S s after sending (testing)")
    parser.add_argument("--tolerance", type=float, metavar="MM", help="arrival tolerance of the estimated position, mm (default 5)")
    parser.add_argument("--record", metavar="FILE.mcap", help="write the run as MCAP (ROS 2 messages: mesh, plans, "
                        "estimated poses and tracks; docs/mcap.md; needs garnav[mcap])")
    parser.add_argument("--log", metavar="RUN.jsonl", help="write every message and event (JSON lines)")
    parser.add_argument("--loss", type=float, default=0.0, metavar="P", help="drop this fraction of sent datagrams (testing)")
    parser.add_argument("--reorder", type=float, default=0.0, metavar="P", help="swap this fraction of sent datagrams (testing)")
    parser.add_argument("--loss-seed", type=int, default=2, metavar="S", help="seed of --loss and --reorder (default 2)")
    parser.add_argument("--no-drape", action="store_true", help="do not load the spec's drape (headless, pattern only)")
    from garnav.zones.sources import add_ignore_zones_option

    add_ignore_zones_option(parser)
    cache = parser.add_mutually_exclusive_group()
    cache.add_argument("--cache-dir", metavar="DIR", help="folder of the navigation-graph cache")
    cache.add_argument("--no-cache", action="store_true", help="build the navigation graph afresh")
    parser.set_defaults(func=run)


def parse_robot_option(text: str) -> tuple[str, str]:
    """``NAME=URL`` → (name, url).

    >>> parse_robot_option("ada=udp://127.0.0.1:9870")
    ('ada', 'udp://127.0.0.1:9870')
    """
    name, sep, url = text.partition("=")
    if not sep or not name.strip() or not url.strip():
        raise QueryError(f"--robot '{text}': expected NAME=URL, e.g. ada=udp://127.0.0.1:9870")
    return name.strip(), url.strip()


def parse_named_point(text: str, option: str) -> tuple[str, str]:
    """``NAME:POINT`` → (name, point text); the point keeps its own colons (``front:10,20``).

    >>> parse_named_point("ada:front:10,20", "--goto")
    ('ada', 'front:10,20')
    """
    name, sep, point = text.partition(":")
    if not sep or not name.strip() or not point.strip():
        raise QueryError(f"{option} '{text}': expected NAME:POINT, e.g. ada:sternum_left or ada:front:120,300")
    return name.strip(), point.strip()


def run(args: argparse.Namespace) -> int:
    from garnav.link.transport import LossyTransport, open_transport
    from garnav.station.safety import station_caution_lines

    for line in station_caution_lines():  # once, at start
        print(line, flush=True)
    robots = dict(parse_robot_option(t) for t in args.robot)
    if len(robots) != len(args.robot):
        raise QueryError("--robot: every robot needs its own name")
    goals: dict[str, str] = {}
    for t in args.goto:
        name, point = parse_named_point(t, "--goto")
        if name not in robots:
            raise QueryError(f"--goto '{t}': no robot '{name}' (given: {', '.join(robots)})")
        goals[name] = point
    if args.headless and not goals:
        raise QueryError("--headless needs at least one --goto NAME:POINT")
    if args.until_arrived and not args.headless:
        raise QueryError("--until-arrived belongs to --headless runs")
    garment, drape, locate = _garment(args)
    placements = {}
    for t in args.at:
        name, point = parse_named_point(t, "--at")
        if name not in robots:
            raise QueryError(f"--at '{t}': no robot '{name}' (given: {', '.join(robots)})")
        placements[name] = _placement(garment, point, locate, t)
    transports: dict = {}
    try:
        for name, url in robots.items():
            tr = open_transport(url)
            if args.loss or args.reorder:
                tr = LossyTransport(tr, args.loss, args.reorder, args.loss_seed + len(transports))
            transports[name] = tr
        station = _station(args, garment, transports, placements, locate)
        try:
            if args.headless:
                from garnav.station.headless import run_headless

                status = run_headless(station, goals, until_arrived=args.until_arrived, timeout_s=args.timeout,
                                      stop_after_s=args.stop_after)
            else:
                if drape is None:
                    raise QueryError(f"{args.garment}: the window needs the garment's drape (a 3D mesh); "
                                     "give the spec a drape, or run --headless")
                from garnav.station.window import StationWindow

                station.planner_for()  # built before any robot waits on it
                station.connect()
                window = StationWindow(station, drape)
                for name, point in goals.items():
                    window.select(name)
                    station.goto(name, point)
                status = window.show()
        finally:
            if args.log:
                station.write_log(args.log)
                print(f"wrote {args.log}")
            if getattr(args, "record", None):
                from garnav.station.record import record_station

                count = record_station(args.record, station, drape)
                print(f"wrote {args.record} ({count} estimated poses)")
    finally:
        for tr in transports.values():
            tr.close()
    return status


def _garment(args):
    from garnav.drape.inverse import pattern_locator
    from garnav.drape.sources import garment_and_drape

    from garnav.zones.sources import apply_zones

    if args.no_drape:
        garment, drape = garment_and_drape(args.garment, None)
    else:
        garment, drape = garment_and_drape(args.garment, "", optional=True)
    # body zones become hard keep-outs through the drape: never sent a route through one
    garment = apply_zones(garment, drape, args.garment, getattr(args, "ignore_body_zones", False))
    return garment, drape, (pattern_locator(drape, garment) if drape is not None else None)


def _placement(garment, point: str, locate, text: str):
    from garnav.plan.points import resolve_point

    heading = 90.0
    if "@" in point:
        point, _, h = point.rpartition("@")
        try:
            heading = float(h)
        except ValueError:
            raise QueryError(f"--at '{text}': the heading after @ must be a number of degrees, got {h!r}") from None
    pp = resolve_point(garment, point, locate_3d=locate)
    return (pp.piece, pp.x, pp.y, heading)


def _station(args, garment, transports, placements, locate):
    from garnav.station.controller import ARRIVAL_TOLERANCE_MM, Station

    cache_dir = None
    if not args.no_cache:
        if args.cache_dir:
            cache_dir = Path(args.cache_dir)
        else:
            from garnav.cli.route import default_cache_dir

            cache_dir = default_cache_dir()
    tol = ARRIVAL_TOLERANCE_MM if args.tolerance is None else args.tolerance
    if not tol > 0:
        raise QueryError(f"--tolerance must be positive, got {tol:g}")
    return Station(garment, transports, placements=placements, locate_3d=locate, cache_dir=cache_dir, tolerance_mm=tol)
