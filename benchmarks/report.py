"""Targets (PASS / MISS / N/A), the text table and the Markdown report."""

from __future__ import annotations

from typing import Any

from benchmarks.measure import target_row
from benchmarks.seams import SEAM_TARGETS, seam_targets
from benchmarks.startup import STARTUP_TARGETS, startup_targets
from benchmarks.tiled import TILED_TARGETS, tiled_targets

__all__ = ["TARGETS", "evaluate_targets", "format_report", "markdown_report"]

# (key, description); thresholds live in evaluate_targets
TARGETS = (
    ("length_exact", "path length equals the optimum within 1e-9 relative on every single-piece query"),
    ("build_N200_vs_pyvisgraph", "graph build at N = 200 at least 10x faster than pyvisgraph"),
    ("build_N500_time", "graph build at N = 500 under 10 s"),
    ("query_N200_vs_pyvisgraph", "query (median) at N = 200 at least 10x faster than pyvisgraph"),
    ("query_N200_vs_grid", "query (median) at N = 200 at least 10x faster than 2 mm grid A*"),
    ("build_growth", "build time grows no faster than ~N^2 (fitted exponent <= 2.2)"),
    ("locate_vs_find_simplex", "point location at least 5x faster than random-order find_simplex"),
    ("lift_time", "lift of ~5,000 points on ~100k triangles under 15 ms (median)"),
    ("demo_end_to_end", "`garnav demo` end to end under 20 s"),
    ("sweep_back_panel", "sweep of the demo back panel (10 mm swath) under 2 s: at most 2x the route planner build on the same garment"),
    ("zones_100k", "5 body zones projected onto a ~100k-triangle drape under 1 s: at most 2x link_drape on the same mesh"),
    ("poses_lift_10", "lift of one demo route onto 10 poses under 50 ms (median)"),
    # dead reckoning (benchmarks/drift.py)
    ("drift_covariance_50", "covariance of a 50-command route under 5 ms"),
    ("drift_monte_carlo_10k", "Monte Carlo 10,000 runs of a demo route under 2 s"),
    ("drift_replay_36000", "replay of 36,000 samples (reading the CSV included) under 1 s"),
    ("physics_planning", "demo routes planned with the physics profile in at most 3x the length-only query time"),
    ("physics_lift_mechanics", "lift + mechanics of ~5,000 points on ~100k triangles under 30 ms (median)"),
    ("study_speedup", "2,000 demo route queries: local Dask cluster of 2 workers at least 1.6x faster than serial (start-up included)"),
    ("reader_fuzz", "1,000 fuzzed files per reader (spec, route, commands): 0 failures (benchmarks/fuzz_case.py)"),
) + SEAM_TARGETS + TILED_TARGETS + STARTUP_TARGETS


def _get(d: dict, *keys, default=None):
    for k in keys:
        if not isinstance(d, dict) or k not in d:
            return default
        d = d[k]
    return d


def _t(key, status, value, detail):
    return target_row(TARGETS, key, status, value, detail)


