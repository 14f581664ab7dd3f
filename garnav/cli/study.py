"""``garnav study STUDY.toml``: plan every case of a study (docs/studies.md) and report on them.

By default the cases run on a local Dask cluster of worker processes sized to the machine (one
thread each); ``--workers 1`` runs them in this process without Dask; ``--scheduler
tcp://HOST:PORT`` uses an existing Dask cluster (its workers need garnav installed). Rows stream to
Parquet part files in the output folder as chunks finish, so ``--resume`` continues a study that was
stopped. Then ``summary.md``, ``summary.json`` and two PNG plots are written beside them.

Needs the optional extra ``pip install garnav[cluster]`` (dask[distributed], pyarrow, matplotlib).
"""

from __future__ import annotations

import argparse

__all__ = ["register", "run", "CAUTION"]

CAUTION = (
    "caution: a study says which routes the model finds drivable; it certifies none of them. Before a "
    "robot drives one: keep magnets away from implanted devices, keep out of the neck and face, watch the "
    "battery, keep an emergency stop at hand, and follow the device maker and qualified professionals."
)


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "study",
        help="plan many route cases (queries x poses x postures x sizes x robots) on Dask and report",
        description="Plan every case of a study file (garments and graded sizes, poses, postures, robots, "
        "queries, measures; docs/studies.md) on a local Dask cluster of processes (default), on an "
        "existing cluster (--scheduler) or serially (--workers 1). Rows go to Parquet part files in the "
        "output folder as they finish (--resume continues a stopped study); a summary report with plots "
        "follows. Needs pip install 'garnav[cluster]'.",
        epilog=f"{CAUTION}\n\nexit status: 0 done, 1 some cases failed with an unexpected error (their rows say "
        "why), 2 bad input, 130 interrupted",
    )
    parser.add_argument("study", metavar="STUDY.toml", help="the study file")
    parser.add_argument("--out", metavar="DIR", help="output folder (default: the study's output)")
    where = parser.add_mutually_exclusive_group()
    where.add_argument("--workers", type=int, metavar="N",
                       help="worker processes of the local cluster (default: the CPUs available); 1 = serial, no Dask")
    where.add_argument("--scheduler", metavar="tcp://HOST:PORT", help="run on this existing Dask scheduler")
    parser.add_argument("--resume", action="store_true", help="go on with the results already in the output folder "
                        "(the same study only): finished chunks are skipped")
    parser.add_argument("--timeout", type=float, metavar="S", help="longest wait for all chunks on Dask, seconds")
    parser.add_argument("--no-progress", action="store_true", help="no progress bar")
    parser.add_argument("--no-report", action="store_true", help="write the rows only, no summary or plots")
    parser.add_argument("--quiet", action="store_true", help="do not print the safety cautions (shown once per run "
                        "on stderr)")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from garnav.errors import GarnavError
    from garnav.study.engine import run_study
    from garnav.study.studyfile import load_study

    if args.workers is not None and args.workers < 1:
        raise GarnavError(f"--workers must be 1 or more, got {args.workers}")
    if args.timeout is not None and not args.timeout > 0:
        raise GarnavError(f"--timeout must be a positive number of seconds, got {args.timeout:g}")
    study = load_study(args.study)
    done = run_study(study, out=args.out, workers=args.workers, scheduler=args.scheduler, resume=args.resume,
                     progress=not args.no_progress, timeout_s=args.timeout)
    where = {"serial": "in this process", "local": f"on a local cluster of {done.workers} workers",
             "scheduler": f"on {args.scheduler} ({done.workers} workers)"}[done.mode]
    print(f"study '{study.name}': {done.cases} cases, {done.computed} planned {where} in {done.seconds:.1f} s"
          + (f", {done.skipped} already done" if done.skipped else "") + f"; rows in {done.out / 'parts'}")
    if not args.no_report:
        from garnav.study.report import write_report

        summary = write_report(done.out, study.name)
        print(f"feasible  {summary['feasible']} of {summary['cases']} cases; report {done.out / 'summary.md'}")
    if not args.quiet:
        import sys

        from garnav.cautions import caution_lines

        print("\n".join(caution_lines()), file=sys.stderr)
    if done.errors:
        print(f"garnav study: {done.errors} case(s) failed with an unexpected error; their rows say why "
              "(status 'error')")
        return 1
    return 0
