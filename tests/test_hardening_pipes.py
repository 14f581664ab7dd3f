"""Class 7 of the hardening work: pipes and buffering. Files are written first, then the text is
printed, so a reader that goes away (``garnav route ... | head -1``) ends the run quietly with every
file complete — no ``BrokenPipeError`` traceback."""

from __future__ import annotations

import json
import os
import subprocess
import sys

import pytest

import garments
from garnav.spec import save_garment


@pytest.fixture
def spec(tmp_path):
    path = tmp_path / "two.toml"
    save_garment(garments.two_panels(), path)
    return path


def _garnav(*argv: str) -> list[str]:
    return [sys.executable, "-m", "garnav", *argv]


def _route(spec, folder):
    return ["route", str(spec), "--from", "left_centre", "--to", "right:250,300", "--no-cache",
            "--json", str(folder / "r.json"), "--csv", str(folder / "r.csv"), "--commands", str(folder / "r.cmd")]


def _complete(folder):
    doc = json.loads((folder / "r.json").read_text())
    assert doc["format"] == "garnav-route"
    assert len((folder / "r.csv").read_text().splitlines()) == len(doc["waypoints"]) + 1
    assert (folder / "r.cmd").read_text().rstrip().splitlines()[-1].strip()  # the last command is there
    assert sorted(p.name for p in folder.iterdir() if p.name.startswith(".")) == []


def test_class7_head_1_ends_quietly_with_the_files_complete(spec, tmp_path):
    cmd = " ".join(_garnav(*_route(spec, tmp_path))) + " | head -1"
    run = subprocess.run(["sh", "-c", cmd], capture_output=True, text=True, timeout=300, cwd=tmp_path)
    assert run.returncode == 0  # the pipeline's status is head's
    assert run.stdout.startswith("wrote ") and run.stdout.count("\n") == 1
    assert "Traceback" not in run.stderr and "BrokenPipe" not in run.stderr, run.stderr
    _complete(tmp_path)


def test_class7_a_closed_pipe_before_any_output_loses_no_file(spec, tmp_path):
    read, write = os.pipe()
    os.close(read)  # nobody will ever read: the first print meets a closed pipe
    proc = subprocess.run(_garnav(*_route(spec, tmp_path)), stdout=write, stderr=subprocess.PIPE, text=True,
                          timeout=300, cwd=tmp_path)
    os.close(write)
    assert proc.returncode == 141  # 128 + SIGPIPE, as a shell reports a command a pipe stopped
    assert "Traceback" not in proc.stderr and "BrokenPipe" not in proc.stderr, proc.stderr
    _complete(tmp_path)


def test_class7_dash_to_a_closed_pipe_still_writes_the_other_files(spec, tmp_path):
    read, write = os.pipe()
    os.close(read)
    argv = ["route", str(spec), "--from", "left_centre", "--to", "right:250,300", "--no-cache",
            "--json", "-", "--csv", str(tmp_path / "r.csv")]
    proc = subprocess.run(_garnav(*argv), stdout=write, stderr=subprocess.PIPE, text=True, timeout=300)
    os.close(write)
    assert proc.returncode == 141 and "Traceback" not in proc.stderr, proc.stderr
    assert (tmp_path / "r.csv").read_text().startswith("index,leg,piece,")
