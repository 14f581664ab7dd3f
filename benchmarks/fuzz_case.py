"""Benchmark case ``fuzz``: the reader fuzz of ``tests/reader_fuzz.py`` with many examples per reader.

Each of the three readers (garment spec, route document, command list, see ``tests/reader_fuzz.py``)
gets ``--examples`` fuzzed files from hypothesis (derandomized, so a run is repeatable; ``--seed``
picks another sequence). Every example that does not behave — an exception that is not a
``GarnavError``, a ``GarnavError`` without a message or without the file's name, or a read that runs
longer than ``reader_fuzz.HANG_S`` — is counted as a failure (the run does not stop at the first one)
and listed. The target is **0 failures**.

Reported per reader: examples run, how many read without error, how many were refused with a
``GarnavError``, failures (with the first few messages), total and slowest example time.

Run alone::

    python -m benchmarks.fuzz_case --examples 1000 [--readers spec,route,commands] [--json out.json]

or as a case of the runner: ``python -m benchmarks --cases fuzz`` (``--quick``: 30 examples).
"""

from __future__ import annotations

import argparse
import json
import sys
import tempfile
import time
from pathlib import Path
from typing import Any

if __package__ in (None, ""):  # run as a script
    sys.path.insert(0, str(Path(__file__).resolve().parent.parent))
    __package__ = "benchmarks"

TESTS = Path(__file__).resolve().parent.parent / "tests"

__all__ = ["run_fuzz", "fuzz_reader", "main"]


def _fuzz_module():
    if str(TESTS) not in sys.path:  # the strategies live beside the tests that use them
        sys.path.insert(0, str(TESTS))
    import reader_fuzz

    return reader_fuzz


def fuzz_reader(kind: str, examples: int, folder: Path, seeds, seed: int = 0) -> dict[str, Any]:
    """Run ``examples`` fuzzed inputs through reader ``kind``; counts, failures and times."""
    from hypothesis import HealthCheck, given, settings
    from hypothesis import strategies as st

    rf = _fuzz_module()
    out: dict[str, Any] = {"examples": 0, "read": 0, "refused": 0, "failures": 0, "failure_messages": [],
                           "slowest_s": 0.0}
    seen: set[str] = set()

    @settings(max_examples=examples, derandomize=seed == 0, database=None, deadline=None,
              suppress_health_check=list(HealthCheck), phases=("generate",))
    @given(data=rf.reader_inputs(kind, seeds), salt=st.just(seed))
    def one(data: bytes, salt: int) -> None:
        t = time.perf_counter()
        outcome, found = rf.run_input(kind, data, folder, seeds)
        out["examples"] += 1
        out["slowest_s"] = max(out["slowest_s"], time.perf_counter() - t)
        if found is None:
            out[outcome] += 1
            return
        out["failures"] += 1
        key = found.split(":")[0:2]
        if str(key) not in seen and len(out["failure_messages"]) < 20:
            seen.add(str(key))
            out["failure_messages"].append(found)
            stash = folder / f"failure_{kind}_{out['failures']}.bin"
            stash.write_bytes(data)
            out.setdefault("failure_files", []).append(str(stash))

    t0 = time.perf_counter()
    if seed:  # another sequence: hypothesis' own random source, seeded
        from hypothesis import seed as hseed

        one = hseed(seed)(one)
    one()
    out["total_s"] = time.perf_counter() - t0
    return out


def run_fuzz(examples: int, readers=("spec", "route", "commands"), seed: int = 0, log=print) -> dict[str, Any]:
    """The ``fuzz`` case: every reader with ``examples`` inputs."""
    rf = _fuzz_module()
    out: dict[str, Any] = {"kind": "fuzz", "examples_per_reader": int(examples), "readers": {}}
    with tempfile.TemporaryDirectory(prefix="garnav-fuzz-") as tmp:
        folder = Path(tmp)
        seeds = rf.make_seeds(folder)
        for kind in readers:
            log(f"  fuzz {kind}: {examples} examples ...")
            res = fuzz_reader(kind, examples, folder, seeds, seed)
            res.pop("failure_files", None)  # they live in the temporary folder
            out["readers"][kind] = res
            log(f"    {res['examples']} run, {res['read']} read, {res['refused']} refused, "
                f"{res['failures']} failures, {res['total_s']:.1f} s (slowest {res['slowest_s']:.2f} s)")
            for msg in res["failure_messages"]:
                log(f"      FAIL {msg}")
    out["failures"] = sum(r["failures"] for r in out["readers"].values())
    out["examples"] = sum(r["examples"] for r in out["readers"].values())
    return out


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(prog="python -m benchmarks.fuzz_case", description=__doc__.split("\n\n")[0])
    ap.add_argument("--examples", type=int, default=1000, help="fuzzed inputs per reader (default 1000)")
    ap.add_argument("--readers", default="spec,route,commands", help="comma-separated: spec, route, commands")
    ap.add_argument("--seed", type=int, default=0, help="0: the derandomized sequence; other: another one")
    ap.add_argument("--json", metavar="FILE", help="write the figures as JSON")
    args = ap.parse_args(argv)
    readers = tuple(r.strip() for r in args.readers.split(",") if r.strip())
    res = run_fuzz(args.examples, readers, args.seed)
    print(f"fuzz: {res['examples']} examples, {res['failures']} failures")
    if args.json:
        Path(args.json).write_text(json.dumps(res, indent=1) + "\n", encoding="utf-8")
    return 0 if res["failures"] == 0 else 1


if __name__ == "__main__":
    sys.exit(main())
