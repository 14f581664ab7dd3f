"""The single-piece benchmark case: garnav's planner against pyvisgraph, a naive all-pairs
visibility graph and grid A* on the same seeded panel and query pairs (run by
:mod:`benchmarks.run`). One function per phase; each adds its figures to the case's record."""

from __future__ import annotations

from typing import Any

import networkx as nx
import numpy as np
import shapely

from benchmarks import cases as C
from benchmarks import garnav_side as G
from benchmarks import refs as R
from benchmarks.measure import error_text as _err
from benchmarks.measure import growth_exponent, peak_memory, summary, timed

__all__ = ["run_single"]

# pyvisgraph build time model for budgeting before any measurement: t ≈ c · V^2 (V vertices);
# c measured here at 1.1e-5 – 1.5e-5 s on V = 341 … 1753 (a rough prior, replaced by a fit as soon
# as two sizes have been measured in the run).
_PV_PRIOR_C = 1.5e-5


def _pv_predict(measured: list[tuple[int, float]], v: int) -> float:
    if len(measured) >= 2:
        k = growth_exponent([m[0] for m in measured], [m[1] for m in measured]) or 2.0
        v0, t0 = measured[-1]
        return t0 * (v / v0) ** max(k, 1.0)
    if measured:
        v0, t0 = measured[-1]
        return t0 * (v / v0) ** 2
    return _PV_PRIOR_C * v * v


def run_single(n: int, opts, pv_history: list[tuple[int, float]], log) -> dict[str, Any]:
    """One single-piece case with ``n`` keep-outs: garnav and every reference on the same pairs."""
    case = C.single_piece_case(n, opts.seed)
    g, robot = case.garment, case.robot
    out: dict[str, Any] = {"kind": "single_piece", "n_keepouts": n, "seed": opts.seed}
    planner = _single_build(out, g, robot)
    region, source = G.free_region(g, robot, "panel", planner)
    parts = list(shapely.get_parts(region))
    out["free_space"] = {
        "source": source,
        "components": len(parts),
        "vertices": int(len(R.region_vertices(region))),
        "area_fraction": float(region.area / g.pieces[0].area),
    }
    rng = np.random.default_rng([opts.seed, n, 7])
    main = max(parts, key=lambda p: p.area)
    pairs = C.sample_pairs(main, opts.n_pairs, rng)
    out["pairs"] = pairs.tolist()
    garnav = _single_garnav_queries(out, planner, g, robot, main, pairs, opts, n)
    pv = _single_pyvisgraph(out, main, pairs, opts, pv_history, log)
    naive = _single_naive(out, main, pairs, opts)
    grid_len = _single_grid(out, region, pairs, opts)
    _single_optimum(out, region, main, len(pairs), garnav, pv, naive, grid_len)
    return out


def _single_build(out: dict[str, Any], g, robot):
    """Phase 1: build garnav's planner (timed); None when it is not available or fails."""
    if not G.planner_available():
        out["garnav"] = {"available": False, "error": "garnav.plan.Planner not importable"}
        return None
    try:
        planner, t_build = timed(lambda: G.build_planner(g, robot))
    except Exception as exc:  # a failure is a figure too: report it, keep going
        out["garnav"] = {"available": False, "error": _err(exc)}
        return None
    out["garnav"] = {"available": True, "build_s": t_build, **G.planner_graph_size(planner)}
    return planner


def _single_garnav_queries(out, planner, g, robot, main, pairs, opts, n) -> tuple[list, list]:
    """Phase 2: garnav's queries and build memory; (lengths, paths), empty on failure."""
    g_len: list[float] = []
    g_paths: list = []
    if planner is None:
        return g_len, g_paths
    try:
        # one untimed query first: lazy imports and caches belong to no single query
        warm = C.sample_pairs(main, 1, np.random.default_rng([opts.seed, n, 8]))[0]
        _, out["garnav"]["first_query_s"] = timed(
            lambda: G.route_points(planner, ("panel", *warm[0]), ("panel", *warm[1]))
        )
        g_times = []
        for s, t in pairs:
            (route, pts), dt = timed(lambda s=s, t=t: G.route_points(planner, ("panel", *s), ("panel", *t)))
            g_times.append(dt)
            g_len.append(float(route.length_mm))
            g_paths.append(pts)
        out["garnav"]["query"] = summary(g_times)
        _, peak = peak_memory(lambda: G.build_planner(g, robot))
        out["garnav"]["build_peak_bytes"] = peak
    except Exception as exc:
        out["garnav"]["error"] = _err(exc)
        return [], []
    return g_len, g_paths


