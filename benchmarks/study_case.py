"""Benchmark case ``study``: 2,000 route queries on the demo garment, serial against a local Dask cluster.

The study: the demo spec (``meshes/sensing_top.toml``), its own robot, random query points (14 per
piece, seed 0, unordered pairs, the first 2,000 of a seeded draw), measures length and time,
chunks of 50 cases. The same prepared study is run

* **serial** — ``workers=1``: one process, no Dask (one planner build, then every query);
* **local cluster** — the study's own local cluster (:func:`garnav.study.cluster.local_cluster`:
  W processes with one thread each on 127.0.0.1), each building its own planner once and
  answering the chunks it gets.

Reference measured in the same run, before the serial run and after the cluster run: the speed-up
W processes can get on the machine at that moment (a pure-Python loop alone and W at once,
:func:`cpu_ceiling`); other users' load lowers it, and the study's speed-up is read against it.

Both write their Parquet parts; the rows must be equal (checked). Also measured in the same run:
the cluster's start-up, the Dask round trip of a task that does nothing (``client.map`` of 200
identity calls), the resident memory of each worker after the study (psutil) and of this process,
and the planner build alone. The scaling model (docs/studies.md):

    T(W) = T_start + T_import + T_build + N / (W · rate)

(cluster start-up, the workers' one-time imports, measured apart, and one planner build per
worker, all in parallel across workers)
with ``rate`` the queries per second of one serial process (from the serial run minus its build).
The target is a speed-up T_serial / T_cluster ≥ 1.6 on this 2-core machine (cluster start-up
included; the figure without it is printed too).

Run alone: ``PYTHONPATH=$PWD python -m benchmarks.study_case [--quick] [--json OUT]``.
"""

from __future__ import annotations

import argparse
import json
import os
import sys
import tempfile
import time
from pathlib import Path
from typing import Any

__all__ = ["run_study_case", "STUDY_TEXT"]

ROOT = Path(__file__).resolve().parent.parent
STUDY_TEXT = """format = "garnav-study"
version = 1
name = "bench"
measures = ["length", "time"]
chunk_size = {chunk}
[[garment]]
spec = "{spec}"
[queries]
ordered = false
random = {{ per_piece = {per_piece}, seed = 0, max_pairs = {pairs} }}
"""


def _rss_mb() -> float:
    import psutil

    return psutil.Process().memory_info().rss / 2**20


def _burn(n: int) -> float:
    """Seconds of a pure-Python loop of ``n`` steps (CPU only, no memory traffic)."""
    t0 = time.perf_counter()
    s = 0
    for i in range(n):
        s += i * i
    return time.perf_counter() - t0


def cpu_ceiling(workers: int, n: int = 15_000_000) -> float:
    """The speed-up ``workers`` processes can get on this machine right now: ``workers`` times the
    time of one loop alone over the wall time of ``workers`` loops at once (the reference for the
    study's speed-up; other users' load lowers it)."""
    import multiprocessing as mp

    alone = _burn(n)
    with mp.get_context("spawn").Pool(workers) as pool:
        pool.map(_burn, [1000] * workers)
        t0 = time.perf_counter()
        pool.map(_burn, [n] * workers)
        together = time.perf_counter() - t0
    return workers * alone / together


def _import_time() -> float:
    """Seconds a fresh worker spends importing what a study task needs (done once per worker)."""
    t0 = time.perf_counter()
    import garnav.plan  # noqa: F401
    import garnav.study.worker  # noqa: F401

    return time.perf_counter() - t0


