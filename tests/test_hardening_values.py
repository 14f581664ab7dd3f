"""Class 5 of the hardening work: non-finite and extreme values.

Every number option of every command refuses nan and inf (one argparse type for all), model
objects refuse non-finite numbers at construction (tests/test_spec_checks.py), and input files
nested 100,000 deep get the project's own error, not a RecursionError.
"""

from __future__ import annotations

from pathlib import Path

import pytest

from garnav.cli import build_parser, finite_float, main

ROOT = Path(__file__).resolve().parents[1]
DEMO = str(ROOT / "meshes" / "sensing_top.toml")
DEEP = 100_000


def test_class5_every_float_option_is_finite():
    sub = next(a for a in build_parser()._actions if a.dest == "command")
    floats = [(name, a.dest) for name, p in sub.choices.items() for a in p._actions if a.type is float]
    assert floats == []  # all replaced by finite_float
    users = [(name, a.dest) for name, p in sub.choices.items() for a in p._actions if a.type is finite_float]
    assert ("route", "radius") in users and ("route", "clearance") in users


@pytest.mark.parametrize("option, value", [("--radius", "nan"), ("--clearance", "inf"), ("--confidence=-inf", None),
                                           ("--radius", "1e999")])
def test_class5_route_refuses_non_finite_options(option, value, capsys):
    with pytest.raises(SystemExit) as info:
        main(["route", DEMO, "--from", "wrist_left", "--to", "sternum_left", option] + ([value] if value else []))
    assert info.value.code == 2
    assert "is not a finite number" in capsys.readouterr().err


@pytest.mark.parametrize("point", ["xyz:nan,0,0", "front:inf,5", "front:1e999,5"])
def test_class5_points_must_be_finite(point, capsys):
    assert main(["route", DEMO, "--from", point, "--to", "sternum_left", "--no-drape", "--quiet"]) == 2
    assert "Traceback" not in capsys.readouterr().err


def test_class5_deep_toml_spec(tmp_path, capsys):
    path = tmp_path / "deep.toml"
    path.write_text("x = " + "[" * DEEP + "]" * DEEP + "\n", encoding="utf-8")
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert str(path) in err and "nested too deeply" in err


def test_class5_deep_toml_tasks_and_runs(tmp_path):
    from garnav.errors import GarnavError
    from garnav.fleet.tasks import read_tasks_toml
    from garnav.uncertainty.calibrate import read_runs

    path = tmp_path / "deep.toml"
    path.write_text("x = " + "[" * DEEP + "]" * DEEP + "\n", encoding="utf-8")
    for reader in (read_tasks_toml, read_runs):
        with pytest.raises(GarnavError, match="nested too deeply"):
            reader(path)


def test_class5_deep_json_route_document(tmp_path, capsys):
    path = tmp_path / "deep.json"
    path.write_text("[" * DEEP + "]" * DEEP, encoding="utf-8")
    assert main(["show", DEMO, str(path), "--sheet", str(tmp_path / "s.svg")]) == 2
    assert "nested too deeply" in capsys.readouterr().err
