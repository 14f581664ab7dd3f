"""``garnav check GARMENT``: validate a garment spec and print a summary of it.

Exit status 0 with the summary when the spec is sound; otherwise every problem is printed (by the
dispatcher, from the :class:`~garnav.errors.SpecError`) and the status is 2.
"""

from __future__ import annotations

import argparse

from garnav.spec import load_garment
from garnav.spec.summary import format_summary

__all__ = ["register", "run"]


def register(subparsers: argparse._SubParsersAction) -> None:
    parser = subparsers.add_parser(
        "check",
        help="validate a garment spec (TOML) and summarise its pieces, seams and keep-outs",
        description="Read a garment spec, report every problem in it, or print a summary: pieces, "
        "seams with their ease, open edges, keep-outs, landmarks and the robot.",
    )
    parser.add_argument("garment", metavar="GARMENT", help="garment spec file (.toml)")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    garment = load_garment(args.garment)
    print(f"{args.garment}: no problems found")
    print(format_summary(garment), end="")
    return 0
