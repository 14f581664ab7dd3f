"""The bad-input corpus: every file in tests/bad_specs makes `garnav check` fail with a clear
message (the expected fragments), a non-zero exit status and no traceback."""

from __future__ import annotations

import os
import subprocess
import sys
import tomllib
from pathlib import Path

import pytest

from garnav.cli import main

ROOT = Path(__file__).resolve().parent.parent
BAD = Path(__file__).parent / "bad_specs"
EXPECTED: dict[str, list[str]] = tomllib.loads((BAD / "expected.toml").read_text())["files"]


def test_corpus_and_expectations_match():
    files = {p.name for p in BAD.glob("*.toml")} - {"expected.toml"}
    assert files == set(EXPECTED)
    assert len(files) >= 20


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_check_reports_problem(name, capsys):
    status = main(["check", str(BAD / name)])
    out, err = capsys.readouterr()
    text = out + err
    assert status == 2
    assert "Traceback" not in text
    assert str(BAD / name) in text  # every message names the file
    for fragment in EXPECTED[name]:
        assert fragment in text, f"{name}: missing {fragment!r} in\n{text}"


def test_many_problems_lists_every_one(capsys):
    main(["check", str(BAD / "many_problems.toml")])
    err = capsys.readouterr().err
    lines = [line for line in err.splitlines() if line.startswith("  - ")]
    assert len(lines) == 6


@pytest.mark.parametrize("name", ["many_problems.toml", "not_toml.toml"])
def test_check_subprocess_has_no_traceback(name):
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    proc = subprocess.run(
        [sys.executable, "-m", "garnav", "check", str(BAD / name)],
        capture_output=True, text=True, env=env, cwd=ROOT, timeout=120,
    )
    assert proc.returncode == 2
    assert "Traceback" not in proc.stdout + proc.stderr
    for fragment in EXPECTED[name]:
        assert fragment in proc.stderr


def test_check_missing_file(tmp_path, capsys):
    assert main(["check", str(tmp_path / "nope.toml")]) == 2
    assert "does not exist" in capsys.readouterr().err


def test_check_folder(tmp_path, capsys):
    assert main(["check", str(tmp_path)]) == 2
    assert "is a folder" in capsys.readouterr().err
