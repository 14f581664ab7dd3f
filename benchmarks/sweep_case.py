"""Benchmark case ``sweep_back``: a sweep of the demo's whole back panel with a 10 mm swath.

Measured, each once with the garbage collector paused (``measure.timed``):

* **garnav sweep, cold** — ``plan_sweep(garment, "pieces:back", swath_mm=10)`` without a planner:
  it builds the route planner for the garment, then the sweep (cells, lanes, headland lap, joins).
* **garnav sweep, warm** — the same with the planner already built (what a script planning many
  sweeps on one garment pays per sweep).
* **reference: route planner build** — ``Planner(garment, robot)`` on the same garment: the
  one-time cost every garnav route pays, measured in the same run. The sweep is reported as a
  ratio against it.

The issue's target is "planned in under 2 s"; on this machine the planner build takes about 1 s,
so the target is judged as the cold sweep taking at most 2× the reference build (and the absolute
time is printed beside it). The covered fraction of the reachable region is recorded too.
"""

from __future__ import annotations

from typing import Any

from benchmarks.measure import timed

__all__ = ["run_sweep"]


def run_sweep(opts, log) -> dict[str, Any]:
    out: dict[str, Any] = {"kind": "sweep", "region": "pieces:back", "swath_mm": 10.0}
    try:
        from garnav.demo import demo_garment
        from garnav.plan import Planner
        from garnav.sweep import parse_region, plan_sweep
    except ImportError as exc:
        out["error"] = f"garnav sweep not importable: {exc}"
        return out
    garment = demo_garment()
    robot = garment.robot
    region = parse_region("pieces:back")
    planner, t_ref = timed(lambda: Planner(garment, robot))
    sweep, t_cold = timed(lambda: plan_sweep(garment, region, robot, swath_mm=10.0))
    _, t_warm = timed(lambda: plan_sweep(garment, region, swath_mm=10.0, planner=planner))
    out["reference_planner_build_s"] = t_ref
    out["garnav"] = {
        "cold_s": t_cold,
        "warm_s": t_warm,
        "cold_over_reference": t_cold / t_ref if t_ref > 0 else None,
        "warm_over_reference": t_warm / t_ref if t_ref > 0 else None,
        "covered_fraction": sweep.covered_fraction,
        "length_mm": float(sweep.route.length_mm),
        "cells": sweep.cells,
        "lanes": sweep.lanes,
    }
    log(f"  sweep back panel: cold {t_cold:.2f} s, warm {t_warm:.2f} s, planner build {t_ref:.2f} s")
    return out
