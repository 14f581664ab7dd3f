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

__all__ = ["read_text", "file_problem", "NOT_UTF8"]

NOT_UTF8 = "is not UTF-8 text"


def file_problem(path: str | os.PathLike) -> str | None:
    """Why ``path`` cannot be read as a file ("does not exist", "is a folder, not a file"), or None."""
    p = Path(path)
    if p.is_dir():
        return "is a folder, not a file"
    if not p.exists():
        return "does not exist"
    return None


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
        ``"cannot be read: <system reason>"`` or the not-UTF-8 reason.
    """
    p = Path(path)
    try:
        raw = p.read_bytes()
    except OSError as exc:
        reason = file_problem(p) or f"cannot be read: {exc.strerror or exc}"
        raise error(reason) from None
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise error(binary_reason or f"{NOT_UTF8} (bad byte at offset {exc.start})") from None
