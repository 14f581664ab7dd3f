"""``garnav check GARMENT``: validate a garment spec and print a summary of it.

Exit status 0 with the summary when the spec is sound; otherwise every problem is printed (by the
dispatcher, from the :class:`~garnav.errors.SpecError`) and the status is 2.
"""

from __future__ import annotations

import argparse
from pathlib import Path

from garnav.spec import load_garment
from garnav.spec.summary import format_summary

__all__ = ["register", "run"]


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "check",
        help="validate a garment spec (TOML) and summarise its pieces, seams and keep-outs",
        description="Read a garment spec, report every problem in it, or print a summary: pieces, "
        "seams with their ease, open edges, keep-outs, landmarks and the robot.",
    )
    parser.add_argument("garment", metavar="GARMENT", help="garment spec file (.toml)")
    parser.add_argument(
        "--drape",
        metavar="MESH",
        nargs="?",
        const="",
        help="also link a UV-mapped drape mesh (default: the spec's drape) and report coverage, "
        "stretch and seam closure",
    )
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    garment = load_garment(args.garment)
    print(f"{args.garment}: no problems found")
    print(format_summary(garment), end="")
    notes = mesh_notes(garment, Path(args.garment).parent)
    if notes:
        print()
        print("\n".join(notes))
    if getattr(args, "drape", None) is not None:
        print()
        print(drape_text(garment, args.drape, Path(args.garment).parent))
    return 0


def drape_text(garment, mesh: str, folder: Path) -> str:
    """The drape report of ``mesh`` (or, when empty, of the spec's own drape) for ``garment``."""
    from garnav.drape import drape_report, load_drape

    drape = load_drape(garment, mesh, str(folder))
    text = drape_report(garment, drape).text()
    if garment.body_zones:  # docs/zones.md
        from garnav.zones.project import zone_report_lines

        text = text.rstrip("\n") + "\n\n" + "\n".join(zone_report_lines(garment, drape))
    return text


def mesh_notes(garment, folder: Path) -> list[str]:
    """One line per mesh file the spec names (drape, body): where it is and whether it exists.

    A missing mesh is not an error here: the pattern is complete without it (planning needs
    no mesh); commands that lift routes to 3D report it as an error.
    """
    notes = []
    for label, rel in (("drape", garment.drape), ("body", garment.body)):
        if rel is None:
            continue
        path = folder / rel
        state = "found" if path.is_file() else "NOT FOUND (needed only for 3D)"
        notes.append(f"{label} mesh: {path}: {state}")
    return notes
