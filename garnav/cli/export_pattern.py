"""``garnav export-pattern SPEC.toml --dxf OUT.dxf | --svg OUT.svg``: pieces back to pattern files."""

from __future__ import annotations

from garnav.errors import QueryError

__all__ = ["register", "run"]


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "export-pattern",
        help="write a garment's pieces as a pattern DXF or SVG (to check them in drawing tools)",
        description=(
            "DXF: one block per piece on the pattern-exchange layers (boundary 1, turn points 2, "
            "notches 4, grain 7, keep-outs as internal lines 8, openings 11), mm. SVG: one group "
            "per piece in garnav's classes, 1 user unit = 1 mm. Edge boundaries where the outline "
            "runs on smoothly are written as notches, the others as corners; importing the file "
            "again gives the same pieces (docs/pattern-files.md)."
        ),
    )
    p.add_argument("spec", help="garment spec (TOML)")
    p.add_argument("--dxf", metavar="OUT.dxf", help="write the pieces as DXF")
    p.add_argument("--svg", metavar="OUT.svg", help="write the pieces as SVG")
    p.add_argument("--seams-out", metavar="SEAMS.toml",
                   help="also write the spec's seams as a seams file, for `garnav import --seams`")
    p.add_argument("--corner-angle", type=float, default=30.0, metavar="DEG",
                   help="edge boundaries turning by less than this are written as notches (default 30)")
    p.set_defaults(func=run)


def run(args) -> int:
    from garnav.atomic import write_text_atomic
    from garnav.patterns import write_dxf, write_svg
    from garnav.patterns.seams import seams_file_text
    from garnav.spec import load_garment

    if not (args.dxf or args.svg):
        raise QueryError("give --dxf OUT.dxf, --svg OUT.svg or both")
    if not (0 < args.corner_angle < 180):
        raise QueryError(f"--corner-angle: expected degrees in (0, 180), got {args.corner_angle}")
    garment = load_garment(args.spec)
    if args.dxf:
        write_dxf(garment, args.dxf, args.corner_angle)
        print(f"{args.dxf}: {len(garment.pieces)} pieces (DXF, mm)")
    if args.svg:
        write_svg(garment, args.svg, args.corner_angle)
        print(f"{args.svg}: {len(garment.pieces)} pieces (SVG, 1 unit = 1 mm)")
    if args.seams_out:
        write_text_atomic(args.seams_out, seams_file_text(garment))
        print(f"{args.seams_out}: {len(garment.seams)} seams")
    return 0
