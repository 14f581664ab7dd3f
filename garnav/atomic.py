"""Write files so that a reader never sees a half-written one, nor a half-written set of them.

One file
    Data goes to a temporary sibling ``.NAME.garnav-PID-XXXX.tmp`` in the target's folder, is
    flushed to disk, then renamed over the target (``os.replace`` is atomic on POSIX and Windows
    within one file system). On any error the temporary file is removed and the target is left as
    it was; temporaries of a process that was killed (SIGKILL cannot be caught) are removed by the
    next write to the same target.

Special targets (:func:`check_target`)
    A folder, FIFO, device or socket is refused, never replaced. A symbolic link is *written
    through*: its final target (a regular file, or a new file in an existing folder) receives the
    data and the link stays a link. A link to a special file, a dangling link to a missing folder,
    or a loop of links is refused.

A set of files (:class:`OutputSet`, :func:`writing_set`)
    Inside ``with writing_set() as s:`` every write through this module is *staged* (written and
    flushed to its temporary sibling) instead of renamed; nothing visible changes while the work
    runs. :meth:`OutputSet.commit` then marks every target of a set of two or more files
    incomplete (``.NAME.garnav-incomplete`` beside it), renames every staged file into place and
    removes the marks. A run killed at any moment therefore leaves either the old files, the new
    files, or files of which every one of the set carries its mark; :func:`incomplete_mark` tells
    a reader (``garnav.textio.read_text`` checks it) and docs/outputs.md describes the rule.
    Targets are compared by resolved real path and file identity (``os.path.samefile``): one set
    never writes the same file twice, and never writes a file that was read as an input of the same
    run (:meth:`OutputSet.add_input`; ``garnav.textio`` adds every file it reads).

The active set is held in a :class:`contextvars.ContextVar`, like :func:`decimal.localcontext`:
a scoped value set and reset by the ``with`` statement (never a module-level cache), so the
existing writers (route JSON, sheets, pages, meshes) join a set without a new argument.
"""

from __future__ import annotations

import contextlib
import contextvars
import os
import re
import stat
import tempfile
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path

from garnav.errors import GarnavError

__all__ = [
    "write_bytes_atomic",
    "write_text_atomic",
    "check_target",
    "OutputSet",
    "writing_set",
    "active_set",
    "incomplete_mark",
    "STDOUT",
]

#: The path that means "standard output" where a command allows it (a file named ``-`` is ``./-``
#: written as an absolute path).
STDOUT = "-"

_TEMP_SUFFIX = ".tmp"
_MARK_SUFFIX = ".garnav-incomplete"

_ACTIVE: contextvars.ContextVar[OutputSet | None] = contextvars.ContextVar("garnav_output_set", default=None)


def _kind(mode: int) -> str:
    if stat.S_ISDIR(mode):
        return "a folder"
    if stat.S_ISFIFO(mode):
        return "a FIFO (named pipe)"
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return "a device"
    if stat.S_ISSOCK(mode):
        return "a socket"
    return "not a regular file"


def check_target(path: str | os.PathLike) -> Path:
    """The regular file a write to ``path`` goes to (symbolic links followed), or a GarnavError.

    Parameters
    ----------
    path : str or path-like
        The target as given.

    Returns
    -------
    Path
        ``path`` itself when it is not a link; else the link's final target (absolute).

    Raises
    ------
    GarnavError
        ``"<path>: cannot write: it is a FIFO (named pipe); garnav never replaces a special file ..."``
        for a folder, FIFO, device or socket (also behind a link); a dangling link into a missing
        folder or a loop of links.
    """
    given = Path(path)
    try:
        st = os.lstat(given)
    except FileNotFoundError:
        return given
    except OSError as exc:
        raise GarnavError(f"{given}: cannot write: {exc.strerror or exc}") from None
    target = given
    if stat.S_ISLNK(st.st_mode):
        try:
            target = Path(os.path.realpath(given, strict=False))
            st = os.stat(given)
        except FileNotFoundError:
            if not target.parent.is_dir():
                raise GarnavError(f"{given}: cannot write: it is a symbolic link to {target}, whose folder "
                                  "does not exist") from None
            return target
        except OSError as exc:  # a loop of links
            raise GarnavError(f"{given}: cannot write: it is a symbolic link that cannot be followed "
                              f"({exc.strerror or exc})") from None
    if not stat.S_ISREG(st.st_mode):
        via = f" (the symbolic link points to {target})" if target != given else ""
        raise GarnavError(f"{given}: cannot write: it is {_kind(st.st_mode)}{via}; garnav never replaces "
                          "a special file — give the path of a regular file"
                          + ("; '-' writes to standard output where the option allows it"
                             if not stat.S_ISDIR(st.st_mode) else ""))
    return target


