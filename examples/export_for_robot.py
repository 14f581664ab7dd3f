"""Export a route for a robot and replay its commands to see what the robot will do.

Writes the route document (JSON), its waypoint table (CSV) and the turn-and-go command text, reads
the command text back as the robot would, and replays it on the flat pattern: every turn, every
straight drive, every seam crossing, and where the robot ends up — which must be the goal.

    python examples/export_for_robot.py [OUT_DIR] [--from POINT] [--to POINT]
"""

from __future__ import annotations

import argparse
import math
import tempfile
from pathlib import Path

from garnav.demo.run import demo_scene
from garnav.drape import lift_route
from garnav.drape.inverse import pattern_locator
from garnav.export.commands import Cross, Go, Turn, read_commands, route_commands, write_commands
from garnav.export.replay import replay_commands
from garnav.export.waypoints import route_document, write_route_csv, write_route_json
from garnav.plan import Planner
from garnav.zones import with_zone_keepouts


def main(argv=None) -> dict:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("out", nargs="?", help="output folder (default: a new temporary folder)")
    parser.add_argument("--from", dest="start", default="wrist_right", help="start point (default wrist_right)")
    parser.add_argument("--to", dest="goal", default="scapula_right",
                        help="goal point (default scapula_right, a body landmark)")
    args = parser.parse_args(argv)
    out = Path(args.out) if args.out else Path(tempfile.mkdtemp(prefix="garnav-example-"))

    scene = demo_scene()
    drape, robot = scene.drape, scene.garment.robot
    garment = with_zone_keepouts(scene.garment, drape)  # the demo's body zones kept out (docs/zones.md)
    planner = Planner(garment, robot, locate_3d=pattern_locator(drape, garment))
    route = planner.route(args.start, args.goal)
    doc = route_document(route, garment, robot, lift_route(drape, garment, route))
    stem = f"{args.start}_to_{args.goal}"
    json_path = write_route_json(out / f"{stem}.json", doc)
    csv_path = write_route_csv(out / f"{stem}.csv", doc)
    cmd_path = write_commands(out / f"{stem}.cmd", route_commands(route, garment, robot),
                              comment=f"{args.start} to {args.goal}, robot '{robot.name}'")
    for path in (json_path, csv_path, cmd_path):
        print(f"wrote {path}")

    # what the robot reads, and what it will do with it
    commands = read_commands(cmd_path)
    s = commands.start
    print(f"\nstart on {s.piece} at ({s.x_mm:.1f}, {s.y_mm:.1f}) mm facing {s.heading_deg:.1f}°")
    for c in commands.commands:
        if isinstance(c, Turn):
            print(f"  turn {'left' if c.angle_deg > 0 else 'right'} {abs(c.angle_deg):.1f}°")
        elif isinstance(c, Go):
            print(f"  drive {c.distance_mm:.1f} mm")
        elif isinstance(c, Cross):
            print(f"  (the next drive crosses seam {c.seam} after {c.at_mm:.1f} mm at {c.angle_deg:.0f}°, "
                  f"{c.lead} wheel first)")
    replay = replay_commands(garment, commands)
    for x in replay.crossings:
        print(f"replay: crossed {x.seam} from {x.from_piece} to {x.to_piece} after {x.travelled_mm:.1f} mm")
    end, goal = replay.end, doc["waypoints"][-1]
    miss = math.hypot(end.x_mm - goal["x"], end.y_mm - goal["y"]) if end.piece == goal["piece"] else math.inf
    print(f"replay: ends on {end.piece} at ({end.x_mm:.1f}, {end.y_mm:.1f}) mm after {replay.distance_mm:.1f} mm; "
          f"the planned goal is {miss:.2g} mm away")
    print(f"estimated time {doc['summary']['estimated_time_s']:.1f} s at {robot.speed_mm_s:g} mm/s")
    return {"document": doc, "replay": replay, "miss_mm": miss,
            "files": [Path(json_path), Path(csv_path), Path(cmd_path)]}


if __name__ == "__main__":
    main()