def evaluate_targets(res: dict[str, Any]) -> list[dict[str, Any]]:
    """One entry per target: status PASS, MISS or N/A (not measured), the value and a detail."""
    cases = res.get("cases", {})
    single = {k: v for k, v in cases.items() if v.get("kind") == "single_piece"}
    quick = bool(_get(res, "settings", "quick"))
    out = []

    errs = [(k, _get(v, "garnav", "length_rel_err_max")) for k, v in single.items()]
    valid = [(k, _get(v, "garnav", "paths_valid")) for k, v in single.items()]
    missing = [k for k, e in errs if e is None]
    if not single or len(missing) == len(errs):
        out.append(_t("length_exact", "N/A", None, "no single-piece case with garnav routes and an exact reference"))
    else:
        worst = max(e for _, e in errs if e is not None)
        bad = [k for k, e in errs if e is not None and abs(e) > 1e-9] + [k for k, ok in valid if ok is False]
        n_all = sum(len(v.get("optimum_mm", [])) for v in single.values())
        n_ok = sum(sum(o is not None for o in v.get("optimum_mm", [])) for v in single.values())
        detail = f"worst relative error {worst:.3g} over {n_ok} of {n_all} queries with a verified optimum"
        unverified = [f"{k}: {sum(o is None for o in v.get('optimum_mm', []))}" for k, v in single.items()
                      if any(o is None for o in v.get("optimum_mm", []))]
        if unverified:
            detail += (" (no valid exact reference path for " + ", ".join(unverified)
                       + "; garnav's own paths there are valid but unverified)")
        if missing:
            detail += f"; not checked: {', '.join(missing)}"
        if bad:
            detail += f"; off in {', '.join(sorted(set(bad)))}"
        out.append(_t("length_exact", "MISS" if bad else "PASS", worst, detail))

    c200 = cases.get("single_N200")
    gb = _get(c200 or {}, "garnav", "build_s")
    pb = _get(c200 or {}, "pyvisgraph", "build_s")
    if gb and pb:
        r = pb / gb
        est = " (pyvisgraph time estimated)" if _get(c200, "pyvisgraph", "estimated") else ""
        out.append(_t("build_N200_vs_pyvisgraph", "PASS" if r >= 10 else "MISS", r,
                      f"garnav {gb:.3f} s vs pyvisgraph {pb:.2f} s: {r:.1f}x{est}"))
    else:
        out.append(_t("build_N200_vs_pyvisgraph", "N/A", None, "N = 200 not run" if c200 is None else "garnav build not available"))

    c500 = cases.get("single_N500")
    g5 = _get(c500 or {}, "garnav", "build_s")
    if g5 is not None:
        out.append(_t("build_N500_time", "PASS" if g5 < 10 else "MISS", g5, f"{g5:.2f} s"))
    else:
        out.append(_t("build_N500_time", "N/A", None, "N = 500 not run" if c500 is None else "garnav build not available"))

    gq = _get(c200 or {}, "garnav", "query", "median")
    for key, who in (("query_N200_vs_pyvisgraph", "pyvisgraph"), ("query_N200_vs_grid", "grid_astar")):
        rq = _get(c200 or {}, who, "query", "median")
        if gq and rq:
            r = rq / gq
            lb = " (pyvisgraph time is a lower bound)" if _get(c200, who, "query_is_lower_bound") else ""
            out.append(_t(key, "PASS" if r >= 10 else "MISS", r,
                          f"garnav {gq * 1e3:.2f} ms vs {who} {rq * 1e3:.1f} ms: {r:.1f}x{lb}"))
        else:
            out.append(_t(key, "N/A", None, "not measured at N = 200"))

    k = _get(res, "growth_exponent_in_N", "garnav")
    if k is not None and quick:
        out.append(_t("build_growth", "N/A", k, f"quick mode (N too small to judge): t ~ N^{k:.2f}"))
    elif k is not None:
        out.append(_t("build_growth", "PASS" if k <= 2.2 else "MISS", k,
                      f"t ~ N^{k:.2f} over N = {', '.join(str(v['n_keepouts']) for v in single.values())}"))
    else:
        out.append(_t("build_growth", "N/A", None, "fewer than two garnav builds"))

    lift = cases.get("lift", {})
    tl = _get(lift, "garnav", "locate", "query_s")
    td = _get(lift, "delaunay_find_simplex", "query_s")
    if tl and td:
        r = td / tl
        out.append(_t("locate_vs_find_simplex", "N/A" if quick else ("PASS" if r >= 5 else "MISS"), r,
                      f"{lift['query_points']} points: garnav {tl * 1e3:.1f} ms vs find_simplex {td * 1e3:.1f} ms: {r:.1f}x"))
    else:
        out.append(_t("locate_vs_find_simplex", "N/A", None, "garnav locator not available or case not run"))

    lm = _get(lift, "garnav", "lift", "median")
    if lm is not None:
        pts = _get(lift, "garnav", "lift", "points")
        status = "N/A" if quick else ("PASS" if lm < 0.015 else "MISS")
        note = " (quick mode: small mesh, target not judged)" if quick else ""
        out.append(_t("lift_time", status, lm, f"{pts} lifted points on {lift['faces']} triangles: {lm * 1e3:.1f} ms{note}"))
    else:
        out.append(_t("lift_time", "N/A", None, "garnav lift not available or case not run"))

    cli = cases.get("demo_cli", {})
    if cli.get("available") and cli.get("returncode") == 0:
        s = cli["seconds"]
        out.append(_t("demo_end_to_end", "PASS" if s < 20 else "MISS", s, f"`{cli['command']}`: {s:.1f} s"))
    elif cli.get("available"):
        out.append(_t("demo_end_to_end", "MISS", None, f"`{cli['command']}` failed (exit {cli['returncode']})"))
    else:
        out.append(_t("demo_end_to_end", "N/A", None, cli.get("error", "not run")))

    sw = cases.get("sweep_back", {})
    ratio = _get(sw, "garnav", "cold_over_reference")
    if ratio is not None:
        g = sw["garnav"]
        out.append(_t("sweep_back_panel", "PASS" if ratio <= 2.0 else "MISS", ratio,
                      f"cold {g['cold_s']:.2f} s = {ratio:.2f}x the planner build "
                      f"({sw['reference_planner_build_s']:.2f} s); warm {g['warm_s']:.2f} s; "
                      f"covered {100 * g['covered_fraction']:.2f} %"))
    else:
        out.append(_t("sweep_back_panel", "N/A", None, sw.get("error", "not run")))
    zc = cases.get("zones_100k", {})
    ratio = _get(zc, "garnav", "over_link")
    if ratio is not None:
        g = zc["garnav"]
        out.append(_t("zones_100k", "PASS" if ratio <= 2.0 else "MISS", ratio,
                      f"{g['zone_keepouts_s']:.3f} s on {zc['faces']:,} triangles = {ratio:.2f}x link_drape "
                      f"({zc['reference_link_s']:.2f} s); {g['over_whole_triangles']:.2f}x a whole-triangle union "
                      f"({zc['reference_whole_triangles_s']:.2f} s)"))
    else:
        out.append(_t("zones_100k", "N/A", None, zc.get("error", "not run")))
    pc = cases.get("poses", {})
    lift10 = _get(pc, "garnav", "lift_10_poses_s", "median")
    if lift10 is not None:
        g = pc["garnav"]
        out.append(_t("poses_lift_10", "PASS" if lift10 < 0.050 else "MISS", lift10,
                      f"{1e3 * lift10:.1f} ms for {pc['poses']} x {pc['lifted_points']:,} points on {pc['faces']:,} "
                      f"triangles (identical to lift_route: {pc['identical_to_lift_route']}) = "
                      f"{g['over_lift_each']:.2f}x lift_route per drape "
                      f"({1e3 * pc['reference_lift_each_s']['median']:.1f} ms), {g['over_one_drape']:.2f}x one drape "
                      f"x{pc['poses']} ({1e3 * pc['reference_one_drape_x10_s']['median']:.1f} ms); first pass "
                      f"{1e3 * g['first_s']:.0f} ms (per drape {1e3 * pc['reference_lift_each_first_s']:.0f} ms); "
                      f"link_drape of one pose {pc['reference_link_s']:.2f} s; body zones on {pc['poses']} poses "
                      f"{g['zones_10_poses_s']:.2f} s"))
    else:
        out.append(_t("poses_lift_10", "N/A", None, pc.get("error", "not run")))
    drift = {t["key"]: t for t in cases.get("drift", {}).get("targets", [])}
    for key in ("drift_covariance_50", "drift_monte_carlo_10k", "drift_replay_36000"):
        t = drift.get(key)
        if t is None:
            out.append(_t(key, "N/A", None, cases.get("drift", {}).get("error", "not run")))
        else:
            out.append(_t(key, t["status"], t["value"], f"{t['value']:.4g} (benchmarks/drift.py; ratios in the case)"))
    phys = cases.get("physics", {})
    dp = phys.get("demo_planning", {})
    if "ratio_queries" in dp:
        r = dp["ratio_queries"]
        lattice = sum(1 for x in dp["routes"] if x["method"] == "lattice")
        out.append(_t("physics_planning", "PASS" if r <= 3 else "MISS", r,
                      f"{len(dp['routes'])} demo routes ({lattice} needing the lattice): physics {dp['physics_s']:.2f} s vs "
                      f"length-only {dp['length_only_s']:.2f} s: {r:.2f}x (planner build {dp['planner_build_s']:.2f} s apart; "
                      f"with it {dp['ratio_with_build']:.2f}x)"))
    else:
        out.append(_t("physics_planning", "N/A", None, dp.get("error", "not run")))
    lm = phys.get("lift_mechanics", {})
    if "median" in lm:
        status = "N/A" if quick else ("PASS" if lm["median"] < 0.030 else "MISS")
        out.append(_t("physics_lift_mechanics", status, lm["median"],
                      f"{lm['points']} points on {lm['faces']} triangles: {lm['median'] * 1e3:.1f} ms "
                      f"(lift alone {lm['lift_only']['median'] * 1e3:.1f} ms, mechanics alone "
                      f"{lm['mechanics_only']['median'] * 1e3:.1f} ms)"))
    else:
        out.append(_t("physics_lift_mechanics", "N/A", None, lm.get("error", "not run")))
    st = cases.get("study", {})
    if "speedup_with_start" in st:
        r = st["speedup_with_start"]
        quick_note = " (quick: too few queries to judge)" if quick else ""
        out.append(_t("study_speedup", "N/A" if quick else ("PASS" if r >= 1.6 else "MISS"), r,
                      f"serial {st['serial_s']:.1f} s vs cluster {st['cluster_total_s']:.1f} s "
                      f"(start {st['cluster_start_s']:.1f} s): {r:.2f}x; rows equal: {st['rows_equal']}; "
                      f"task overhead {1e3 * st['task_overhead_s']:.1f} ms{quick_note}"))
    else:
        out.append(_t("study_speedup", "N/A", None, st.get("error", "not run")))
    fz = cases.get("fuzz", {})
    if "failures" in fz:
        per = ", ".join(f"{k} {r['examples']} ({r['read']} read, {r['refused']} refused, {r['total_s']:.0f} s)"
                        for k, r in fz["readers"].items())
        status = "PASS" if fz["failures"] == 0 and fz["examples_per_reader"] >= 1000 else (
            "MISS" if fz["failures"] else "N/A")
        first = next((m for r in fz["readers"].values() for m in r["failure_messages"]), "")
        out.append(_t("reader_fuzz", status, fz["failures"],
                      f"{fz['failures']} failures in {fz['examples']} examples: {per}" + (f"; first: {first}" if first else "")))
    else:
        out.append(_t("reader_fuzz", "N/A", None, fz.get("error", "not run")))
    out.extend(seam_targets(res))
    out.extend(tiled_targets(res))
    out.extend(startup_targets(res))
    return out