def incomplete_mark(path: str | os.PathLike) -> Path:
    """The mark ``.NAME.garnav-incomplete`` beside ``path``: while it exists, the file at ``path``
    belongs to a set of outputs whose writing was stopped before every file was in place."""
    p = Path(path)
    return p.with_name(f".{p.name}{_MARK_SUFFIX}")


def _remove_stale_temps(target: Path) -> None:
    """Remove temporaries of ``target`` left by processes that no longer run (killed runs)."""
    pattern = re.compile(rf"^\.{re.escape(target.name)}\.garnav-(\d+)-.*{re.escape(_TEMP_SUFFIX)}$")
    try:
        names = os.listdir(target.parent)
    except OSError:
        return
    for name in names:
        m = pattern.match(name)
        if m is None or int(m.group(1)) == os.getpid() or _alive(int(m.group(1))):
            continue
        with contextlib.suppress(OSError):
            os.unlink(target.parent / name)


def _alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except OSError:  # exists, owned by someone else
        return True
    return True


def _stage(target: Path, data: bytes) -> Path:
    """Write ``data`` to a flushed temporary sibling of ``target``; returns the temporary path."""
    try:
        target.parent.mkdir(parents=True, exist_ok=True)
        _remove_stale_temps(target)
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.garnav-{os.getpid()}-", suffix=_TEMP_SUFFIX,
                                   dir=target.parent)
    except OSError as exc:
        raise GarnavError(f"{target}: cannot write: {exc.strerror or exc}") from None
    try:
        # mkstemp makes the file private (0600); give it the mode a plain open() would.
        os.chmod(tmp, 0o666 & ~_umask())
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
    except BaseException as exc:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        if isinstance(exc, OSError):
            raise GarnavError(f"{target}: cannot write: {exc.strerror or exc}") from None
        raise
    return Path(tmp)


def write_bytes_atomic(path: str | os.PathLike, data: bytes, *, outside_set: bool = False) -> Path:
    """Write ``data`` to ``path`` atomically; create parent folders. Returns the path as given.

    Inside :func:`writing_set` the data is staged and the file appears when the set is committed;
    ``outside_set=True`` writes at once even then (for side files such as a cache that are not
    part of a command's result). See :func:`check_target` for links and special files.
    """
    active = None if outside_set else _ACTIVE.get()
    if active is not None:
        return active.stage(path, data)
    target = check_target(path)
    tmp = _stage(target, data)
    try:
        os.replace(tmp, target)
    except BaseException as exc:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        if isinstance(exc, OSError):
            raise GarnavError(f"{path}: cannot write: {exc.strerror or exc}") from None
        raise
    with contextlib.suppress(OSError):
        os.unlink(incomplete_mark(target))  # the file is whole again, on its own
    return Path(path)


def _umask() -> int:
    """The process's file-creation mask (read by setting and restoring it)."""
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def write_text_atomic(path: str | os.PathLike, text: str, *, outside_set: bool = False) -> Path:
    """Write UTF-8 ``text`` (with ``\\n`` line ends) to ``path`` atomically."""
    return write_bytes_atomic(path, text.encode("utf-8"), outside_set=outside_set)


@dataclass(frozen=True)
class Staged:
    """One staged output: as given, where it goes (links followed), its temporary file."""

    shown: str
    target: Path
    temp: Path | None  # None for standard output (``data`` holds the bytes)
    data: bytes = b""


def _identity(path: Path) -> tuple[str, tuple[int, int] | None]:
    """(resolved real path, (device, inode) when the file exists)."""
    real = os.path.realpath(path)
    try:
        st = os.stat(real)
    except OSError:
        return real, None
    return real, (st.st_dev, st.st_ino)


