"""The ``garnav demo`` command: summary, cautions, rebuild into a folder, bad options."""

from __future__ import annotations

from pathlib import Path

from garnav.cli import main

MESHES = Path(__file__).resolve().parents[1] / "meshes"


def test_demo_prints_summary_and_cautions(capsys):
    assert main(["demo"]) == 0
    out = capsys.readouterr().out
    assert "sensing_top" in out
    for name in ("front", "back", "yoke", "sleeve_left", "sleeve_right"):
        assert f"piece {name}" in out
    assert "implanted medical devices" in out
    assert "certifies nothing" in out


def test_demo_rebuild_writes_the_committed_files(tmp_path, capsys):
    assert main(["demo", "--rebuild", "--out", str(tmp_path)]) == 0
    out = capsys.readouterr().out
    assert "sensing_top_drape.obj" in out
    for name in ("sensing_top.toml", "sensing_top_drape.obj", "mannequin.obj"):
        assert (tmp_path / name).read_bytes() == (MESHES / name).read_bytes()


def test_demo_out_without_rebuild_is_a_clear_error(tmp_path, capsys):
    assert main(["demo", "--out", str(tmp_path)]) == 2
    err = capsys.readouterr().err
    assert "--out is only used with --rebuild" in err
    assert "Traceback" not in err


def test_demo_rebuild_into_an_unwritable_place_is_a_clear_error(tmp_path, capsys):
    blocker = tmp_path / "file"
    blocker.write_text("x")
    assert main(["demo", "--rebuild", "--out", str(blocker / "sub")]) == 2
    err = capsys.readouterr().err
    assert "cannot write" in err
