"""Content-keyed cache files of numpy arrays (``.npz``, read with ``allow_pickle=False``).

One implementation for every on-disk cache of garnav (the navigation graph,
:mod:`garnav.plan.cache`; the drape link, :mod:`garnav.drape.cache`):

* the **key** is a SHA-256 of a JSON text of everything the cached result depends on, plus the
  shapely and GEOS versions (geometry results may differ between them) (:func:`content_key`);
* a file holds the key and a JSON ``meta`` object beside the arrays; it is written to a temporary
  sibling and renamed into place (:func:`garnav.atomic.write_bytes_atomic`), so a reader never
  sees half a file (:func:`write_npz`);
* a file that is missing, damaged (not a zip, truncated, bad CRC, not JSON), lacks an array or
  was stored under another key reads as None, and the caller rebuilds (:func:`read_npz`).

Files are never removed automatically; deleting the folder is always safe.
"""

from __future__ import annotations

import hashlib
import io
import json
import zipfile
import zlib
from pathlib import Path
from typing import Any

import numpy as np

from garnav.atomic import write_bytes_atomic

__all__ = ["content_key", "cache_file", "write_npz", "read_npz"]


def content_key(inputs: dict[str, Any]) -> str:
    """Hex SHA-256 of ``inputs`` (JSON-serialisable) with the shapely and GEOS versions added."""
    import shapely

    text = json.dumps(
        {**inputs, "shapely": shapely.__version__, "geos": shapely.geos_version_string},
        sort_keys=True,
    )
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


def cache_file(folder: str | Path, kind: str, key: str) -> Path:
    """The file of ``kind`` (a file name prefix, e.g. ``navgraph``) under ``key`` in ``folder``."""
    return Path(folder) / f"{kind}-{key[:24]}.npz"


def write_npz(path: str | Path, key: str, meta: dict[str, Any], arrays: dict[str, np.ndarray]) -> Path:
    """Write ``arrays`` and ``meta`` (with ``key`` added) to ``path`` atomically, compressed.

    Raises :class:`~garnav.errors.GarnavError` when the file cannot be written. The file is a side
    file, never part of a command's set of outputs (``outside_set``)."""
    if "meta" in arrays:
        raise ValueError("'meta' is the name of the cache file's own entry")
    buf = io.BytesIO()
    entries: dict[str, Any] = {"meta": np.array(json.dumps({**meta, "key": key})), **arrays}
    np.savez_compressed(buf, **entries)
    return write_bytes_atomic(path, buf.getvalue(), outside_set=True)


def read_npz(path: str | Path, key: str, names: tuple[str, ...]) -> tuple[dict[str, Any], dict[str, np.ndarray]] | None:
    """``(meta, arrays)`` of the file at ``path`` when it was stored under ``key`` and holds every
    array of ``names`` (read into memory); None when it is missing, damaged or stale."""
    try:
        with np.load(Path(path), allow_pickle=False) as data:
            meta = json.loads(str(data["meta"]))
            if not isinstance(meta, dict) or meta.get("key") != key:
                return None
            arrays = {name: np.array(data[name]) for name in names}
    except (OSError, ValueError, KeyError, EOFError, zipfile.BadZipFile, zlib.error):
        # OSError: missing or unreadable; ValueError: not an npz (np.load would need pickle) or
        # not JSON; KeyError: an entry missing; EOFError, BadZipFile, zlib.error: truncated or
        # damaged archive
        return None
    return meta, arrays