class OutputSet:
    """The files one command run writes, staged until :meth:`commit` (see the module text).

    Parameters
    ----------
    stdout_ok : bool
        Whether a write to ``"-"`` is kept as standard-output data (:attr:`stdout_data`); when
        False a file named ``-`` is written.
    """

    def __init__(self, *, stdout_ok: bool = False):
        self._stdout_ok = stdout_ok
        self._staged: list[Staged] = []
        self._inputs: dict[str, str] = {}  # real path -> as given
        self._input_ids: dict[tuple[int, int], str] = {}
        self._done = False

    # -- inputs ---------------------------------------------------------------------------------
    def add_input(self, path: str | os.PathLike) -> None:
        """Remember a file the run reads: no output of the set may replace it."""
        if str(path) == STDOUT:
            return
        real, ident = _identity(Path(path))
        self._inputs.setdefault(real, str(path))
        if ident is not None:
            self._input_ids.setdefault(ident, str(path))

    def input_named(self, path: str | os.PathLike) -> str | None:
        """The input (as given) that ``path`` is the same file as, or None."""
        real, ident = _identity(Path(path))
        if real in self._inputs:
            return self._inputs[real]
        return self._input_ids.get(ident) if ident is not None else None

    # -- outputs --------------------------------------------------------------------------------
    @property
    def files(self) -> tuple[Staged, ...]:
        """The staged outputs, in the order they were written."""
        return tuple(self._staged)

    @property
    def stdout_data(self) -> bytes | None:
        """Bytes written to ``"-"`` (standard output), or None."""
        for s in self._staged:
            if s.temp is None:
                return s.data
        return None

    def stage(self, path: str | os.PathLike, data: bytes) -> Path:
        """Stage ``data`` for ``path``; refuse a second write to the same file or onto an input."""
        if self._done:
            raise GarnavError(f"{path}: cannot write: the output set is already committed")
        shown = str(path)
        if shown == STDOUT and self._stdout_ok:
            if self.stdout_data is not None:
                raise GarnavError("-: two outputs of one run cannot both go to standard output")
            self._staged.append(Staged(shown, Path(STDOUT), None, bytes(data)))
            return Path(path)
        target = check_target(path)
        used = self.input_named(target)
        if used is not None:
            raise GarnavError(f"{shown}: refused: this output is the input {used} of the same run; "
                              "writing it would destroy what was read — give another file name")
        real, ident = _identity(target)
        for s in self._staged:
            if s.temp is None:
                continue
            r2, i2 = _identity(s.target)
            if r2 == real or (ident is not None and ident == i2):
                raise GarnavError(f"{shown}: refused: the same run writes this file twice (also as {s.shown}); "
                                  "give each output its own file name")
        self._staged.append(Staged(shown, target, _stage(target, data)))
        return Path(path)

    def commit(self) -> None:
        """Put every staged file in place; a set of two or more is marked until all are in place.
        A second call does nothing (a command may commit early, e.g. before opening a window)."""
        if self._done:
            return
        files = [s for s in self._staged if s.temp is not None]
        marks: list[Path] = []
        try:
            if len(files) > 1:
                listing = "".join(f"{s.target}\n" for s in files)
                for s in files:
                    mark = incomplete_mark(s.target)
                    with open(mark, "w", encoding="utf-8") as fh:  # a plain write: it only marks
                        fh.write("garnav: this file's set of outputs is being written; while this mark "
                                 "exists the set is incomplete:\n" + listing)
                        fh.flush()
                        os.fsync(fh.fileno())
                    marks.append(mark)
            for s in files:
                assert s.temp is not None
                os.replace(s.temp, s.target)
        except OSError as exc:
            self.discard()
            raise GarnavError(f"cannot write the outputs: {exc.strerror or exc}") from None
        for s in files:
            with contextlib.suppress(OSError):
                os.unlink(incomplete_mark(s.target))  # also a mark left by an earlier killed run
        self._done = True

    def discard(self) -> None:
        """Remove every staged temporary file; the targets stay as they were."""
        for s in self._staged:
            if s.temp is not None:
                with contextlib.suppress(OSError):
                    os.unlink(s.temp)
        self._done = True


def active_set() -> OutputSet | None:
    """The :class:`OutputSet` of the enclosing :func:`writing_set`, or None."""
    return _ACTIVE.get()


@contextlib.contextmanager
def writing_set(output_set: OutputSet | None = None) -> Iterator[OutputSet]:
    """Stage every write of the block into one :class:`OutputSet`; discard it on any exception.

    The caller commits (``s.commit()``) when the work succeeded; leaving the block uncommitted
    (an error, an interrupt) removes every staged temporary file and changes no target.
    """
    s = output_set if output_set is not None else OutputSet()
    token = _ACTIVE.set(s)
    try:
        yield s
    except BaseException:
        s.discard()
        raise
    finally:
        _ACTIVE.reset(token)
        if not s._done:
            s.discard()
