"""``garnav fleet TASKS.toml``: timed, conflict-free schedules for several robots on one garment.

Reads the tasks file (docs/fleet.md), plans with prioritised safe-interval path planning, checks
the result with the independent 10 ms sampler and prints a summary with the smallest distances.
``--json`` writes the schedule document, ``--commands-dir`` one ``garnav-commands`` file per robot
(with ``wait``), ``--gif`` / ``--chart`` / ``--drape-gif`` the pictures. All files are written
atomically.
"""

from __future__ import annotations

import argparse
from pathlib import Path

from garnav.errors import QueryError

__all__ = ["register", "run"]

CAUTION = ("Caution: several magnet-held robots on one wearer multiply the risks — keep magnets away from "
           "implanted devices, robots off the neck and face, batteries protected, and an emergency stop "
           "within reach. garnav plans; it certifies nothing.")


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "fleet",
        help="plan timed, conflict-free schedules for several robots on one garment",
        description="Plan several robots at once: per robot timed waypoints and commands (with "
        "'wait'), no two robots closer than their radii plus the gap at any time, within a piece "
        "and across seams. Meetings put robots side by side or queue them at a dock. The schedule "
        "is checked by sampling every 10 ms; the smallest distances are printed.",
    )
    parser.add_argument("tasks", metavar="TASKS", help="fleet tasks file (.toml, docs/fleet.md)")
    parser.add_argument("--garment", metavar="SPEC", help="garment spec (default: the tasks file's 'garment')")
    parser.add_argument("--json", metavar="OUT", help="write the schedule document (JSON)")
    parser.add_argument("--commands-dir", metavar="DIR", help="write NAME.cmd (garnav-commands) per robot here")
    parser.add_argument("--gif", metavar="OUT", help="write an animation of the robots on the pattern sheet (GIF)")
    parser.add_argument("--drape-gif", metavar="OUT", help="write an animation of the robots on the 3D drape (GIF)")
    parser.add_argument("--chart", metavar="OUT", help="write the space-time chart (PNG or SVG)")
    parser.add_argument("--frames", type=int, default=120, metavar="N", help="most frames per animation (default 120)")
    parser.add_argument("--time-limit", type=float, metavar="S", help="give up after S seconds of planning")
    parser.add_argument("--spacing", type=float, metavar="MM", help="roadmap lattice spacing, mm")
    from garnav.zones.sources import add_ignore_zones_option

    add_ignore_zones_option(parser)
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from garnav.fleet import FleetPlanner, check_schedule
    from garnav.fleet.tasks import read_tasks_toml, tasks_from_dict
    from garnav.spec import load_garment

    data, source = read_tasks_toml(args.tasks)
    spec = args.garment
    if spec is None:
        g = data.get("garment")
        if not isinstance(g, str):
            raise QueryError(f"{source}: top level: no 'garment' path in the file; give one there or with --garment SPEC")
        spec = str(Path(source).parent / g)
    garment = load_garment(spec)
    if garment.body_zones:  # zones become keep-outs through the spec's own drape (docs/zones.md)
        from garnav.zones.sources import apply_zones, ignored_zones_note

        zone_drape = None
        if garment.drape is not None and not getattr(args, "ignore_body_zones", False):
            from garnav.drape.drape import load_drape

            zone_drape = load_drape(garment, folder=str(Path(spec).parent))
        garment = apply_zones(garment, zone_drape, spec, getattr(args, "ignore_body_zones", False))
        if (note := ignored_zones_note(garment, zone_drape)) is not None:
            print(note)
    tasks = tasks_from_dict(data, source, garment.robot)
    planner = FleetPlanner(garment, tasks, spacing_mm=args.spacing)
    schedule = planner.plan(time_limit_s=args.time_limit)
    report = check_schedule(garment, schedule)
    print(f"fleet on '{garment.name}': {len(schedule.plans)} robots, makespan {schedule.makespan_s:.2f} s "
          f"(largest single-robot lower bound {schedule.lower_bound_s:.2f} s), driving {schedule.sum_driving_s:.2f} s "
          f"in all; planned in {schedule.planning_s:.2f} s, priority order {', '.join(schedule.order)} "
          f"({schedule.orders_tried} tried)")
    for p in schedule.plans:
        print(f"  {p.name:<14} depart {p.depart_s:7.2f} s  arrive {p.arrive_s:7.2f} s  drive {p.driving_s:7.2f} s  "
              f"wait {p.waiting_s:6.2f} s  {p.length_mm:8.1f} mm"
              + (f"  {p.energy_j:.1f} J (level)" if p.energy_j is not None else ""))
    print(report.text())
    if args.json:
        from garnav.fleet.document import write_schedule_json

        write_schedule_json(args.json, garment, schedule, report)
    if args.commands_dir:
        from garnav.export.commands import write_commands
        from garnav.fleet.commands import plan_commands

        folder = Path(args.commands_dir)
        folder.mkdir(parents=True, exist_ok=True)
        for p in schedule.plans:
            write_commands(folder / f"{p.name}.cmd", plan_commands(garment, p),
                           comment=f"robot '{p.name}' in a fleet schedule; wait = let others pass")
    if args.gif or args.chart or args.drape_gif:
        from garnav.fleet import pictures

        if args.gif:
            pictures.write_sheet_gif(args.gif, garment, schedule, max_frames=args.frames)
        if args.chart:
            pictures.write_space_time_chart(args.chart, garment, schedule)
        if args.drape_gif:
            from garnav.drape.drape import load_drape

            drape = load_drape(garment, folder=str(Path(spec).parent))
            pictures.write_drape_gif(args.drape_gif, garment, drape, schedule, max_frames=args.frames)
    print(CAUTION)
    return 0 if report.ok else 1
