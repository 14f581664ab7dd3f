"""Linking a mesh to a garment's pieces, the drape report, and 3D → pattern queries."""

from __future__ import annotations

import math

import numpy as np
import pytest
import trimesh

import drape_meshes as dm
import garments
from garnav import Garment, Landmark, Placement
from garnav.drape import drape_report, link_drape, locate_3d, surface_to_pattern
from garnav.drape.inverse import closest_surface_points, distance_text
from garnav.drape.meshio import uv_mesh_from_arrays
from garnav.errors import MeshError, QueryError


def test_faces_are_assigned_to_their_pieces():
    g, m = dm.folded_panels()
    d = link_drape(g, m)
    assert d.piece_names == ("left", "right")
    # the left panel lies in the plane y = 0
    left = d.piece_faces("left")
    assert len(left) == len(d.faces) // 2
    assert np.allclose(d.positions[d.faces[left]][..., 1], 0.0)
    # corners in the piece frame reproduce the UVs through the placement
    uv = g.piece("right").placement.to_sheet(d.corner_pattern[d.piece_faces("right")])
    np.testing.assert_allclose(uv / g.sheet_size_mm, d.corner_uv[d.piece_faces("right")])


def test_island_matching_no_piece():
    g, m = dm.flat_sheet()
    moved = Garment(
        g.name,
        tuple(
            type(p)(p.name, p.edges, placement=Placement(300.0, 250.0)) for p in g.pieces
        ),
        sheet_size_mm=g.sheet_size_mm,
    )
    with pytest.raises(MeshError, match=r"UV island 0 \(2400 triangles.*matches no piece"):
        link_drape(moved, m)


