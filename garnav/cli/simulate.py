"""``garnav simulate ROUTE.json --seed S --log LOG.csv``: a simulated robot's telemetry and truth.

Drives the route's commands with errors sampled from the robot's odometry model and writes what its
sensors would send (docs/telemetry.md) plus the ground truth. A simulation, not a test of a real
robot on a body.
"""

from __future__ import annotations

import argparse
from pathlib import Path

from garnav.errors import QueryError

__all__ = ["register", "run"]


def register(subparsers) -> None:
    from garnav.cli._routes import add_garment_option

    parser = subparsers.add_parser(
        "simulate",
        help="simulate a robot driving a route and write its telemetry log and ground truth",
        description="Drive the route's commands with odometry errors sampled from the robot's "
        "[robot.odometry] model (docs/uncertainty.md) and write the telemetry log a real robot "
        "would send — time, left and right encoder ticks (wrapping counters), gyro rate about the "
        "surface normal, seam-bump flag — and, separately, the ground truth (docs/telemetry.md). "
        "A simulation shows the model, not that a robot is safe on a body.",
    )
    parser.add_argument("route", metavar="ROUTE.json", help="a garnav-route document (garnav route --json)")
    add_garment_option(parser)
    parser.add_argument("--seed", type=int, default=0, metavar="S", help="random seed (default 0)")
    parser.add_argument("--log", required=True, metavar="LOG.csv", help="telemetry CSV to write")
    parser.add_argument("--truth", metavar="TRUTH.csv", help="ground-truth CSV (default: LOG.truth.csv beside the log)")
    parser.add_argument("--rate", type=float, default=10.0, metavar="HZ", help="log rate, Hz (default 10)")
    parser.add_argument("--no-noise", action="store_true", help="switch every error off (drive the plan exactly)")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from garnav.cli._routes import route_inputs
    from garnav.telemetry.logfile import write_log, write_truth
    from garnav.telemetry.simulate import simulate_run
    from garnav.uncertainty.model import OdometryModel

    if not 0.1 <= args.rate <= 1000.0:
        raise QueryError(f"--rate must be within 0.1..1000 Hz, got {args.rate:g}")
    garment, robot, commands, _ = route_inputs(args.route, args.garment)
    model = robot.odometry or OdometryModel()
    sim = simulate_run(garment, robot, commands, model, seed=args.seed, rate_hz=args.rate, noise=not args.no_noise)
    truth_path = args.truth or str(Path(args.log).with_suffix("")) + ".truth.csv"
    write_log(args.log, sim.log)
    write_truth(truth_path, sim.truth)
    t = sim.truth
    print(f"log         {args.log}: {len(sim.log)} rows at {args.rate:g} Hz, {sim.log.time_s[-1]:.1f} s, "
          f"{int(sim.log.seam_bump.sum())} seam bump(s)")
    print(f"truth       {truth_path}: ends {t.piece[-1]}:{t.x_mm[-1]:.1f},{t.y_mm[-1]:.1f} heading {t.heading_deg[-1]:.1f}°")
    piece, x, y, _ = sim.plan.end
    if sim.fell_off:
        print(f"warning: {sim.fell_off}; the log stops there")
    else:
        print(f"plan end    {piece}:{x:.1f},{y:.1f}")
    return 0
