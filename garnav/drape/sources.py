"""Where a command gets its garment and drape: a spec file (with its own drape) or a mesh alone.

File reading happens here and in :mod:`garnav.drape.meshio`; the computation stays in the pure
modules.
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import Callable

from garnav.drape.drape import Drape, link_drape, load_drape
from garnav.drape.inverse import DEFAULT_MAX_SNAP_MM, pattern_locator
from garnav.drape.meshio import MESH_SUFFIXES, load_uv_mesh
from garnav.model import Garment

__all__ = ["is_mesh_path", "garment_and_drape", "spec_drape_locator"]


def is_mesh_path(path: str | os.PathLike) -> bool:
    """True when the file name ends like a mesh (.obj, .gltf, .glb, .ply)."""
    return Path(path).suffix.lower() in MESH_SUFFIXES


def garment_and_drape(
    path: str | os.PathLike, drape: str | None = None, optional: bool = False,
    cache_dir: str | os.PathLike | None = None,
) -> tuple[Garment, Drape | None]:
    """Read a garment and, when asked, its drape.

    Parameters
    ----------
    path : path-like
        A garment spec (.toml), or a UV-mapped mesh: then the garment is derived from the mesh's
        UV islands (:func:`~garnav.drape.import_mesh.garment_from_mesh`) and linked to it.
    drape : str, optional
        For a spec: None = no drape; "" = the spec's own drape; else a mesh file.
    optional : bool
        With ``drape=""``: a spec that names no drape gives ``(garment, None)`` instead of an error.
        (A drape the spec names but that cannot be read is still an error.)
    cache_dir : path, optional
        Folder of the on-disk cache of linked drapes of a spec (:mod:`garnav.drape.cache`);
        None = no cache. A mesh given as ``path`` is linked afresh.

    Returns
    -------
    (Garment, Drape or None)
    """
    if is_mesh_path(path):
        from garnav.drape.import_mesh import garment_from_mesh

        mesh = load_uv_mesh(path)
        garment = garment_from_mesh(mesh, name=Path(path).stem, drape=Path(path).name)
        return garment, link_drape(garment, mesh)
    from garnav.spec import load_garment

    garment = load_garment(path)
    if drape is None or (optional and not drape and garment.drape is None):
        return garment, None
    return garment, load_drape(garment, drape, str(Path(path).parent), cache_dir=cache_dir)


def spec_drape_locator(
    garment: Garment, folder: str | os.PathLike, max_snap_mm: float = DEFAULT_MAX_SNAP_MM,
    cache_dir: str | os.PathLike | None = None,
) -> Callable | None:
    """A ``locate_3d(xyz) -> (piece, x, y)`` that reads the garment's own drape on first use
    (through the drape cache in ``cache_dir``, when given).

    None when the garment names no drape (world points then get the planner's own message).
    """
    if garment.drape is None:
        return None
    cache: dict = {}

    def locate(xyz):
        if "locate" not in cache:
            drape = load_drape(garment, None, str(folder), cache_dir=cache_dir)
            cache["locate"] = pattern_locator(drape, garment, max_snap_mm)
        return cache["locate"](xyz)

    return locate
