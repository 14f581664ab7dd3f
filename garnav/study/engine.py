"""Running a study: serially in this process, or on Dask (:mod:`garnav.study.cluster`).

:func:`run_study` prepares the study (:func:`~garnav.study.cases.prepare_study`), checks the output
folder (``resume``: only the same study may continue), then answers every chunk that has no part
file yet, writing each chunk's rows as soon as it arrives (:mod:`garnav.study.results`). With
``workers=1`` and no scheduler it runs in this process without Dask; the rows are the same either
way (each case is a pure function of its inputs; the Monte Carlo seed comes from the case).
"""

from __future__ import annotations

import os
import sys
import time
from dataclasses import dataclass
from pathlib import Path

from garnav.errors import GarnavError
from garnav.study.cases import PreparedStudy, prepare_study
from garnav.study.extra import require
from garnav.study.results import check_manifest, done_chunks, write_manifest, write_part
from garnav.study.studyfile import Study
from garnav.study.worker import Settings, Workbench

__all__ = ["StudyRun", "run_study", "run_prepared"]


@dataclass(frozen=True)
class StudyRun:
    """What a run did.

    Attributes
    ----------
    out : Path
    cases : int
        Cases in the study.
    skipped : int
        Cases already done (``resume``).
    computed : int
        Cases answered in this run.
    errors : int
        Rows of this run with status ``error`` (an unexpected failure).
    mode : str
        ``serial``, ``local`` or ``scheduler``.
    workers : int
    builds : int
        Planner contexts built, over all workers.
    seconds : float
    """

    out: Path
    cases: int
    skipped: int
    computed: int
    errors: int
    mode: str
    workers: int
    builds: int
    seconds: float


def run_study(study: Study, *, out: str | os.PathLike | None = None, workers: int | None = None,
              scheduler: str | None = None, resume: bool = False, progress: bool = True,
              timeout_s: float | None = None) -> StudyRun:
    """Run every case of ``study`` and write its rows to ``out`` (default: the study's output).

    Parameters
    ----------
    workers : int, optional
        1: serial, in this process, without Dask. Otherwise the local cluster's worker processes
        (default: the CPUs available). Ignored with ``scheduler``.
    scheduler : str, optional
        Address of an existing Dask scheduler (``tcp://HOST:PORT``); its workers must have garnav
        installed.
    resume : bool
        Go on with the results already in ``out`` (same study only).
    progress : bool
        Show a progress bar (tqdm, on stderr).
    timeout_s : float, optional
        Longest wait for all chunks on Dask; None: no limit beyond the workers' own.
    """
    require("pyarrow")
    prepared = prepare_study(study)
    return run_prepared(prepared, out=out, workers=workers, scheduler=scheduler, resume=resume,
                        progress=progress, timeout_s=timeout_s)


def run_prepared(prepared: PreparedStudy, *, out=None, workers=None, scheduler=None, resume=False,
                 progress=True, timeout_s=None, max_contexts: int = 4) -> StudyRun:
    """:func:`run_study` on a prepared study."""
    study = prepared.study
    folder = Path(out) if out is not None else Path(study.output)
    if workers is not None and workers < 1:
        raise GarnavError(f"--workers must be 1 or more, got {workers}")
    check_manifest(folder, prepared.fingerprint, resume)
    write_manifest(folder, {"format": "garnav-study-results", "version": 1, "study": study.name,
                            "source": study.source, "fingerprint": prepared.fingerprint,
                            "cases": prepared.n_cases, "chunks": len(prepared.chunks),
                            "measures": list(study.measures)})
    done = done_chunks(folder)
    todo = [c for c in prepared.chunks if c.id not in done]
    skipped = prepared.n_cases - sum(len(c.cases) for c in todo)
    settings = Settings(study.measures, study.contact_runs, study.seed)
    from tqdm import tqdm

    bar = tqdm(total=prepared.n_cases, initial=skipped, unit="case", desc=study.name, disable=not progress,
               file=sys.stderr, dynamic_ncols=True)
    counts = {"computed": 0, "errors": 0}

    def on_done(cid: str, rows: list[dict]) -> None:
        write_part(folder, cid, rows)
        counts["computed"] += len(rows)
        counts["errors"] += sum(r["status"] == "error" for r in rows)
        bar.update(len(rows))

    t0 = time.perf_counter()
    try:
        if scheduler is None and workers == 1:
            bench = Workbench(max_contexts)
            for c in todo:
                on_done(c.id, bench.run(prepared.inputs[c.garment], c, settings))
            mode, n_workers, builds = "serial", 1, bench.builds
        else:
            require("distributed")
            from garnav.study.cluster import default_workers, open_client, run_chunks

            mode = "scheduler" if scheduler else "local"
            n_workers = 0 if scheduler else int(workers or default_workers())
            builds = 0
            if todo:
                with open_client(workers=n_workers or None, scheduler=scheduler) as client:
                    info = run_chunks(client, prepared.inputs, todo, settings, on_done, timeout_s=timeout_s,
                                      max_contexts=max_contexts)
                n_workers, builds = info["workers"], info["builds"]
    finally:
        bar.close()
    return StudyRun(folder, prepared.n_cases, skipped, counts["computed"], counts["errors"], mode, n_workers,
                    builds, time.perf_counter() - t0)