def run_study_case(quick: bool = False, workers: int = 2, log=print) -> dict[str, Any]:
    out: dict[str, Any] = {"kind": "study", "workers": workers}
    try:
        from distributed import Client, LocalCluster  # noqa: F401

        from garnav.study import loads_study, prepare_study, read_rows, run_prepared
    except ImportError as exc:
        out["error"] = f"garnav[cluster] not installed: {exc}"
        return out
    n = 40 if quick else 2000
    text = STUDY_TEXT.format(spec=ROOT / "meshes" / "sensing_top.toml", per_piece=4 if quick else 14, pairs=n,
                             chunk=10 if quick else 50)
    try:
        out["load_average_at_start"] = [round(v, 2) for v in os.getloadavg()]
    except OSError:
        pass
    with tempfile.TemporaryDirectory() as tmp:
        study = loads_study(text, "bench.toml", tmp)
        prepared = prepare_study(study)
        out["queries"] = prepared.n_cases
        out["chunks"] = len(prepared.chunks)
        from garnav.demo import demo_garment
        from garnav.plan import Planner

        g = demo_garment()
        t0 = time.perf_counter()
        Planner(g, g.robot)
        out["planner_build_s"] = time.perf_counter() - t0
        out["cpu_ceiling_before"] = cpu_ceiling(workers, 3_000_000 if quick else 15_000_000)
        rss0 = _rss_mb()
        log(f"  study: {prepared.n_cases} queries serial ...")
        serial = run_prepared(prepared, out=Path(tmp) / "serial", workers=1, progress=False)
        out["serial_s"] = serial.seconds
        out["serial_process_rss_mb"] = _rss_mb()
        out["serial_process_rss_growth_mb"] = out["serial_process_rss_mb"] - rss0
        rate = prepared.n_cases / max(1e-9, serial.seconds - out["planner_build_s"])
        out["rate_queries_per_s_per_worker"] = rate

        from distributed import Client

        log(f"  study: {prepared.n_cases} queries on a local cluster of {workers} workers ...")
        t0 = time.perf_counter()
        from garnav.study.cluster import local_cluster

        cluster = local_cluster(workers)
        client = Client(cluster, timeout=60)
        try:
            client.wait_for_workers(workers, timeout=60)
            out["cluster_start_s"] = time.perf_counter() - t0
            t1 = time.perf_counter()
            client.gather(client.map(lambda x: x, range(200), pure=False))
            out["task_overhead_s"] = (time.perf_counter() - t1) / 200
            out["worker_import_s"] = max(client.run(_import_time).values())
            run = run_prepared(prepared, out=Path(tmp) / "cluster", scheduler=cluster.scheduler_address, progress=False)
            out["cluster_run_s"] = run.seconds
            out["cluster_builds"] = run.builds
            mem = client.run(lambda: __import__("psutil").Process().memory_info().rss / 2**20)
            out["worker_rss_mb"] = sorted(float(v) for v in mem.values())
        finally:
            client.close()
            cluster.close()
        out["cluster_total_s"] = out["cluster_start_s"] + out["cluster_run_s"]
        out["cpu_ceiling_after"] = cpu_ceiling(workers, 3_000_000 if quick else 15_000_000)
        out["rows_equal"] = bool(read_rows(Path(tmp) / "serial").equals(read_rows(Path(tmp) / "cluster")))
    out["speedup_with_start"] = out["serial_s"] / out["cluster_total_s"]
    out["speedup_without_start"] = out["serial_s"] / out["cluster_run_s"]
    predicted = out["planner_build_s"] + prepared.n_cases / (workers * rate)
    out["model_predicted_run_s"] = predicted
    out["model_error"] = (out["cluster_run_s"] - predicted) / predicted
    try:
        out["load_average_at_end"] = [round(v, 2) for v in os.getloadavg()]
    except OSError:
        pass
    log(f"  study: machine's parallel ceiling {out['cpu_ceiling_before']:.2f}x before, {out['cpu_ceiling_after']:.2f}x after")
    log(f"  study: serial {out['serial_s']:.1f} s, cluster {out['cluster_run_s']:.1f} s + start "
        f"{out['cluster_start_s']:.1f} s: speed-up {out['speedup_with_start']:.2f}x "
        f"({out['speedup_without_start']:.2f}x without start); task overhead {1e3 * out['task_overhead_s']:.1f} ms; "
        f"workers {', '.join(f'{m:.0f}' for m in out['worker_rss_mb'])} MB")
    return out


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(prog="python -m benchmarks.study_case", description=__doc__.split("\n\n")[0])
    ap.add_argument("--quick", action="store_true")
    ap.add_argument("--workers", type=int, default=2)
    ap.add_argument("--json", metavar="PATH")
    args = ap.parse_args(argv)
    res = run_study_case(args.quick, args.workers, log=lambda m: print(m, file=sys.stderr, flush=True))
    text = json.dumps(res, indent=1) + "\n"
    if args.json:
        from garnav.atomic import write_text_atomic

        write_text_atomic(args.json, text)
    print(text)
    return 0


if __name__ == "__main__":
    sys.exit(main())
