"""The demo's pose ``arm_raised`` (garnav.demo.raise_arm) against outside references: Meusnier's
and Euler's curvature formulas on the armhole, libigl's exact geodesic on the rigid forearm,
libigl's signed distance to the raised mannequin and its triangle-triangle test, and the
committed files.
"""

from __future__ import annotations

import math
from pathlib import Path

import igl
import numpy as np
import pytest
import scipy.sparse
import scipy.sparse.csgraph
import shapely
from scipy.spatial import cKDTree

from garnav.demo.build import (
    ARM_RAISED_BODY_NAME,
    ARM_RAISED_DRAPE_NAME,
    ARM_RAISED_POSE,
    ARM_RAISED_POSTURE,
    BASE_POSE,
    BASE_POSTURE,
    DEMO_FILE_NAMES,
    DRAPE_NAME,
)
from garnav.demo.mannequin import cone_cylinder_intersection
from garnav.demo.mesh import build_drape
from garnav.demo.pattern import DEMO_PHYSICS, build_design
from garnav.demo.raise_arm import ArmRaise, arm_motion, raise_arm_body, raise_arm_drape
from garnav.drape import lift_polyline, link_drape
from garnav.drape.meshio import uv_mesh_from_arrays
from garnav.drape.report import drape_report
from garnav.errors import MeshError
from garnav.mechanics.gravity import gravity_vector
from garnav.spec import check_garment

MESHES = Path(__file__).resolve().parents[1] / "meshes"
SLEEVE = "sleeve_right"


@pytest.fixture(scope="module")
def scene():
    design = build_design()
    standing = build_drape(design)
    raised = raise_arm_drape(design, standing)
    garment = check_garment(design.garment, "<demo>")

    def link(mesh):
        corner_uv = mesh.uv[mesh.face_uv]
        return link_drape(garment, uv_mesh_from_arrays(mesh.vertices, mesh.faces, corner_uv))

    return design, garment, standing, raised, link(standing), link(raised.drape)


def _obj_lines(name: str) -> list[str]:
    return (MESHES / name).read_text().splitlines()


def test_pose_names_files_and_posture():
    assert (BASE_POSE, ARM_RAISED_POSE) == ("standing", "arm_raised")
    assert ARM_RAISED_DRAPE_NAME in DEMO_FILE_NAMES and ARM_RAISED_BODY_NAME in DEMO_FILE_NAMES
    # the body stays upright: the same gravity as standing
    assert np.array_equal(gravity_vector(ARM_RAISED_POSTURE), gravity_vector(BASE_POSTURE))


def test_committed_raised_drape_has_the_standing_topology_and_uvs():
    standing, raised = _obj_lines(DRAPE_NAME), _obj_lines(ARM_RAISED_DRAPE_NAME)
    assert len(standing) == len(raised)
    # every line but the name comment and the vertex positions is the same: faces, UVs, groups
    same = [a == b for a, b in zip(standing[1:], raised[1:]) if not a.startswith("v ")]
    assert all(same)
    moved = sum(a != b for a, b in zip(standing, raised) if a.startswith("v "))
    assert 3000 < moved < 4400  # the right sleeve without its armhole seam (observed 4220)


