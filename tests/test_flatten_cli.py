"""``garnav import MESH --cut CUTS.toml``: files written, the round trip through check and lift,
the distortion threshold, and every bad input with its one clear message."""

from __future__ import annotations

import numpy as np
import pytest

import drape_meshes as dm
import flat_surfaces as fs
from garnav import Robot
from garnav.cli import main
from garnav.drape import lift_route, load_drape
from garnav.drape.meshio import save_obj
from garnav.plan import Planner
from garnav.spec import load_garment


@pytest.fixture()
def box_files(tmp_path):
    """A closed box as an OBJ without UVs, and a cut file: rims by vertex index, the vertical
    side seam by 3D points (its two ends, 0.5 mm off the mesh, snapped)."""
    pos, faces, bottom, top, vertical = fs.closed_box()
    obj = fs.write_obj(tmp_path / "box.obj", pos, faces)
    lo, hi = pos[vertical[0]] + [0.5, 0, 0], pos[vertical[-1]] + [0, 0.5, 0]
    cuts = fs.write_cuts(tmp_path / "cuts.toml",
                         {"bottom": bottom, "top": top, "side": [lo.tolist(), hi.tolist()]},
                         {"lid": [0.0, 0.0, 250.0], "walls": [150.0, 0.0, 100.0],
                          "base": [0.0, 0.0, 0.0]})
    return tmp_path, obj, cuts


def test_import_cut_writes_a_spec_and_drape_that_check_accepts(box_files, capsys):
    tmp, obj, cuts = box_files
    spec = tmp / "box.toml"
    assert main(["import", str(obj), "--cut", str(cuts), "-o", str(spec)]) == 0
    out = capsys.readouterr().out
    assert "3 pieces, 3 seams" in out and "seam side:" in out and "ok (worst 0.00 %)" in out
    assert (tmp / "box_drape.obj").is_file()
    garment = load_garment(spec)
    assert garment.drape == "box_drape.obj"
    assert sorted(p.name for p in garment.pieces) == ["base", "lid", "walls"]
    assert main(["check", str(spec), "--drape", ""]) == 0
    report = capsys.readouterr().out
    assert "100.00%" in report and "max 0.000 mm" in report


def test_route_lifted_onto_the_written_drape_keeps_its_length(box_files):
    tmp, obj, cuts = box_files
    spec = tmp / "box.toml"
    assert main(["import", str(obj), "--cut", str(cuts), "-o", str(spec)]) == 0
    garment = load_garment(spec)
    drape = load_drape(garment, None, str(tmp))
    planner = Planner(garment, Robot(radius_mm=5.0, edge_margin_mm=1.0))
    lid = garment.piece("lid").polygon.centroid
    walls = garment.piece("walls").polygon.centroid
    route = planner.route(f"lid:{lid.x!r},{lid.y!r}", f"walls:{walls.x!r},{walls.y!r}")
    assert route.crossings  # from the lid over the top seam down the walls
    lifted = lift_route(drape, garment, route)
    # developable pieces flattened isometrically: the 3D length is the pattern length, up to the
    # drape OBJ's 9 significant digits of UV (observed 1.8e-9 relative)
    assert lifted.length_3d_mm == pytest.approx(route.length_mm, rel=2e-8)


def test_distortion_above_the_threshold_is_refused_or_warned(tmp_path, capsys):
    pos, faces = fs.spherical_cap(0.5)  # worst local scale error 3.2 % with ARAP
    obj = fs.write_obj(tmp_path / "cap.obj", pos, faces)
    cuts = fs.write_cuts(tmp_path / "none.toml", {})
    spec = tmp_path / "cap.toml"
    assert main(["import", str(obj), "--cut", str(cuts), "-o", str(spec)]) == 2
    captured = capsys.readouterr()
    assert "piece(s) 'piece_1' (3.20 %) distort lengths by more than --max-distortion 2 %" in captured.err
    assert "nothing written" in captured.err and "OVER 2 %" in captured.out
    assert not spec.exists() and not (tmp_path / "cap_drape.obj").exists()
    assert main(["import", str(obj), "--cut", str(cuts), "-o", str(spec), "--max-distortion", "5"]) == 0
    assert spec.exists()
    spec.unlink()
    assert main(["import", str(obj), "--cut", str(cuts), "-o", str(spec), "--warn-only"]) == 0
    assert "warning: piece 'piece_1' distorts lengths by 3.20 %" in capsys.readouterr().out
    assert main(["import", str(obj), "--cut", str(cuts), "-o", str(spec), "--max-distortion", "0"]) == 2
    assert "--max-distortion: expected a percentage > 0" in capsys.readouterr().err


def test_reflatten_a_uv_mesh_along_its_uv_seams(tmp_path, capsys):
    _, m = dm.folded_panels()
    obj = save_obj(m, tmp_path / "panels.obj")
    spec = tmp_path / "panels.toml"
    assert main(["import", str(obj), "--reflatten", "--method", "lscm", "-o", str(spec)]) == 0
    assert "2 pieces, 1 seams" in capsys.readouterr().out
    assert main(["check", str(spec), "--drape", ""]) == 0


