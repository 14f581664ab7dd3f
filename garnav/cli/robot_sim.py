"""``garnav robot-sim --listen URL --garment SPEC --start POINT``: a simulated robot on the link.

Listens on ``udp://127.0.0.1:PORT`` (loopback only) or a serial port, answers a station's hello
with its profile, runs the command lists it receives with the odometry errors of the robot's
``[robot.odometry]`` model (ideal motion without one, or with ``--no-noise``), and streams
telemetry at 10 Hz of simulated time (``--speedup`` runs faster than real time). Bounded by
``--max-seconds`` and ``--quit-after-silence``. ``--log`` writes every message and the ground truth
as JSON lines, ``--truth`` the ground-truth CSV (docs/telemetry.md). Protocol: docs/link.md.
"""

from __future__ import annotations

import argparse
import math

from garnav.errors import QueryError

__all__ = ["register", "run"]

CAUTION = ("Caution: a simulation shows the protocol and the error model, not that a robot is safe on a "
           "body; the safety cautions of garnav station and docs/link.md apply to every real robot.")


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "robot-sim",
        help="run a simulated robot that a station can drive over the link (UDP or serial)",
        description="A simulated robot speaking the garnav-link protocol (docs/link.md): it executes "
        "the commands a station sends, with the dead-reckoning errors of the robot's "
        "[robot.odometry] model (ideal motion without one), and streams encoder and gyro telemetry "
        "at 10 Hz of simulated time. It stops itself when the station goes silent.",
    )
    parser.add_argument("--listen", required=True, metavar="URL",
                        help="udp://127.0.0.1:PORT (loopback only) or serial:///dev/DEVICE?baud=N")
    parser.add_argument("--garment", required=True, metavar="SPEC", help="the garment spec the robot drives on")
    parser.add_argument("--start", required=True, metavar="POINT",
                        help="where it is put down: landmark, PIECE:X,Y (pattern mm) or xyz:X,Y,Z (world mm)")
    parser.add_argument("--heading", type=float, default=90.0, metavar="DEG",
                        help="start heading, degrees counter-clockwise from the piece's +x (default 90: along the grainline)")
    parser.add_argument("--name", metavar="NAME", help="the robot's name in its profile (default: the spec's robot)")
    parser.add_argument("--robot", metavar="ROBOT.toml", help="use this robot file instead of the spec's [robot]")
    parser.add_argument("--speedup", type=float, default=1.0, metavar="X", help="simulated time runs X times faster (default 1)")
    parser.add_argument("--seed", type=int, default=0, metavar="S", help="random seed of the errors (default 0)")
    parser.add_argument("--no-noise", action="store_true", help="ideal motion even when the robot has an odometry model")
    parser.add_argument("--max-seconds", type=float, default=600.0, metavar="S", help="stop after S s of wall time (default 600)")
    parser.add_argument("--quit-after-silence", type=float, metavar="S",
                        help="stop once the station has been silent for S s (after it said hello)")
    parser.add_argument("--loss", type=float, default=0.0, metavar="P", help="drop this fraction of sent datagrams (testing)")
    parser.add_argument("--reorder", type=float, default=0.0, metavar="P", help="swap this fraction of sent datagrams (testing)")
    parser.add_argument("--loss-seed", type=int, default=1, metavar="S", help="seed of --loss and --reorder (default 1)")
    parser.add_argument("--log", metavar="RUN.jsonl", help="write every message and the ground truth (JSON lines)")
    parser.add_argument("--truth", metavar="TRUTH.csv", help="write the ground truth at every sample (CSV)")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    import json
    from pathlib import Path

    import numpy as np

    from garnav.atomic import write_text_atomic
    from garnav.drape.sources import spec_drape_locator
    from garnav.link.robot import SimulatedRobot
    from garnav.link.simserver import serve
    from garnav.link.transport import LossyTransport, open_transport
    from garnav.model import Robot
    from garnav.plan.points import resolve_point
    from garnav.spec import load_garment
    from garnav.telemetry.logfile import Truth, write_truth

    if not (args.speedup > 0 and math.isfinite(args.speedup)):
        raise QueryError(f"--speedup must be a positive number, got {args.speedup:g}")
    if not args.max_seconds > 0:
        raise QueryError(f"--max-seconds must be positive, got {args.max_seconds:g}")
    garment = load_garment(args.garment)
    robot = garment.robot or Robot()
    if args.robot:
        from garnav.spec.robot import load_robot

        robot = load_robot(args.robot)
    start = resolve_point(garment, args.start, locate_3d=spec_drape_locator(garment, Path(args.garment).parent))
    model = None if args.no_noise else robot.odometry
    sim = SimulatedRobot(garment, robot, (start.piece, start.x, start.y, float(args.heading)), model, seed=args.seed)
    transport = open_transport(args.listen, listen=True)
    note = ""
    if args.loss or args.reorder:
        transport = LossyTransport(transport, args.loss, args.reorder, args.loss_seed)
        note = f"injected: {args.loss:.0%} of sent datagrams dropped, {args.reorder:.0%} swapped (seed {args.loss_seed})"
    print(CAUTION, flush=True)
    print(f"robot-sim '{args.name or robot.name}' on {args.listen} at {start.describe()}, heading {args.heading:g}°, "
          f"{'ideal motion' if model is None else 'odometry errors (seed %d)' % args.seed}, speedup {args.speedup:g}",
          flush=True)
    try:
        result = serve(sim, transport, name=args.name, speedup=args.speedup, max_seconds=args.max_seconds,
                       quit_after_silence_s=args.quit_after_silence, loss_note=note)
    except KeyboardInterrupt:
        print("robot-sim: interrupted", flush=True)
        return 130
    finally:
        transport.close()
    print(f"robot-sim: ended after {result.samples} samples: {result.reason}", flush=True)
    if args.log:
        write_text_atomic(args.log, "".join(json.dumps(r, separators=(",", ":")) + "\n" for r in result.records))
    if args.truth:
        rows = [r for r in result.records if "truth" in r and "event" not in r]
        write_truth(args.truth, Truth(np.array([r["sim_s"] for r in rows]), tuple(r["truth"][0] for r in rows),
                                      np.array([r["truth"][1] for r in rows]), np.array([r["truth"][2] for r in rows]),
                                      np.array([r["truth"][3] for r in rows])))
    return 0
