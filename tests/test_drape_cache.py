"""The on-disk cache of linked drapes (garnav.drape.cache): a drape read back equals the one
linked from the mesh, array for array; a damaged or stale file is ignored and rebuilt; a changed
mesh or garment misses; a folder that cannot be written only costs the link.

The reference is the uncached :func:`garnav.drape.load_drape` (parse, weld, UV topology, link,
verify), compared exactly: dtypes, shapes, values and read-only flags."""

from __future__ import annotations

import dataclasses
import zipfile

import numpy as np
import pytest

import drape_meshes as dm
import garnav.drape.cache as drape_cache
from garnav.drape.drape import Drape, load_drape
from garnav.drape.meshio import save_obj
from garnav.npzcache import read_npz, write_npz

MESH_FIELDS = ("positions", "faces", "corner_uv", "face_piece", "corner_pattern")
TOPOLOGY_FIELDS = ("uv_vertex", "neighbor", "island", "boundary", "mate")


@pytest.fixture
def panels(tmp_path):
    """The folded two-panel garment and its drape written as OBJ (small: 1,600 triangles)."""
    g, m = dm.folded_panels(nx=20, ny=20)
    return g, str(save_obj(m, tmp_path / "panels.obj"))


def _assert_same(a: Drape, b: Drape) -> None:
    for name in MESH_FIELDS:
        x, y = getattr(a, name), getattr(b, name)
        assert x.dtype == y.dtype and x.shape == y.shape, name
        assert x.flags.writeable == y.flags.writeable and y.flags.c_contiguous, name
        np.testing.assert_array_equal(x, y, err_msg=name)
    for name in TOPOLOGY_FIELDS:
        x, y = getattr(a.topology, name), getattr(b.topology, name)
        assert x.dtype == y.dtype and x.shape == y.shape, name
        np.testing.assert_array_equal(x, y, err_msg=name)
    assert a.topology.n_islands == b.topology.n_islands
    assert (a.piece_names, a.sheet_size_mm, a.source, a.notes) == (b.piece_names, b.sheet_size_mm, b.source, b.notes)
    assert a.pattern_key == b.pattern_key  # what every pattern-side query reads


def _links(monkeypatch) -> list[int]:
    """Count the calls of link_drape made through the cache."""
    calls: list[int] = []
    real = drape_cache.link_drape

    def counting(*args, **kwargs):
        calls.append(1)
        return real(*args, **kwargs)

    monkeypatch.setattr(drape_cache, "link_drape", counting)
    return calls


def test_read_back_equals_the_link(panels, tmp_path, monkeypatch):
    g, mesh = panels
    reference = load_drape(g, mesh)
    calls = _links(monkeypatch)
    cache = tmp_path / "cache"
    first = load_drape(g, mesh, cache_dir=cache)
    files = sorted(cache.glob("drape-*.npz"))
    assert len(files) == 1 and calls == [1]
    second = load_drape(g, mesh, cache_dir=cache)
    assert calls == [1]  # read, not linked again
    _assert_same(reference, first)
    _assert_same(reference, second)
    # the pattern-side answers of the read-back drape are those of the linked one
    pts = np.array([[10.0, 10.0], [150.0, 200.0], [299.0, 399.0]])
    hr, hs = reference.locate("right", pts), second.locate("right", pts)
    np.testing.assert_array_equal(hr.face, hs.face)
    np.testing.assert_array_equal(hr.bary, hs.bary)
    np.testing.assert_array_equal(reference.vertex_normals, second.vertex_normals)


@pytest.mark.parametrize("damage", ["garbage", "truncated", "empty"])
def test_damaged_file_is_rebuilt(panels, tmp_path, monkeypatch, damage):
    g, mesh = panels
    cache = tmp_path / "cache"
    reference = load_drape(g, mesh, cache_dir=cache)
    (path,) = cache.glob("drape-*.npz")
    whole = path.read_bytes()
    path.write_bytes({"garbage": b"not an npz file", "truncated": whole[: len(whole) // 2], "empty": b""}[damage])
    calls = _links(monkeypatch)
    again = load_drape(g, mesh, cache_dir=cache)
    assert calls == [1]
    _assert_same(reference, again)
    assert zipfile.is_zipfile(path)  # rewritten whole: the next call reads it
    _assert_same(reference, load_drape(g, mesh, cache_dir=cache))
    assert calls == [1]


def test_stale_file_is_ignored(panels, tmp_path, monkeypatch):
    g, mesh = panels
    cache = tmp_path / "cache"
    reference = load_drape(g, mesh, cache_dir=cache)
    (path,) = cache.glob("drape-*.npz")
    # a file of another key at this name (as after a prefix collision): ignored and replaced
    found = read_npz(path, _key_of(path), drape_cache._MESH_ARRAYS + drape_cache._TOPOLOGY_ARRAYS)
    assert found is not None
    meta, arrays = found
    arrays["corner_pattern"] = arrays["corner_pattern"] + 1.0
    write_npz(path, "0" * 64, {k: v for k, v in meta.items() if k != "key"}, arrays)
    calls = _links(monkeypatch)
    again = load_drape(g, mesh, cache_dir=cache)
    assert calls == [1]
    _assert_same(reference, again)


def _key_of(path) -> str:
    import json

    with np.load(path, allow_pickle=False) as data:
        return json.loads(str(data["meta"]))["key"]


def test_changed_mesh_or_garment_misses(panels, tmp_path, monkeypatch):
    g, mesh = panels
    cache = tmp_path / "cache"
    load_drape(g, mesh, cache_dir=cache)
    calls = _links(monkeypatch)
    # the same mesh moved 1 mm: other bytes, other key
    _, m = dm.folded_panels(nx=20, ny=20)
    moved = dataclasses.replace(m, positions=m.positions + np.array([0.0, 0.0, 1.0]))
    save_obj(moved, mesh)
    shifted = load_drape(g, mesh, cache_dir=cache)
    assert calls == [1]
    np.testing.assert_array_equal(shifted.positions, load_drape(g, mesh).positions)
    # another garment (renamed): other key
    renamed = dataclasses.replace(g, name="panels_renamed")
    load_drape(renamed, mesh, cache_dir=cache)
    assert calls == [1, 1]
    assert len(list(cache.glob("drape-*.npz"))) == 3


def test_unwritable_folder_only_costs_the_link(panels, tmp_path):
    g, mesh = panels
    blocker = tmp_path / "a_file"
    blocker.write_text("not a folder")
    d = load_drape(g, mesh, cache_dir=blocker / "cache")
    _assert_same(load_drape(g, mesh), d)