def _bad(tmp_path, capsys, args):
    assert main(["import", *map(str, args), "-o", str(tmp_path / "out.toml")]) == 2
    err = capsys.readouterr().err
    assert "Traceback" not in err and not (tmp_path / "out.toml").exists()
    return err


def test_bad_inputs_get_one_clear_message(box_files, capsys):
    tmp, obj, _ = box_files
    pos, faces, bottom, top, vertical = fs.closed_box()
    far = fs.write_cuts(tmp / "far.toml", {"side": [[0.0, 0.0, 0.0], [900.0, 0.0, 125.0]]})
    err = _bad(tmp, capsys, [obj, "--cut", far])
    assert f"{far}: cut 'side': point #2 (900.0, 0.0, 125.0) mm is" in err
    assert "the seam curve is not on the mesh" in err
    idx = fs.write_cuts(tmp / "idx.toml", {"rim": [0, 1, 99999]})
    err = _bad(tmp, capsys, [obj, "--cut", idx])
    assert f"{idx}: cut 'rim': vertex #3 is 99999, but {obj} has only {len(pos)} vertices" in err
    tube_left = fs.write_cuts(tmp / "rims.toml", {"bottom": bottom, "top": top})
    err = _bad(tmp, capsys, [obj, "--cut", tube_left])
    assert f"{obj} cut by {tube_left}: piece 1 (centre near" in err and "not a disc" in err
    typo = tmp / "typo.toml"
    typo.write_text('format = "garnav-cuts"\n[[cut]]\nname = "a"\nvertex = [1, 2]\n')
    err = _bad(tmp, capsys, [obj, "--cut", typo])
    assert f"{typo}: cut 'a': unknown key 'vertex'; did you mean 'vertices'?" in err
    nm = fs.write_obj(tmp / "nm.obj", np.array([[0, 0, 0], [1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1.0]]),
                      np.array([[0, 1, 2], [1, 0, 3], [0, 1, 4]]))
    err = _bad(tmp, capsys, [nm, "--cut", tube_left])
    assert f"{nm}: non-manifold mesh: 1 edge(s) are shared by more than two triangles" in err
    _, m = dm.folded_panels()
    uv_obj = save_obj(m, tmp / "panels.obj")
    empty = fs.write_cuts(tmp / "empty.toml", {})
    err = _bad(tmp, capsys, [uv_obj, "--cut", empty])
    assert "the mesh has texture coordinates (UVs); --cut would replace them: add --reflatten" in err
    err = _bad(tmp, capsys, [obj, "--reflatten"])
    assert f"{obj}: the mesh has no texture coordinates, so it has no UV seams" in err
    off = fs.write_cuts(tmp / "off.toml", {"side": vertical}, {"lid": [0.0, 0.0, 400.0]})
    err = _bad(tmp, capsys, [obj, "--cut", off])
    assert f"{off}: piece 'lid': its point (0.0, 0.0, 400.0) mm is" in err and "not on the mesh" in err
    err = _bad(tmp, capsys, [obj, "--cut", empty, "--uv-scale", "100"])
    assert "--uv-scale does not apply" in err


def test_docs_cut_file_example_reads_and_every_key_is_documented():
    import re
    import tomllib
    from pathlib import Path

    from garnav.flatten.cutfile import _CUT_KEYS, _PIECE_KEYS, _TOP_KEYS, cut_file_from_dict

    text = (Path(__file__).resolve().parent.parent / "docs" / "import-3d.md").read_text()
    example = re.search(r"```toml\n(.*?)```", text, re.S).group(1)
    cf = cut_file_from_dict(tomllib.loads(example), "docs/import-3d.md")
    assert [c.name for c in cf.cuts] == ["side_left", "armhole_left"] and cf.cuts[1].closed
    for key in _TOP_KEYS + _CUT_KEYS + _PIECE_KEYS:
        assert re.search(rf"^\[*{key}\]*\b", example, re.M), key


def test_cli_default_threshold_is_the_library_default():
    from garnav.cli.import_cut import DEFAULT_MAX_DISTORTION_PCT
    from garnav.flatten import DEFAULT_MAX_SCALE_ERROR

    assert DEFAULT_MAX_DISTORTION_PCT == 100 * DEFAULT_MAX_SCALE_ERROR


def test_ply_and_glb_surfaces_are_read_through_trimesh(tmp_path, capsys):
    import trimesh

    pos, faces = fs.tube()
    cuts = fs.write_cuts(tmp_path / "cuts.toml", {"back": [[50.0, 0.0, 0.0], [50.0, 0.0, 300.0]]})
    for suffix in ("ply", "glb"):
        path = tmp_path / f"tube.{suffix}"
        trimesh.Trimesh(pos, faces, process=False).export(path)
        spec = tmp_path / f"tube_{suffix}.toml"
        assert main(["import", str(path), "--cut", str(cuts), "-o", str(spec)]) == 0
        assert "1 pieces, 1 seams, 2 open edges" in capsys.readouterr().out
        assert main(["check", str(spec), "--drape", ""]) == 0