# --------------------------------------------------------------------------------------------


def _ms(x):
    return "—" if x is None else f"{x * 1e3:.2f}"


def _s(x, est=False):
    if x is None:
        return "—"
    return ("~" if est else "") + (f"{x:.3f}" if x < 10 else f"{x:.1f}")


def _mb(x):
    return "—" if x is None else f"{x / 2**20:.1f}"


def table_rows(res: dict[str, Any]) -> tuple[list[str], list[list[str]]]:
    """Header and rows of the single-piece / demo table (strings)."""
    head = ["case", "free verts", "garnav build s", "pyvisgraph build s", "naive build s", "grid build s",
            "garnav query ms (med/p95)", "pyvisgraph query ms", "grid query ms", "garnav len err",
            "grid len ratio", "garnav peak MB"]
    rows = []
    for name, c in res.get("cases", {}).items():
        if c.get("kind") not in ("single_piece", "demo_garment"):
            continue
        g = c.get("garnav", {})
        pv = c.get("pyvisgraph", {})
        nv = c.get("naive_allpairs", {})
        gr = c.get("grid_astar", {})
        gq = g.get("query", {})
        err = g.get("length_rel_err_max")
        rows.append([
            name,
            str(_get(c, "free_space", "vertices", default="—")),
            _s(g.get("build_s")),
            _s(pv.get("build_s"), pv.get("estimated", False)),
            _s(nv.get("build_s"), nv.get("estimated", False)),
            _s(gr.get("build_s")),
            f"{_ms(gq.get('median'))} / {_ms(gq.get('p95'))}" if gq.get("n") else "—",
            ("≥" if pv.get("query_is_lower_bound") else "") + _ms(_get(pv, "query", "median")),
            _ms(_get(gr, "query", "median")),
            "—" if err is None else f"{err:.1e}",
            "—" if _get(gr, "length_ratio", "median") is None else f"{gr['length_ratio']['median']:.4f}",
            _mb(g.get("build_peak_bytes")),
        ])
    return head, rows


