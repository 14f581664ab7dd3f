"""Cross-seam cases: route optimality against a dense-portal planner, query times, and the
``garnav route`` wall time with a cold and a warm graph cache.

* ``seams_optimality``: the demo garment with buttons and the same queries as ``demo_buttons``
  (same seeded generator). Reference (a) is garnav's own planner with 2 mm portals (10x denser
  than the default 20 mm) and without the branch and bound over seam sequences (A*, refinement
  and the left-out-seam alternatives only), built in the same run. A query passes when the default route is no
  longer than the reference's within 1e-6 relative.
* ``cli_cache``: ``garnav route`` on the demo spec in a subprocess with an empty cache folder
  (cold: builds and writes the graph), then again (warm: reads it), and with ``--no-cache``.
"""

from __future__ import annotations

import subprocess
import sys
import tempfile
import time
from pathlib import Path
from typing import Any

import numpy as np
import shapely

from benchmarks import cases as C
from benchmarks import garnav_side as G
from benchmarks.measure import summary, target_row, timed
from benchmarks.startup import child_env, compile_package

__all__ = ["run_seam_optimality", "run_cli_cache", "seam_targets", "SEAM_TARGETS"]

SEAM_TARGETS = (
    ("seams_optimal_vs_2mm", "every cross-seam demo route no longer than a 2 mm-portal planner's (1e-6 relative)"),
    ("seams_query_median", "demo_buttons query median <= 3x the single_N200 median"),
    ("seams_query_p95", "demo_buttons query p95 <= 6x the single_N200 median"),
    ("cli_warm", "`garnav route` on the demo with a warm cache <= 1.5 s wall"),
    ("cli_cold", "`garnav route` with a cold cache <= build + 1 s"),
)

ROOT = Path(__file__).resolve().parents[1]


def _queries(garment, robot, planner, opts, count: int):
    """The demo_buttons query generator (benchmarks/run.py), replayed: [(start, goal, via)]."""
    rng = np.random.default_rng([opts.seed, 13])
    regions = {p.name: G.free_region(garment, robot, p.name, planner)[0] for p in garment.pieces}
    regions = {k: v for k, v in regions.items() if not v.is_empty}
    names = sorted(regions)

    def point_on(name):
        main = max(shapely.get_parts(regions[name]), key=lambda p: p.area)
        return (name, *C.sample_pairs(main, 1, rng, min_dist_mm=0.0)[0, 0])

    point_on(names[0]), point_on(names[1])  # the warm-up query of run_demo
    out: list[tuple[Any, Any, Any]] = []
    tries = 0
    while len(out) < count and tries < 20 * count:
        tries += 1
        k = 3 if rng.random() < 0.5 else 2
        ends = [point_on(names[i]) for i in rng.choice(len(names), k, replace=False)]
        out.append((ends[0], ends[-1], ends[1:-1]))
    return out


def run_seam_optimality(opts, log) -> dict[str, Any]:
    from benchmarks.run import _demo_with_buttons
    from garnav.plan import Planner

    out: dict[str, Any] = {"kind": "seams", "buttons": opts.demo_buttons}
    garment, robot = _demo_with_buttons(opts.demo_buttons, opts.seed)
    planner, t_build = timed(lambda: Planner(garment, robot))
    dense, t_dense = timed(lambda: Planner(garment, robot, portal_spacing_mm=2.0, seam_sequences=0))
    out["build_s"], out["build_2mm_s"] = t_build, t_dense
    rows: list[dict[str, Any]] = []
    times: list[float] = []
    for start, goal, via in _queries(garment, robot, planner, opts, opts.demo_queries):
        try:
            (route, _), dt = timed(lambda: G.route_points(planner, start, goal, via=via))  # noqa: B023
            (ref, _), _ = timed(lambda: G.route_points(dense, start, goal, via=via))  # noqa: B023
        except Exception as exc:  # NoRouteError: both fail alike
            rows.append({"error": f"{type(exc).__name__}: {exc}"[:200]})
            continue
        nc = len(route.crossings)
        if not 1 <= nc <= 4:
            continue
        times.append(dt)
        found = planner.last_sequences  # the last leg's search (docs/planning.md §4c)
        rows.append({"certified": bool(found is not None and found.certified), "crossings": nc, "length_mm": route.length_mm, "cost": route.cost, "ref_cost": ref.cost,
                     "excess_rel": (route.cost - ref.cost) / ref.cost, "seams": list(route.seams_crossed),
                     "ref_seams": list(ref.seams_crossed), "start": start, "goal": goal, "via": via})
    ok = [r for r in rows if "excess_rel" in r]
    out["queries"] = rows
    out["query"] = summary(times)
    out["excess_rel_max"] = max((r["excess_rel"] for r in ok), default=None)
    out["longer_than_ref"] = sum(r["excess_rel"] > 1e-6 for r in ok)
    out["checked"] = len(ok)
    out["certified"] = sum(bool(r.get("certified")) for r in ok)
    log(f"  seams: {len(ok)} queries ({out['certified']} certified), worst excess {out['excess_rel_max']}, median {out['query'].get('median')}")
    return out


