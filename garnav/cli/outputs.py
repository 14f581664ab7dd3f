"""The output plan every garnav command runs under: check the outputs, write them as one set, print.

:func:`run_planned` is how the dispatcher runs a command (docs/outputs.md):

1. **Check before any work**: every input file named on the command line must be there and
   whole (:func:`check_inputs`: the words of :mod:`garnav.textio`, before any heavy module is
   imported, so a mistyped file name is answered at once); every output option of the command
   (:data:`ROLES`) is refused when it is the same file as one of the command's inputs (resolved
   real path or file identity, :func:`os.path.samefile`'s test) or as another of its outputs, when
   it is a folder, FIFO, device or socket (:func:`garnav.atomic.check_target`; a symbolic link is
   written through), when its extension is not one the option can write, or when it is ``-``
   where the format cannot go to standard output.
2. **Work inside one output set** (:func:`garnav.atomic.writing_set`): every file is staged next
   to its target; files read on the way (``garnav.textio``) join the inputs, so an output that
   turns out to be, say, the spec's own drape mesh is refused before anything is replaced. An
   error, an interrupt or SIGTERM removes every staged temporary file and leaves the old files.
3. **Files first, then print**: the command's standard output is held while it works; when it
   returns, the set is committed (all files in place, marked incomplete while being renamed),
   then one ``wrote FILE`` line is printed per file (one ``wrote DIR/: N files`` line per output
   folder), then the held text, with control characters escaped (:func:`terminal_safe`).
   A reader that goes away (``| head -1``) cannot lose a file: they are all in place before the
   first byte is printed.

With ``-`` as an output, the document goes to standard output after the files and the messages
go to standard error, so the two never mix.
"""

from __future__ import annotations

import argparse
import contextlib
import io
import os
import signal
import sys
from collections.abc import Callable, Iterator
from dataclasses import dataclass
from pathlib import Path

from garnav.atomic import STDOUT, OutputSet, check_target, writing_set
from garnav.errors import QueryError
from garnav.textio import file_problem, incomplete_reason

__all__ = ["Output", "Roles", "ROLES", "check_inputs", "check_outputs", "run_planned", "terminal_safe",
           "declared_paths"]


@dataclass(frozen=True)
class Output:
    """One output option of a command.

    Attributes
    ----------
    dest : str
        The argparse destination (``args.<dest>``).
    option : str
        How the user wrote it, for messages (``--json``).
    stdout : bool
        ``-`` means standard output (text formats); otherwise ``-`` is refused.
    suffixes : tuple of str
        Extensions the option can write (lower case, with the dot); empty: any.
    folder : bool
        The option names a folder that receives several files.
    """

    dest: str
    option: str
    stdout: bool = False
    suffixes: tuple[str, ...] = ()
    folder: bool = False


@dataclass(frozen=True)
class Roles:
    """The inputs (argparse destinations holding a path or a list of paths) and outputs of a
    command; ``derived`` gives further outputs from the arguments (e.g. a default file name)."""

    inputs: tuple[str, ...] = ()
    outputs: tuple[Output, ...] = ()
    derived: Callable[[argparse.Namespace], list[tuple[str, str]]] | None = None
    #: A long-running command (a live link, a resumable study): its outputs are checked before
    #: work, but it prints and writes as it goes (no held text, no staged set).
    live: bool = False


PNG = (".png",)
SHEET = (".svg", ".png")


def _simulate_truth(args: argparse.Namespace) -> list[tuple[str, str]]:
    log = getattr(args, "log", None)
    if getattr(args, "truth", None) or not log or log == STDOUT:
        return []
    return [("--truth (default: beside --log)", str(Path(log).with_suffix("")) + ".truth.csv")]