def test_armhole_curvature_meusnier_euler_and_not_planar():
    """The facts the module's argument rests on: C is not planar; κ² = κ_g² + κ_n² with κ_g the
    pattern curve's curvature and κ_n from Euler's formula, never zero; C's curvature vector points
    into the loop."""
    design = build_design()
    cone, cyl, smap = design.cones["right"], design.torso, design.maps[SLEEVE]
    phi = np.linspace(-math.pi, math.pi, 20001)[:-1]
    rho = cone_cylinder_intersection(cone, cyl, phi)
    c3 = cone.point(rho, phi)
    c2 = smap.from_cone(rho, phi)
    # not planar: the smallest principal extent of the loop is far from zero (mm)
    sv = np.linalg.svd(c3 - c3.mean(axis=0), compute_uv=False) / math.sqrt(len(c3))
    assert sv[2] > 5.0  # observed 10.1 mm (rms distance from the best plane)

    def curvature(p, closed):
        # central differences in the parameter; κ = |p' × p''| / |p'|³ (do Carmo §1-5)
        h = phi[1] - phi[0]
        nxt, prv = np.roll(p, -1, 0), np.roll(p, 1, 0)
        d1, d2 = (nxt - prv) / (2 * h), (nxt - 2 * p + prv) / h**2
        if p.shape[1] == 2:
            cross = d1[:, 0] * d2[:, 1] - d1[:, 1] * d2[:, 0]
        else:
            cross = np.linalg.norm(np.cross(d1, d2), axis=1)
        k = np.abs(cross) / np.linalg.norm(d1, axis=1) ** 3
        return (k if closed else k[1:-1]), d1, d2

    k3, t3, a3 = curvature(c3, True)
    kg, _, _ = curvature(c2, False)  # the pattern curve is cut at φ = ±π
    tangent = t3 / np.linalg.norm(t3, axis=1, keepdims=True)
    gen = cone.direction(phi)
    sin2 = 1.0 - np.sum(tangent * gen, axis=1) ** 2
    # Euler's formula on the cone: principal curvatures 0 (generator) and cos β / (ρ sin β)
    kn = math.cos(cone.beta) / (rho * math.sin(cone.beta)) * sin2
    inner = slice(1, -1)
    # Meusnier / the Darboux frame: κ² = κ_g² + κ_n² (do Carmo §3-2)
    rel = np.abs(k3[inner] ** 2 - kg**2 - kn[inner] ** 2) / k3[inner] ** 2
    assert rel.max() < 3e-6  # observed 2.6e-7 (finite differences)
    assert kn.min() > 0.03 * kn.max()  # never zero on C (observed min / max 0.36)
    # the curvature vector (the part of p'' normal to p') points towards the loop's centre
    normal = a3 - np.sum(a3 * tangent, axis=1, keepdims=True) * tangent
    assert np.all(np.sum(normal * (c3.mean(axis=0) - c3), axis=1) > 0)


def test_bad_arm_raise_is_a_clear_error():
    design = build_design()
    with pytest.raises(MeshError, match="angle"):
        arm_motion(design, ArmRaise(angle_deg=0.0))
    with pytest.raises(MeshError, match="no band"):
        arm_motion(design, ArmRaise(rigid_length_mm=700.0))
    with pytest.raises(MeshError, match="side"):
        arm_motion(design, ArmRaise(side="middle"))


@pytest.mark.slow
def test_only_the_right_sleeve_moves_and_the_forearm_rigidly(scene):
    design, garment, standing, raised, _, _ = scene
    m = raised.drape
    for field in ("faces", "uv", "face_uv", "face_piece", "pattern"):
        assert np.array_equal(getattr(m, field), getattr(standing, field)), field
    assert m.piece_names == standing.piece_names
    sleeve_faces = np.flatnonzero(standing.face_piece == standing.piece_names.index(SLEEVE))
    moved = np.flatnonzero(np.any(m.vertices != standing.vertices, axis=1))
    assert set(moved.tolist()) <= set(np.unique(standing.faces[sleeve_faces]).tolist())
    # the armhole seam vertices (shared with the torso) did not move: the seams stay closed
    other = np.unique(standing.faces[standing.face_piece != standing.piece_names.index(SLEEVE)])
    assert not np.isin(moved, other).any()
    # forearm: x ↦ R x + t with R a rotation (scipy-free check: RᵀR = I, det R = 1)
    rot, t = raised.rotation, raised.translation
    assert np.allclose(rot.T @ rot, np.eye(3), atol=1e-14) and np.linalg.det(rot) == pytest.approx(1.0)
    rv = raised.rigid_vertices
    err = np.abs(m.vertices[rv] - (standing.vertices[rv] @ rot.T + t)).max()
    assert err < 1e-10  # observed 2.3e-13 mm
    assert len(raised.rigid_faces) > 2000  # observed 2535 of the sleeve's 8495 triangles


