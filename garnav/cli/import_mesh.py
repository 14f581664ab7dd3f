"""``garnav import MESH -o SPEC.toml``: derive a garment spec from a UV-mapped drape mesh.

Pattern files (``.dxf``, ``.svg``) are handed to :mod:`garnav.cli.import_pattern`; a 3D garment
surface to cut and flatten (``--cut CUTS.toml``, ``--reflatten``) to :mod:`garnav.cli.import_cut`.
"""

from __future__ import annotations

import os
from pathlib import Path

from garnav.cli.import_cut import add_cut_arguments, run_cut, wants_cut
from garnav.cli.import_pattern import add_pattern_arguments, is_pattern_file, run_pattern
from garnav.errors import QueryError

__all__ = ["register", "run", "parse_uv_scale"]


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "import",
        help="write a garment spec from a UV-mapped mesh or a pattern file (.dxf, .svg)",
        description=(
            "From a mesh: each UV island becomes a piece (outline = island boundary, mm); boundary "
            "edges that meet in 3D become seams, the others open edges. UV = sheet position / "
            "sheet size. From a pattern file (.dxf in the pattern-exchange layers, .svg in "
            "garnav's classes; docs/pattern-files.md): pieces, notches, grain lines, keep-outs "
            "and landmarks; seams only from --seams. From a 3D garment surface without usable UVs "
            "(--cut CUTS.toml, --reflatten; docs/import-3d.md): cut along the seam lines, flatten "
            "each piece (LSCM, ARAP), report its distortion, write the spec and a UV-mapped drape."
        ),
    )
    p.add_argument("mesh", metavar="FILE",
                   help="UV-mapped triangle mesh (.obj, .gltf, .glb, .ply), mm; or a pattern "
                        "file (.dxf, .svg)")
    p.add_argument(
        "--uv-scale",
        metavar="MM",
        help="sheet size in mm: one number for a square sheet or W,H; "
        "default: fitted so UV edges are as long as 3D edges",
    )
    p.add_argument("-o", "--output", "--out", required=True, metavar="SPEC.toml",
                   help="spec file to write")
    p.add_argument("--name", help="garment name (default: the file's stem)")
    add_pattern_arguments(p)
    add_cut_arguments(p)
    p.set_defaults(func=run)


def parse_uv_scale(text: str | None) -> tuple[float, float] | None:
    """``"1200"`` → (1200, 1200); ``"1600,1200"`` → (1600, 1200); None → None (fit)."""
    if text is None:
        return None
    parts = [t.strip() for t in text.split(",")]
    try:
        vals = [float(t) for t in parts]
    except ValueError:
        raise QueryError(f"--uv-scale: expected MM or W,H in mm, got '{text}'") from None
    if len(vals) == 1:
        vals = vals * 2
    if len(vals) != 2 or not all(v > 0 and v < float("inf") for v in vals):
        raise QueryError(f"--uv-scale: expected one or two positive numbers (mm), got '{text}'")
    return vals[0], vals[1]


def run(args) -> int:
    from garnav.drape.import_mesh import garment_from_mesh
    from garnav.drape.meshio import load_uv_mesh

    from garnav.spec import save_garment

    if is_pattern_file(args.mesh):
        if wants_cut(args):
            raise QueryError("--cut and --reflatten are for 3D meshes; a pattern file is flat already")
        return run_pattern(args)
    if wants_cut(args):
        return run_cut(args)
    if args.seams or args.propose_seams:
        raise QueryError("--seams and --propose-seams are for pattern files (.dxf, .svg); a "
                         "mesh's seams come from its 3D edges")
    scale = parse_uv_scale(args.uv_scale)
    mesh = load_uv_mesh(args.mesh)
    out = Path(args.output)
    drape = os.path.relpath(Path(args.mesh).resolve(), out.resolve().parent)
    garment = garment_from_mesh(
        mesh,
        sheet_size_mm=scale,
        name=args.name or Path(args.mesh).stem,
        drape=Path(drape).as_posix(),
    )
    save_garment(garment, out)
    w, h = garment.sheet_size_mm
    print(
        f"{out}: {len(garment.pieces)} pieces, {len(garment.seams)} seams, "
        f"{len(garment.open_runs())} open edges; sheet {w:.1f} × {h:.1f} mm"
    )
    for note in mesh.notes:
        print(f"  note: {note}")
    return 0