#: Every command's inputs and outputs, by the name ``garnav --help`` lists. A new command adds
#: its entry here (tests/test_hardening_outputs.py checks that every command has one).
ROLES: dict[str, Roles] = {
    "demo": Roles((), (Output("out", "--out", folder=True),)),
    "check": Roles(("garment", "drape"), (Output("json", "--json", stdout=True),)),
    "route": Roles(("garment", "drape", "robot"), (
        Output("json", "--json", stdout=True), Output("csv", "--csv", stdout=True),
        Output("commands", "--commands", stdout=True), Output("mcap", "--mcap", suffixes=(".mcap",)))),
    "show": Roles(("garment", "routes"), (
        Output("screenshot", "--screenshot", suffixes=PNG), Output("sheet", "--sheet", suffixes=SHEET))),
    "import": Roles(("mesh", "seams"), (
        Output("output", "--out", stdout=True), Output("propose_seams", "--propose-seams", stdout=True))),
    "export-pattern": Roles(("spec",), (
        Output("dxf", "--dxf", stdout=True, suffixes=(".dxf",)), Output("svg", "--svg", stdout=True, suffixes=(".svg",)),
        Output("seams_out", "--seams-out", stdout=True))),
    "page": Roles(("garment", "routes", "fleet", "drift"), (
        Output("out", "--out", stdout=True, suffixes=(".html", ".htm")),)),
    "sweep": Roles(("garment", "drape"), (
        Output("json", "--json"), Output("csv", "--csv", stdout=True), Output("commands", "--commands", stdout=True),
        Output("sheet", "--sheet", suffixes=SHEET), Output("screenshot", "--screenshot", suffixes=PNG))),
    "fleet": Roles(("tasks", "garment"), (
        Output("json", "--json", stdout=True), Output("commands_dir", "--commands-dir", folder=True),
        Output("gif", "--gif", suffixes=(".gif",)), Output("drape_gif", "--drape-gif", suffixes=(".gif",)),
        Output("chart", "--chart", suffixes=SHEET))),
    "drift": Roles(("route", "garment"), (Output("json", "--json", stdout=True),)),
    "simulate": Roles(("route", "garment"), (Output("log", "--log"), Output("truth", "--truth", stdout=True)),
                      derived=_simulate_truth),
    "track": Roles(("garment", "log", "plan"), (
        Output("json", "--json", stdout=True), Output("sheet", "--sheet", suffixes=SHEET),
        Output("screenshot", "--screenshot", suffixes=PNG))),
    "calibrate": Roles(("runs", "garment"), (Output("out", "--out", stdout=True),)),
    "study": Roles(("study",), (Output("out", "--out", folder=True),), live=True),
    "robot-sim": Roles(("garment", "robot"), (Output("log", "--log"), Output("truth", "--truth")), live=True),
    "station": Roles(("garment",), (Output("log", "--log"), Output("record", "--record", suffixes=(".mcap",))), live=True),
}


def _values(args: argparse.Namespace, dest: str) -> list[str]:
    value = getattr(args, dest, None)
    if value is None or value == "":
        return []
    if isinstance(value, (list, tuple)):
        return [str(v) for v in value if v not in (None, "")]
    return [str(value)]


def declared_paths(args: argparse.Namespace) -> tuple[list[str], list[tuple[Output | None, str, str]]]:
    """(input paths, [(output, option text, path)]) of a parsed command line."""
    roles = ROLES.get(getattr(args, "command", "") or "", Roles())
    inputs = [v for d in roles.inputs for v in _values(args, d)]
    outputs: list[tuple[Output | None, str, str]] = [(o, o.option, v) for o in roles.outputs for v in _values(args, o.dest)]
    if roles.derived is not None:
        outputs += [(None, label, path) for label, path in roles.derived(args)]
    return inputs, outputs


def _same(a: str, b: str) -> bool:
    """Whether paths ``a`` and ``b`` name the same file: equal resolved real paths, or the same
    (device, inode) when both exist (hard links, bind mounts)."""
    if os.path.realpath(a) == os.path.realpath(b):
        return True
    try:
        return os.path.samefile(a, b)
    except OSError:
        return False


def check_inputs(args: argparse.Namespace) -> None:
    """Refuse, before any work, an input file named on the command line that is missing, a
    folder, or part of an incompletely written output set. Raises
    :class:`~garnav.errors.QueryError` ``"<path>: <reason>"`` with the reasons every reader gives
    (:mod:`garnav.textio`)."""
    for path in declared_paths(args)[0]:
        reason = file_problem(path) or incomplete_reason(path)
        if reason is not None:
            raise QueryError(f"{path}: {reason}")