@pytest.mark.slow
def test_forearm_routes_are_exact_libigl_geodesics(scene):
    design, garment, standing, raised, d_stand, d_raise = scene
    pid = d_raise.piece_names.index(SLEEVE)
    smap = design.maps[SLEEVE]
    k = math.sin(design.cones["right"].beta)
    rho_w = design.dims.sleeve_radius_wrist / k
    rho_cut = rho_w + ArmRaise().rigid_length_mm
    apex2 = shapely.Point(smap.x0, smap.y0)
    # the forearm in the pattern: the sleeve between the cuff and the rigid part's edge, kept
    # 10 mm clear of both and of the underarm cut
    region = (
        apex2.buffer(rho_cut - 10.0, 256)
        .difference(apex2.buffer(rho_w + 10.0, 256))
        .intersection(garment.piece(SLEEVE).polygon.buffer(-10.0))
    )
    sel = d_raise.face_piece == pid
    vp = dict(zip(d_raise.faces[sel].reshape(-1).tolist(), map(tuple, d_raise.corner_pattern[sel].reshape(-1, 2))))
    verts = np.array(sorted(v for v, p in vp.items() if region.contains(shapely.Point(p))))
    used, sub = np.unique(d_raise.faces[raised.rigid_faces], return_inverse=True)
    sub = sub.reshape(-1, 3)
    assert np.isin(verts, used).all()
    turn = 2.0 * math.pi * k  # the development's sector angle: a copy of b around the tube
    rng = np.random.default_rng(5)
    checked = 0
    while checked < 16:
        a_v, b_v = (int(x) for x in rng.choice(verts, 2, replace=False))
        a, b = np.array(vp[a_v]), np.array(vp[b_v])
        seg = shapely.LineString([a, b])
        direct = float(np.linalg.norm(b - a))
        rel = b - [smap.x0, smap.y0]
        around = min(
            float(np.linalg.norm(np.array([[math.cos(s), -math.sin(s)], [math.sin(s), math.cos(s)]]) @ rel
                                 + [smap.x0, smap.y0] - a))
            for s in (turn, -turn)
        )
        if direct < 40.0 or not region.contains(seg) or around <= 1.02 * direct:
            continue
        lengths = []
        for d in (d_stand, d_raise):
            path = lift_polyline(d, SLEEVE, np.array([a, b]))
            pts = d.to_3d(path.face, path.bary)
            lengths.append(float(np.linalg.norm(np.diff(pts, axis=0), axis=1).sum()))
        # the same length as standing: the forearm moved rigidly
        assert lengths[1] == pytest.approx(lengths[0], rel=1e-9)  # observed 2.2e-15 relative
        # and the pattern length up to the mesh's chords
        assert lengths[1] == pytest.approx(direct, rel=1e-2)  # observed 1.2e-3 relative at most
        # reference: libigl exact_geodesic (Mitchell, Mount, Papadimitriou 1987) on the raised forearm
        exact = float(
            igl.exact_geodesic(
                d_raise.positions[used], sub, VS=np.searchsorted(used, [a_v]), VT=np.searchsorted(used, [b_v])
            )[0]
        )
        assert lengths[1] == pytest.approx(exact, rel=1e-5)  # observed 4.0e-9 relative at most
        checked += 1


