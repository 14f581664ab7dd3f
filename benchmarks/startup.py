"""Start-up of the command line: wall time of ``garnav --help``, ``garnav --version`` and a
``garnav route`` on a missing spec, each in a fresh interpreter, against ``python -c "import
numpy"`` measured in the same run (also ``python -c pass``, the interpreter alone).

Each command runs ``repeats`` times (7; 3 with ``--quick``) after one warm-up of each (the
operating system's file cache); garnav's bytecode is compiled first and kept, as in an installed
package (:func:`compile_package`, :func:`child_env`). The figure is the median. Run alone with
``python -m benchmarks --cases startup``.
"""

from __future__ import annotations

import os
import statistics
import subprocess
import sys
import time
from pathlib import Path
from typing import Any

__all__ = ["run_startup", "startup_targets", "child_env", "compile_package", "STARTUP_TARGETS", "COMMANDS"]

STARTUP_TARGETS = (
    ("startup_help", "`garnav --help` under 1 s wall (and its ratio to `python -c \"import numpy\"`)"),
)

ROOT = Path(__file__).resolve().parents[1]

#: (label, argv after the interpreter, expected exit status)
COMMANDS = (
    ("python -c pass", ["-c", "pass"], 0),
    ("python -c \"import numpy\"", ["-c", "import numpy"], 0),
    ("garnav --help", ["-m", "garnav", "--help"], 0),
    ("garnav --version", ["-m", "garnav", "--version"], 0),
    ("garnav route missing.toml --from a --to b", ["-m", "garnav", "route", "missing.toml", "--from", "a", "--to", "b"], 2),
)


def child_env(**extra: str) -> dict[str, str]:
    """The environment of a timed subprocess: this checkout first on the path, and bytecode
    caching on (``PYTHONDONTWRITEBYTECODE`` removed), as in an installed package, so that garnav's
    modules are not compiled from source on every start while numpy's come from its ``.pyc``."""
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""), **extra)
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    return env


def compile_package() -> None:
    """Write the bytecode of every garnav module (``compileall``), as ``pip install`` does."""
    subprocess.run([sys.executable, "-m", "compileall", "-q", str(ROOT / "garnav")], env=child_env(),
                   capture_output=True, timeout=600)


def _once(argv: list[str], env: dict[str, str]) -> tuple[float, int]:
    t = time.perf_counter()
    proc = subprocess.run([sys.executable, *argv], env=env, cwd=ROOT, capture_output=True, timeout=120)
    return time.perf_counter() - t, proc.returncode


def run_startup(opts, log) -> dict[str, Any]:
    """Median wall time of each of :data:`COMMANDS`; runs are interleaved (one of each command in
    turn) so that a change of machine load affects all alike."""
    repeats = 3 if opts.quick else 7
    env = child_env()
    compile_package()
    times: dict[str, list[float]] = {label: [] for label, _, _ in COMMANDS}
    codes: dict[str, set[int]] = {label: set() for label, _, _ in COMMANDS}
    for k in range(repeats + 1):
        for label, argv, _ in COMMANDS:
            dt, rc = _once(argv, env)
            codes[label].add(rc)
            if k:  # the first round warms the file cache
                times[label].append(dt)
    numpy_s = statistics.median(times[COMMANDS[1][0]])
    out: dict[str, Any] = {"kind": "startup", "repeats": repeats, "commands": {}}
    for label, _, expected in COMMANDS:
        med = statistics.median(times[label])
        out["commands"][label] = {"median_s": med, "min_s": min(times[label]), "max_s": max(times[label]),
                                  "ratio_to_numpy_import": med / numpy_s, "returncodes": sorted(codes[label]),
                                  "expected_returncode": expected}
        log(f"  {label}: {med * 1e3:.0f} ms median ({med / numpy_s:.2f}x python -c \"import numpy\")")
    return out


def startup_targets(res: dict[str, Any]) -> list[dict[str, Any]]:
    """PASS / MISS / N/A of :data:`STARTUP_TARGETS`."""
    target = dict(STARTUP_TARGETS)["startup_help"]
    c = res.get("cases", {}).get("startup")
    if not c or c.get("error"):
        return [{"key": "startup_help", "target": target, "status": "N/A", "value": None, "detail": "not run"}]
    cmds = c["commands"]
    wrong = [k for k, v in cmds.items() if v["returncodes"] != [v["expected_returncode"]]]
    h = cmds["garnav --help"]
    parts = [f"{k} {v['median_s'] * 1e3:.0f} ms ({v['ratio_to_numpy_import']:.2f}x)"
             for k, v in cmds.items() if k.startswith("garnav")]
    detail = (f"{'; '.join(parts)}; python -c \"import numpy\" {cmds[COMMANDS[1][0]]['median_s'] * 1e3:.0f} ms, "
              f"python -c pass {cmds[COMMANDS[0][0]]['median_s'] * 1e3:.0f} ms")
    if wrong:
        return [{"key": "startup_help", "target": target, "status": "MISS", "value": None,
                 "detail": f"unexpected exit status of {', '.join(wrong)}; {detail}"}]
    status = "PASS" if h["median_s"] < 1.0 else "MISS"
    return [{"key": "startup_help", "target": target, "status": status, "value": h["median_s"], "detail": detail}]
