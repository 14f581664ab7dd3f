"""An on-disk cache of linked drapes (numpy ``.npz``, no pickle; :mod:`garnav.npzcache`).

What :func:`~garnav.drape.drape.load_drape` computes from an OBJ file — the parsed and welded
mesh (:func:`~garnav.drape.meshio.uv_mesh_from_arrays`), its UV topology
(:func:`~garnav.drape.uvtopo.uv_topology`), the face → piece map and the pattern corners of
:func:`~garnav.drape.drape.link_drape`, after its verification passed — is stored as arrays, so a
repeated command on the same garment reads them instead of parsing, welding, linking and verifying
again. A drape read back is equal to the one computed, array for array (dtypes and read-only flags
included).

The key is a SHA-256 of the mesh file's bytes, the garment (its full ``repr``: pieces, placements,
seams — everything the link and its verification read), the options, :data:`DRAPE_LINK_VERSION`,
the garnav, numpy and scipy versions and the shapely / GEOS versions. Only OBJ meshes are cached:
garnav parses them itself from the bytes it hashed; glTF may point at other files (buffers) and
PLY/GLB go through trimesh, which reads the file on its own. A file whose key does not match, or
that cannot be read, is ignored and rebuilt; a cache folder that cannot be written only costs the
link. A drape that fails to load or to verify is never stored, so its error is raised again.
"""

from __future__ import annotations

import hashlib
from pathlib import Path

import numpy as np

from garnav.drape.drape import Drape, link_drape
from garnav.drape.meshio import load_uv_mesh, mesh_file_bytes, readonly_array
from garnav.drape.uvtopo import UVTopology
from garnav.errors import GarnavError
from garnav.model import Garment
from garnav.npzcache import cache_file, content_key, read_npz, write_npz

__all__ = ["DRAPE_LINK_VERSION", "CACHED_SUFFIXES", "drape_cache_key", "drape_cache_path", "save_drape",
           "load_cached_drape", "load_drape_cached"]

#: Part of every key: change it when loading, welding, the UV topology, the link or its
#: verification change what they compute.
DRAPE_LINK_VERSION = "1"

#: Mesh formats whose drapes are cached (see the module docstring).
CACHED_SUFFIXES = (".obj",)

_MESH_ARRAYS = ("positions", "faces", "corner_uv", "face_piece", "corner_pattern")
_TOPOLOGY_ARRAYS = ("uv_vertex", "neighbor", "island", "boundary", "mate")


def drape_cache_key(garment: Garment, data: bytes, suffix: str, verify: bool) -> str:
    """Hex SHA-256 of the inputs of a drape link: the mesh file's bytes ``data`` and format
    ``suffix``, the garment, ``verify`` and the versions (module docstring)."""
    import scipy

    from garnav import __version__

    return content_key(
        {
            "mesh_sha256": hashlib.sha256(data).hexdigest(),
            "mesh_format": suffix.lower(),
            "garment": repr(garment),
            "options": {"verify": bool(verify)},
            "drape": DRAPE_LINK_VERSION,
            "garnav": __version__,
            "numpy": np.__version__,
            "scipy": scipy.__version__,
        }
    )


def drape_cache_path(folder: str | Path, key: str) -> Path:
    """The drape's file in ``folder``: ``drape-<first 24 hex digits of key>.npz``."""
    return cache_file(folder, "drape", key)


def save_drape(drape: Drape, path: str | Path, key: str) -> Path:
    """Write the arrays of ``drape`` to ``path`` (npz) under ``key``."""
    topo = drape.topology
    meta = {
        "piece_names": list(drape.piece_names),
        "sheet_size_mm": list(drape.sheet_size_mm),
        "n_islands": int(topo.n_islands),
        "notes": list(drape.notes),
    }
    arrays = {name: getattr(drape, name) for name in _MESH_ARRAYS}
    arrays.update({name: getattr(topo, name) for name in _TOPOLOGY_ARRAYS})
    return write_npz(path, key, meta, arrays)


def load_cached_drape(path: str | Path, key: str, source: str) -> Drape | None:
    """The drape stored at ``path`` under ``key`` (its messages name ``source``), or None."""
    found = read_npz(path, key, (*_MESH_ARRAYS, *_TOPOLOGY_ARRAYS))
    if found is None:
        return None
    meta, a = found
    try:
        topology = UVTopology(uv_vertex=a["uv_vertex"], neighbor=a["neighbor"], island=a["island"],
                              n_islands=int(meta["n_islands"]), boundary=a["boundary"], mate=a["mate"])
        w, h = (float(v) for v in meta["sheet_size_mm"])
        return Drape(
            **{name: readonly_array(a[name]) for name in _MESH_ARRAYS},
            piece_names=tuple(str(p) for p in meta["piece_names"]),
            sheet_size_mm=(w, h),
            topology=topology,
            source=source,
            notes=tuple(str(n) for n in meta["notes"]),
        )
    except (KeyError, TypeError, ValueError):  # a file of another layout under this name
        return None


def load_drape_cached(garment: Garment, mesh: str, cache_dir: str | Path, *, verify: bool = True) -> Drape:
    """:func:`~garnav.drape.drape.load_drape` of the mesh file ``mesh`` through the cache in
    ``cache_dir``: read from there when stored under the key of this file's bytes, else linked
    and stored. Meshes of other formats than :data:`CACHED_SUFFIXES` are linked as always."""
    if Path(mesh).suffix.lower() not in CACHED_SUFFIXES:
        return link_drape(garment, load_uv_mesh(mesh), verify=verify)
    data = mesh_file_bytes(mesh)
    key = drape_cache_key(garment, data, Path(mesh).suffix, verify)
    path = drape_cache_path(cache_dir, key)
    drape = load_cached_drape(path, key, str(mesh))
    if drape is None:
        drape = link_drape(garment, load_uv_mesh(mesh, data=data), verify=verify)
        try:
            save_drape(drape, path, key)
        except GarnavError:
            pass  # a cache that cannot be written only costs time
    return drape
