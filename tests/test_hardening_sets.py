"""Class 2 of the hardening work: a set of outputs is complete or marked.

A run of ``garnav route`` with several outputs (and ``garnav demo``) is killed with SIGKILL in a
subprocess at a controlled moment — while it works, and between two renames of the commit — and
the files left behind must never be a mix of new and old that looks like one result
(docs/outputs.md)."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import textwrap

import pytest

import garments
from garnav.atomic import incomplete_mark
from garnav.cli import main
from garnav.errors import GarnavError
from garnav.export.waypoints import read_route_document
from garnav.spec import save_garment

#: Runs ``garnav.cli.main(argv)`` and kills itself with SIGKILL right after the N-th call of
#: ``os.replace`` (a rename of the commit) or of ``os.fsync`` (a file staged while working).
KILLER = textwrap.dedent("""
    import os, signal, sys
    from garnav.cli import main
    what, n = sys.argv[1], int(sys.argv[2])
    real = getattr(os, what)
    calls = [0]
    def killing(*a, **k):
        out = real(*a, **k)
        calls[0] += 1
        if calls[0] == n:
            os.kill(os.getpid(), signal.SIGKILL)
        return out
    setattr(os, what, killing)
    sys.exit(main(sys.argv[3:]))
""")


def _killed(what: str, n: int, argv: list[str], cwd) -> subprocess.CompletedProcess:
    env = dict(os.environ, PYVISTA_OFF_SCREEN="true")
    run = subprocess.run([sys.executable, "-c", KILLER, what, str(n), *argv], capture_output=True, text=True,
                         cwd=cwd, env=env, timeout=600)
    assert run.returncode == -signal.SIGKILL, run.stderr
    return run


@pytest.fixture
def spec(tmp_path):
    path = tmp_path / "two.toml"
    save_garment(garments.two_panels(), path)
    return path


def _route(spec, goal, folder):
    return ["route", str(spec), "--from", "left_centre", "--to", goal, "--no-cache",
            "--json", str(folder / "r.json"), "--csv", str(folder / "r.csv"), "--commands", str(folder / "r.cmd")]


def _files(folder):
    return {n: (folder / n).read_text() for n in ("r.json", "r.csv", "r.cmd")}


def test_class2_killed_while_working_leaves_the_old_set_whole(spec, tmp_path, capsys):
    assert main(_route(spec, "right:250,300", tmp_path)) == 0
    old = _files(tmp_path)
    _killed("fsync", 2, _route(spec, "right:200,200", tmp_path), tmp_path)  # two of three staged
    assert _files(tmp_path) == old
    assert not any(incomplete_mark(tmp_path / n).exists() for n in old)
    read_route_document(tmp_path / "r.json")  # reads fine: the old set is one result
    stale = [p.name for p in tmp_path.iterdir() if p.name.endswith(".tmp")]
    assert stale  # SIGKILL cannot be caught: the temporaries stay until the next write ...
    assert main(_route(spec, "right:200,200", tmp_path)) == 0
    assert [p.name for p in tmp_path.iterdir() if p.name.endswith(".tmp")] == []  # ... which removes them
    assert "right:200,200" in _files(tmp_path)["r.cmd"]


def test_class2_killed_between_renames_leaves_every_file_marked(spec, tmp_path, capsys):
    assert main(_route(spec, "right:250,300", tmp_path)) == 0
    old = _files(tmp_path)
    _killed("replace", 1, _route(spec, "right:200,200", tmp_path), tmp_path)  # one of three renamed
    now = _files(tmp_path)
    assert now["r.json"] != old["r.json"] and now["r.csv"] == old["r.csv"]  # a mix ...
    assert all(incomplete_mark(tmp_path / n).exists() for n in now)  # ... and every file is marked
    with pytest.raises(GarnavError, match="not completely written"):
        read_route_document(tmp_path / "r.json")
    assert main(["drift", str(tmp_path / "r.json"), "--garment", str(spec), "--runs", "10"]) == 2
    assert "not completely written" in capsys.readouterr().err
    assert main(_route(spec, "right:200,200", tmp_path)) == 0  # writing the set again clears it
    assert not any(incomplete_mark(tmp_path / n).exists() for n in now)
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".")] == []
    read_route_document(tmp_path / "r.json")


@pytest.mark.slow
def test_class2_demo_killed_between_renames_is_marked_then_rewritten(tmp_path, capsys):
    out = tmp_path / "demo"
    _killed("replace", 5, ["demo", "--out", str(out)], tmp_path)  # about 8 s of work, then killed
    names = sorted(p.name for p in out.iterdir() if not p.name.startswith("."))
    assert len(names) == 5  # the first five renamed, the others never appeared ...
    marks = [p for p in out.iterdir() if p.name.endswith(".garnav-incomplete")]
    assert len(marks) == 24  # ... and every file of the set, there or not, is marked (docs/demo.md lists them)
    with pytest.raises(GarnavError, match="not completely written"):
        read_route_document(out / next(n for n in names if n.endswith(".json")))
    assert main(["demo", "--out", str(out)]) == 0
    assert [p.name for p in out.iterdir() if p.name.startswith(".")] == []
    assert f"wrote {out}/: 24 files" in capsys.readouterr().out


def test_class2_a_telemetry_log_of_an_incomplete_set_is_refused(tmp_path):
    from garnav.telemetry.logfile import TelemetryError, read_log

    log = tmp_path / "run.csv"
    log.write_text("time_s\n")
    incomplete_mark(log).write_text("garnav: incomplete\n")
    with pytest.raises(TelemetryError, match="not completely written"):
        read_log(log)
