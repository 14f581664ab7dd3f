"""Smoke test of the benchmark runner: a --quick run must finish and produce every section.

Checks structure only (JSON keys, table rows, target entries); never timings.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from benchmarks import run as bench_run  # noqa: E402
from benchmarks.measure import growth_exponent  # noqa: E402
from benchmarks.report import TARGETS  # noqa: E402


pytestmark = pytest.mark.slow  # one quick benchmark run (~15 s) behind every test here


@pytest.fixture(scope="module")
def quick_results(tmp_path_factory):
    out = tmp_path_factory.mktemp("bench")
    js, md = out / "bench.json", out / "BENCH.md"
    # the demo garment case and the demo subprocess take several seconds each even when quick;
    # they run in full benchmark runs only
    code = bench_run.main(["--quick", "--cases", "single,lift", "--json", str(js), "--write-md", str(md)])
    assert code == 0
    return json.loads(js.read_text()), md.read_text()


def test_machine_description(quick_results):
    res, _ = quick_results
    m = res["machine"]
    for key in ("garnav_version", "packages", "python", "cpu_model", "cpu_count", "date_utc"):
        assert key in m
    assert {"numpy", "shapely", "pyvisgraph"} <= set(m["packages"])


def test_single_piece_rows(quick_results):
    res, md = quick_results
    singles = {k: v for k, v in res["cases"].items() if v["kind"] == "single_piece"}
    assert len(singles) == len(bench_run.QUICK_N)
    for case in singles.values():
        assert case["free_space"]["vertices"] > 0
        assert len(case["pairs"]) == res["settings"]["n_pairs"]
        assert case["grid_astar"]["query"]["n"] == res["settings"]["n_pairs"]
        assert "build_s" in case["pyvisgraph"] and "build_s" in case["naive_allpairs"]
        # every pair got an exact optimum from the references
        assert all(v is not None for v in case["optimum_mm"])
        # a grid path is never shorter than the exact optimum (8-connected moves only)
        assert case["grid_astar"]["length_ratio"]["min"] >= 1.0 - 1e-9
        assert f"| {next(iter(singles))} |" in md


def test_references_agree(quick_results):
    # pyvisgraph (general-purpose library) and the naive all-pairs visibility graph must find the
    # same shortest lengths: both are exact methods on the same polygons
    res, _ = quick_results
    for case in res["cases"].values():
        if case["kind"] == "single_piece":
            assert case["pyvisgraph"]["rel_diff_to_naive_max"] < 1e-9


def test_lift_case_and_targets(quick_results):
    res, md = quick_results
    lift = res["cases"]["lift"]
    assert {"delaunay_find_simplex", "strtree_intersects", "flipout_geodesic"} <= set(lift)
    # the prism drape is developable: FlipOut's geodesics between route corners have the flat
    # length (potpourri3d as outside reference)
    fo = lift["flipout_geodesic"]
    assert abs(fo["length_mm"] - fo["length_flat_mm"]) <= 1e-6 * fo["length_flat_mm"]
    keys = [t["key"] for t in res["targets"]]
    assert keys == [k for k, _ in TARGETS]
    assert all(t["status"] in ("PASS", "MISS", "N/A") for t in res["targets"])
    assert "## Targets" in md and "## Machine" in md


def test_growth_exponent_recovers_power_law():
    # hand-worked: t = 3 N^2 exactly gives slope 2 in log-log
    n = [10, 50, 200, 500]
    assert growth_exponent(n, [3 * v**2 for v in n]) == pytest.approx(2.0)
    assert growth_exponent([10], [1.0]) is None


@pytest.fixture(scope="module")
def quick_multi_piece(tmp_path_factory):
    js = tmp_path_factory.mktemp("bench_multi") / "bench.json"
    assert bench_run.main(["--quick", "--cases", "chain9,tiled", "--json", str(js)]) == 0
    return json.loads(js.read_text())


def test_multi_piece_cases(quick_multi_piece):
    # structure of benchmarks/tiled.py's cases; quick sizes (3 strips, k = 2 and 4)
    res = quick_multi_piece
    chain, tiled = res["cases"]["chain9"], res["cases"]["tiled"]
    assert "error" not in chain and "error" not in tiled
    assert chain["crossings"] == 2 and chain["checked"] >= 1 and chain["single"]["query"]["n"] == 3
    assert set(tiled["per_k"]) == {"2", "4"}
    for rec in tiled["per_k"].values():
        assert {"build_s", "build_2mm_s", "same_piece_query", "reference", "queries"} <= set(rec)
    rows = chain["queries"] + [q for r in tiled["per_k"].values() for q in r["queries"]]
    for q in rows:
        # reference (b) is the exact optimum over all seam sequences: the 2 mm-portal route and
        # garnav's route are never shorter than it by more than the 1e-7 mm garnav leaves
        # between a crossing's two sides (observed 2e-9 relative)
        assert q["ref_b_mm"] <= q["ref_a_cost"] * (1 + 1e-8) and q["ref_b_mm"] <= q["cost"] * (1 + 1e-8)
        assert q["in_unfolded_region"]
    status = {t["key"]: t["status"] for t in res["targets"]}
    assert status["chain9_query"] == "N/A" and status["tiled_build"] == "N/A"  # quick: not judged
    assert status["multi_piece_optimal"] in ("PASS", "MISS")