def _lift_lines(res) -> list[str]:
    c = res.get("cases", {}).get("lift")
    if not c:
        return []
    lines = [f"lift case: {c['faces']} triangles, {c['query_points']} random UV points (random order)"]
    g = c.get("garnav", {})
    loc = g.get("locate")
    dl = c.get("delaunay_find_simplex", {})
    st = c.get("strtree_intersects", {})
    if loc:
        lines.append(f"  garnav locate        {loc['query_s'] * 1e3:9.1f} ms  ({loc['points_per_s']:.3g} points/s; build {loc['build_s'] * 1e3:.1f} ms; "
                     f"agrees with STRtree on {100 * loc['agrees_with_strtree']:.2f} %)")
    lines.append(f"  Delaunay.find_simplex{dl.get('query_s', 0) * 1e3:9.1f} ms  (build incl. first-call setup {dl.get('build_s', 0) * 1e3:.1f} ms; Delaunay of the UV vertices)")
    lines.append(f"  STRtree intersects   {st.get('query_s', 0) * 1e3:9.1f} ms  (build {st.get('build_s', 0) * 1e3:.1f} ms)")
    lf = g.get("lift")
    if lf:
        lines.append(f"  garnav lift          {lf['median'] * 1e3:9.2f} ms median, p95 {lf['p95'] * 1e3:.2f} ms, first call {lf['first_call_s'] * 1e3:.1f} ms; "
                     f"{lf['points']} points ({lf['points_per_s']:.3g} points/s); 3D length {lf['length_3d_mm']:.6f} mm, "
                     f"flat {lf['length_flat_mm']:.6f} mm")
    fo = c.get("flipout_geodesic", {})
    if "length_mm" in fo:
        rel = _get(lf or {}, "rel_diff_3d_vs_flipout")
        lines.append(f"  FlipOut geodesic     {fo['query_s'] * 1e3:9.1f} ms  (solver build {fo['build_s'] * 1e3:.1f} ms); "
                     f"length {fo['length_mm']:.6f} mm"
                     + ("" if rel is None else f"; lifted vs FlipOut {rel:+.2e}"))
    tp, tc = g.get("to_pattern"), c.get("trimesh_closest_point")
    if tp and tc:
        lines.append(f"  garnav 3D -> pattern {tp['points_per_s']:9.3g} points/s; trimesh closest_point "
                     f"{tc['points_per_s']:.3g} points/s: {tp['points_per_s'] / tc['points_per_s']:.1f}x; "
                     f"largest distance difference {tp['max_distance_diff_mm']:.1e} mm")
    vf, va = g.get("verify"), c.get("trimesh_adjacency_angles")
    if vf and va:
        lines.append(f"  garnav verify drape  {vf['verify_s'] * 1e3:9.1f} ms  ({vf['faults']} faults; trimesh "
                     f"face_adjacency_angles alone {va['query_s'] * 1e3:.1f} ms: "
                     f"{vf['verify_s'] / va['query_s']:.2f}x)")
    if g.get("error"):
        lines.append(f"  garnav error: {g['error']}")
    return lines


