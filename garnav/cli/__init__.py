"""The ``garnav`` command line: a thin layer over the public Python API.

Each sub-command lives in its own module with ``register(subparsers)`` (adds its parser and sets
``func``) and a ``run(args) -> int``. A command module that fails to import stops the CLI with an
``ImportError`` naming the command (never a silently missing command). Command modules import
numpy, the model and the heavy parts (planner, drape, export, rendering) inside ``run``, so that
``--help``, ``--version``, a command's ``--help`` and a missing input file (refused by the output
plan before ``run``) load none of them (tests/test_cli_loading.py). Errors of the
:class:`~garnav.errors.GarnavError` family are printed as one clear message on stderr with exit
status 2; they never show a traceback.
"""

from __future__ import annotations

import argparse
import math
import importlib
import os
import sys

from garnav import __version__
from garnav.errors import GarnavError

__all__ = ["main", "build_parser"]

# Sub-command modules, in the order `garnav --help` lists them.
COMMANDS = ("demo", "check", "route", "show", "import_mesh", "export_pattern", "page", "sweep", "fleet", "drift", "simulate", "track", "calibrate", "study", "robot_sim", "station")


#: The exit statuses every command shares (README, "Exit status"); ``check`` adds 1 for warnings.
EXIT_STATUS = "exit status: 0 done, 2 bad input or no result, 130 interrupted, 141 output pipe closed"


def finite_float(text: str) -> float:
    """argparse type of every number option: a float that is finite (``nan``/``inf`` refused)."""
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"invalid number: {text!r}") from None
    if not math.isfinite(value):
        raise argparse.ArgumentTypeError(f"{text!r} is not a finite number")
    return value


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="garnav",
        description="Plan routes for small robots that drive on clothing.",
    )
    parser.add_argument("--version", action="version", version=f"garnav {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in COMMANDS:
        try:
            module = importlib.import_module(f"garnav.cli.{name}")
        except ImportError as exc:  # a broken installation: say which command, never skip it
            raise ImportError(f"garnav: the '{name}' command cannot be loaded (garnav.cli.{name}): {exc}") from exc
        module.register(sub)
    for command in sub.choices.values():
        for action in vars(command).get("_actions", ()):  # every number option refuses nan and inf
            if action.type is float:  # (argparse keeps a parser's actions in its _actions list)
                action.type = finite_float
        # every command's --help ends with its exit status
        if "exit status" not in (command.epilog or ""):
            command.epilog = f"{command.epilog}\n\n{EXIT_STATUS}" if command.epilog else EXIT_STATUS
    return parser


def main(argv: list[str] | None = None) -> int:
    """Entry point of the ``garnav`` console script. Returns the exit status."""
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "func", None):
        parser.print_help()
        return 2
    from garnav.cli.outputs import run_planned, terminal_safe

    try:
        return run_planned(args)  # outputs checked first, written as one set, then printed
    except GarnavError as exc:
        print(terminal_safe(f"garnav {args.command}: error: {exc}"), file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("garnav: interrupted", file=sys.stderr)
        return 130
    except BrokenPipeError:
        # The reader went away (`garnav demo | head`): stop quietly, as other tools do.
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return 141
