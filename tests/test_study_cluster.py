"""Studies on Dask: the local cluster and an existing scheduler give the rows of the serial run.

Each starts worker processes (a few seconds on a 2-core machine), so both are marked slow; every
cluster binds to 127.0.0.1 without a dashboard, waits with bounded timeouts and is always closed.
"""

from __future__ import annotations

import logging

import pytest

pytest.importorskip("pyarrow")
distributed = pytest.importorskip("distributed")

import study_files as SF  # noqa: E402
from garnav.study import load_study, read_rows, run_study  # noqa: E402


@pytest.fixture
def serial_rows(tmp_path):
    study = load_study(SF.write_study(tmp_path, SF.SMALL))
    done = run_study(study, out=tmp_path / "serial", workers=1, progress=False)
    return study, read_rows(done.out)


@pytest.mark.slow
def test_local_cluster_rows_equal_serial_rows(serial_rows, tmp_path):
    study, serial = serial_rows
    done = run_study(study, out=tmp_path / "local", workers=2, progress=False, timeout_s=120)
    assert done.mode == "local" and done.workers == 2
    assert 2 <= done.builds <= 4  # one planner per (size, robot) per worker that got a chunk of it
    assert read_rows(done.out).equals(serial)


@pytest.mark.slow
def test_existing_scheduler_rows_equal_serial_rows(serial_rows, tmp_path):
    study, serial = serial_rows
    cluster = distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=True, host="127.0.0.1",
                                       dashboard_address=None, silence_logs=logging.ERROR)
    try:
        done = run_study(study, out=tmp_path / "remote", scheduler=cluster.scheduler_address, progress=False,
                         timeout_s=120)
    finally:
        cluster.close()
    assert done.mode == "scheduler" and done.workers == 1 and done.builds == 2
    assert read_rows(done.out).equals(serial)


def _worker_env() -> dict:
    import os

    return {k: os.environ.get(k) for k in ("MALLOC_TRIM_THRESHOLD_", "OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS")}


@pytest.mark.slow
def test_local_cluster_workers_keep_glibc_malloc_thresholds():
    """Dask's nanny sets MALLOC_TRIM_THRESHOLD_=65536 in its workers by default, which turns off
    glibc's dynamic mmap threshold (mallopt(3)) and cost the demo study's queries 15-35 %; the
    study's local cluster unsets it and keeps the one-thread BLAS/OpenMP limits."""
    from distributed import Client

    from garnav.study.cluster import local_cluster

    cluster = local_cluster(1)
    try:
        with Client(cluster, timeout=60) as client:
            client.wait_for_workers(1, timeout=60)
            (env,) = client.run(_worker_env).values()
    finally:
        cluster.close()
    assert env == {"MALLOC_TRIM_THRESHOLD_": None, "OMP_NUM_THREADS": "1", "OPENBLAS_NUM_THREADS": "1"}
