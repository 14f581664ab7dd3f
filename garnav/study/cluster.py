"""A study's chunks on Dask: a local cluster of processes, or an existing cluster by address.

How the work is laid out (docs/studies.md):

* each garment size's inputs (:class:`~garnav.study.cases.GarmentInputs`: the graded garment and
  its drape meshes, a few MB) are scattered to every worker once (``broadcast=True``); tasks carry
  only a reference to them, a chunk of case descriptions and the robot;
* a worker plugin (:class:`WorkbenchPlugin`) gives every worker process its own
  :class:`~garnav.study.worker.Workbench`, which builds the planner of a (garment size, robot) on
  the first chunk of it and reuses it for every later chunk — no planner is built per task and no
  geometry is shipped per task;
* workers are processes with one thread each (``processes=True, threads_per_worker=1``): shapely
  prepared geometries are not thread-safe (GEOS issue 825), and each process prepares its own.

The local cluster binds to 127.0.0.1 with no dashboard; every wait is bounded and the client and
cluster are always closed. This module imports ``distributed`` at the top: import it only after
:func:`garnav.study.extra.require` has checked that it is installed.
"""

from __future__ import annotations

import logging
import os
import uuid
from contextlib import contextmanager
from typing import Callable, Iterator

from distributed import Client, LocalCluster, WorkerPlugin, as_completed, get_worker

from garnav.study.cases import Chunk, GarmentInputs
from garnav.study.worker import Settings, Workbench

__all__ = ["PLUGIN_NAME", "WorkbenchPlugin", "default_workers", "local_cluster", "open_client", "run_chunks"]

PLUGIN_NAME = "garnav-study-workbench"
#: Seconds to wait for a scheduler connection and for workers to start.
CONNECT_TIMEOUT_S = 60
#: glibc's malloc variable that Dask's nanny sets by default (see :func:`local_cluster`).
MALLOC_TRIM_VARIABLE = "MALLOC_TRIM_THRESHOLD_"


def default_workers() -> int:
    """Worker processes for the local cluster: the CPUs this process may use."""
    try:
        return max(1, len(os.sched_getaffinity(0)))
    except AttributeError:  # not on Linux
        return max(1, os.cpu_count() or 1)


class WorkbenchPlugin(WorkerPlugin):
    """Gives each worker process one :class:`Workbench` (its per-worker planner cache)."""

    def __init__(self, max_contexts: int = 4):
        self.max_contexts = int(max_contexts)
        self.bench: Workbench | None = None

    def setup(self, worker) -> None:
        self.bench = Workbench(self.max_contexts)

    def teardown(self, worker) -> None:
        self.bench = None


def run_chunk_on_worker(inputs: GarmentInputs, chunk: Chunk, settings: Settings) -> tuple[str, list[dict], int]:
    """The task: (chunk id, rows, contexts this worker has built so far)."""
    plugin = get_worker().plugins[PLUGIN_NAME]
    bench = plugin.bench  # type: ignore[attr-defined]
    rows = bench.run(inputs, chunk, settings)
    return chunk.id, rows, bench.builds


def local_cluster(workers: int) -> LocalCluster:
    """A local cluster of ``workers`` processes with one thread each, on 127.0.0.1.

    Without a dashboard; without the workers' statistical profiler (it samples every thread's
    stack every 10 ms, time taken from the queries; ``distributed.worker.profile.enabled``); and
    without the ``MALLOC_TRIM_THRESHOLD_=65536`` that Dask's nanny puts into each worker's
    environment by default (``distributed.nanny.pre-spawn-environ``; a value of None unsets it).
    Setting that variable also turns off glibc's dynamic mmap threshold (mallopt(3)): every block
    of 128 KiB or more — most numpy temporaries of a query — is then mapped and unmapped on each
    use. Measured on the demo study: 100 queries in one process took 34–37 s with glibc's defaults
    and 42–51 s with the variable set; in two Dask workers, 60 queries took 31–33 s of worker CPU
    without it and 37–39 s with it (system time 0.7 s against 3.3 s per worker). The BLAS and
    OpenMP thread limits of that setting are kept.

    A nanny writes its variables into the environment of the process that starts it (so a cluster
    started earlier with Dask's defaults leaves the variable behind, and spawned workers inherit
    it): the variable is therefore also taken out of this process's environment while the workers
    start, and put back as it was afterwards.
    """
    import dask

    saved = os.environ.pop(MALLOC_TRIM_VARIABLE, None)
    try:
        with dask.config.set({"distributed.worker.profile.enabled": False,
                              f"distributed.nanny.pre-spawn-environ.{MALLOC_TRIM_VARIABLE}": None}):
            return LocalCluster(n_workers=int(workers), threads_per_worker=1, processes=True, host="127.0.0.1",
                                dashboard_address=None, silence_logs=logging.ERROR)
    finally:
        if saved is not None:
            os.environ[MALLOC_TRIM_VARIABLE] = saved


@contextmanager
def open_client(workers: int | None = None, scheduler: str | None = None) -> Iterator[Client]:
    """A Dask client: on the scheduler at ``scheduler`` (``tcp://HOST:PORT``), else on a new local
    cluster of ``workers`` processes (default :func:`default_workers`). Both are closed on exit."""
    cluster = None
    if scheduler:
        client = Client(scheduler, timeout=CONNECT_TIMEOUT_S)
    else:
        n = int(workers or default_workers())
        cluster = local_cluster(n)
        try:
            client = Client(cluster, timeout=CONNECT_TIMEOUT_S)
            client.wait_for_workers(n, timeout=CONNECT_TIMEOUT_S)
        except BaseException:
            cluster.close()
            raise
    try:
        yield client
    finally:
        try:
            client.close()
        finally:
            if cluster is not None:
                cluster.close()


def run_chunks(client: Client, inputs: dict[str, GarmentInputs], chunks: list[Chunk], settings: Settings,
               on_done: Callable[[str, list[dict]], None], *, timeout_s: float | None = None,
               max_contexts: int = 4) -> dict:
    """Run ``chunks`` on the client's workers; call ``on_done(chunk id, rows)`` as each finishes.

    Returns ``{"workers": n, "builds": planner contexts built over all workers}``.
    """
    client.register_plugin(WorkbenchPlugin(max_contexts), name=PLUGIN_NAME)
    try:
        shared = {k: client.scatter(inputs[k], broadcast=True, hash=False) for k in sorted({c.garment for c in chunks})}
        run_id = uuid.uuid4().hex[:12]  # task keys of this run only, on a scheduler others may share
        futures = [client.submit(run_chunk_on_worker, shared[c.garment], c, settings, pure=False,
                                 key=f"garnav-study-{run_id}-chunk-{c.id}") for c in chunks]
        for _fut, (cid, rows, _built) in as_completed(futures, with_results=True, timeout=timeout_s):
            on_done(cid, rows)
        per_worker = client.run(lambda dask_worker: dask_worker.plugins[PLUGIN_NAME].bench.builds)
        return {"workers": len(per_worker), "builds": int(sum(per_worker.values()))}
    finally:
        try:
            client.unregister_worker_plugin(PLUGIN_NAME)
        except Exception:  # an old or remote scheduler may not support it; nothing is left behind but a cache
            pass