def _machine_line(m) -> str:
    return (f"garnav {m['garnav_version']} | Python {m['python']} | {m['cpu_model']} | {m['cpu_count']} CPUs "
            f"({m['cpu_usable']} usable) | {m['memory_gb']} GB | {m['os']} | {m['date_utc']} | "
            f"load {m.get('load_average_1_5_15')}")


def format_report(res: dict[str, Any]) -> str:
    """Plain-text report: machine, table, lift lines, growth, targets."""
    lines = [_machine_line(res["machine"]), ""]
    head, rows = table_rows(res)
    if rows:
        widths = [max(len(head[i]), *(len(r[i]) for r in rows)) for i in range(len(head))]
        lines.append("  ".join(h.ljust(w) for h, w in zip(head, widths)))
        for r in rows:
            lines.append("  ".join(v.ljust(w) for v, w in zip(r, widths)))
        lines.append("(~ = estimated, not measured: see notes)")
    for name, c in res.get("cases", {}).items():
        if c.get("error"):
            lines.append(f"{name}: {c['error']}")
        elif _get(c, "garnav", "error"):
            lines.append(f"{name}: garnav: {c['garnav']['error']}")
    lines += [""] + _lift_lines(res)
    gr = res.get("growth_exponent_in_N")
    if gr:
        lines.append("")
        lines.append("build growth exponent in N: " + ", ".join(
            f"{k} {'—' if v is None else f'{v:.2f}'}" for k, v in gr.items()))
    cli = res.get("cases", {}).get("demo_cli")
    if cli and cli.get("available"):
        for e in [cli] + cli.get("also", []):
            lines.append(f"`{e['command']}`: {e['seconds']:.1f} s (exit {e['returncode']})")
    lines += ["", "targets:"]
    for t in res.get("targets", []):
        lines.append(f"  [{t['status']:4}] {t['target']}: {t['detail']}")
    return "\n".join(lines)


