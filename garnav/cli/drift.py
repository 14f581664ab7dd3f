"""``garnav drift ROUTE.json``: how far the robot drifts along a route and what it may touch.

Linearised covariance propagation and a seeded Monte Carlo of the robot's odometry error model
(``[robot.odometry]``, docs/uncertainty.md): end-point 2σ ellipse, largest cross-track spread and
the probability of touching each keep-out or an open edge. Estimates only: they do not make a
robot safe on a body.
"""

from __future__ import annotations

import argparse
import json

from garnav.atomic import write_text_atomic
from garnav.errors import QueryError

__all__ = ["register", "run"]


def register(subparsers) -> None:
    from garnav.cli._routes import add_garment_option

    parser = subparsers.add_parser(
        "drift",
        help="dead-reckoning drift and contact probabilities along a planned route",
        description="Propagate the robot's odometry errors along a route's commands (linearised "
        "and by a seeded Monte Carlo) and print the end-point 2σ ellipse, the largest cross-track "
        "spread and the probability that the robot's disc touches each keep-out or an open edge. "
        "The error model is the garment robot's [robot.odometry] table (docs/uncertainty.md; the "
        "defaults are invented). An estimate, not a safety case: keep an emergency stop at hand.",
    )
    parser.add_argument("route", metavar="ROUTE.json", help="a garnav-route document (garnav route --json)")
    add_garment_option(parser)
    parser.add_argument("--runs", type=int, default=10_000, metavar="N", help="Monte Carlo runs (default 10000)")
    parser.add_argument("--seed", type=int, default=0, metavar="S", help="random seed (default 0)")
    parser.add_argument("--relocalise", action="store_true", help="use seam bumps to fix the position across each seam")
    parser.add_argument("--json", metavar="OUT", help="write the drift document as JSON")
    from garnav.zones.sources import add_ignore_zones_option

    add_ignore_zones_option(parser)
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from garnav.cli._routes import route_inputs
    from garnav.uncertainty.model import OdometryModel
    from garnav.uncertainty.report import drift_lines, drift_report

    if args.runs < 2 or args.runs > 5_000_000:
        raise QueryError(f"--runs must be within 2..5000000, got {args.runs}")
    from garnav.cli._routes import with_body_zones

    garment, robot, commands, _ = route_inputs(args.route, args.garment)
    # body zones count as keep-outs (contact with an implant or neck zone is the contact that matters)
    garment, note = with_body_zones(garment, args.garment, getattr(args, "ignore_body_zones", False))
    if note:
        print(note)
    model = robot.odometry or OdometryModel()
    doc = drift_report(garment, robot, commands, model, runs=args.runs, seed=args.seed,
                       relocalise=True if args.relocalise else None)
    if robot.odometry is None:
        print("note: the robot profile has no [robot.odometry] table; using the invented defaults")
    print("\n".join(drift_lines(doc)))
    if args.json:
        write_text_atomic(args.json, json.dumps(doc, indent=1) + "\n")
    return 0