@pytest.mark.slow
def test_stretch_report_of_the_raised_pose(scene):
    design, garment, standing, raised, d_stand, d_raise = scene
    before, after = drape_report(garment, d_stand), drape_report(garment, d_raise)
    for p0, p1 in zip(before.pieces, after.pieces):
        if p0.piece != SLEEVE:
            assert p1.stretch == p0.stretch  # nothing else moved
    s = next(p.stretch for p in after.pieces if p.piece == SLEEVE)
    # the band stretches and compresses: a bounded, not an exact, drape (observed σ 0.8314 ..
    # 1.0974, area-weighted medians 0.9935 / 1.0014, 45.6 % of the sleeve and 9.1 % of the
    # garment beyond ±2 %)
    assert 0.75 < s.sigma_min < 0.95 and 1.03 < s.sigma_max < 1.25
    assert abs(s.median_min - 1.0) < 0.02 and abs(s.median_max - 1.0) < 0.02
    assert s.share_stretched < 0.6 and after.stretch.share_stretched < 0.15
    # the forearm's triangles keep the standing drape's singular values exactly
    rf = raised.rigid_faces
    assert np.abs(d_raise.singular_values[rf] - d_stand.singular_values[rf]).max() < 1e-12  # observed 4.2e-14
    # seam closure: exact where it was (shared vertices move together)
    for c0, c1 in zip(before.seams, after.seams):
        # (seam samples on a boundary edge weigh the moved vertex opposite by ~1e-11)
        assert c1.max_gap_mm == pytest.approx(c0.max_gap_mm, abs=1e-7), c0.seam  # observed 6.4e-9 mm apart


def _body_parts(body):
    n = len(body.vertices)
    e = np.concatenate([body.faces[:, [0, 1]], body.faces[:, [1, 2]]])
    _, label = scipy.sparse.csgraph.connected_components(
        scipy.sparse.coo_matrix((np.ones(len(e)), (e[:, 0], e[:, 1])), shape=(n, n)), directed=False
    )
    for i in range(label.max() + 1):
        used, faces = np.unique(body.faces[label[body.faces[:, 0]] == i], return_inverse=True)
        yield body.vertices[used], faces.reshape(-1, 3).astype(np.int64)


def _face_normals(v, f):
    n = np.cross(v[f[:, 1]] - v[f[:, 0]], v[f[:, 2]] - v[f[:, 0]])
    return n / np.linalg.norm(n, axis=1, keepdims=True)


@pytest.mark.slow
def test_raised_sleeve_clears_the_raised_body_and_faces_out(scene):
    design, garment, standing, raised, _, _ = scene
    body = raise_arm_body(design, standing, raised)
    m = raised.drape
    gap = max(DEMO_PHYSICS.gap_mm(p.name) for p in garment.pieces)
    parts = list(_body_parts(body))
    assert len(parts) == 5  # torso, neck, head, two arms
    sleeve = m.faces[raised.band_faces.tolist() + raised.rigid_faces.tolist()]
    worst = np.inf
    for v, f in parts:
        # reference: libigl signed_distance, pseudonormal sign (Bærentzen & Aanæs 2005): > 0 outside
        dist = igl.signed_distance(m.vertices, v, f, igl.SIGNED_DISTANCE_TYPE_PSEUDONORMAL)[0]
        worst = min(worst, float(dist.min()))
    assert worst >= gap  # every garment vertex outside every body part by 1.6 mm (observed 2.35 mm)
    # the sleeve's faces look away from the arm under them: none is flipped
    arm_v, arm_f = max(parts, key=lambda p: float(p[0][:, 0].mean()))
    centres = m.vertices[sleeve].mean(axis=1)
    _, _, _, normals = igl.signed_distance(centres, arm_v, arm_f, igl.SIGNED_DISTANCE_TYPE_PSEUDONORMAL)
    dots = np.sum(_face_normals(m.vertices, sleeve) * normals, axis=1)
    assert dots.min() > 0.4  # observed 0.657 (standing 0.655)
    # no fold: neighbouring sleeve triangles meet at moderate angles
    adj = igl.triangle_triangle_adjacency(sleeve)[0]
    fn = _face_normals(m.vertices, sleeve)
    ok = adj >= 0
    rows = np.repeat(np.arange(len(sleeve)), 3).reshape(-1, 3)[ok]
    bend = np.degrees(np.arccos(np.clip(np.sum(fn[rows] * fn[adj[ok]], axis=1), -1.0, 1.0)))
    assert bend.max() < 60.0  # observed 33.4° (standing 12.8°)
    # the sleeve stays away from the head and neck (body parts centred on x = 0)
    for v, f in parts:
        if abs(float(v[:, 0].mean())) < 1.0 and float(v[:, 2].mean()) > 1400.0:
            assert igl.signed_distance(m.vertices[np.unique(sleeve)], v, f)[0].min() > 100.0  # observed 117 mm


