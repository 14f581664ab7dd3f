"""Plan routes between landmarks of a garment with the Python API.

The Planner is built once (free space, visibility graph, seam portals) and then answers many
queries quickly. Each route reports its driving length on the flat pattern, the seams it crosses
and its turns; the results also go to ``routes.json`` in the output folder.

    python examples/route_between_landmarks.py [OUT_DIR] [--spec GARMENT.toml]

Without --spec the built-in demo garment (a sensing top) is used, built in memory.
"""

from __future__ import annotations

import argparse
import json
import tempfile
import time
from pathlib import Path

from garnav.atomic import write_text_atomic
from garnav.plan import Planner

QUERIES = (
    ("wrist_left", "sternum_left"),
    ("wrist_left", "omphalion"),
    ("olecranon_right", "dock"),
    ("acromion_left", "acromion_right"),
)


def load(spec: str | None):
    if spec:
        from garnav.spec import load_garment

        return load_garment(spec)
    from garnav.demo import demo_garment

    return demo_garment()


def main(argv=None) -> list[dict]:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("out", nargs="?", help="output folder (default: a new temporary folder)")
    parser.add_argument("--spec", help="garment spec (.toml); default: the built-in demo garment")
    args = parser.parse_args(argv)
    out = Path(args.out) if args.out else Path(tempfile.mkdtemp(prefix="garnav-example-"))

    garment = load(args.spec)
    t0 = time.perf_counter()
    planner = Planner(garment, garment.robot)  # built once ...
    print(f"planner for '{garment.name}' built in {time.perf_counter() - t0:.2f} s")

    results = []
    for start, goal in QUERIES:  # ... asked many times
        t0 = time.perf_counter()
        route = planner.route(start, goal)
        ms = (time.perf_counter() - t0) * 1000
        seams = route.seams_crossed
        print(f"{start:>15} → {goal:<15} {route.length_mm:7.1f} mm, {len(seams)} seam(s) "
              f"{', '.join(seams) or '-':<40} {route.turn_count()} turn(s), "
              f"{route.time_s:5.1f} s driving  ({ms:.0f} ms to plan)")
        results.append({
            "start": start,
            "goal": goal,
            "length_mm": round(route.length_mm, 3),
            "seams_crossed": list(seams),
            "turns": route.turn_count(),
            "turns_deg": [round(float(t), 3) for t in route.turns_deg],
            "time_s": round(route.time_s, 3),
        })
    path = write_text_atomic(out / "routes.json", json.dumps(results, indent=2) + "\n")
    print(f"wrote {path}")
    return results


if __name__ == "__main__":
    main()
