"""Benchmark case ``poses``: one demo route lifted onto 10 poses of the demo garment.

The poses are the demo drape (``meshes/sensing_top_drape.obj``) moved rigidly 10 ways, seeded
(a random rotation from ``scipy.spatial.transform.Rotation.random`` and a translation of up to
200 mm): each is an exact development of the pattern, with the same UVs, so each links to the same
pieces. The route ``wrist_left → sternum_left`` is planned once on the demo garment with its body
zones as keep-outs (as ``garnav route`` plans it). The drapes are linked before anything is timed.

Measured, with the garbage collector paused (``measure.timed``):

* **garnav: lift onto 10 poses** — :func:`garnav.drape.lift.lift_route_poses` of the route onto
  the 10 drapes (the pattern side of the lift once, the 3D side per pose); median over the
  repeats. The first pass on just-linked drapes (search structures, normals and pattern keys
  still to build) is reported apart (``first_s``). Its results must equal ``lift_route``'s on each
  drape exactly (``identical_to_lift_route``).
* **reference: lift_route per drape** — :func:`garnav.drape.lift_route` onto each of the 10
  drapes, one after the other (warm, and its first pass on other just-linked copies).
* **reference: one drape × 10** — ``lift_route`` 10 times onto one drape.
* **reference: link_drape** — linking one pose's drape (the one-time cost per pose).
* **zones, 10 poses** — :func:`garnav.zones.zone_keepouts` of the demo's body zones on each drape
  (the robust garment's work), timed once.

The issue's target is "lift of one route onto 10 poses < 50 ms": the median against 50 ms (the
ratios to the references are printed beside it).
"""

from __future__ import annotations

import dataclasses
from pathlib import Path
from typing import Any

import numpy as np

from benchmarks.measure import summary, timed

__all__ = ["POSES", "TARGET_S", "pose_meshes", "run_poses"]

#: Poses of the case.
POSES = 10
#: The target: the lift onto every pose, seconds.
TARGET_S = 0.050

_MESHES = Path(__file__).resolve().parent.parent / "meshes"


def pose_meshes(mesh, n: int = POSES, seed: int = 0) -> list:
    """``n`` rigid motions of a UV mesh (positions only; UVs and faces shared), seeded."""
    from scipy.spatial.transform import Rotation

    rng = np.random.default_rng([seed, 31])
    rots = Rotation.random(n, random_state=rng)
    shifts = rng.uniform(-200.0, 200.0, size=(n, 3))
    pos = np.array(mesh.positions, dtype=float)
    return [dataclasses.replace(mesh, positions=rots[k].apply(pos) + shifts[k]) for k in range(n)]


def _same(a, b) -> bool:
    """Two LiftedRoutes equal array for array (exactly)."""
    return all(np.array_equal(getattr(a, k), getattr(b, k)) for k in
               ("points", "normals", "piece_index", "pattern", "face", "bary", "waypoint_index")) and \
        a.max_snap_mm == b.max_snap_mm


def run_poses(opts, log) -> dict[str, Any]:
    out: dict[str, Any] = {"kind": "poses", "poses": POSES}
    from garnav.drape import link_drape
    from garnav.drape.lift import lift_route, lift_route_poses
    from garnav.drape.meshio import load_uv_mesh
    from garnav.plan import Planner
    from garnav.spec import load_garment
    from garnav.zones import zone_keepouts

    garment = load_garment(_MESHES / "sensing_top.toml")
    mesh = load_uv_mesh(_MESHES / "sensing_top_drape.obj")
    meshes = pose_meshes(mesh, POSES, opts.seed)
    base, t_link = timed(lambda: link_drape(garment, mesh))
    planner = Planner(garment.with_keepouts(zone_keepouts(garment, base)), garment.robot)
    route = planner.route(planner.point("wrist_left"), planner.point("sternum_left"))
    repeats = 3 if opts.quick else 15

    def lift_poses(ds):
        return lift_route_poses(ds, garment, route)

    def lift_each(ds):
        return [lift_route(d, garment, route) for d in ds]

    # cold: drapes just linked (their search structures, normals and pattern keys still to build)
    drapes = [link_drape(garment, m) for m in meshes]
    lifted, t_first = timed(lambda: lift_poses(drapes))
    fresh = [link_drape(garment, m) for m in meshes]
    each, t_first_each = timed(lambda: lift_each(fresh))
    # warm: the same drapes again
    t_poses = [timed(lambda: lift_poses(drapes))[1] for _ in range(repeats)]
    t_each = [timed(lambda: lift_each(fresh))[1] for _ in range(repeats)]
    lift_route(base, garment, route)
    t_one = [timed(lambda: [lift_route(base, garment, route) for _ in range(POSES)])[1] for _ in range(repeats)]
    zones, t_zones = timed(lambda: [zone_keepouts(garment, d) for d in drapes])

    ref = lift_route(base, garment, route)
    # rigid poses: every pose's 3D segment lengths are the base drape's (a check, not timed)
    worst = max(float(np.abs(p.segment_length - ref.segment_length).max()) for p in lifted)
    s_poses, s_each, s_one = summary(t_poses), summary(t_each), summary(t_one)
    out.update({
        "faces": int(len(base.faces)),
        "route_mm": float(route.length_mm),
        "lifted_points": int(len(ref.points)),
        "repeats": repeats,
        "identical_to_lift_route": bool(all(_same(a, b) for a, b in zip(lifted, each))),
        "segment_length_worst_diff_mm": worst,
        "reference_link_s": t_link,
        "reference_lift_each_s": s_each,
        "reference_lift_each_first_s": t_first_each,
        "reference_one_drape_x10_s": s_one,
        "garnav": {
            "lift_10_poses_s": s_poses,
            "first_s": t_first,
            "over_lift_each": s_poses["median"] / s_each["median"] if s_each["median"] > 0 else None,
            "over_one_drape": s_poses["median"] / s_one["median"] if s_one["median"] > 0 else None,
            "zones_10_poses_s": t_zones,
            "zone_keepouts": int(sum(len(z) for z in zones)),
        },
    })
    log(f"  poses: lift of {len(ref.points)} points onto {POSES} poses {1e3 * s_poses['median']:.1f} ms "
        f"(first {1e3 * t_first:.1f} ms); lift_route per drape {1e3 * s_each['median']:.1f} ms (first "
        f"{1e3 * t_first_each:.1f} ms); one drape x{POSES} {1e3 * s_one['median']:.1f} ms; link one pose "
        f"{t_link:.2f} s; zones on {POSES} poses {t_zones:.2f} s; identical {out['identical_to_lift_route']}")
    return out
