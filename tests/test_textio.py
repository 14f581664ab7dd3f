"""Every text reader gives the same reasons for the same failures (garnav.textio)."""

import pytest

from garnav.errors import MeshError, QueryError, SpecError
from garnav.export import read_route_document
from garnav.export.commands import CommandSyntaxError, read_commands
from garnav.drape import load_uv_mesh
from garnav.spec import load_garment

READERS = [
    (load_garment, SpecError, ".toml"),
    (read_route_document, QueryError, ".json"),
    (read_commands, CommandSyntaxError, ".cmd"),
    (load_uv_mesh, MeshError, ".obj"),
]


@pytest.mark.parametrize("read, error, suffix", READERS)
def test_missing_folder_and_not_utf8_read_alike(tmp_path, read, error, suffix):
    missing = tmp_path / f"missing{suffix}"
    with pytest.raises(error, match=rf"missing\{suffix}: (file: )?does not exist"):
        read(missing)
    folder = tmp_path / f"folder{suffix}"
    folder.mkdir()
    with pytest.raises(error, match=rf"folder\{suffix}: (file: )?is a folder, not a file"):
        read(folder)
    latin = tmp_path / f"latin{suffix}"
    latin.write_bytes(b"name = \"caf\xe9\"\n")
    want = "is not a mesh file" if suffix == ".obj" else r"is not UTF-8 text \(bad byte at offset 11\)"
    with pytest.raises(error, match=rf"latin\{suffix}: (file: )?{want}"):
        read(latin)
