"""Write files so that a reader never sees a half-written one.

Data goes to a temporary file in the target's folder, is flushed to disk, then renamed over the
target (``os.replace`` is atomic on POSIX and Windows within one file system). On any error the
temporary file is removed and the target is left as it was.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from garnav.errors import GarnavError

__all__ = ["write_bytes_atomic", "write_text_atomic"]


def write_bytes_atomic(path: str | os.PathLike, data: bytes) -> Path:
    """Write ``data`` to ``path`` atomically; create parent folders. Returns the path."""
    target = Path(path)
    try:
        target.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=target.parent)
    except OSError as exc:
        raise GarnavError(f"{target}: cannot write: {exc.strerror or exc}") from None
    try:
        # mkstemp makes the file private (0600); give it the mode a plain open() would.
        os.chmod(tmp, 0o666 & ~_umask())
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, target)
    except BaseException as exc:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        if isinstance(exc, OSError):
            raise GarnavError(f"{target}: cannot write: {exc.strerror or exc}") from None
        raise
    return target


def _umask() -> int:
    """The process's file-creation mask (read by setting and restoring it)."""
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def write_text_atomic(path: str | os.PathLike, text: str) -> Path:
    """Write UTF-8 ``text`` (with ``\\n`` line ends) to ``path`` atomically."""
    return write_bytes_atomic(path, text.encode("utf-8"))
