"""``garnav demo``: the built-in sensing-top demo.

``garnav demo`` builds the demo garment in memory, checks it and prints a summary.
``garnav demo --rebuild [--out DIR]`` writes the demo files (spec, drape mesh, mannequin mesh).
"""

from __future__ import annotations

import argparse
from pathlib import Path

from garnav.errors import GarnavError

__all__ = ["register", "run", "CAUTIONS"]

CAUTIONS = (
    "Safety cautions:",
    "  - Holding magnets can disturb implanted medical devices (pacemakers, defibrillators, pumps,",
    "    shunt valves); keep them away from such a device and its wearer's instructions.",
    "  - Keep robots off the neck and face; the demo's neckline margin is not a safety zone.",
    "  - Charge and store batteries as their maker says; stop on heat, swelling or smell.",
    "  - Applicable standards and qualified professionals decide what is safe on a person;",
    "    garnav plans routes and certifies nothing.",
)


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "demo",
        help="build the demo sensing top and print a summary; --rebuild writes its files",
        description="The built-in demo: a long-sleeved sensing top on a stylised mannequin.",
    )
    parser.add_argument("--rebuild", action="store_true", help="write the demo spec and meshes")
    parser.add_argument(
        "--out", metavar="DIR", help="folder for --rebuild (default: meshes/ of this checkout)"
    )
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

    with tqdm(total=4, desc="building demo", unit="step", leave=False, disable=None) as bar:
        files = build_demo(out, progress=lambda label: (bar.set_postfix_str(label), bar.update(1)))
    print(f"wrote {files.spec}")
    print(f"wrote {files.drape} ({files.vertices} vertices, {files.triangles} triangles)")
    print(f"wrote {files.body}")
    return 0


def _summary() -> int:
    from garnav.demo import demo_garment
    from garnav.spec import garment_problems

    garment = demo_garment()
    print(f"demo garment '{garment.name}': {garment.description}")
    for piece in garment.pieces:
        edges = ", ".join(piece.edge_names)
        print(f"  piece {piece.name:<13} {piece.area / 100.0:8.0f} cm²  edges: {edges}")
    counts = (len(garment.seams), len(garment.keepouts), len(garment.landmarks))
    print("  %d seams, %d keep-outs, %d landmarks" % counts)
    problems = garment_problems(garment, "<demo>")
    print(f"  check: {len(problems)} problem(s)")
    for problem in problems:
        print(f"    - {problem}")
    print("\n".join(CAUTIONS))
    return 1 if problems else 0


def run(args: argparse.Namespace) -> int:
    if args.rebuild:
        return _rebuild(Path(args.out) if args.out else _default_out())
    if args.out:
        raise GarnavError("demo: --out is only used with --rebuild")
    return _summary()
