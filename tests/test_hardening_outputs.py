"""Class 1 of the hardening work: outputs that would destroy inputs or each other are refused
before any work; special files are never replaced; ``-`` is standard output only where the format
allows it; no temporary file is left behind (docs/outputs.md)."""

from __future__ import annotations

import json
import os
import stat
import subprocess
import sys

import pytest

import garments
from garnav.atomic import OutputSet, write_text_atomic, writing_set
from garnav.cli import COMMANDS, main
from garnav.cli.outputs import ROLES
from garnav.errors import GarnavError
from garnav.spec import save_garment
from garnav.textio import read_text


@pytest.fixture
def spec(tmp_path):
    path = tmp_path / "two.toml"
    save_garment(garments.two_panels(), path)
    return path


def _route(spec, *extra):
    return ["route", str(spec), "--from", "left_centre", "--to", "right:250,300", "--no-cache", *extra]


def _stray(folder):
    return sorted(p.name for p in folder.rglob("*") if p.name.endswith(".tmp") or "garnav-incomplete" in p.name)


def test_class1_every_command_declares_its_inputs_and_outputs():
    import argparse
    import importlib

    sub = argparse.ArgumentParser().add_subparsers()
    for module in COMMANDS:
        importlib.import_module(f"garnav.cli.{module}").register(sub)
    names = set(sub.choices)
    assert len(names) == len(COMMANDS)
    assert names <= set(ROLES), f"add {sorted(names - set(ROLES))} to garnav.cli.outputs.ROLES"


def test_class1_output_equal_to_an_input_is_refused_before_work(spec, capsys):
    before = spec.read_bytes()
    assert main(_route(spec, "--json", str(spec))) == 2
    err = capsys.readouterr()
    assert "--json" in err.err and "is the input" in err.err and "Traceback" not in err.err
    assert err.out == ""  # refused before any work: no summary printed
    assert spec.read_bytes() == before


def test_class1_output_equal_to_an_input_through_a_link_is_refused(spec, tmp_path, capsys):
    (tmp_path / "soft.json").symlink_to(spec)
    os.link(spec, tmp_path / "hard.json")  # same inode, another name: os.path.samefile's test
    before = spec.read_bytes()
    for name in ("soft.json", "hard.json"):
        assert main(_route(spec, "--json", str(tmp_path / name))) == 2
        assert "is the input" in capsys.readouterr().err
    assert spec.read_bytes() == before


def test_class1_two_outputs_on_one_file_are_refused(spec, tmp_path, capsys):
    out = tmp_path / "r.txt"
    assert main(_route(spec, "--json", str(out), "--csv", str(tmp_path / "." / "r.txt"))) == 2
    assert "--json writes the same file" in capsys.readouterr().err
    assert not out.exists()


def test_class1_an_implicit_input_read_on_the_way_is_never_replaced(tmp_path):
    # a file read during the work (a spec's drape mesh, say) that the same run then writes
    src = tmp_path / "mesh.obj"
    src.write_text("v 0 0 0\n")
    with pytest.raises(GarnavError, match="is the input"):
        with writing_set() as s:
            read_text(src, GarnavError)
            write_text_atomic(src, "overwritten\n")
            s.commit()
    assert src.read_text() == "v 0 0 0\n"
    assert _stray(tmp_path) == []


def test_class1_fifo_is_refused_and_stays_a_fifo(spec, tmp_path, capsys):
    fifo = tmp_path / "pipe.json"
    os.mkfifo(fifo)
    assert main(_route(spec, "--json", str(fifo))) == 2  # would block forever if it were opened
    err = capsys.readouterr().err
    assert "FIFO" in err and "never replaces a special file" in err
    assert stat.S_ISFIFO(os.lstat(fifo).st_mode)


@pytest.mark.parametrize("target, kind", [("/dev/null", "a device"), (".", "a folder")])
def test_class1_device_and_folder_are_refused(spec, tmp_path, capsys, target, kind):
    assert main(_route(spec, "--csv", target)) == 2
    assert kind in capsys.readouterr().err


