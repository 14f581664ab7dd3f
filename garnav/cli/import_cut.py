"""The 3D-first side of ``garnav import``: MESH + CUTS.toml → flattened pieces, spec and drape.

Not a sub-command of its own: :mod:`garnav.cli.import_mesh` adds these options to ``garnav
import`` and hands a mesh with ``--cut`` or ``--reflatten`` to :func:`run_cut`.
"""

from __future__ import annotations

import math
import os
from pathlib import Path

from garnav.errors import MeshError, QueryError

__all__ = ["add_cut_arguments", "run_cut", "wants_cut", "report_lines", "DEFAULT_MAX_DISTORTION_PCT"]

#: ``--max-distortion`` default, percent: ``garnav.flatten.DEFAULT_MAX_SCALE_ERROR`` × 100 (kept
#: here so that ``garnav --help`` does not import the flattening code; a test ties the two).
DEFAULT_MAX_DISTORTION_PCT = 2.0


def wants_cut(args) -> bool:
    return bool(getattr(args, "cut", None) or getattr(args, "reflatten", False))


def add_cut_arguments(p) -> None:
    g = p.add_argument_group("3D garment surfaces (docs/import-3d.md)")
    g.add_argument("--cut", metavar="CUTS.toml",
                   help="cut the 3D surface along these seam lines (mesh vertices or 3D points) "
                        "and flatten each piece; the mesh's own UVs are not used")
    g.add_argument("--reflatten", action="store_true",
                   help="ignore the mesh's UV coordinates and flatten anew (with --cut: along its "
                        "seam lines; alone: along the mesh's UV seams)")
    g.add_argument("--method", choices=("arap", "lscm"), default="arap",
                   help="parametrisation: arap (as-rigid-as-possible, Liu et al. 2008, from an "
                        "LSCM start; default) or lscm (least-squares conformal, Lévy et al. 2002)")
    g.add_argument("--drape-out", metavar="DRAPE.obj",
                   help="where to write the UV-mapped drape (default: SPEC_drape.obj beside the "
                        "spec)")
    g.add_argument("--max-distortion", type=float, default=DEFAULT_MAX_DISTORTION_PCT,
                   metavar="PCT",
                   help="refuse a piece whose worst local length scale is off by more than this "
                        f"(percent; default {DEFAULT_MAX_DISTORTION_PCT:g})")
    g.add_argument("--warn-only", action="store_true",
                   help="write the files even when a piece is above --max-distortion (warn)")


def report_lines(flat, limit: float) -> list[str]:
    """The distortion and seam report of a :class:`~garnav.flatten.Flattened`, one line each."""
    lines = ["  piece            triangles  σ min..max (2D/3D)  σ RMS    area scale       "
             "edge ratio       verdict"]
    for p in flat.pieces:
        d = p.distortion
        verdict = "ok" if d.worst_scale_error <= limit else f"OVER {100 * limit:g} %"
        lines.append(
            f"  {p.name:<16} {d.triangles:>9}  {d.sigma_min:.4f}..{d.sigma_max:.4f}    "
            f"{d.sigma_rms:.2e} {d.area_scale_min:.4f}..{d.area_scale_max:.4f}  "
            f"{d.edge_ratio_min:.4f}..{d.edge_ratio_max:.4f}  {verdict} "
            f"(worst {100 * d.worst_scale_error:.2f} %)")
    for s in flat.seams:
        lines.append(f"  seam {s.name}: {s.a.piece}/{s.a.edge} {s.length_a_mm:.1f} mm, "
                     f"{s.b.piece}/{s.b.edge} {s.length_b_mm:.1f} mm, 3D {s.length_3d_mm:.1f} mm")
    return lines


def run_cut(args) -> int:
    from garnav.drape.meshio import save_obj
    from garnav.flatten import flatten_surface, load_cut_file, load_surface
    from garnav.spec import save_garment

    if args.seams or args.propose_seams:
        raise QueryError("--seams and --propose-seams are for pattern files (.dxf, .svg); with "
                         "--cut the seams are the cut lines")
    if args.uv_scale is not None:
        raise QueryError("--uv-scale does not apply with --cut or --reflatten: the flattened "
                         "pieces are laid out in mm")
    if not (math.isfinite(args.max_distortion) and args.max_distortion > 0):
        raise QueryError(f"--max-distortion: expected a percentage > 0, got {args.max_distortion}")
    limit = args.max_distortion / 100.0
    cut_file = load_cut_file(args.cut) if args.cut else None
    flip = cut_file is not None and cut_file.normals == "inward"
    surface = load_surface(args.mesh, flip=flip, keep_uv=True)
    if surface.corner_uv is not None and cut_file is not None and not args.reflatten:
        raise MeshError(f"{args.mesh}: the mesh has texture coordinates (UVs); --cut would replace "
                        "them: add --reflatten to ignore them, or import it without --cut to use "
                        "them as the pattern")
    out = Path(args.output)
    drape_path = Path(args.drape_out) if args.drape_out else out.with_name(out.stem + "_drape.obj")
    rel = Path(os.path.relpath(drape_path.resolve(), out.resolve().parent)).as_posix()
    flat = flatten_surface(surface, cut_file, reflatten=args.reflatten, method=args.method,
                           name=args.name or Path(args.mesh).stem, drape=rel)
    garment = flat.garment
    w, h = garment.sheet_size_mm
    head = (f"{out}: {len(garment.pieces)} pieces, {len(garment.seams)} seams, "
            f"{len(garment.open_runs())} open edges; sheet {w:.1f} × {h:.1f} mm; "
            f"flattened with {args.method}")
    over = flat.over(limit)
    lines = report_lines(flat, limit)
    notes = [f"  note: {n}" for n in flat.notes]
    if over and not args.warn_only:
        print("\n".join([head.replace(f"{out}:", f"{args.mesh}:", 1)] + lines + notes))
        names = ", ".join(f"'{p.name}' ({100 * p.distortion.worst_scale_error:.2f} %)" for p in over)
        raise MeshError(
            f"{args.mesh}: piece(s) {names} distort lengths by more than --max-distortion "
            f"{args.max_distortion:g} %, so the pattern would not be a faithful map for the robot; "
            "nothing written (add cuts along more seam lines, or pass --warn-only to write anyway)")
    save_obj(flat.mesh, drape_path)
    save_garment(garment, out)
    print("\n".join([head, f"  drape: {drape_path}"] + lines + notes))
    for p in over:
        print(f"  warning: piece '{p.name}' distorts lengths by "
              f"{100 * p.distortion.worst_scale_error:.2f} % (> {args.max_distortion:g} %); "
              "routes planned on it are off by up to that much")
    return 0
