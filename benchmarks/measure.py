"""Timing, memory and fitting helpers, and a description of the machine."""

from __future__ import annotations

import datetime as _dt
import gc
import importlib.metadata
import os
import platform
import sys
import time
import traceback
import tracemalloc
from pathlib import Path
from typing import Any, Callable

import numpy as np

__all__ = ["timed", "peak_memory", "summary", "growth_exponent", "machine_info"]


def timed(fn: Callable[[], Any]) -> tuple[Any, float]:
    """Run ``fn()`` once; return (result, seconds). The garbage collector is paused meanwhile."""
    gc.collect()
    was = gc.isenabled()
    gc.disable()
    try:
        t0 = time.perf_counter()
        out = fn()
        dt = time.perf_counter() - t0
    finally:
        if was:
            gc.enable()
    return out, dt


def peak_memory(fn: Callable[[], Any]) -> tuple[Any, int]:
    """Run ``fn()`` under ``tracemalloc``; return (result, peak bytes allocated during the call).

    Counts Python and numpy allocations (numpy reports its buffers to tracemalloc); memory that
    GEOS (shapely) or compiled extensions allocate with their own allocators is not seen.
    """
    gc.collect()
    tracemalloc.start()
    try:
        tracemalloc.reset_peak()
        base = tracemalloc.get_traced_memory()[0]
        out = fn()
        peak = tracemalloc.get_traced_memory()[1] - base
    finally:
        tracemalloc.stop()
    return out, int(peak)


def summary(seconds: list[float]) -> dict[str, float]:
    """Median, 95th percentile (linear interpolation), mean, min and max, in seconds."""
    a = np.asarray(seconds, dtype=float)
    if a.size == 0:
        return {"n": 0}
    return {
        "n": int(a.size),
        "median": float(np.median(a)),
        "p95": float(np.percentile(a, 95)),
        "mean": float(a.mean()),
        "min": float(a.min()),
        "max": float(a.max()),
    }


def target_row(targets, key: str, status: str, value, detail: str) -> dict[str, Any]:
    """One row of the report's target table: ``targets`` is a sequence of (key, description)."""
    return {"key": key, "target": dict(targets)[key], "status": status, "value": value, "detail": detail}


def growth_exponent(sizes: list[float], seconds: list[float]) -> float | None:
    """Least-squares slope of log(seconds) against log(size): t ≈ c · size^k, returns k.

    None with fewer than two usable points.
    """
    x = np.asarray(sizes, dtype=float)
    y = np.asarray(seconds, dtype=float)
    ok = (x > 0) & (y > 0) & np.isfinite(y)
    if ok.sum() < 2 or np.unique(x[ok]).size < 2:
        return None
    k, _ = np.polyfit(np.log(x[ok]), np.log(y[ok]), 1)
    return float(k)


def _cpu_model() -> str:
    try:
        with open("/proc/cpuinfo", encoding="utf-8") as fh:
            for line in fh:
                if line.lower().startswith("model name"):
                    return line.split(":", 1)[1].strip()
    except OSError:
        pass
    return platform.processor() or platform.machine()


def _mem_total_gb() -> float | None:
    try:
        with open("/proc/meminfo", encoding="utf-8") as fh:
            for line in fh:
                if line.startswith("MemTotal:"):
                    return round(int(line.split()[1]) / 1024**2, 1)
    except OSError:
        pass
    return None


def _load() -> list[float] | None:
    try:
        return [round(v, 2) for v in os.getloadavg()]
    except (AttributeError, OSError):
        return None


PACKAGES = ("numpy", "scipy", "shapely", "networkx", "trimesh", "libigl", "pyvisgraph", "potpourri3d")


def _git_commit() -> str | None:
    import subprocess
    from pathlib import Path

    root = Path(__file__).resolve().parent.parent
    if not (root / ".git").exists():
        return None
    try:
        res = subprocess.run(["git", "-C", str(root), "rev-parse", "--short", "HEAD"], capture_output=True, text=True, timeout=10)
        dirty = subprocess.run(["git", "-C", str(root), "status", "--porcelain", "--untracked-files=no"],
                               capture_output=True, text=True, timeout=10)
    except (OSError, subprocess.SubprocessError):
        return None
    if res.returncode != 0:
        return None
    return res.stdout.strip() + ("+changes" if dirty.stdout.strip() else "")


def machine_info() -> dict[str, Any]:
    """garnav version, package versions, CPU, Python, OS and the UTC date of the run."""
    import garnav

    versions = {}
    for name in PACKAGES:
        try:
            versions[name] = importlib.metadata.version(name)
        except importlib.metadata.PackageNotFoundError:
            versions[name] = None
    try:
        usable = len(os.sched_getaffinity(0))
    except AttributeError:
        usable = os.cpu_count()
    return {
        "garnav_version": garnav.__version__,
        "garnav_commit": _git_commit(),
        "packages": versions,
        "python": sys.version.split()[0],
        "implementation": platform.python_implementation(),
        "os": platform.platform(),
        "cpu_model": _cpu_model(),
        "cpu_count": os.cpu_count(),
        "cpu_usable": usable,
        "memory_gb": _mem_total_gb(),
        "openblas_coretype": os.environ.get("OPENBLAS_CORETYPE"),
        "load_average_1_5_15": _load(),
        "date_utc": _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ"),
    }


def error_text(exc: BaseException) -> str:
    """One line for a failure: type, message and where it was raised (at most 600 characters)."""
    tb = traceback.extract_tb(exc.__traceback__)
    where = f" at {Path(tb[-1].filename).name}:{tb[-1].lineno}" if tb else ""
    return f"{type(exc).__name__}: {exc}{where}"[:600]
