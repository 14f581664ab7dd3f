"""Read a text file with one set of plain reasons for what can go wrong.

Every reader of a text input (garment specs, route documents, command lists, OBJ meshes) reads
through :func:`read_text`, so the same failure gives the same words whatever the file: the
message is ``"<path>: <reason>"`` wrapped in the caller's error type (each input has its own
:class:`~garnav.errors.GarnavError` subclass).
"""

from __future__ import annotations

import os
from collections.abc import Callable
from pathlib import Path

from garnav.atomic import active_set, incomplete_mark

__all__ = ["read_text", "read_bytes", "decode_text", "read_json_document", "file_problem", "incomplete_reason", "NOT_UTF8"]

NOT_UTF8 = "is not UTF-8 text"


def file_problem(path: str | os.PathLike) -> str | None:
    """Why ``path`` cannot be read as a file ("does not exist", "is a folder, not a file"), or None."""
    p = Path(path)
    if p.is_dir():
        return "is a folder, not a file"
    if not p.exists():
        return "does not exist"
    return None


def incomplete_reason(path: str | os.PathLike) -> str | None:
    """Why the file at ``path`` is not one whole result (its output set was left incomplete by a
    stopped run: :func:`garnav.atomic.incomplete_mark` exists beside it), or None."""
    mark = incomplete_mark(os.path.realpath(path))
    if not mark.exists():
        return None
    return (f"belongs to a set of outputs that was not completely written (a run was stopped while "
            f"writing it; the mark {mark.name} is beside it): write the files again (docs/outputs.md)")


def read_text(
    path: str | os.PathLike,
    error: Callable[[str], Exception],
    *,
    binary_reason: str | None = None,
) -> str:
    """The UTF-8 text of the file at ``path``.

    Parameters
    ----------
    path : str or path-like
    error : callable
        Makes the exception to raise from a reason (e.g. ``lambda r: QueryError(f"{path}: {r}")``).
    binary_reason : str, optional
        The reason given for bytes that are not UTF-8 (default: ``"is not UTF-8 text (bad byte at
        offset N)"``), for formats where that means "a binary file of another kind".

    Raises
    ------
    Exception
        ``error(reason)`` with reason ``"does not exist"``, ``"is a folder, not a file"``,
        ``"cannot be read: <system reason>"``, the not-UTF-8 reason, or the reason of
        :func:`incomplete_reason` for a file of an incompletely written output set.
    """
    return decode_text(read_bytes(path, error), error, binary_reason=binary_reason)


def read_bytes(path: str | os.PathLike, error: Callable[[str], Exception]) -> bytes:
    """The bytes of the file at ``path``, with the checks of :func:`read_text` but no decoding
    (the file is added to the active output set's inputs as well)."""
    p = Path(path)
    try:
        raw = p.read_bytes()
    except OSError as exc:
        reason = file_problem(p) or f"cannot be read: {exc.strerror or exc}"
        raise error(reason) from None
    incomplete = incomplete_reason(p)
    if incomplete is not None:
        raise error(incomplete)
    writing = active_set()
    if writing is not None:  # no output of this run may replace what it read
        writing.add_input(p)
    return raw


def decode_text(raw: bytes, error: Callable[[str], Exception], *, binary_reason: str | None = None) -> str:
    """``raw`` as UTF-8 text; ``error(reason)`` as in :func:`read_text` when it is not."""
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise error(binary_reason or f"{NOT_UTF8} (bad byte at offset {exc.start})") from None


def read_json_document(
    path: str | os.PathLike,
    error: Callable[[str], Exception],
    format_name: str,
    version: int,
    *,
    writer_hint: str = "",
) -> dict:
    """A garnav JSON document (an object with ``format`` and ``version``) read through
    :func:`read_text`, with one style of message for every document kind.

    Parameters
    ----------
    path : str or path-like
    error : callable
        Makes the exception to raise from a whole message (``"<path>: <reason>"``).
    format_name, version
        The ``format`` string and the ``version`` number this reader knows.
    writer_hint : str, optional
        Appended to the wrong-format message, e.g. ``"; write one with 'garnav drift --json'"``.
    """
    p = Path(path)
    doc = json_object_or_value(read_text(p, lambda reason: error(f"{p}: {reason}")), p, error)
    if not isinstance(doc, dict) or doc.get("format") != format_name:
        found = doc.get("format") if isinstance(doc, dict) else type(doc).__name__
        raise error(f"{p}: not a {format_name} document (format is {found!r}){writer_hint}")
    if doc.get("version") != version:
        raise error(f"{p}: {format_name} version {doc.get('version')!r} is not supported "
                    f"(this reader knows {version})")
    return doc


def json_object_or_value(text: str, path: Path, error: Callable[[str], Exception]):
    """``json.loads(text)``, a syntax error given as ``"<path>: not JSON: <msg> at line L, column C"``."""
    import json

    try:
        return json.loads(text, parse_constant=_not_a_json_number, parse_float=_finite_float)
    except json.JSONDecodeError as exc:
        raise error(f"{path}: not JSON: {exc.msg} at line {exc.lineno}, column {exc.colno}") from None
    except ValueError as exc:  # NaN, Infinity, 1e999, an integer of thousands of digits
        raise error(f"{path}: not JSON this reader can take: {exc}") from None
    except RecursionError:
        raise error(f"{path}: not JSON this reader can take: nested too deeply") from None


def toml_object(text: str, path: str | os.PathLike, error: Callable[[str], Exception]) -> dict:
    """``tomllib.loads(text)``; a syntax error, or nesting too deep for the parser, given to
    ``error`` as ``"<path>: not valid TOML: <msg>"``."""
    import tomllib

    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise error(f"{path}: not valid TOML: {exc}") from None
    except RecursionError:
        raise error(f"{path}: not TOML this reader can take: nested too deeply") from None


def _not_a_json_number(name: str):
    raise ValueError(f"{name} is not a JSON number (RFC 8259 §6 allows finite numbers only)")


def _finite_float(text: str) -> float:
    import math

    value = float(text)
    if not math.isfinite(value):
        raise ValueError(f"the number {text[:40]} is too large for a float (it would be infinite)")
    return value
