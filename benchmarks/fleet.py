"""Fleet benchmark: 2, 4, 8, 16 robots with random tasks on the demo garment.

Usage::

    python benchmarks/fleet.py [--sizes 2 4 8 16] [--seeds 3] [--json benchmarks/results/fleet.json]

For each size and seed: random starts and goals in the demo robot's free space (area-weighted
piece, uniform in it, at least 3 radii from every other start or goal), earliest starts 0–5 s.
Measured in the same run:

* ``build_s`` — :class:`garnav.fleet.FleetPlanner` construction: the single-robot planner, every
  robot's own shortest route (:meth:`garnav.plan.Planner.route`) and the shared roadmap;
* ``plan_s`` — :meth:`~garnav.fleet.FleetPlanner.plan` alone (the multi-robot search): the
  figure the targets (8 robots < 2 s, 16 < 10 s) are about;
* ``makespan / max LB`` — makespan over the largest single-robot lower bound (start time + own
  shortest route at cruise speed); ``sum / sum LB`` — sum of arrival times over the sum of the lower
  bounds (1.0 = nobody waited or detoured);
* ``min gap`` — the independent 10 ms checker's smallest gap between two robots (must be >= the
  2 mm kept) and ``routes_s`` — the reference: the same number of single-robot route queries alone.

Speed targets are reported as figures, never asserted in tests.
"""

from __future__ import annotations

import argparse
import json
import sys
import time
from pathlib import Path

if __package__ in (None, ""):
    sys.path.insert(0, str(Path(__file__).resolve().parent.parent))

import numpy as np
import shapely

from garnav.fleet import FleetError, FleetPlanError, FleetPlanner, FleetTasks, Task, check_schedule
from garnav.plan import PiecePoint, Planner
from garnav.spec import load_garment

MESHES = Path(__file__).resolve().parents[1] / "meshes"
TARGETS = {8: 2.0, 16: 10.0}


def random_points(planner: Planner, n: int, rng, min_dist: float) -> list[PiecePoint]:
    free = planner.free
    names = [p.name for p in planner.garment.pieces]
    areas = np.array([free[p].region.area for p in names])
    out: list[PiecePoint] = []
    while len(out) < n:
        piece = names[rng.choice(len(names), p=areas / areas.sum())]
        region = free[piece].region
        x0, y0, x1, y1 = region.bounds
        x, y = rng.uniform(x0, x1), rng.uniform(y0, y1)
        if not region.covers(shapely.Point(x, y)):
            continue
        # keep away from seams too, so that no pair overlaps through one
        outline = planner.garment.piece(piece).polygon.exterior
        if outline.distance(shapely.Point(x, y)) < min_dist:
            continue
        if any(q.piece == piece and np.hypot(q.x - x, q.y - y) < min_dist for q in out):
            continue
        out.append(PiecePoint(piece, float(x), float(y)))
    return out


def run_case(garment, planner: Planner, n: int, seed: int) -> dict:
    rng = np.random.default_rng(seed)
    robot = garment.robot
    pts = random_points(planner, 2 * n, rng, 3 * robot.radius_mm)
    starts, goals = pts[:n], pts[n:]
    tasks = FleetTasks(tuple(
        Task(f"r{i}", robot, f"{s.piece}:{s.x!r},{s.y!r}", goal=f"{g.piece}:{g.x!r},{g.y!r}",
             start_s=float(rng.uniform(0, 5))) for i, (s, g) in enumerate(zip(starts, goals, strict=True))),
        gap_mm=2.0, time_limit_s=60.0, source=f"random n={n} seed={seed}")
    t0 = time.perf_counter()
    for s, g in zip(starts, goals, strict=True):
        planner.route(s, g)
    routes_s = time.perf_counter() - t0
    t0 = time.perf_counter()
    fp = FleetPlanner(garment, tasks, planners={(robot.radius_mm, robot.edge_margin_mm, robot.side): planner})
    build_s = time.perf_counter() - t0
    row = {"robots": n, "seed": seed, "build_s": build_s, "routes_s": routes_s, "nodes": int(len(fp.roadmap.xy))}
    try:
        schedule = fp.plan()
    except FleetPlanError as exc:
        row.update(plan_s=time.perf_counter() - t0 - build_s, failed=str(exc)[:200])
        return row
    rep = check_schedule(garment, schedule)
    lbs = [p.lower_bound_s for p in schedule.plans]
    row.update(
        plan_s=schedule.planning_s,
        orders=schedule.orders_tried,
        makespan_s=schedule.makespan_s,
        makespan_over_lb=schedule.makespan_s / max(lbs),
        sum_over_sum_lb=sum(p.arrive_s for p in schedule.plans) / sum(lbs),
        min_gap_mm=rep.min_gap_mm,
        check_ok=rep.ok,
    )
    return row


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", type=int, nargs="+", default=[2, 4, 8, 16])
    ap.add_argument("--seeds", type=int, default=3)
    ap.add_argument("--json", type=str, default=None)
    args = ap.parse_args(argv)
    garment = load_garment(MESHES / "sensing_top.toml")
    t0 = time.perf_counter()
    planner = Planner(garment, garment.robot)
    print(f"single-robot planner built in {time.perf_counter() - t0:.2f} s")
    rows = []
    head = f"{'robots':>6} {'seed':>4} {'build s':>8} {'routes s':>8} {'plan s':>7} {'orders':>6} {'mksp/LB':>7} {'sum/LB':>7} {'min gap':>8}"
    print(head)
    for n in args.sizes:
        for seed in range(args.seeds):
            try:
                row = run_case(garment, planner, n, 1000 * n + seed)
            except FleetError as exc:
                row = {"robots": n, "seed": seed, "failed": str(exc)[:200]}
            rows.append(row)
            if "makespan_s" in row:
                print(f"{n:>6} {seed:>4} {row['build_s']:8.2f} {row['routes_s']:8.2f} {row['plan_s']:7.2f} {row['orders']:>6} "
                      f"{row['makespan_over_lb']:7.3f} {row['sum_over_sum_lb']:7.3f} {row['min_gap_mm']:8.2f}")
            else:
                print(f"{n:>6} {seed:>4} failed: {row.get('failed')}")
    print("targets (plan_s, median over seeds):")
    for n, limit in TARGETS.items():
        got = [r["plan_s"] for r in rows if r["robots"] == n and "plan_s" in r]
        if got:
            med = float(np.median(got))
            print(f"  {n} robots: {med:.2f} s vs {limit:g} s: {'PASS' if med < limit else 'MISS'}")
    if args.json:
        Path(args.json).write_text(json.dumps({"rows": rows, "targets": TARGETS}, indent=1) + "\n")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
