"""The pattern-file side of ``garnav import``: PATTERN.dxf or PATTERN.svg → garment spec.

Not a sub-command of its own: :mod:`garnav.cli.import_mesh` adds these options to ``garnav
import`` and hands files ending in ``.dxf`` or ``.svg`` to :func:`run_pattern`.
"""

from __future__ import annotations

from pathlib import Path

from garnav.errors import QueryError

__all__ = ["add_pattern_arguments", "run_pattern", "is_pattern_file"]


def is_pattern_file(path: str) -> bool:
    return Path(path).suffix.lower() in (".dxf", ".svg")


def add_pattern_arguments(p) -> None:
    g = p.add_argument_group("pattern files (.dxf, .svg; docs/pattern-files.md)")
    g.add_argument("--seams", metavar="SEAMS.toml",
                   help="seams file: which edges are sewn together (by edge or by notch pairs)")
    g.add_argument("--propose-seams", metavar="OUT.toml",
                   help="write proposed seams (matched side lengths and notch counts) to this "
                        "seams file for you to check and pass to --seams; nothing is sewn by it")
    g.add_argument("--tolerance", type=float, default=0.1, metavar="MM",
                   help="chord tolerance for flattening curves, mm (default 0.1)")
    g.add_argument("--corner-angle", type=float, default=30.0, metavar="DEG",
                   help="a vertex turning by at least this much is a corner (default 30)")
    g.add_argument("--units", choices=("mm", "cm", "in"),
                   help="DXF: drawing units, when the file does not say or says wrongly")
    g.add_argument("--internal", choices=("keepout", "ignore"), default="keepout",
                   help="DXF: closed internal lines (layer 8) become keep-outs or are skipped")
    g.add_argument("--drill", choices=("keepout", "landmark", "ignore"), default="keepout",
                   help="DXF: drill holes (layer 13) become small keep-outs, landmarks or nothing")


def run_pattern(args) -> int:
    from garnav.patterns import BuildOptions, DxfOptions, SvgOptions, read_pattern
    from garnav.patterns.seams import apply_seams, dumps_seams, load_seams, propose_seams
    from garnav.spec import save_garment

    if not (args.tolerance > 0 and args.tolerance < 100):
        raise QueryError(f"--tolerance: expected a chord tolerance in mm > 0, got {args.tolerance}")
    if not (0 < args.corner_angle < 180):
        raise QueryError(f"--corner-angle: expected degrees in (0, 180), got {args.corner_angle}")
    options: DxfOptions | SvgOptions
    if Path(args.mesh).suffix.lower() == ".dxf":
        options = DxfOptions(tolerance_mm=args.tolerance, units=args.units, internal=args.internal,
                             drill=args.drill)
    else:
        options = SvgOptions(tolerance_mm=args.tolerance)
    built = read_pattern(args.mesh, options, BuildOptions(corner_angle_deg=args.corner_angle))
    garment = built.garment
    if args.name:
        import dataclasses

        garment = dataclasses.replace(garment, name=args.name)
        built = dataclasses.replace(built, garment=garment)
    if args.seams:
        garment = apply_seams(built, load_seams(args.seams), args.seams)
    out = Path(args.output)
    save_garment(garment, out)
    w, h = garment.sheet_size_mm
    print(f"{out}: {len(garment.pieces)} pieces, {len(garment.seams)} seams, "
          f"{len(garment.keepouts)} keep-outs, {len(garment.landmarks)} landmarks; "
          f"sheet {w:.1f} × {h:.1f} mm")
    for pp in built.points:
        piece = garment.piece(pp.piece)
        parts = ", ".join(f"{pt}→{e.name} {e.length:.1f} mm"
                          for pt, e in zip(pp.points, piece.edges, strict=True))
        print(f"  {pp.piece}: {parts}")
    for note in built.notes:
        print(f"  note: {note}")
    proposals = propose_seams(built, taken=garment)
    if args.propose_seams:
        from garnav.atomic import write_text_atomic

        header = (f"Proposed seams for {args.mesh}: check each one, delete the wrong ones, then\n"
                  f"  garnav import {args.mesh} --out {args.output} --seams {args.propose_seams}")
        write_text_atomic(args.propose_seams, dumps_seams(proposals, header))
        print(f"  {len(proposals)} proposed seams written to {args.propose_seams} (not applied)")
    elif proposals and not args.seams:
        print(f"  {len(proposals)} seams could be proposed (edges of matching length and notches); "
              "write them with --propose-seams OUT.toml to check them. No seams were added.")
    return 0