def markdown_report(res: dict[str, Any]) -> str:
    """BENCHMARKS.md: machine, how it was run, the table, lifting, targets."""
    m = res["machine"]
    s = res["settings"]
    pk = ", ".join(f"{k} {v}" for k, v in m["packages"].items())
    out = [
        "# garnav benchmarks",
        "",
        "Generated by `python -m benchmarks --write-md BENCHMARKS.md`; do not edit by hand. "
        "See `benchmarks/README.md` for what each figure means and how the references are run.",
        "",
        "## Machine",
        "",
        f"- CPU: {m['cpu_model']}, {m['cpu_count']} logical CPUs ({m['cpu_usable']} usable), {m['memory_gb']} GB RAM",
        f"- OS: {m['os']}; Python {m['python']} ({m['implementation']})",
        f"- garnav {m['garnav_version']} (commit {m.get('garnav_commit') or 'unknown'}); {pk}",
        f"- OPENBLAS_CORETYPE: {m['openblas_coretype']}",
        f"- load average (1, 5, 15 min) at start: {m.get('load_average_1_5_15')}, at end: {m.get('load_average_at_end')}"
        " — other work on the machine inflates every time; compare ratios measured in one run",
        f"- date (UTC): {m['date_utc']}; whole run {res.get('total_s', 0):.0f} s",
        f"- settings: {'quick' if s['quick'] else 'full'}; seed {s['seed']}; N = {', '.join(map(str, s['sizes']))}; "
        f"{s['n_pairs']} start/goal pairs per case; grid cell {s['grid_cell_mm']} mm; pyvisgraph budget {s['ref_budget_s']:.0f} s",
        "",
        *([f"- note: {res['note']}"] if res.get("note") else []),
        *[f"- part {i + 1}: cases {', '.join(run['cases'])} run {run['machine']['date_utc']} (commit "
          f"{run['machine'].get('garnav_commit') or 'unknown'}, load at start {run['machine'].get('load_average_1_5_15')})"
          for i, run in enumerate(res.get("runs", []))],
        "",
        "## Targets",
        "",
        "| status | target | measured |",
        "|---|---|---|",
    ]
    for t in res.get("targets", []):
        out.append(f"| {t['status']} | {t['target']} | {t['detail']} |")
    if any(t["status"] == "MISS" for t in res.get("targets", [])):
        out += [
            "",
            "Each miss is explained, with its profile and what would close it, under "
            "\"Known misses\" in `benchmarks/README.md`.",
        ]
    head, rows = table_rows(res)
    if rows:
        out += ["", "## Planning", "", "| " + " | ".join(head) + " |", "|" + "---|" * len(head)]
        out += ["| " + " | ".join(r) + " |" for r in rows]
        out += ["", "`~` marks an estimate (a reference too slow to run within the budget, "
                "extrapolated from the sizes it did run, or from a sample of pairs for the naive build)."]
        gr = res.get("growth_exponent_in_N")
        if gr:
            out.append("")
            out.append("Build time growth exponent in N (log-log least squares): " + ", ".join(
                f"{k} {'—' if v is None else f'{v:.2f}'}" for k, v in gr.items()) + ".")
        notes = []
        for name, c in res.get("cases", {}).items():
            fs = c.get("free_space")
            if fs:
                notes.append(f"- {name}: free space from {fs['source']}, {fs['components']} component(s), "
                             f"{100 * fs['area_fraction']:.1f} % of the piece; pyvisgraph on the query component "
                             f"({_get(c, 'pyvisgraph', 'vertices')} vertices incl. its outside frame)"
                             + (f"; {c['pyvisgraph']['note']}" if _get(c, 'pyvisgraph', 'note') else "")
                             + (f"; grid A* found no path for {c['grid_astar']['no_path']} of {len(c.get('pairs', []))} pairs "
                                "(passages narrower than its cells), its query time covers the rest"
                                if _get(c, 'grid_astar', 'no_path') else "")
                             + (f"; {sum(o is None for o in c.get('optimum_mm', []))} pair(s) without a valid exact "
                                "reference path (pyvisgraph's path left the free polygon)"
                                if any(o is None for o in c.get('optimum_mm', [])) else ""))
            if c.get("kind") == "demo_garment" and "garnav" in c:
                notes.append(f"- {name}: {c['buttons']} buttons added; routes by seam crossings "
                             f"{c['garnav'].get('crossings')}; failed queries {c['garnav'].get('failed_queries')}")
        if notes:
            out += ["", "Notes:", ""] + notes
    ll = _lift_lines(res)
    if ll:
        out += ["", "## Point location and lifting", "", "```"] + ll + ["```"]
    cli = res.get("cases", {}).get("demo_cli")
    if cli:
        out += ["", "## Demo end to end", ""]
        if cli.get("available"):
            for e in [cli] + cli.get("also", []):
                out.append(f"- `{e['command']}`: {e['seconds']:.1f} s, exit {e['returncode']}")
        else:
            out.append(f"not run: {cli.get('error')}")
    for name, c in res.get("cases", {}).items():
        err = c.get("error") or _get(c, "garnav", "error")
        if err:
            out.append(f"\n{name}: {err}")
    return "\n".join(out) + "\n"