def test_class1_a_link_is_written_through_and_stays_a_link(spec, tmp_path, capsys):
    real = tmp_path / "data" / "route.json"
    real.parent.mkdir()
    real.write_text("old\n")
    link = tmp_path / "route.json"
    link.symlink_to(real)
    assert main(_route(spec, "--json", str(link))) == 0
    assert link.is_symlink() and json.loads(real.read_text())["format"] == "garnav-route"
    dangling = tmp_path / "new.json"
    dangling.symlink_to(tmp_path / "data" / "made.json")
    assert main(_route(spec, "--json", str(dangling))) == 0
    assert dangling.is_symlink() and (tmp_path / "data" / "made.json").is_file()
    assert f"wrote {link}" in capsys.readouterr().out
    assert _stray(tmp_path) == []


def test_class1_link_to_a_special_file_is_refused(spec, tmp_path, capsys):
    (tmp_path / "null.json").symlink_to("/dev/null")
    assert main(_route(spec, "--json", str(tmp_path / "null.json"))) == 2
    assert "a device (the symbolic link points to /dev/null)" in capsys.readouterr().err


def test_class1_dash_is_stdout_for_text_and_messages_go_to_stderr(spec, capsys):
    assert main(_route(spec, "--json", "-")) == 0
    out, err = capsys.readouterr()
    assert json.loads(out)["format"] == "garnav-route"  # the document alone on stdout
    assert "length" in err


def test_class1_dash_is_refused_where_the_format_cannot_go_to_stdout(spec, capsys):
    assert main(["show", str(spec), "--screenshot", "-"]) == 2
    assert "--screenshot -: this output cannot go to standard output" in capsys.readouterr().err
    assert main(_route(spec, "--json", "-", "--csv", "-")) == 2
    assert "only one output can go to standard output" in capsys.readouterr().err
    assert main(["demo", "--out", "-"]) == 2
    assert "a folder cannot go to standard output" in capsys.readouterr().err


def test_class1_no_temporary_file_is_left_after_an_error(tmp_path):
    with pytest.raises(RuntimeError):
        with writing_set():
            write_text_atomic(tmp_path / "a.json", "a\n")
            write_text_atomic(tmp_path / "b.json", "b\n")
            raise RuntimeError("the work failed after two files were staged")
    assert list(tmp_path.iterdir()) == []


def test_class1_temporaries_of_a_killed_process_go_with_the_next_write(tmp_path):
    dead = subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"], capture_output=True,
                          text=True, check=True)
    pid = int(dead.stdout)  # that process has ended
    stale = tmp_path / f".r.json.garnav-{pid}-abc123.tmp"
    stale.write_text("half")
    write_text_atomic(tmp_path / "r.json", "{}\n")
    assert not stale.exists() and (tmp_path / "r.json").read_text() == "{}\n"


def test_class1_sigterm_removes_the_staged_files(tmp_path):
    code = (
        "import os, signal, time\n"
        "from garnav.atomic import writing_set, write_text_atomic\n"
        "from garnav.cli.outputs import _sigterm_as_exit\n"
        f"with _sigterm_as_exit(), writing_set():\n"
        f"    write_text_atomic({str(tmp_path / 'a.json')!r}, 'a')\n"
        "    os.kill(os.getpid(), signal.SIGTERM)\n"
        "    time.sleep(5)\n"
    )
    run = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert run.returncode == 143 and "Traceback" not in run.stderr
    assert list(tmp_path.iterdir()) == []


def test_class1_output_set_api_compares_file_identity(tmp_path):
    a = tmp_path / "a.txt"
    a.write_text("x")
    s = OutputSet()
    s.add_input(tmp_path / "sub" / ".." / "a.txt")
    assert s.input_named(a) is not None


def test_class1_wrote_file_lines_come_first_one_per_output(spec, tmp_path, capsys):
    outs = [tmp_path / n for n in ("r.json", "r.csv", "r.cmd")]
    assert main(_route(spec, "--json", str(outs[0]), "--csv", str(outs[1]), "--commands", str(outs[2]))) == 0
    lines = capsys.readouterr().out.splitlines()
    assert lines[:3] == [f"wrote {p}" for p in outs]  # files first, then the summary
    assert any(line.startswith("length") for line in lines[3:])
    assert main(["export-pattern", str(spec), "--svg", str(tmp_path / "p.svg"), "--dxf", str(tmp_path / "p.dxf")]) == 0
    lines = capsys.readouterr().out.splitlines()
    assert lines[:2] == [f"wrote {tmp_path / 'p.dxf'}", f"wrote {tmp_path / 'p.svg'}"]
