"""The CLI loads every command or says which one it cannot load; ``--help``, ``--version``, each
command's ``--help`` and a missing input file are answered without loading numpy and the rest
(a fast start: benchmarks/startup.py measures it)."""

import json
import subprocess
import sys

import pytest

import garnav.cli as cli
from garnav.cli.outputs import ROLES

#: Modules the start of the command line must not load (each costs tenths of a second).
HEAVY = ("numpy", "scipy", "shapely", "pyvista", "vtk", "vtkmodules", "trimesh", "igl", "networkx",
         "matplotlib", "garnav.model", "garnav.plan", "garnav.drape", "garnav.export")

PROBE = """
import contextlib, io, json, sys
from garnav.cli import main
codes = []
for argv in json.loads(sys.argv[1]):
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        try:
            codes.append(main(argv))
        except SystemExit as exc:
            codes.append(exc.code)
print(json.dumps({"codes": codes, "err": err.getvalue(),
                  "heavy": sorted(m for m in json.loads(sys.argv[2]) if m in sys.modules)}))
"""


def _probe(argvs: list[list[str]]) -> dict:
    """Run ``main(argv)`` for each argv in a fresh interpreter: exit codes, the last stderr, and
    the heavy modules loaded by then."""
    proc = subprocess.run([sys.executable, "-c", PROBE, json.dumps(argvs), json.dumps(HEAVY)],
                          capture_output=True, text=True, check=True, timeout=120)
    return json.loads(proc.stdout)


def _commands() -> dict:
    parser = cli.build_parser()
    return next(a for a in parser._actions if a.dest == "command").choices


def test_a_command_that_cannot_be_imported_stops_the_cli_naming_it(monkeypatch):
    monkeypatch.setattr(cli, "COMMANDS", (*cli.COMMANDS, "no_such_command"))
    with pytest.raises(ImportError, match=r"the 'no_such_command' command cannot be loaded"):
        cli.build_parser()


def test_every_listed_command_is_registered():
    help_text = cli.build_parser().format_help()
    for name in ("demo", "check", "route", "show", "import"):
        assert f"    {name} " in help_text
    assert set(_commands()) == set(ROLES)  # every command, and each declares its files


def test_help_version_and_every_command_help_load_no_heavy_module():
    argvs = [["--help"], ["--version"]] + [[name, "--help"] for name in _commands()]
    res = _probe(argvs)
    assert res["codes"] == [0] * len(argvs)
    assert res["heavy"] == []


def test_every_command_help_lists_its_options_and_the_exit_status():
    for name, parser in _commands().items():
        text = parser.format_help()
        for action in parser._actions:  # (argparse keeps a parser's actions there)
            for option in action.option_strings:
                assert option in text, (name, option)
        flat = " ".join(text.split())  # argparse wraps the epilog to the terminal width
        assert "exit status:" in parser.epilog and flat.endswith(" ".join(parser.epilog.split())), name
    top = cli.build_parser().format_help()
    for name, parser in _commands().items():  # the top-level list shows each command's help line
        assert name in top and parser.description, name


@pytest.mark.parametrize("argv, missing", [
    (["route", "nonexist.toml", "--from", "a", "--to", "b"], "nonexist.toml"),
    (["route", "meshes/sensing_top.toml", "--drape", "none.obj", "--from", "a", "--to", "b"], "none.obj"),
    (["check", "nope.toml"], "nope.toml"),
    (["show", "nope.toml", "--sheet", "x.svg"], "nope.toml"),
    (["drift", "nope.json"], "nope.json"),
    (["sweep", "nope.toml", "--region", "pieces:front", "--json", "s.json"], "nope.toml"),
])
def test_a_missing_input_is_refused_at_once_with_exit_status_2(argv, missing):
    res = _probe([argv])
    assert res["codes"] == [2]
    assert res["err"].strip().endswith(f"error: {missing}: does not exist")
    assert "Traceback" not in res["err"]
    assert res["heavy"] == []  # refused before the planner, the drape or numpy is loaded


def test_a_folder_given_as_an_input_is_refused(tmp_path, capsys):
    assert cli.main(["route", str(tmp_path), "--from", "a", "--to", "b"]) == 2
    assert f"{tmp_path}: is a folder, not a file" in capsys.readouterr().err


def test_light_modules_stay_light():
    code = ("import sys, json, garnav.errors; a = sorted(m for m in sys.modules if m.startswith(('numpy', 'garnav.model'))); "
            "import garnav.spec; b = sorted(m for m in ('scipy', 'networkx', 'trimesh', 'pyvista', 'garnav.mechanics.balance', "
            "'garnav.plan', 'garnav.drape') if m in sys.modules); print(json.dumps([a, b]))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert json.loads(out) == [[], []]


def test_the_package_root_still_offers_the_model():
    import garnav

    assert garnav.Garment.__module__ == "garnav.model" and garnav.SpecError.__module__ == "garnav.errors"
    assert set(garnav.__all__) <= set(dir(garnav))
    with pytest.raises(AttributeError):
        garnav.no_such_name  # noqa: B018
