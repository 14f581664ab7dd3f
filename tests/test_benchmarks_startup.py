"""The start-up benchmark case (benchmarks/startup.py): its target reads PASS, MISS or N/A from
the figures, and a quick run measures every command with the expected exit status. Structure
only, never timings (benchmarks/README.md)."""

from __future__ import annotations

import sys
from pathlib import Path
from types import SimpleNamespace

import pytest

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from benchmarks import startup  # noqa: E402
from benchmarks.report import TARGETS  # noqa: E402


def _case(help_s: float, help_rc: int = 0) -> dict:
    cmds = {}
    for label, _, expected in startup.COMMANDS:
        rc = help_rc if label == "garnav --help" else expected
        med = help_s if label == "garnav --help" else 0.2
        cmds[label] = {"median_s": med, "min_s": med, "max_s": med, "ratio_to_numpy_import": med / 0.2,
                       "returncodes": [rc], "expected_returncode": expected}
    return {"cases": {"startup": {"kind": "startup", "repeats": 7, "commands": cmds}}}


def test_the_target_reads_the_figures():
    assert "startup_help" in dict(TARGETS)
    assert startup.startup_targets(_case(0.3))[0]["status"] == "PASS"
    assert startup.startup_targets(_case(1.2))[0]["status"] == "MISS"
    assert startup.startup_targets(_case(0.3, help_rc=1))[0]["status"] == "MISS"
    assert startup.startup_targets({"cases": {}})[0]["status"] == "N/A"
    assert "(1.50x)" in startup.startup_targets(_case(0.3))[0]["detail"]


@pytest.mark.slow
def test_a_quick_run_measures_every_command():
    out = startup.run_startup(SimpleNamespace(quick=True), log=lambda _m: None)
    assert set(out["commands"]) == {label for label, _, _ in startup.COMMANDS}
    for v in out["commands"].values():
        assert v["returncodes"] == [v["expected_returncode"]]
        assert v["min_s"] <= v["median_s"] <= v["max_s"]
