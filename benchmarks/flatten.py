"""Flattening benchmark: one ~20,000-triangle piece through ``garnav.flatten.flatten_surface``.

The case is a spherical cap of angular radius 1 rad (57°) on a 100 mm sphere, 70 rings × 144
points (20,016 triangles) — not developable, so ARAP has real work to do. garnav's time covers
the whole import: cutting (no cut lines here), LSCM, 50 ARAP iterations, the distortion
measures, the sheet layout and the garment derived from the UV-mapped drape.

Reference, measured in the same run on the same mesh: **one sparse solve of the cotangent
Laplacian** (libigl ``cotmatrix``; a harmonic map with the boundary pinned on a circle, i.e. the
linear system of Tutte/Floater-style parametrisation, solved by ``scipy.sparse.linalg.spsolve``).
ARAP costs one factorisation plus one back-substitution per iteration, so the ratio says how
many such solves the whole import is worth.

Target (the issue's): under 5 s for a 20k-triangle piece; the ratio is printed beside it.

    PYTHONPATH=$PWD python -m benchmarks.flatten [--quick] [--json PATH]
"""

from __future__ import annotations

import argparse
import json
import math
from typing import Any

import numpy as np

from benchmarks.measure import timed

__all__ = ["cap_mesh", "run_flatten", "main"]


def cap_mesh(alpha: float, n_rings: int, n_around: int, radius: float = 100.0):
    """(positions (n, 3) mm, faces (m, 3)) of a spherical cap, pole at +z, rings outward."""
    pts = [[0.0, 0.0, radius]]
    for i in range(1, n_rings + 1):
        th = alpha * i / n_rings
        ph = 2 * np.pi * np.arange(n_around) / n_around
        pts += np.column_stack([radius * np.sin(th) * np.cos(ph), radius * np.sin(th) * np.sin(ph),
                                np.full(n_around, radius * np.cos(th))]).tolist()
    faces = [[0, 1 + j, 1 + (j + 1) % n_around] for j in range(n_around)]
    for i in range(1, n_rings):
        a, b = 1 + (i - 1) * n_around, 1 + i * n_around
        for j in range(n_around):
            j1 = (j + 1) % n_around
            faces += [[a + j, b + j, b + j1], [a + j, b + j1, a + j1]]
    return np.array(pts), np.array(faces, dtype=np.int64)


def _laplacian_solve(pos: np.ndarray, faces: np.ndarray) -> np.ndarray:
    """Reference: harmonic map with the boundary on the unit circle, one sparse solve."""
    import igl
    import scipy.sparse.linalg

    lap = -igl.cotmatrix(pos, faces)
    bnd = igl.boundary_loop(faces)
    t = 2 * np.pi * np.arange(len(bnd)) / len(bnd)
    bc = np.column_stack([np.cos(t), np.sin(t)])
    inner = np.setdiff1d(np.arange(len(pos)), bnd)
    a = lap[inner][:, inner].tocsc()
    rhs = -lap[inner][:, bnd] @ bc
    uv = np.zeros((len(pos), 2))
    uv[bnd] = bc
    uv[inner] = scipy.sparse.linalg.spsolve(a, rhs)
    return uv


def run_flatten(quick: bool = False, log=print) -> dict[str, Any]:
    from garnav.flatten import flatten_surface, surface_from_arrays
    from garnav.flatten.cutfile import CutFile

    n_rings, n_around = (20, 36) if quick else (70, 144)
    pos, faces = cap_mesh(1.0, n_rings, n_around)
    surface = surface_from_arrays(pos, faces)
    _laplacian_solve(pos, faces)  # warm-up: imports and first-call setup
    ref, t_ref = timed(lambda: _laplacian_solve(pos, faces))
    flat, t_flat = timed(lambda: flatten_surface(surface, CutFile()))
    d = flat.pieces[0].distortion
    log(f"flatten: {len(faces)} triangles, {t_flat:.3f} s; one cotangent-Laplacian solve "
        f"{t_ref:.3f} s; ratio {t_flat / t_ref:.1f}; worst scale error "
        f"{100 * d.worst_scale_error:.2f} %, scale ratio {d.scale_ratio:.4f} "
        f"(Milnor bound {1.0 / math.sin(1.0):.4f})")
    target = {"target": "flatten a 20k-triangle piece < 5 s", "value": t_flat,
              "status": "N/A" if quick else ("PASS" if t_flat < 5.0 else "MISS")}
    return {"kind": "flatten", "triangles": int(len(faces)), "flatten_s": t_flat,
            "laplacian_solve_s": t_ref, "ratio": t_flat / t_ref,
            "worst_scale_error": d.worst_scale_error, "scale_ratio": d.scale_ratio,
            "targets": [target], "reference_uv_finite": bool(np.all(np.isfinite(ref)))}


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(prog="python -m benchmarks.flatten",
                                 description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--json", metavar="PATH")
    args = ap.parse_args(argv)
    res = run_flatten(args.quick)
    for t in res["targets"]:
        print(f"{t['status']:<5} {t['target']} ({t['value']:.4g} s; {res['ratio']:.1f}× one "
              "Laplacian solve)")
    if args.json:
        from garnav.atomic import write_text_atomic

        write_text_atomic(args.json, json.dumps(res, indent=1) + "\n")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
