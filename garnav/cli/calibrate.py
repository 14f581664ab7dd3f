"""``garnav calibrate RUNS.toml``: UMBmark wheel-diameter ratio and wheel-base corrections."""

from __future__ import annotations

import argparse
import dataclasses
import math

from garnav.atomic import write_text_atomic

__all__ = ["register", "run"]


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "calibrate",
        help="UMBmark calibration: wheel-diameter ratio and wheel-base corrections from square runs",
        description="Read the measured return-position errors of clockwise and counter-clockwise "
        "square runs (UMBmark, Borenstein & Feng 1996; file format in docs/uncertainty.md) and print "
        "the wheel-diameter ratio and wheel-base corrections; --out writes the corrected robot "
        "profile ([robot] with [robot.odometry]). Run the squares on a flat test surface, not on a "
        "person.",
    )
    parser.add_argument("runs", metavar="RUNS.toml", help="UMBmark runs file")
    parser.add_argument("--garment", metavar="SPEC", help="take the robot profile to correct from this garment spec")
    parser.add_argument("--out", metavar="ROBOT.toml", help="write the corrected robot profile")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from garnav.uncertainty.calibrate import calibrated_robot, read_runs, robot_toml, umbmark
    from garnav.model import Robot

    cw, ccw, side, base = read_runs(args.runs)
    robot = Robot()
    if args.garment:
        from garnav.spec import load_garment

        robot = load_garment(args.garment).robot or Robot()
    if base is not None:
        robot = dataclasses.replace(robot, wheel_base_mm=base)
    res = umbmark(cw, ccw, side, robot.wheel_base_mm)
    new = calibrated_robot(robot, res)
    radius = "straight" if math.isinf(res.radius_mm) else f"{res.radius_mm / 1000.0:.2f} m"
    print(f"runs          {len(cw)} cw, {len(ccw)} ccw on a {side:g} mm square")
    print(f"type A        alpha = {math.degrees(res.alpha_rad):+.4f}° per 90° turn")
    print(f"type B        beta  = {math.degrees(res.beta_rad):+.4f}° per leg (curvature radius {radius})")
    print(f"E_d = D_R/D_L {res.diameter_ratio:.6f}  (left travel x {res.left_scale:.6f}, right x {res.right_scale:.6f})")
    print(f"E_b           {res.wheel_base_ratio:.6f}  (wheel base {robot.wheel_base_mm:g} -> {new.wheel_base_mm:.4f} mm)")
    if args.out:
        write_text_atomic(args.out, robot_toml(new))
        print(f"profile       {args.out}")
    return 0