def check_outputs(args: argparse.Namespace) -> bool:
    """Refuse a bad output plan before any work (see the module text); True when an output is
    standard output. Raises :class:`~garnav.errors.QueryError` naming the option and the reason."""
    inputs, outputs = declared_paths(args)
    to_stdout = False
    seen: list[tuple[str, str]] = []
    for out, option, path in outputs:
        if path == STDOUT:
            if out is None or not out.stdout:
                what = "a folder" if out is not None and out.folder else "this output"
                raise QueryError(f"{option} -: {what} cannot go to standard output; give a file name")
            if to_stdout:
                raise QueryError(f"{option} -: only one output can go to standard output")
            to_stdout = True
            continue
        if out is not None and out.suffixes and Path(path).suffix.lower() not in out.suffixes:
            raise QueryError(f"{option} {path}: cannot write a '{Path(path).suffix or 'no extension'}' file here: "
                             f"use a {' or '.join(out.suffixes)} file name")
        if out is not None and out.folder:
            if os.path.exists(path) and not os.path.isdir(path):
                raise QueryError(f"{option} {path}: is not a folder (it names an existing file)")
        else:
            try:
                check_target(path)
            except Exception as exc:  # GarnavError: say which option
                raise QueryError(f"{option} {exc}") from None
        for inp in inputs:
            if _same(path, inp):
                raise QueryError(f"{option} {path}: refused: it is the input {inp} of the same command; "
                                 "writing it would destroy what is read — give another file name")
        for other_option, other in seen:
            if _same(path, other):
                raise QueryError(f"{option} {path}: refused: {other_option} writes the same file; "
                                 "give each output its own file name")
        seen.append((option, path))
    return to_stdout


def terminal_safe(text: str) -> str:
    """``text`` with every control character but newline and tab written as an escape (``\\x1b``,
    ``\\u009b``), so that a name from a file cannot move the cursor, clear the screen or retitle a
    terminal.

    >>> terminal_safe("pocket\\x1b[2J left\\tok")
    'pocket\\\\x1b[2J left\\tok'
    """
    out = []
    for ch in text:
        code = ord(ch)
        if ch in "\n\t" or not (code < 0x20 or 0x7F <= code < 0xA0 or code in (0x2028, 0x2029)):
            out.append(ch)
        elif code < 0x100:
            out.append(f"\\x{code:02x}")
        else:
            out.append(f"\\u{code:04x}")
    return "".join(out)


@contextlib.contextmanager
def _sigterm_as_exit() -> Iterator[None]:
    """SIGTERM ends the run through Python's unwinding (exit status 143), so staged temporary
    files are removed; SIGKILL cannot be caught — its temporaries go with the next write."""
    try:
        old = signal.signal(signal.SIGTERM, _exit_143)
    except ValueError:  # not the main thread
        yield
        return
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, old)


def _exit_143(signum, frame):
    raise SystemExit(143)


def _wrote_lines(args: argparse.Namespace, files: list[str]) -> list[str]:
    """One ``wrote FILE`` per file; files inside an output folder are counted on one line."""
    folders = [p for o, _, p in declared_paths(args)[1] if o is not None and o.folder and p != STDOUT]
    counts = {f: 0 for f in folders}
    lines = []
    for shown in files:
        home = next((f for f in folders if Path(os.path.abspath(shown)).is_relative_to(os.path.abspath(f))), None)
        if home is not None:
            counts[home] += 1
        else:
            lines.append(f"wrote {shown}")
    lines += [f"wrote {f.rstrip('/')}/: {n} file{'s' if n != 1 else ''}" for f, n in counts.items() if n]
    return lines


def run_planned(args: argparse.Namespace) -> int:
    """Run ``args.func(args)`` under the output plan; returns its exit status."""
    check_inputs(args)
    to_stdout = check_outputs(args)
    if ROLES.get(getattr(args, "command", "") or "", Roles()).live:
        return int(args.func(args) or 0)
    output_set = OutputSet(stdout_ok=to_stdout)
    for path in declared_paths(args)[0]:
        output_set.add_input(path)
    held = io.StringIO()
    try:
        with _sigterm_as_exit(), writing_set(output_set), contextlib.redirect_stdout(held):
            status = int(args.func(args) or 0)
            output_set.commit()
    except BaseException:
        _emit(held.getvalue(), sys.stderr if to_stdout else sys.stdout)  # what it said before failing
        raise
    data = output_set.stdout_data
    if data is not None:
        sys.stdout.flush()
        sys.stdout.buffer.write(data)
        sys.stdout.buffer.flush()
    messages = sys.stderr if to_stdout else sys.stdout
    wrote = _wrote_lines(args, [s.shown for s in output_set.files if s.temp is not None])
    _emit("".join(f"{line}\n" for line in wrote) + held.getvalue(), messages)
    return status


def _emit(text: str, stream) -> None:
    if text:
        stream.write(terminal_safe(text))
        stream.flush()
