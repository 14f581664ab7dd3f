"""Benchmark runner: build the seeded cases, run garnav and the references in one process, report.

Usage::

    python -m benchmarks [--quick] [--cases single,demo,lift,cli] [--json out.json]
                         [--write-md BENCHMARKS.md] [--ref-budget SECONDS] [--seed 0]

Prints a table, the targets with PASS / MISS, and (with ``--json``) writes every figure with the
machine description. Never used as a pass/fail gate in the test suite.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path
from typing import Any

if __package__ in (None, ""):  # run as a script: python benchmarks/run.py
    sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
    __package__ = "benchmarks"

import numpy as np
import shapely

from benchmarks import cases as C
from benchmarks import garnav_side as G
from benchmarks import refs as R
from benchmarks.measure import error_text as _err
from benchmarks.sweep_case import run_sweep
from benchmarks.measure import growth_exponent, machine_info, peak_memory, summary, timed
from benchmarks.report import evaluate_targets, format_report, markdown_report
from benchmarks.single import run_single

ALL_CASES = ("single", "demo", "lift", "cli", "sweep", "drift", "physics", "seams", "chain9", "tiled", "study", "zones", "fuzz",
             "startup", "poses")
FULL_N = (10, 50, 200, 500)
QUICK_N = (2, 4)

class Options:
    def __init__(self, args: argparse.Namespace):
        self.quick = bool(args.quick)
        self.seed = int(args.seed)
        self.ref_budget_s = float(args.ref_budget if args.ref_budget is not None else (20.0 if args.quick else 900.0))
        self.sizes = tuple(args.sizes) if args.sizes else (QUICK_N if self.quick else FULL_N)
        self.n_pairs = args.pairs if args.pairs is not None else (3 if self.quick else 20)
        self.grid_cell_mm = args.grid_cell if args.grid_cell is not None else (10.0 if self.quick else 2.0)
        self.demo_buttons = 0 if self.quick else 200
        self.demo_queries = 2 if self.quick else 20
        self.lift_faces = 2_000 if self.quick else 100_000
        self.lift_queries = 2_000 if self.quick else 100_000
        self.lift_repeats = 3 if self.quick else 15
        self.naive_max_pairs = 50_000 if self.quick else 300_000

    def as_dict(self) -> dict[str, Any]:
        return dict(vars(self))


# --------------------------------------------------------------------------------------------
# demo garment with buttons


def _demo_with_buttons(count: int, seed: int):
    from garnav.demo import demo_garment

    base = demo_garment()
    robot = base.robot or C.ROBOT
    region_of = G.free_regions(base, robot)
    targets = [n for n in ("front", "back", "sleeve_left", "sleeve_right") if n in region_of]
    rng = np.random.default_rng([seed, count, 11])
    weights = np.array([region_of[n].area for n in targets])
    alloc = rng.multinomial(count, weights / weights.sum())
    keepouts = list(base.keepouts)
    for name, k in zip(targets, alloc):
        allowed = region_of[name].buffer(-1.0)
        x0, y0, x1, y1 = allowed.bounds
        keepouts += C.random_keepouts(
            int(k), rng, (x0, y0, x1, y1), name, size_range=(8.0, 16.0), kinds=("circle",),
            allowed=allowed, gap_mm=2.0, name_prefix=f"button_{name}_", keepout_kind="button",
        )
    from dataclasses import replace

    return replace(base, keepouts=tuple(keepouts)), robot


def run_demo(opts: Options, log) -> dict[str, Any]:
    out: dict[str, Any] = {"kind": "demo_garment", "buttons": opts.demo_buttons}
    if not (G.demo_available() and G.planner_available()):
        out["error"] = "garnav.demo.demo_garment or garnav.plan.Planner not importable"
        return out
    garment, robot = _demo_with_buttons(opts.demo_buttons, opts.seed)
    planner, t_build = timed(lambda: G.build_planner(garment, robot))
    out["garnav"] = {"available": True, "build_s": t_build, **G.planner_graph_size(planner)}
    rng = np.random.default_rng([opts.seed, 13])
    regions = {p.name: G.free_region(garment, robot, p.name, planner)[0] for p in garment.pieces}
    regions = {k: v for k, v in regions.items() if not v.is_empty}
    names = sorted(regions)
    times, crossings, lengths, failures = [], [], [], 0
    tries = 0
    def point_on(name):
        main = max(shapely.get_parts(regions[name]), key=lambda p: p.area)
        return (name, *C.sample_pairs(main, 1, rng, min_dist_mm=0.0)[0, 0])

    # untimed warm-up query (lazy imports, caches)
    try:
        _, out["garnav"]["first_query_s"] = timed(lambda: G.route_points(planner, point_on(names[0]), point_on(names[1])))
    except Exception as exc:
        out["garnav"]["first_query_error"] = _err(exc)
    while len(times) < opts.demo_queries and tries < 20 * opts.demo_queries:
        tries += 1
        # two pieces, or three with a via point on the middle one (routes over 3-4 seams)
        k = 3 if rng.random() < 0.5 else 2
        ends = [point_on(names[i]) for i in rng.choice(len(names), k, replace=False)]
        try:
            (route, _), dt = timed(lambda ends=ends: G.route_points(planner, ends[0], ends[-1], via=ends[1:-1]))
        except Exception as exc:  # NoRouteError etc.: count and move on
            failures += 1
            last_error = _err(exc)
            continue
        nc = len(route.crossings)
        if not 1 <= nc <= 4:
            continue
        times.append(dt)
        crossings.append(nc)
        lengths.append(float(route.length_mm))
    out["garnav"]["query"] = summary(times)
    out["garnav"]["crossings"] = {str(k): crossings.count(k) for k in range(1, 5)}
    out["garnav"]["failed_queries"] = failures
    if failures:
        out["garnav"]["last_failure"] = last_error  # noqa: F821 (set when failures > 0)
    out["garnav"]["length_mm"] = lengths
    if not opts.quick:
        _, peak = peak_memory(lambda: G.build_planner(garment, robot))
        out["garnav"]["build_peak_bytes"] = peak
    return out


# --------------------------------------------------------------------------------------------
# lifting and point location


def run_lift(opts: Options, log) -> dict[str, Any]:
    from scipy.spatial import Delaunay

    case = C.lift_case(opts.lift_faces, n_query=opts.lift_queries, seed=opts.seed)
    out: dict[str, Any] = {"kind": "lift", "faces": int(len(case.faces)), "vertices": int(len(case.vertices)),
                           "query_points": int(len(case.query_uv))}
    tri_uv = case.uv[case.faces]
    rng = np.random.default_rng([opts.seed, 17])
    q = case.query_uv[rng.permutation(len(case.query_uv))]  # random order

    # references: Delaunay of the UV vertices (speed reference only), STRtree of triangle polygons
    def delaunay():
        tri = Delaunay(case.uv)
        tri.find_simplex(q[:8])  # scipy sets up its barycentric transforms on the first call
        return tri

    dl, t_dl_build = timed(delaunay)
    simp, t_dl = timed(lambda: dl.find_simplex(q))
    polys = shapely.polygons(tri_uv)
    tree, t_tree_build = timed(lambda: shapely.STRtree(polys))
    qpts = shapely.points(q)
    (qi, ti), t_tree = timed(lambda: tree.query(qpts, predicate="intersects"))
    out["delaunay_find_simplex"] = {"build_s": t_dl_build, "query_s": t_dl, "found": int((simp >= 0).sum())}
    out["strtree_intersects"] = {"build_s": t_tree_build, "query_s": t_tree, "hits": int(len(qi))}

    # 3D length reference: FlipOut geodesics between the route corners (mesh vertices)
    try:
        import potpourri3d as pp3d

        solver, t_fb = timed(lambda: pp3d.EdgeFlipGeodesicSolver(case.vertices, case.faces))

        def geodesics():
            return [solver.find_geodesic_path(int(a), int(b))
                    for a, b in zip(case.route_vertex_ids[:-1], case.route_vertex_ids[1:])]

        paths, t_geo = timed(geodesics)
        out["flipout_geodesic"] = {"build_s": t_fb, "query_s": t_geo,
                                   "length_mm": sum(R.path_length(p) for p in paths),
                                   "length_flat_mm": R.path_length(case.route),
                                   "mesh_isometry_max_edge_diff_mm": _isometry_defect(case)}
    except Exception as exc:
        out["flipout_geodesic"] = {"error": _err(exc)}
    if not G.drape_available():
        out["garnav"] = {"available": False, "error": "garnav.drape not importable"}
        return out
    gar = out["garnav"] = {"available": True}
    try:
        loc, t_loc_build = timed(lambda: G.build_locator(tri_uv))
        face, t_loc = timed(lambda: G.locate(loc, q))
        gar["locate"] = {"build_s": t_loc_build, "query_s": t_loc, "found": int((face >= 0).sum()),
                         "points_per_s": len(q) / t_loc}
        # the located triangle must contain the point (STRtree answers as the outside check)
        hits = np.zeros(len(q), dtype=bool)
        hits[qi[ti == face[qi]]] = True
        gar["locate"]["agrees_with_strtree"] = float(hits[face >= 0].mean()) if (face >= 0).any() else 0.0

        garment = _lift_garment(case)
        drape, t_link = timed(lambda: G.build_drape(garment, case.vertices, case.faces, case.uv))
        offset = np.array([garment.pieces[0].placement.x, garment.pieces[0].placement.y])
        route = case.route - offset  # piece frame
        pts3, t_first = timed(lambda: G.lift(drape, "sheet", route))
        times = [timed(lambda: G.lift(drape, "sheet", route))[1] for _ in range(opts.lift_repeats)]
        length3 = R.path_length(pts3)
        flat = R.path_length(route)
        gar["link_s"] = t_link
        gar["lift"] = {"first_call_s": t_first, **summary(times), "points": int(len(pts3)),
                       "points_per_s": len(pts3) / float(np.median(times)),
                       "length_3d_mm": length3, "length_flat_mm": flat,
                       "rel_diff_3d_vs_flat": (length3 - flat) / flat}
        fo = out["flipout_geodesic"]
        if "length_mm" in fo:
            gar["lift"]["rel_diff_3d_vs_flipout"] = (length3 - fo["length_mm"]) / fo["length_mm"]
        gar["to_pattern"], out["trimesh_closest_point"] = _to_pattern(drape, case, rng)
        gar["verify"], out["trimesh_adjacency_angles"] = _verify(garment, case)
    except Exception as exc:
        gar["error"] = _err(exc)
    return out


def _to_pattern(drape, case: C.LiftCase, rng) -> tuple[dict[str, Any], dict[str, Any]]:
    """3D → pattern: garnav's closest-point search against trimesh's ``closest_point``.

    Points are the drape's vertices pushed off the surface by ~1 mm noise; both must report the
    same distances (the largest difference is recorded).
    """
    import trimesh

    from garnav.drape import surface_to_pattern
    from garnav.drape.inverse import closest_surface_points

    n = min(20_000, len(case.vertices))
    pick = rng.choice(len(case.vertices), n, replace=False)
    xyz = case.vertices[pick] + rng.normal(0.0, 1.0, (n, 3))
    _, t_ours = timed(lambda: surface_to_pattern(drape, xyz))
    m = min(2_000, n)
    mesh = trimesh.Trimesh(case.vertices, case.faces, process=False)
    (_, d_ref, _), t_ref = timed(lambda: trimesh.proximity.closest_point(mesh, xyz[:m]))
    _, d_ours, _ = closest_surface_points(drape, xyz[:m])
    ours = {"points": n, "query_s": t_ours, "points_per_s": n / t_ours,
            "max_distance_diff_mm": float(np.abs(d_ours - d_ref).max())}
    return ours, {"points": m, "query_s": t_ref, "points_per_s": m / t_ref}


def _verify(garment, case: C.LiftCase) -> tuple[dict[str, Any], dict[str, Any]]:
    """Verifying a freshly linked drape (orientation, folds, placement, seams: every fault of
    garnav.drape.verify) against trimesh computing its face-adjacency angles alone (the 3D part of
    the fold test, one reference figure)."""
    import trimesh

    from garnav.drape import link_drape, uv_mesh_from_arrays
    from garnav.drape.verify import drape_faults

    size = np.asarray(garment.sheet_size_mm, dtype=float)
    mesh = uv_mesh_from_arrays(case.vertices, case.faces, (case.uv / size)[case.faces])
    drape = link_drape(garment, mesh, verify=False)
    faults, t_ours = timed(lambda: drape_faults(garment, drape))

    def angles():
        return trimesh.Trimesh(case.vertices, case.faces, process=False).face_adjacency_angles

    _, t_ref = timed(angles)
    return {"faults": len(faults), "verify_s": t_ours}, {"query_s": t_ref}


def _isometry_defect(case: C.LiftCase) -> float:
    """Largest |3D length − UV length| over the mesh edges, mm (0 for an exact development)."""
    e = np.vstack([case.faces[:, [0, 1]], case.faces[:, [1, 2]], case.faces[:, [2, 0]]])
    l3 = np.linalg.norm(case.vertices[e[:, 0]] - case.vertices[e[:, 1]], axis=1)
    l2 = np.linalg.norm(case.uv[e[:, 0]] - case.uv[e[:, 1]], axis=1)
    return float(np.abs(l3 - l2).max())


def _lift_garment(case: C.LiftCase):
    from garnav.model import Edge, Garment, Piece, Placement

    uv = case.uv
    x0, y0 = uv.min(axis=0)
    x1, y1 = uv.max(axis=0)
    w, h = float(x1 - x0), float(y1 - y0)
    piece = Piece(
        "sheet",
        (
            Edge("bottom", ((0.0, 0.0), (w, 0.0))),
            Edge("right", ((w, 0.0), (w, h))),
            Edge("top", ((w, h), (0.0, h))),
            Edge("left", ((0.0, h), (0.0, 0.0))),
        ),
        placement=Placement(float(x0), float(y0)),
    )
    return Garment("prism_drape", (piece,), sheet_size_mm=tuple(float(s) for s in case.sheet_size_mm))


# --------------------------------------------------------------------------------------------
# garnav demo end to end


def run_cli(opts: Options, log) -> dict[str, Any]:
    root = Path(__file__).resolve().parent.parent
    env = dict(os.environ, PYTHONPATH=str(root) + os.pathsep + os.environ.get("PYTHONPATH", ""),
               PYVISTA_OFF_SCREEN="true", VTK_DEFAULT_OPENGL_WINDOW="vtkEGLRenderWindow")
    probe = subprocess.run([sys.executable, "-m", "garnav", "demo", "--help"], capture_output=True, text=True, env=env)
    if probe.returncode != 0:
        return {"kind": "cli", "available": False, "error": "no 'garnav demo' command"}
    out: dict[str, Any] = {"kind": "cli", "available": True}
    with tempfile.TemporaryDirectory() as tmp:
        runs = [["demo"]]
        if "--rebuild" in probe.stdout and "--out" in probe.stdout:
            runs.append(["demo", "--rebuild", "--out", str(Path(tmp) / "out")])
        for k, argv in enumerate(runs):
            cmd = [sys.executable, "-m", "garnav"] + argv
            t0 = time.perf_counter()
            res = subprocess.run(cmd, capture_output=True, text=True, env=env, cwd=tmp)
            dt = time.perf_counter() - t0
            shown = "garnav " + " ".join(a if a != str(Path(tmp) / "out") else "TMP" for a in argv)
            entry = {"command": shown, "seconds": dt, "returncode": res.returncode, "stderr_tail": res.stderr[-400:]}
            if k == 0:
                out.update(entry)
            else:
                out.setdefault("also", []).append(entry)
    return out


# --------------------------------------------------------------------------------------------


def run(opts: Options, which: tuple[str, ...], log=print, checkpoint=None) -> dict[str, Any]:
    """Run the selected case families; returns the full results dictionary.

    ``checkpoint(results)``, when given, is called after every case (partial results survive a
    crash or an interrupt).
    """
    results: dict[str, Any] = {"machine": machine_info(), "settings": opts.as_dict(), "cases": {}}
    save = checkpoint or (lambda _res: None)
    t_all = time.perf_counter()
    if "single" in which:
        history: list[tuple[int, float]] = []
        for n in opts.sizes:
            log(f"case single_N{n} ...")
            try:
                results["cases"][f"single_N{n}"] = run_single(n, opts, history, log)
            except Exception as exc:
                results["cases"][f"single_N{n}"] = {"kind": "single_piece", "n_keepouts": n, "error": _err(exc)}
            save(results)
        sizes = [results["cases"][f"single_N{n}"] for n in opts.sizes]
        growth = {}
        for who in ("garnav", "pyvisgraph", "naive_allpairs"):
            pts = [(c["n_keepouts"], c.get(who, {}).get("build_s")) for c in sizes
                   if c.get(who, {}).get("build_s") is not None and not c.get(who, {}).get("estimated")]
            growth[who] = growth_exponent([p[0] for p in pts], [p[1] for p in pts]) if pts else None
        results["growth_exponent_in_N"] = growth
    if "demo" in which:
        log("case demo_buttons ...")
        try:
            results["cases"]["demo_buttons"] = run_demo(opts, log)
        except Exception as exc:
            results["cases"]["demo_buttons"] = {"kind": "demo_garment", "error": _err(exc)}
        save(results)
    if "lift" in which:
        log("case lift ...")
        try:
            results["cases"]["lift"] = run_lift(opts, log)
        except Exception as exc:
            results["cases"]["lift"] = {"kind": "lift", "error": _err(exc)}
        save(results)
    if "physics" in which:
        from benchmarks.physics import run_physics

        log("case physics (demo planning with a profile; lift + mechanics) ...")
        results["cases"]["physics"] = run_physics(opts, log)
        save(results)
    if "cli" in which:
        log("case garnav demo (subprocess) ...")
        try:
            results["cases"]["demo_cli"] = run_cli(opts, log)
        except Exception as exc:
            results["cases"]["demo_cli"] = {"kind": "cli", "available": False, "error": _err(exc)}
    if "sweep" in which:
        log("case sweep_back ...")
        try:
            results["cases"]["sweep_back"] = run_sweep(opts, log)
        except Exception as exc:
            results["cases"]["sweep_back"] = {"kind": "sweep", "error": _err(exc)}
        save(results)
    if "zones" in which:  # body zones: benchmarks/zones_case.py
        from benchmarks.zones_case import run_zones

        log("case zones_100k ...")
        try:
            results["cases"]["zones_100k"] = run_zones(opts, log)
        except Exception as exc:
            results["cases"]["zones_100k"] = {"kind": "zones", "error": _err(exc)}
        save(results)
    if "poses" in which:  # one route on 10 poses: benchmarks/poses_case.py
        from benchmarks.poses_case import run_poses

        log("case poses (one demo route lifted onto 10 poses) ...")
        try:
            results["cases"]["poses"] = run_poses(opts, log)
        except Exception as exc:
            results["cases"]["poses"] = {"kind": "poses", "error": _err(exc)}
        save(results)
    if "drift" in which:  # dead reckoning: benchmarks/drift.py
        log("case drift ...")
        try:
            from benchmarks.drift import run_drift

            results["cases"]["drift"] = run_drift(opts.quick, opts.seed, log)
        except Exception as exc:
            results["cases"]["drift"] = {"kind": "drift", "error": _err(exc)}
    if "seams" in which:
        from benchmarks.seams import run_cli_cache, run_seam_optimality

        for key, fn in (("seams_optimality", run_seam_optimality), ("cli_cache", run_cli_cache)):
            log(f"case {key} ...")
            try:
                results["cases"][key] = fn(opts, log)
            except Exception as exc:
                results["cases"][key] = {"kind": key, "error": _err(exc)}
            save(results)
    for key in ("chain9", "tiled"):  # multi-piece garments: benchmarks/tiled.py
        if key in which:
            from benchmarks.tiled import run_chain9, run_tiled

            log(f"case {key} ...")
            try:
                results["cases"][key] = (run_chain9 if key == "chain9" else run_tiled)(opts, log)
            except Exception as exc:
                results["cases"][key] = {"kind": key, "error": _err(exc)}
            save(results)
    if "fuzz" in which:  # the reader fuzz at length: benchmarks/fuzz_case.py
        from benchmarks.fuzz_case import run_fuzz

        n = 30 if opts.quick else 1000
        log(f"case fuzz ({n} fuzzed files per reader: spec, route, commands) ...")
        try:
            results["cases"]["fuzz"] = run_fuzz(n, seed=opts.seed, log=log)
        except Exception as exc:
            results["cases"]["fuzz"] = {"kind": "fuzz", "error": _err(exc)}
        save(results)
    if "study" in which:  # many cases on Dask: benchmarks/study_case.py
        from benchmarks.study_case import run_study_case

        log("case study (2,000 demo route queries, serial vs local cluster) ...")
        try:
            results["cases"]["study"] = run_study_case(opts.quick, log=log)
        except Exception as exc:
            results["cases"]["study"] = {"kind": "study", "error": _err(exc)}
        save(results)
    if "startup" in which:  # the command line's start: benchmarks/startup.py
        from benchmarks.startup import run_startup

        log("case startup (garnav --help, --version, a missing spec; against python -c 'import numpy') ...")
        try:
            results["cases"]["startup"] = run_startup(opts, log)
        except Exception as exc:
            results["cases"]["startup"] = {"kind": "startup", "error": _err(exc)}
        save(results)
    results["targets"] = evaluate_targets(results)
    results["total_s"] = time.perf_counter() - t_all
    try:
        results["machine"]["load_average_at_end"] = [round(v, 2) for v in os.getloadavg()]
    except (AttributeError, OSError):
        pass
    return results


def merge_results(old: dict[str, Any], new: dict[str, Any]) -> dict[str, Any]:
    """Cases of ``new`` replace or join those of ``old``; targets and growth are recomputed.

    Each part keeps its own machine description under ``runs`` so a merged report stays honest
    about when and under which load each figure was taken.
    """
    merged = dict(old)
    runs = list(old.get("runs") or [{"machine": old["machine"], "cases": sorted(old.get("cases", {}))}])
    runs.append({"machine": new["machine"], "cases": sorted(new.get("cases", {}))})
    merged["runs"] = runs
    merged["machine"] = new["machine"]
    merged["cases"] = {**old.get("cases", {}), **new.get("cases", {})}
    if "growth_exponent_in_N" in new:
        merged["growth_exponent_in_N"] = new["growth_exponent_in_N"]
    merged["settings"] = {**old.get("settings", {}), **{k: v for k, v in new["settings"].items()}}
    merged["total_s"] = float(old.get("total_s", 0.0)) + float(new.get("total_s", 0.0))
    merged["targets"] = evaluate_targets(merged)
    return merged


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(prog="python -m benchmarks", description=__doc__.split("\n\n")[0])
    ap.add_argument("--quick", action="store_true", help="tiny cases, few queries (seconds; for the smoke test)")
    ap.add_argument("--cases", default=",".join(ALL_CASES),
                    help=f"comma-separated subset of {','.join(ALL_CASES)} (default: all)")
    ap.add_argument("--sizes", type=int, nargs="+", help="keep-out counts N of the single-piece cases")
    ap.add_argument("--pairs", type=int, help="start/goal pairs per single-piece case (default 20)")
    ap.add_argument("--grid-cell", type=float, help="grid A* cell size, mm (default 2)")
    ap.add_argument("--ref-budget", type=float,
                    help="skip a pyvisgraph build predicted to take longer (s) and report the estimate")
    ap.add_argument("--seed", type=int, default=0)
    ap.add_argument("--from-json", metavar="JSON", help="do not run: report (and --write-md) from a results file")
    ap.add_argument("--note", help="free text recorded with the results (e.g. what changed)")
    ap.add_argument("--update", metavar="JSON",
                    help="merge this run's cases into an earlier results file (re-run part of the suite); "
                         "the merged results are what --json / --write-md write")
    ap.add_argument("--json", metavar="PATH", help="write all results as JSON")
    ap.add_argument("--write-md", metavar="PATH", help="write the Markdown report (BENCHMARKS.md)")
    args = ap.parse_args(argv)
    which = tuple(c.strip() for c in args.cases.split(",") if c.strip())
    bad = [c for c in which if c not in ALL_CASES]
    if bad:
        ap.error(f"unknown case(s) {bad}; choose from {list(ALL_CASES)}")
    from garnav.atomic import write_text_atomic

    def dump(res):
        return json.dumps(res, indent=1, default=_jsonable) + "\n"

    if args.from_json:
        results = json.loads(Path(args.from_json).read_text(encoding="utf-8"))
        results["targets"] = evaluate_targets(results)
    else:
        opts = Options(args)
        ckpt = (lambda res: write_text_atomic(args.json + ".partial", dump(res))) if args.json else None
        results = run(opts, which, log=lambda m: print(m, file=sys.stderr, flush=True), checkpoint=ckpt)
    if args.update:
        results = merge_results(json.loads(Path(args.update).read_text(encoding="utf-8")), results)
    if args.note:
        results["note"] = args.note
    if args.json:
        write_text_atomic(args.json, dump(results))
        Path(args.json + ".partial").unlink(missing_ok=True)
    if args.write_md:
        write_text_atomic(args.write_md, markdown_report(results))
    print(format_report(results))
    return 0


def _jsonable(x):
    if isinstance(x, (np.integer,)):
        return int(x)
    if isinstance(x, (np.floating,)):
        return float(x)
    if isinstance(x, np.ndarray):
        return x.tolist()
    raise TypeError(type(x))


if __name__ == "__main__":
    sys.exit(main())
