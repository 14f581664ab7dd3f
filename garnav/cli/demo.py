"""``garnav demo``: the whole job on the built-in sensing-top demo.

``garnav demo [--out DIR]`` builds the demo garment in memory, plans routes between body landmarks,
lifts them onto the drape and writes route files, a 3D picture, the pattern sheet and a shareable
web page (``plan.html``, docs/page.md) into DIR
(default ``garnav-demo/`` in the current folder), then prints a summary table and the safety
cautions (:func:`garnav.demo.run.run_demo`).
``garnav demo --fleet`` adds the invented three-robot scenario (:mod:`garnav.fleet.scenario`): a
timed, conflict-free schedule with its command files, the robots animated on the pattern sheet and
a space-time chart, in ``DIR/fleet/`` (docs/fleet.md).
``garnav demo --rebuild [--out DIR]`` writes the demo files (spec, drape mesh, mannequin mesh).
"""

from __future__ import annotations

import argparse
import os
import time
from pathlib import Path

from garnav.cautions import caution_lines
from garnav.errors import GarnavError

__all__ = ["register", "run", "CAUTIONS"]

CAUTIONS = tuple(caution_lines())

DEFAULT_OUT = "garnav-demo"


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "demo",
        help="run the whole job on the built-in demo garment; --rebuild writes its spec and meshes",
        description="The built-in demo: a long-sleeved sensing top on a stylised mannequin. Plans "
        "routes between body landmarks, lifts them onto the drape and writes per route the JSON, "
        "CSV and robot commands, a 3D picture (front and back, rendered off-screen) and the "
        "pattern sheet (SVG and PNG) and an offline web page of the plan (plan.html) into --out, then "
        "prints a summary and safety cautions.",
    )
    parser.add_argument("--rebuild", action="store_true", help="write the demo spec and meshes instead")
    parser.add_argument("--fleet", action="store_true",
                        help="also plan the invented three-robot scenario and write its schedule, "
                        "commands, sheet animation (GIF) and space-time chart into DIR/fleet/ (docs/fleet.md)")
    parser.add_argument(
        "--out",
        metavar="DIR",
        help=f"output folder (default: {DEFAULT_OUT}/ in the current folder; with --rebuild: "
        "meshes/ of this checkout)",
    )
    from garnav.cli._routes import add_command_tolerance_option

    add_command_tolerance_option(parser)
    parser.set_defaults(func=run)


def _default_out() -> Path:
    """The checkout's meshes/ folder, or a GarnavError when garnav is not run from a checkout."""
    root = Path(__file__).resolve().parents[2]
    if (
        (root / "pyproject.toml").is_file()
        and (root / "garnav").is_dir()
        and (root / ".git").exists()
    ):
        return root / "meshes"
    raise GarnavError(
        "demo --rebuild: not running from a source checkout; give a folder with --out DIR"
    )


def _rebuild(out: Path) -> int:
    from tqdm import tqdm

    from garnav.demo import build_demo

    with tqdm(total=5, desc="building demo", unit="step", leave=False, disable=None) as bar:
        files = build_demo(out, progress=lambda label: (bar.set_postfix_str(label), bar.update(1)))
    print(f"drape mesh {files.drape.name}: {files.vertices} vertices, {files.triangles} triangles")
    return 0


def _fleet(garment, out: Path) -> list[str]:
    """The demo's several-robot scenario (invented): schedule, checker line and files written."""
    from garnav.fleet.scenario import run_fleet_demo

    result = run_fleet_demo(garment, out)
    s = result["schedule"]
    lines = [f"fleet: {len(s.plans)} robots, makespan {s.makespan_s:.1f} s — {result['check'].text()}"]
    lines += [f"  {Path(f).relative_to(out.parent)}" for f in result["files"]]
    return lines


def _demo(out: Path, fleet: bool = False, tolerance: float | None = None) -> int:
    from tqdm import tqdm

    from garnav.demo.run import DEMO_STEPS, run_demo, summary_table

    os.environ.setdefault("PYVISTA_OFF_SCREEN", "true")
    began = time.perf_counter()
    with tqdm(total=len(DEMO_STEPS), desc="garnav demo", unit="step", leave=False, disable=None) as bar:
        result = run_demo(out, progress=lambda label: (bar.set_postfix_str(label), bar.update(1)),
                          command_tolerance_mm=tolerance)
    fleet_lines = _fleet(result.garment, out / "fleet") if fleet else []
    seconds = time.perf_counter() - began
    garment = result.garment
    print(f"demo garment '{garment.name}': {len(garment.pieces)} pieces, {len(garment.seams)} seams, "
          f"{len(garment.keepouts)} keep-outs; robot '{result.robot.name}' "
          f"(radius {result.robot.radius_mm:g} mm, {result.robot.speed_mm_s:g} mm/s)")
    print()
    print(summary_table(result))
    if result.poses is not None:
        from garnav.demo.pose_demo import pose_summary_lines

        print()
        print("\n".join(pose_summary_lines(result.poses)))
    print()
    print(f"{len(result.files)} files in {result.out_dir} ({seconds:.1f} s):")
    for r in result.routes:
        print(f"  {r.name}.json / .csv / .cmd  — {r.about}")
    if result.poses is not None:
        p = result.poses
        print(f"  {p.start}_to_{p.goal}.json, {p.start}_to_{p.goal}_robust.json / .cmd  — the same route in "
              "both poses, and the route fine in both (docs/poses.md)")
    for role in ("screenshot", "sheet_svg", "sheet_png", "page", "spec", "drape", "body", "raised_drape",
                 "raised_body"):
        if role in result.files:
            print(f"  {result.files[role].name}")
    if fleet_lines:
        print("\n".join(fleet_lines))
    for note in result.notes:
        print(f"note: {note}")
    spec = result.files["spec"]
    print(f"next: garnav route {spec} --from wrist_left --to omphalion --json route.json")
    print()
    print("\n".join(CAUTIONS))
    return 0


def run(args: argparse.Namespace) -> int:
    if args.rebuild:
        return _rebuild(Path(args.out) if args.out else _default_out())
    from garnav.cli._routes import command_tolerance

    tolerance = command_tolerance(args)  # a bad tolerance fails before any work
    return _demo(Path(args.out) if args.out else Path(DEFAULT_OUT), fleet=args.fleet, tolerance=tolerance)
