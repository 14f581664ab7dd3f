"""Benchmark family ``physics``: planning with a robot physics profile, and lift + mechanics.

* **demo planning** — the demo garment and drape; the demo routes planned for length only
  (``Planner.route``) and with the demo robot's physics profile (``PhysicsPlanner.route``: the
  length-optimal route checked on the drape, the lattice search where it is not drivable). Both
  share one planner build; the ratio compares the query times (the build is reported apart).
* **lift + mechanics** — the ~5,000-point route of the ``lift`` case on its ~100k-triangle drape:
  ``lift_route`` followed by ``route_mechanics`` (force balance, margins, energy per segment).
"""

from __future__ import annotations

import dataclasses
from typing import Any

import numpy as np

from benchmarks import cases as C
from benchmarks.measure import summary, timed

__all__ = ["run_physics"]


def run_physics(opts, log) -> dict[str, Any]:
    """Both physics cases; see the module docstring."""
    out: dict[str, Any] = {"kind": "physics"}
    try:
        out["demo_planning"] = _demo_planning(opts)
    except Exception as exc:  # report, do not stop the run
        out["demo_planning"] = {"error": f"{type(exc).__name__}: {exc}"[:600]}
    try:
        out["lift_mechanics"] = _lift_mechanics(opts)
    except Exception as exc:
        out["lift_mechanics"] = {"error": f"{type(exc).__name__}: {exc}"[:600]}
    return out


def _demo_planning(opts) -> dict[str, Any]:
    from garnav.demo.run import DEMO_ROUTES, demo_scene
    from garnav.drape.inverse import pattern_locator
    from garnav.mechanics.planning import PhysicsPlanner
    from garnav.plan import Planner

    scene = demo_scene()
    garment, drape = scene.garment, scene.drape
    routes = DEMO_ROUTES[:2] + DEMO_ROUTES[-1:] if opts.quick else DEMO_ROUTES
    planner, t_build = timed(lambda: Planner(garment, garment.robot, locate_3d=pattern_locator(drape, garment)))
    planner.route(routes[0][0], routes[0][1])  # warm caches shared by both
    length = [timed(lambda s=s, g=g: planner.route(s, g))[1] for s, g, _ in routes]
    physics = PhysicsPlanner(planner, drape)
    results = []
    times = []
    for s, g, _ in routes:
        planned, dt = timed(lambda s=s, g=g: physics.route(s, g))
        times.append(dt)
        results.append({"route": f"{s} -> {g}", "method": planned.method, "safe": planned.mechanics.safe,
                        "length_mm": planned.route.length_mm, "energy_j": planned.mechanics.total_energy_j})
    t_len, t_phys = float(sum(length)), float(sum(times))
    return {"planner_build_s": t_build, "length_only_s": t_len, "physics_s": t_phys,
            "length_only_per_route_s": length, "physics_per_route_s": times,
            "ratio_queries": t_phys / t_len, "ratio_with_build": (t_build + t_phys) / (t_build + t_len),
            "routes": results}


def _lift_mechanics(opts) -> dict[str, Any]:
    from benchmarks import garnav_side as G
    from garnav.demo.pattern import DEMO_PHYSICS
    from garnav.drape.lift import lift_route
    from garnav.mechanics.evaluate import route_mechanics
    from garnav.mechanics.gravity import gravity_vector
    from benchmarks.run import _lift_garment

    case = C.lift_case(opts.lift_faces, n_query=16, seed=opts.seed)
    garment = _lift_garment(case)
    drape = G.build_drape(garment, case.vertices, case.faces, case.uv)
    offset = np.array([garment.pieces[0].placement.x, garment.pieces[0].placement.y])

    @dataclasses.dataclass
    class _Leg:
        piece: str
        points: np.ndarray

    @dataclasses.dataclass
    class _Route:
        legs: tuple

    route = _Route((_Leg("sheet", case.route - offset),))
    g = gravity_vector("upright")

    def both():
        lifted = lift_route(drape, garment, route)
        return route_mechanics(lifted, drape, DEMO_PHYSICS, g, speed_mm_s=25.0)

    mech, t_first = timed(both)
    times = [timed(both)[1] for _ in range(opts.lift_repeats)]
    lifts = [timed(lambda: lift_route(drape, garment, route))[1] for _ in range(opts.lift_repeats)]
    lifted = lift_route(drape, garment, route)
    mechs = [timed(lambda: route_mechanics(lifted, drape, DEMO_PHYSICS, g, speed_mm_s=25.0))[1]
             for _ in range(opts.lift_repeats)]
    return {"faces": int(len(case.faces)), "points": int(len(mech.length_mm) + 1), "first_call_s": t_first,
            **summary(times), "lift_only": summary(lifts), "mechanics_only": summary(mechs)}
