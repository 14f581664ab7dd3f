"""Mesh-first import: pieces, seams and open edges derived from UV islands."""

from __future__ import annotations

import math

import numpy as np
import pytest

import drape_meshes as dm
from garnav.drape import drape_report, link_drape
from garnav.drape.import_mesh import fit_sheet_size, garment_from_mesh
from garnav.spec import load_garment


def _seam_pairs(garment, rename=lambda n: n):
    return sorted(tuple(sorted((rename(s.a.piece), rename(s.b.piece)))) for s in garment.seams)


@pytest.mark.parametrize("build", [dm.folded_panels, dm.cylinder, dm.cone, dm.flat_sheet])
def test_import_round_trip(build):
    g, m = build()
    imported = garment_from_mesh(m, sheet_size_mm=g.sheet_size_mm)
    names = dm.match_pieces(g, imported)
    assert sorted(names.values()) == sorted(p.name for p in g.pieces)
    for p in imported.pieces:
        # areas by shapely (GEOS) on both sides
        assert p.area == pytest.approx(g.piece(names[p.name]).area, rel=1e-12)  # observed 3e-16 relative
        assert p.polygon.is_valid and p.polygon.exterior.is_ccw
    assert _seam_pairs(imported, names.get) == _seam_pairs(g)
    # the derived garment links back to the mesh and its seams close in 3D
    rep = drape_report(imported, link_drape(imported, m))
    assert all(c.max_gap_mm < 1e-12 for c in rep.seams)  # observed 7.1e-14 mm
    assert all(pc.coverage == pytest.approx(1.0, abs=1e-12) for pc in rep.pieces)  # observed 2.2e-16


def test_edges_split_at_seam_and_open_transitions():
    g, m = dm.cylinder(n_around=32, n_along=8)
    imported = garment_from_mesh(m, sheet_size_mm=g.sheet_size_mm)
    (piece,) = imported.pieces
    kinds = [e.name.split("_")[0] for e in piece.edges]
    assert kinds.count("seam") == 2 and kinds.count("open") == 2
    seam = imported.seams[0]
    ra = imported.run_polyline(seam.a)
    rb = imported.run_polyline(seam.b)
    # the closing seam's runs are the tube's two vertical sides, matched at equal heights
    np.testing.assert_allclose(ra[:, 1], rb[:, 1], atol=1e-9)
    assert abs(ra[0, 0] - rb[0, 0]) == pytest.approx(2 * math.pi * 50.0)


def test_fitted_sheet_size():
    g, m = dm.folded_panels()
    w, h = fit_sheet_size(m)
    assert (w, h) == pytest.approx(g.sheet_size_mm, rel=1e-13)  # observed 1.6e-15 relative
    # on a square sheet, the area ratio sqrt(3D area / UV area) gives the same scale (isometry)
    g2, m2 = dm.cone()
    w2, h2 = fit_sheet_size(m2)
    ratio = math.sqrt(m2.face_area_3d.sum() / np.abs(m2.face_area_uv).sum())
    assert w2 == pytest.approx(ratio, rel=1e-4)  # observed 7.5e-6 relative
    assert w2 == pytest.approx(g2.sheet_size_mm[0], rel=1e-3)


def test_uv_scale_option():
    from garnav.cli.import_mesh import parse_uv_scale
    from garnav.errors import QueryError

    assert parse_uv_scale("1200") == (1200.0, 1200.0)
    assert parse_uv_scale("1600, 1200") == (1600.0, 1200.0)
    assert parse_uv_scale(None) is None
    for bad in ("wide", "0", "1,2,3", "-5"):
        with pytest.raises(QueryError, match="--uv-scale"):
            parse_uv_scale(bad)


def test_import_command_writes_a_spec(tmp_path):
    from garnav.cli import main
    from garnav.drape.meshio import save_obj

    g, m = dm.folded_panels()
    mesh_path = save_obj(m, tmp_path / "meshes" / "panels.obj")
    out = tmp_path / "panels.toml"
    assert main(["import", str(mesh_path), "--uv-scale", "650,420", "-o", str(out)]) == 0
    loaded = load_garment(out)
    assert loaded.drape == "meshes/panels.obj"
    assert len(loaded.pieces) == 2 and len(loaded.seams) == 1
    assert sorted(p.area for p in loaded.pieces) == pytest.approx([120000.0, 120000.0], rel=2e-8)  # observed 1.4e-9 relative


def test_closing_seam_that_folds_at_an_apex():
    # a cone cut along one slant line from the apex: the two sides of the cut meet at the apex,
    # so the boundary runs side → apex → side with each side sewn to the other
    from garnav.drape.meshio import uv_mesh_from_arrays

    n, slant = 64, 300.0
    phi = np.linspace(0.0, math.pi, n + 1)  # development angle 2π sin α with sin α = 1/2
    pattern = np.vstack([[0.0, 0.0], np.column_stack([slant * np.cos(phi), slant * np.sin(phi)])])
    tris = np.array([[0, i + 1, i + 2] for i in range(n)])
    theta = phi / 0.5
    rim = np.column_stack(
        [0.5 * slant * np.cos(theta), 0.5 * slant * np.sin(theta), np.full(n + 1, -slant * math.sqrt(0.75))]
    )
    mesh = uv_mesh_from_arrays(np.vstack([[0.0, 0.0, 0.0], rim]), tris, (pattern[tris] + 310.0) / 620.0)
    imported = garment_from_mesh(mesh)
    (piece,) = imported.pieces
    assert sorted(e.name for e in piece.edges) == ["open_1", "seam_1", "seam_2"]
    (seam,) = imported.seams
    ra, rb = imported.run_polyline(seam.a), imported.run_polyline(seam.b)
    # the two sides match point for point from the apex outwards (or from the rim inwards)
    apex = piece.placement.from_sheet(np.array([310.0, 310.0]) * imported.sheet_size_mm[0] / 620.0)
    assert np.linalg.norm(ra - apex, axis=1) == pytest.approx(np.linalg.norm(rb - apex, axis=1), abs=1e-12)  # observed 1.1e-13 mm
    assert imported.sheet_size_mm == pytest.approx((620.0, 620.0), rel=1e-8)  # observed 8.7e-10 relative


def test_sewn_hole_is_refused():
    # a 4 × 4 cell panel with its central 2 × 2 cells cut out, and a patch sewn into the hole
    # (the patch's own UVs lie beside the panel on the sheet)
    from garnav.drape.meshio import uv_mesh_from_arrays
    from garnav.errors import MeshError

    pattern, tris = dm.rect_grid(40.0, 40.0, 4, 4)
    centre = pattern[tris].mean(axis=1)
    hole = (np.abs(centre[:, 0] - 20) < 10) & (np.abs(centre[:, 1] - 20) < 10)
    panel_tris = tris[~hole]
    patch_tris = tris[hole]
    xyz = np.column_stack([pattern, np.zeros(len(pattern))])
    uv_panel = pattern[panel_tris] / 100.0
    uv_patch = (pattern[patch_tris] + [40.0, 0.0]) / 100.0
    mesh = uv_mesh_from_arrays(xyz, np.vstack([panel_tris, patch_tris]), np.vstack([uv_panel, uv_patch]))
    with pytest.raises(MeshError, match=r"UV island 0 has an interior hole sewn to another edge"):
        garment_from_mesh(mesh, sheet_size_mm=(100.0, 100.0))