def _segment_hits(p0, p1, a, b, c):
    """Möller–Trumbore: does segment p0→p1 cross triangle abc (all (n, 3))?"""
    e1, e2, d = b - a, c - a, p1 - p0
    pv = np.cross(d, e2)
    det = np.sum(e1 * pv, axis=1)
    ok = np.abs(det) > 1e-12
    inv = np.where(ok, 1.0 / np.where(ok, det, 1.0), 0.0)
    tv = p0 - a
    u = np.sum(tv * pv, axis=1) * inv
    qv = np.cross(tv, e1)
    v = np.sum(d * qv, axis=1) * inv
    t = np.sum(e2 * qv, axis=1) * inv
    return ok & (u >= 0) & (v >= 0) & (u + v <= 1) & (t >= 0) & (t <= 1)


@pytest.mark.slow
def test_raised_drape_does_not_cross_itself(scene):
    _, _, standing, raised, _, _ = scene
    v, f = raised.drape.vertices, raised.drape.faces
    sleeve = np.concatenate([raised.band_faces, raised.rigid_faces])
    centre = v[f].mean(axis=1)
    radius = np.linalg.norm(v[f] - centre[:, None], axis=2).max(axis=1)
    # candidate pairs: a sleeve triangle and any triangle whose bounding spheres meet, no shared vertex
    near = cKDTree(centre).query_ball_point(centre[sleeve], radius[sleeve] + radius.max())
    pi = np.repeat(sleeve, [len(x) for x in near])
    pj = np.concatenate([np.asarray(x, dtype=np.int64) for x in near])
    meet = np.linalg.norm(centre[pi] - centre[pj], axis=1) <= radius[pi] + radius[pj]
    pi, pj = pi[meet], pj[meet]
    apart = ~np.any(f[pi][:, :, None] == f[pj][:, None, :], axis=(1, 2))
    pi, pj = pi[apart], pj[apart]
    hits = np.zeros(len(pi), dtype=bool)
    for one, other in ((pi, pj), (pj, pi)):  # two triangles cross iff an edge of one crosses the other
        for k in range(3):
            hits |= _segment_hits(
                v[f[one, k]], v[f[one, (k + 1) % 3]], v[f[other, 0]], v[f[other, 1]], v[f[other, 2]]
            )
    # (bounding spheres that meet: a complete candidate set)
    assert len(pi) > 1000 and not hits.any()  # observed 0 crossings in 2096 pairs
    # reference: libigl's triangle-triangle test (Guigue & Devillers 2003) on the pairs that are
    # closest in 3D for their distance on the fabric (where a fold would touch), none crossing
    fabric = np.linalg.norm(standing.vertices[f[pi]].mean(axis=1) - standing.vertices[f[pj]].mean(axis=1), axis=1)
    space = np.linalg.norm(centre[pi] - centre[pj], axis=1)
    for i in np.argsort(space - fabric)[:200]:
        a, b = v[f[pi[i]]], v[f[pj[i]]]
        assert not igl.tri_tri_intersection_test_3d(*(a[k : k + 1] for k in range(3)), *(b[k : k + 1] for k in range(3)))[0]
    # the detector sees a crossing that is there, as libigl does
    tri_a = np.array([[0.0, 0.0, 0.0], [10.0, 0.0, 0.0], [0.0, 10.0, 0.0]])
    tri_b = np.array([[2.0, 2.0, -5.0], [2.0, 2.0, 5.0], [8.0, -3.0, 0.0]])
    assert igl.tri_tri_intersection_test_3d(*(tri_a[k : k + 1] for k in range(3)), *(tri_b[k : k + 1] for k in range(3)))[0]
    assert _segment_hits(tri_b[:1], tri_b[1:2], tri_a[:1], tri_a[1:2], tri_a[2:3]).all()
