"""Three robots on the demo garment at once: a timed, conflict-free schedule, checked every 10 ms.

    python examples/fleet_demo.py OUT_DIR [--drape]

Writes fleet_schedule.json, one fleet_NAME.cmd per robot (with 'wait'), fleet_sheet.gif (the robots on
the pattern sheet), fleet_chart.png (space-time chart) and, with --drape, fleet_drape.gif (3D).
The scenario is invented (garnav.fleet.scenario). Caution: magnets near implanted devices, robots
away from the neck and face, protected batteries and an emergency stop; garnav certifies nothing.
"""

from __future__ import annotations

import argparse
import tempfile
from pathlib import Path

from garnav.fleet.scenario import run_fleet_demo
from garnav.spec import load_garment

MESHES = Path(__file__).resolve().parents[1] / "meshes"


def main(argv=None) -> dict:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("out", nargs="?", default=None)
    parser.add_argument("--drape", action="store_true", help="also render the 3D animation (slower)")
    parser.add_argument("--frames", type=int, default=40)
    args = parser.parse_args(argv)
    out = Path(args.out or tempfile.mkdtemp(prefix="garnav-fleet-"))
    garment = load_garment(MESHES / "sensing_top.toml")
    drape = None
    if args.drape:
        from garnav.drape.drape import load_drape

        drape = load_drape(garment, folder=str(MESHES))
    result = run_fleet_demo(garment, out, drape=drape, frames=args.frames)
    s = result["schedule"]
    print(f"{len(s.plans)} robots, makespan {s.makespan_s:.1f} s, planned in {s.planning_s:.2f} s")
    for p in s.plans:
        print(f"  {p.name:<8} arrives {p.arrive_s:6.1f} s, waits {p.waiting_s:5.1f} s")
    print(result["check"].text())
    for f in result["files"]:
        print(f"wrote {f}")
    return result


if __name__ == "__main__":
    main()
