"""The CLI loads every command or says which one it cannot load; --help stays light."""

import subprocess
import sys

import pytest

import garnav.cli as cli


def test_a_command_that_cannot_be_imported_stops_the_cli_naming_it(monkeypatch):
    monkeypatch.setattr(cli, "COMMANDS", (*cli.COMMANDS, "no_such_command"))
    with pytest.raises(ImportError, match=r"the 'no_such_command' command cannot be loaded"):
        cli.build_parser()


def test_every_listed_command_is_registered():
    help_text = cli.build_parser().format_help()
    for name in ("demo", "check", "route", "show", "import"):
        assert f"    {name} " in help_text


def test_help_does_not_load_the_heavy_parts():
    code = (
        "import sys, garnav.cli as c; c.build_parser().format_help(); "
        "print(sorted(m for m in ('pyvista', 'trimesh', 'scipy.spatial', 'garnav.plan', 'garnav.drape', "
        "'garnav.export', 'matplotlib') if m in sys.modules))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert out.strip() == "[]"