def _single_pyvisgraph(out, main, pairs, opts, pv_history, log) -> tuple[list, list]:
    """Phase 3: pyvisgraph on the component that holds the queries (or its predicted cost when
    the build would exceed the budget); (lengths, paths)."""
    pv = R.PyvisgraphRef(main)
    predicted = _pv_predict(pv_history, pv.n_vertices)
    pv_out: dict[str, Any] = {"vertices": pv.n_vertices, "obstacles": len(pv.obstacles), "scope": "query component"}
    pv_len: list[float] = []
    pv_paths: list = []
    if predicted > opts.ref_budget_s:
        times = [timed(lambda s=s, t=t: pv.query_lower_bound(s, t))[1] for s, t in pairs]
        pv_out.update(estimated=True, build_s=predicted, query=summary(times), query_is_lower_bound=True,
                      note=f"build skipped: predicted {predicted:.0f} s > budget {opts.ref_budget_s:.0f} s; "
                           "query time is a lower bound (the two visibility sweeps without Dijkstra)")
    else:
        log(f"  pyvisgraph build ({pv.n_vertices} vertices, ~{predicted:.0f} s predicted)")
        _, t_pv = timed(pv.build)
        pv_history.append((pv.n_vertices, t_pv))
        times = []
        try:
            for s, t in pairs:
                path, dt = timed(lambda s=s, t=t: pv.query(s, t))
                times.append(dt)
                pv_paths.append(path)
                pv_len.append(R.path_length(path))
        except Exception as exc:  # report, and leave pyvisgraph out of the optimum
            pv_out["error"] = _err(exc)
            pv_len, pv_paths = [], []
        pv_out.update(estimated=False, build_s=t_pv, edges=pv.n_edges, query=summary(times))
    out["pyvisgraph"] = pv_out
    return pv_len, pv_paths


def _single_naive(out, main, pairs, opts) -> list[float]:
    """Phase 4: the naive all-pairs visibility graph; lengths (empty when only estimated)."""
    nv = R.NaiveVisibilityRef(main, max_pairs=opts.naive_max_pairs, seed=opts.seed)
    t_nv = nv.build()
    nv_out: dict[str, Any] = {"vertices": len(nv.verts), "pairs": nv.n_pairs, "build_s": t_nv, "estimated": nv.estimated}
    nv_len: list[float] = []
    if not nv.estimated:
        times = []
        for s, t in pairs:
            path, dt = timed(lambda s=s, t=t: nv.query(s, t))
            times.append(dt)
            nv_len.append(R.path_length(path))
        nv_out.update(edges=nv.n_edges, query=summary(times))
    out["naive_allpairs"] = nv_out
    return nv_len


def _single_grid(out, region, pairs, opts) -> list[float | None]:
    """Phase 5: grid A* on the whole free region; lengths (None where the grid finds no path)."""
    grid = R.GridAstarRef(region, opts.grid_cell_mm)
    _, t_grid = timed(grid.build)
    times, grid_len, grid_fail = [], [], 0
    for s, t in pairs:
        try:
            path, dt = timed(lambda s=s, t=t: grid.query(s, t))
        except nx.NetworkXNoPath:
            # a passage narrower than the grid resolution: the grid finds no route at all
            grid_fail += 1
            grid_len.append(None)
            continue
        times.append(dt)
        grid_len.append(R.path_length(path))
    _, grid_peak = peak_memory(lambda: R.GridAstarRef(region, opts.grid_cell_mm).build())
    out["grid_astar"] = {
        "cell_mm": opts.grid_cell_mm,
        "nodes": grid.n_nodes,
        "edges": grid.n_edges,
        "build_s": t_grid,
        "build_peak_bytes": grid_peak,
        "query": summary(times),
        "no_path": grid_fail,
    }
    return grid_len


def _single_optimum(out, region, main, n_pairs, garnav, pv, nv_len, grid_len) -> None:
    """Phase 6: the optimum per pair (shortest valid exact answer among pyvisgraph, naive and
    garnav) and every method's error against it."""
    g_len, g_paths = garnav
    pv_len, pv_paths = pv
    opt, opt_src, g_err, pv_vs_nv = [], [], [], []
    for k in range(n_pairs):
        cands = []
        if pv_len:
            cands.append((pv_len[k], "pyvisgraph", R.path_in_region(main, pv_paths[k])))
        if nv_len:
            cands.append((nv_len[k], "naive_allpairs", True))
        if g_len:
            cands.append((g_len[k], "garnav", R.path_in_region(region, g_paths[k])))
        valid = [c for c in cands if c[2]]
        exact_refs = [c for c in valid if c[1] != "garnav"]
        if not exact_refs:
            opt.append(None)
            opt_src.append(None)
            continue
        best = min(valid, key=lambda c: c[0])
        opt.append(best[0])
        opt_src.append(best[1])
        if pv_len and nv_len:
            pv_vs_nv.append(abs(pv_len[k] - nv_len[k]) / nv_len[k])
        if g_len:
            g_err.append((g_len[k] - best[0]) / best[0])
    out["optimum_mm"] = opt
    out["optimum_source"] = opt_src
    if g_len:
        out["garnav"]["length_mm"] = g_len
        out["garnav"]["paths_valid"] = bool(all(R.path_in_region(region, p) for p in g_paths))
        out["garnav"]["length_rel_err_max"] = max(g_err) if g_err else None
    if pv_vs_nv:
        out["pyvisgraph"]["rel_diff_to_naive_max"] = max(pv_vs_nv)
    ok = [k for k in range(n_pairs) if opt[k]]
    if ok:
        ratios = [grid_len[k] / opt[k] for k in ok if grid_len[k] is not None]
        out["grid_astar"]["length_ratio"] = summary(ratios)
        if pv_len:
            out["pyvisgraph"]["length_ratio_max"] = max(pv_len[k] / opt[k] for k in ok)
