"""Drape speed: point location, lifting and 3D → pattern against reference methods, same run.

Run: ``PYTHONPATH=. python benchmarks/drape_bench.py [--triangles 100000]``. Prints rates and the
ratio to a reference library doing the same job (shapely STRtree point-in-triangle queries,
trimesh's closest-point query). Figures depend on the machine; compare ratios, not seconds.
"""

from __future__ import annotations

import argparse
import math
import time

import numpy as np
import shapely
import trimesh

from garnav import Edge, Garment, Piece, Placement
from garnav.drape import link_drape, lift_polyline, surface_to_pattern, uv_mesh_from_arrays
from garnav.drape.inverse import closest_surface_points


def cylinder_drape(n_triangles: int, radius: float = 80.0, length: float = 600.0):
    """A tube piece wrapped on a cylinder, about ``n_triangles`` triangles."""
    circ = 2 * math.pi * radius
    n_along = max(2, int(round(math.sqrt(n_triangles / 2 * length / circ))))
    n_around = max(3, int(round(n_triangles / 2 / n_along)))
    x, y = np.meshgrid(np.linspace(0, circ, n_around + 1), np.linspace(0, length, n_along + 1))
    pattern = np.column_stack([x.ravel(), y.ravel()])
    i, j = np.meshgrid(np.arange(n_around), np.arange(n_along))
    v = (j * (n_around + 1) + i).ravel()
    tris = np.vstack([np.column_stack([v, v + 1, v + n_around + 2]), np.column_stack([v, v + n_around + 2, v + n_around + 1])])
    theta = pattern[:, 0] / radius
    xyz = np.column_stack([radius * np.cos(theta), radius * np.sin(theta), pattern[:, 1]])
    piece = Piece(
        "tube",
        (
            Edge("bottom", ((0.0, 0.0), (circ, 0.0))),
            Edge("right", ((circ, 0.0), (circ, length))),
            Edge("top", ((circ, length), (0.0, length))),
            Edge("left", ((0.0, length), (0.0, 0.0))),
        ),
        placement=Placement(10.0, 10.0),
    )
    sheet = (circ + 20.0, length + 20.0)
    garment = Garment("tube", (piece,), sheet_size_mm=sheet)
    mesh = uv_mesh_from_arrays(xyz, tris, (pattern[tris] + 10.0) / np.array(sheet))
    return garment, link_drape(garment, mesh), circ, length


def timed(fn, *args):
    t = time.perf_counter()
    out = fn(*args)
    return out, time.perf_counter() - t


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--triangles", type=int, default=100_000)
    ap.add_argument("--points", type=int, default=1_000_000)
    args = ap.parse_args()
    rng = np.random.default_rng(0)
    garment, drape, circ, length = cylinder_drape(args.triangles)
    print(f"mesh: {len(drape.faces)} triangles")

    pts = np.column_stack([rng.uniform(0, circ, args.points), rng.uniform(0, length, args.points)])
    drape.locate("tube", pts[:10])  # build the index
    _, dt = timed(drape.locate, "tube", pts)
    ours = args.points / dt
    tree = shapely.STRtree(shapely.polygons(drape.corner_pattern))
    sample = shapely.points(pts[:20_000])
    _, dt_ref = timed(tree.query, sample, "intersects")
    ref = 20_000 / dt_ref
    print(f"point location: {ours:,.0f} points/s; shapely STRtree: {ref:,.0f} points/s; ratio {ours / ref:.1f}x")

    wp = np.column_stack([np.linspace(1, circ - 1, 12), np.where(np.arange(12) % 2, length - 10, 10)])
    path, dt = timed(lift_polyline, drape, "tube", wp)
    print(f"lift: {len(path.face)} dense points in {dt:.3f} s ({len(path.face) / dt:,.0f} points/s)")

    xyz = drape.pattern_to_3d("tube", pts[:20_000]) + rng.normal(0, 1.0, (20_000, 3))
    _, dt = timed(surface_to_pattern, drape, xyz)
    ours = 20_000 / dt
    mesh = trimesh.Trimesh(drape.positions, drape.faces, process=False)
    (_, d_ref, _), dt_ref = timed(trimesh.proximity.closest_point, mesh, xyz[:2000])
    ref = 2000 / dt_ref
    _, d_ours, _ = closest_surface_points(drape, xyz[:2000])
    print(
        f"3D -> pattern: {ours:,.0f} points/s; trimesh closest_point: {ref:,.0f} points/s; "
        f"ratio {ours / ref:.1f}x; largest distance difference {np.abs(d_ours - d_ref).max():.1e} mm"
    )


if __name__ == "__main__":
    main()