def test_piece_without_island():
    g = garments.two_panels()
    _, m = dm.folded_panels()
    faces_left = m.faces[: len(m.faces) // 2]
    half = uv_mesh_from_arrays(m.positions, faces_left, m.corner_uv[: len(m.faces) // 2])
    with pytest.raises(MeshError, match=r"piece\(s\) 'right' have no UV island"):
        link_drape(g, half)


def test_overlapping_islands():
    g, m = dm.folded_panels()
    uv = m.corner_uv.copy()
    right = np.arange(len(uv)) >= len(uv) // 2
    assert np.all(uv[right][..., 0] > 0.5)
    uv[right, :, 0] -= 22.0 / g.sheet_size_mm[0]  # slide the right island 22 mm: 2 mm onto the left
    bad = uv_mesh_from_arrays(m.positions, m.faces, uv)
    with pytest.raises(
        MeshError, match=r"UV islands 0 \(piece 'left'\) and 1 \(piece 'right'\) overlap by 800\.0 mm²"
    ):
        link_drape(g, bad)


def test_overlapping_islands_on_one_piece():
    g, m = dm.flat_sheet()  # 400 × 300 mm
    uv = m.corner_uv.copy()
    right = m.positions[m.faces].mean(axis=1)[:, 0] > 200.0
    uv[right, :, 0] -= 20.0 / g.sheet_size_mm[0]  # cut at x = 200 and slide the right half over
    bad = uv_mesh_from_arrays(m.positions, m.faces, uv)
    with pytest.raises(
        MeshError, match=r"UV islands 0 \(piece 'panel'\) and 1 \(piece 'panel'\) overlap by 6000\.0 mm²"
    ):
        link_drape(g, bad)


def test_folded_island():
    g, m = dm.flat_sheet(nx=10, ny=10)
    uv = m.corner_uv.copy()
    # move one interior UV vertex across its neighbours: the triangles around it flip
    target = np.array([120.0, 90.0]) / g.sheet_size_mm
    assert np.any(np.all(np.isclose(uv, target), axis=2))
    hit = np.all(np.isclose(uv, target), axis=2)
    uv[hit] = target + np.array([100.0, 75.0]) / g.sheet_size_mm
    bad = uv_mesh_from_arrays(m.positions, m.faces, uv)
    with pytest.raises(MeshError, match=r"UV island 0 \(piece 'panel'.*is folded over"):
        link_drape(g, bad)


def test_report_stretch_matches_closed_form():
    g, m = dm.flat_sheet(stretch=(1.03, 1.0))
    rep = drape_report(g, link_drape(g, m))
    # principal stretches of diag(1.03, 1) are 1.03 and 1 (definition of singular values)
    assert rep.stretch.sigma_max == pytest.approx(1.03, abs=1e-13)  # observed 4.2e-15
    assert rep.stretch.sigma_min == pytest.approx(1.0, abs=1e-9)
    assert rep.stretch.share_stretched == pytest.approx(1.0)
    assert rep.pieces[0].coverage == pytest.approx(1.0)
    text = rep.text()
    assert "panel" in text and "100.00%" in text and "max 1.0300" in text


def test_report_shear_matches_eigenvalue_formula():
    # a sheared flat drape: 3D (x + k y, y, 0)
    k = 0.1
    g, m = dm.flat_sheet()
    pos = m.positions.copy()
    pos[:, 0] += k * pos[:, 1]
    sheared = uv_mesh_from_arrays(pos, m.faces, m.corner_uv)
    rep = drape_report(g, link_drape(g, sheared))
    # σ² are the eigenvalues of JᵀJ = [[1, k], [k, 1 + k²]]: (t ± sqrt(t² - 4 det)) / 2 with
    # t = 2 + k², det = 1 (closed form for a symmetric 2×2 matrix)
    t = 2 + k * k
    s1 = math.sqrt((t + math.sqrt(t * t - 4)) / 2)
    s2 = math.sqrt((t - math.sqrt(t * t - 4)) / 2)
    assert rep.stretch.sigma_max == pytest.approx(s1, rel=1e-13)  # observed 1.9e-15 relative
    assert rep.stretch.sigma_min == pytest.approx(s2, rel=1e-13)  # observed 2.3e-15 relative


def test_report_coverage_and_seam_gap():
    g, opened = dm.folded_panels(gap=2.0)  # the right panel 2 mm off the seam along +x
    rep = drape_report(g, link_drape(g, opened, verify=False))  # the report measures the gap
    assert [p.coverage for p in rep.pieces] == pytest.approx([1.0, 1.0])
    assert rep.seams[0].seam == "middle"
    assert rep.seams[0].max_gap_mm == pytest.approx(2.0, abs=1e-9)
    assert rep.seams[0].mean_gap_mm == pytest.approx(2.0, abs=1e-9)
    # a drape that covers only part of a piece
    g2, m2 = dm.flat_sheet()
    keep = m2.positions[m2.faces].mean(axis=1)[:, 1] < 150.0
    part = uv_mesh_from_arrays(m2.positions, m2.faces[keep], m2.corner_uv[keep])
    rep2 = drape_report(g2, link_drape(g2, part))
    assert rep2.pieces[0].coverage == pytest.approx(0.5)


# ---------------------------------------------------------------------------- 3D → pattern


@pytest.fixture(scope="module")
def cyl():
    g, m = dm.cylinder(radius=50.0, length=300.0, n_around=64, n_along=15)
    return g, link_drape(g, m)


def test_closest_points_agree_with_trimesh(cyl):
    g, d = cyl
    rng = np.random.default_rng(4)
    p = rng.uniform([-80, -80, -30], [80, 80, 330], (200, 3))
    q, dist, face = closest_surface_points(d, p)
    # reference: trimesh.proximity.closest_point
    mesh = trimesh.Trimesh(d.positions, d.faces, process=False)
    ref_q, ref_d, _ = trimesh.proximity.closest_point(mesh, p)
    np.testing.assert_allclose(dist, ref_d, atol=1e-9)


def test_locate_3d_off_the_surface(cyl):
    g, d = cyl
    r = 50.0
    # a point 4 mm outside the (faceted) cylinder, at a vertex angle, 100 mm up
    theta = 2 * math.pi * 10 / 64
    piece, x, y, dist = locate_3d(d, g, [(r + 4) * math.cos(theta), (r + 4) * math.sin(theta), 100.0])
    assert piece == "tube"
    assert x == pytest.approx(r * theta, abs=1e-13)  # observed 7.1e-15 mm
    assert y == pytest.approx(100.0, abs=1e-9)
    assert dist == pytest.approx(4.0, abs=1e-13)  # observed 8.0e-15 mm


def test_locate_3d_too_far(cyl):
    g, d = cyl
    with pytest.raises(
        QueryError,
        match=r"landmark 'cervicale' \(0\.0, 0\.0, 150\.0\) is 49\.9 mm from the garment; "  # the facets lie inside r = 50
        r"the largest snap distance is 10 mm",
    ):
        locate_3d(d, g, (0.0, 0.0, 150.0), what="landmark 'cervicale'")
    with pytest.raises(QueryError, match="expected three finite coordinates"):
        locate_3d(d, g, (1.0, 2.0))


def test_body_landmark_snaps(cyl):
    g, d = cyl
    lm = Landmark("nape", xyz=(0.0, 51.0, 200.0))
    piece, x, y, dist = locate_3d(d, g, lm.xyz, what=f"landmark '{lm.name}'")
    assert piece == "tube" and y == pytest.approx(200.0)
    hits = surface_to_pattern(d, np.array([lm.xyz]))
    assert hits.distance[0] == pytest.approx(dist)


def test_island_across_two_pieces():
    g, m = dm.folded_panels()
    # shift the sheet placement of 'right' 100 mm to the left: a third of the left island now
    # lies on the right piece too
    moved = Garment(
        g.name,
        (g.pieces[0], type(g.pieces[1])(g.pieces[1].name, g.pieces[1].edges, placement=Placement(210.0, 10.0))),
        seams=g.seams,
        sheet_size_mm=g.sheet_size_mm,
    )
    with pytest.raises(MeshError, match=r"UV island 0 .* lies across pieces 'left' 100%, 'right' 33%"):
        link_drape(moved, m)


def test_report_snaps_body_landmarks(cyl):
    import dataclasses

    g, d = cyl
    near = Landmark("near", xyz=(53.0, 0.0, 120.0))  # 3 mm outside the tube at angle 0
    far = Landmark("far", xyz=(0.0, 0.0, 150.0))  # on the axis: 50 mm from the tube
    g2 = dataclasses.replace(g, landmarks=(near, far))
    rep = drape_report(g2, d)
    snaps = {s.landmark: s for s in rep.landmarks}
    assert snaps["near"].piece == "tube" and snaps["near"].y == pytest.approx(120.0)
    assert snaps["near"].distance_mm == pytest.approx(3.0) and not snaps["near"].too_far
    assert snaps["far"].too_far
    text = rep.text()
    assert "near             tube" in text and "TOO FAR (largest snap distance 10 mm)" in text


def test_distance_text_shows_which_side_of_the_limit():
    # a distance just beyond the limit must not print as the limit itself
    assert distance_text(10.04, 10.0) == "10.04"
    assert distance_text(9.96, 10.0) == "9.96"
    assert distance_text(55.0, 10.0) == "55.0"
    assert distance_text(3.04, 10.0) == "3.0"
