"""`garnav check --drape` and `garnav import` on the command line."""

from __future__ import annotations

from pathlib import Path

import pytest

import drape_meshes as dm
from garnav.cli import main
from garnav.drape.meshio import save_obj

SPEC = Path(__file__).resolve().parent.parent / "meshes" / "sensing_top.toml"


def test_check_with_the_specs_own_drape(capsys):
    assert main(["check", str(SPEC), "--drape"]) == 0
    out = capsys.readouterr().out
    assert "coverage (island area / piece area)" in out
    assert "seam closure in 3D" in out and "underarm_left" in out


def test_check_with_a_drape_that_does_not_fit(tmp_path, capsys):
    from garnav.spec import save_garment

    g, m = dm.folded_panels()
    spec = tmp_path / "panels.toml"
    save_garment(g, spec)
    assert main(["check", str(spec), "--drape"]) == 2
    assert "names no drape mesh; give one (e.g. --drape MESH)" in capsys.readouterr().err
    # a mesh for another garment: its single island matches neither piece
    _, other = dm.flat_sheet(width=600.0, height=400.0)
    mesh = save_obj(other, tmp_path / "other.obj")
    assert main(["check", str(spec), "--drape", str(mesh)]) == 2
    err = capsys.readouterr().err
    assert "other.obj" in err and "matches no piece" in err and "Traceback" not in err
    good = save_obj(m, tmp_path / "panels.obj")
    assert main(["check", str(spec), "--drape", str(good)]) == 0
    assert "middle" in capsys.readouterr().out


def test_import_bad_mesh_is_a_clear_error(tmp_path, capsys):
    p = tmp_path / "plain.obj"
    p.write_text("v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n")
    assert main(["import", str(p), "-o", str(tmp_path / "x.toml")]) == 2
    err = capsys.readouterr().err
    assert "plain.obj: the mesh has no texture coordinates" in err
    assert not (tmp_path / "x.toml").exists()


@pytest.mark.slow
def test_route_with_the_drape(capsys):
    assert main(["route", str(SPEC), "--from", "scapula_right", "--to", "wrist_left", "--drape"]) == 0
    out = capsys.readouterr().out
    assert "3D length" in out and "climb" in out
    # the neck base is inside the demo's neck-and-face zone, a keep-out through the drape
    assert main(["route", str(SPEC), "--from", "cervicale", "--to", "wrist_left", "--drape"]) == 2
    assert "inside keep-out 'neck_and_face@yoke'" in capsys.readouterr().err


@pytest.mark.slow
def test_route_world_points_use_the_specs_drape(capsys):
    assert main(["route", str(SPEC), "--from", "xyz:80,-97,1230", "--to", "omphalion"]) == 0
    assert "seams crossed" in capsys.readouterr().out
    assert main(["route", str(SPEC), "--from", "xyz:0,-95,1455", "--to", "omphalion"]) == 2
    err = capsys.readouterr().err
    assert "is 55.0 mm from the garment; the largest snap distance is 10 mm" in err


def test_route_on_a_mesh_alone(tmp_path, capsys):
    g, m = dm.folded_panels()  # left panel in the plane y = 0, right panel in x = 300
    mesh = save_obj(m, tmp_path / "panels.obj")
    args = ["route", str(mesh), "--from", "xyz:150,0,200", "--to", "xyz:300,150,200"]
    assert main(args) == 0
    out = capsys.readouterr().out
    # the fold is an isometry: the pattern route and its 3D image are both 150 + 150 mm
    assert "length         300.0 mm" in out and "3D length  300.0 mm on the drape" in out
    assert main(["route", str(mesh), "--from", "xyz:150,-30,200", "--to", "xyz:300,150,200"]) == 2
    assert "30.0 mm from the garment" in capsys.readouterr().err


def test_route_json_on_a_mesh_alone_carries_the_3d_path(tmp_path, capsys):
    import json

    import jsonschema

    from garnav.export.waypoints import route_schema

    g, m = dm.folded_panels()
    mesh = save_obj(m, tmp_path / "panels.obj")
    out = tmp_path / "r.json"
    assert main(["route", str(mesh), "--from", "xyz:150,0,200", "--to", "xyz:300,150,200", "--json", str(out)]) == 0
    doc = json.loads(out.read_text())
    # reference: jsonschema's Draft 2020-12 validator against the shipped schema
    jsonschema.Draft202012Validator(route_schema()).validate(doc)
    # the fold is an isometry: 150 mm to the fold on y = 0, 150 mm beyond it on x = 300
    assert doc["length_mm"] == pytest.approx(300.0, abs=1e-6) and doc["length_3d_mm"] == pytest.approx(300.0, abs=1e-6)
    assert doc["path3d"][0] == pytest.approx([150.0, 0.0, 200.0], abs=1e-6)
    assert doc["path3d"][-1] == pytest.approx([300.0, 150.0, 200.0], abs=1e-6)
    assert [w["piece"] for w in doc["waypoints"]][0] != doc["waypoints"][-1]["piece"]
    capsys.readouterr()
    assert main(["route", str(mesh), "--from", "xyz:150,0,200", "--to", "xyz:300,150,200", "--no-drape"]) == 2
    assert "is a mesh, which is its own drape" in capsys.readouterr().err
