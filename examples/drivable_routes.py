"""Routes the robot can drive: margins, energy and battery in two postures.

The demo robot carries an invented physics profile (mass, magnet hold through the fabric, grip,
drive force, battery; docs/physics.md). A PhysicsPlanner keeps the shortest route when every
segment keeps its grip, hold and drive margins, and otherwise searches a longer drivable one — on
the demo, straight up the chest is too steep for the drive and becomes a switchback. The results
go to ``drivable.json`` in the output folder.

    python examples/drivable_routes.py [OUT_DIR]

Caution: these are estimates from invented figures. Measure your robot on the real fabric, keep
magnets away from implanted medical devices, keep robots off the neck and face, and keep an
emergency stop within reach.
"""

from __future__ import annotations

import argparse
import json
import tempfile
from pathlib import Path

from garnav.atomic import write_text_atomic
from garnav.demo.run import demo_scene
from garnav.drape.inverse import pattern_locator
from garnav.mechanics import PhysicsPlanner
from garnav.plan import Planner
from garnav.zones import with_zone_keepouts

QUERIES = (("omphalion", "sternum_left"), ("wrist_right", "scapula_right"))
POSTURES = ("upright", "supine")


def main(argv=None) -> list[dict]:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("out", nargs="?", help="output folder (default: a new temporary folder)")
    args = parser.parse_args(argv)
    out = Path(args.out) if args.out else Path(tempfile.mkdtemp(prefix="garnav-example-"))

    scene = demo_scene()
    drape = scene.drape
    garment = with_zone_keepouts(scene.garment, drape)  # the demo's body zones kept out (docs/zones.md)
    planner = Planner(garment, garment.robot, locate_3d=pattern_locator(drape, garment))  # built once
    results = []
    for posture in POSTURES:
        physics = PhysicsPlanner(planner, drape, posture=posture)
        for start, goal in QUERIES:
            planned = physics.route(start, goal)
            m = planned.mechanics
            worst, value = m.worst()
            print(f"{posture:>8}  {start} → {goal}: {planned.method}, {planned.route.length_mm:.0f} mm, "
                  f"{m.total_energy_j:.1f} J ({100 * m.battery_used_fraction:.1f} % of the battery), "
                  f"worst margin {worst} {value:.2f}")
            results.append({"posture": posture, "start": start, "goal": goal, "method": planned.method,
                            "length_mm": planned.route.length_mm, "energy_j": m.total_energy_j,
                            "worst_margin": [worst, value], "safe": m.safe})
    write_text_atomic(out / "drivable.json", json.dumps(results, indent=1) + "\n")
    print(f"wrote {out / 'drivable.json'}")
    return results


if __name__ == "__main__":
    main()
