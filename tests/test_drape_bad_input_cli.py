"""Bad drape input through the command line: one clear message, exit status 2, no traceback.

Each case writes a garment spec (two panels sewn at a seam, the right one folded by 90°) and a bad
mesh for it, then runs ``garnav check SPEC --drape MESH`` in-process and once more as a subprocess
(to prove no traceback escapes the real entry point).
"""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

import drape_meshes as dm
from garnav.cli import main
from garnav.drape.meshio import save_obj, uv_mesh_from_arrays
from garnav.spec import save_garment


def _no_uvs(tmp_path, g, m):
    p = tmp_path / "bad.obj"
    p.write_text("v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n")
    return p, "the mesh has no texture coordinates"


def _not_a_mesh(tmp_path, g, m):
    p = tmp_path / "bad.obj"
    p.write_text("this is a shopping list, not a mesh\n")
    return p, "bad.obj"


def _overlapping_islands(tmp_path, g, m):
    uv = m.corner_uv.copy()
    right = np.arange(len(uv)) >= len(uv) // 2
    uv[right, :, 0] -= 22.0 / g.sheet_size_mm[0]  # slide the right island 2 mm onto the left one
    return save_obj(uv_mesh_from_arrays(m.positions, m.faces, uv), tmp_path / "bad.obj"), "overlap"


def _island_matching_no_piece(tmp_path, g, m):
    _, other = dm.flat_sheet(width=600.0, height=400.0)
    return save_obj(other, tmp_path / "bad.obj"), "matches no piece"


def _piece_without_island(tmp_path, g, m):
    half = len(m.faces) // 2
    mesh = uv_mesh_from_arrays(m.positions, m.faces[:half], m.corner_uv[:half])
    return save_obj(mesh, tmp_path / "bad.obj"), "have no UV island"


def _non_manifold(tmp_path, g, m):
    pos = np.array([[0, 0, 0], [1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1]], float)
    faces = [[0, 1, 2], [1, 0, 3], [0, 1, 4]]  # three triangles on one edge
    p = tmp_path / "bad.obj"
    p.write_text(
        "".join(f"v {x} {y} {z}\n" for x, y, z in pos)
        + "vt 0.1 0.1\nvt 0.2 0.1\nvt 0.1 0.2\n"
        + "".join(f"f {a + 1}/1 {b + 1}/2 {c + 1}/3\n" for a, b, c in faces)
    )
    return p, "non-manifold edge"


CASES = {
    "no texture coordinates": _no_uvs,
    "not a mesh": _not_a_mesh,
    "overlapping UV islands": _overlapping_islands,
    "an island matching no piece": _island_matching_no_piece,
    "a piece with no island": _piece_without_island,
    "a non-manifold edge": _non_manifold,
}


@pytest.mark.parametrize("case", sorted(CASES))
def test_bad_drape_is_one_clear_message(case, tmp_path, capsys):
    g, m = dm.folded_panels()
    spec = tmp_path / "panels.toml"
    save_garment(g, spec)
    mesh, fragment = CASES[case](tmp_path, g, m)
    assert main(["check", str(spec), "--drape", str(mesh)]) == 2
    err = capsys.readouterr().err
    assert fragment in err
    assert "bad.obj" in err
    assert "Traceback" not in err


@pytest.mark.slow
def test_bad_drape_through_the_real_entry_point(tmp_path):
    g, m = dm.folded_panels()
    spec = tmp_path / "panels.toml"
    save_garment(g, spec)
    mesh, fragment = _overlapping_islands(tmp_path, g, m)
    done = subprocess.run(
        [sys.executable, "-m", "garnav", "check", str(spec), "--drape", str(mesh)],
        capture_output=True, text=True, cwd=Path(__file__).resolve().parent.parent,
    )
    assert done.returncode == 2
    assert fragment in done.stderr and "Traceback" not in done.stderr


def test_point_too_far_from_the_garment(tmp_path, capsys):
    g, m = dm.folded_panels()  # left panel in the plane y = 0
    mesh = save_obj(m, tmp_path / "panels.obj")
    assert main(["route", str(mesh), "--from", "xyz:150,-40,200", "--to", "xyz:300,150,200"]) == 2
    err = capsys.readouterr().err
    assert "40.0 mm from the garment" in err and "Traceback" not in err