def _wall(cmd: list[str], env: dict[str, str]) -> tuple[float, int]:
    t = time.perf_counter()
    proc = subprocess.run(cmd, env=env, cwd=ROOT, capture_output=True, text=True, timeout=600)
    return time.perf_counter() - t, proc.returncode


def run_cli_cache(opts, log) -> dict[str, Any]:
    args = ["route", "meshes/sensing_top.toml", "--from", "wrist_left", "--to", "sternum_left"]  # cwd=ROOT
    cmd = [sys.executable, "-c", "import sys; from garnav.cli import main; sys.exit(main(sys.argv[1:]))", *args]
    out: dict[str, Any] = {"kind": "cli_cache", "command": " ".join(["garnav", *cmd[-6:]])}
    with tempfile.TemporaryDirectory() as folder:
        env = child_env(GARNAV_CACHE_DIR=folder)
        compile_package()  # garnav's bytecode written first, as an installation does
        out["cold_s"], rc1 = _wall(cmd, env)
        out["warm_s"], rc2 = _wall(cmd, env)
        out["no_cache_s"], rc3 = _wall(cmd + ["--no-cache"], env)
    from garnav.plan import Planner
    from garnav.spec import load_garment

    g = load_garment(ROOT / "meshes" / "sensing_top.toml")
    _, out["build_s"] = timed(lambda: Planner(g))
    out["returncodes"] = [rc1, rc2, rc3]
    log(f"  cli: cold {out['cold_s']:.2f} s, warm {out['warm_s']:.2f} s, no cache {out['no_cache_s']:.2f} s")
    return out


def _t(key, status, value, detail):
    return target_row(SEAM_TARGETS, key, status, value, detail)


def seam_targets(res: dict[str, Any]) -> list[dict[str, Any]]:
    cases = res.get("cases", {})
    out = []
    s = cases.get("seams_optimality")
    if s and s.get("checked"):
        worst = s["excess_rel_max"]
        out.append(_t("seams_optimal_vs_2mm", "PASS" if s["longer_than_ref"] == 0 else "MISS", worst,
                      f"{s['longer_than_ref']} of {s['checked']} queries longer than the 2 mm-portal planner; worst {worst:+.2e}"))
    else:
        out.append(_t("seams_optimal_vs_2mm", "N/A", None, "not run"))
    single = (cases.get("single_N200") or {}).get("garnav", {}).get("query", {}).get("median")
    demo = (cases.get("demo_buttons") or {}).get("garnav", {}).get("query", {})
    for key, stat, limit in (("seams_query_median", "median", 3.0), ("seams_query_p95", "p95", 6.0)):
        v = demo.get(stat)
        if single and v:
            r = v / single
            out.append(_t(key, "PASS" if r <= limit else "MISS", r, f"demo {stat} {v * 1e3:.0f} ms vs single_N200 median {single * 1e3:.1f} ms: {r:.0f}x"))
        else:
            out.append(_t(key, "N/A", None, "demo_buttons or single_N200 not run"))
    c = cases.get("cli_cache")
    if c and c.get("returncodes") == [0, 0, 0]:
        out.append(_t("cli_warm", "PASS" if c["warm_s"] <= 1.5 else "MISS", c["warm_s"], f"warm {c['warm_s']:.2f} s"))
        lim = c["build_s"] + 1.0
        out.append(_t("cli_cold", "PASS" if c["cold_s"] <= lim else "MISS", c["cold_s"],
                      f"cold {c['cold_s']:.2f} s vs build {c['build_s']:.2f} s + 1 s; --no-cache {c['no_cache_s']:.2f} s"))
    else:
        out.append(_t("cli_warm", "N/A", None, "not run"))
        out.append(_t("cli_cold", "N/A", None, "not run"))
    return out
