"""Lifting pattern polylines and routes onto synthetic developable drapes."""

from __future__ import annotations

import math
import numpy as np
import pytest
import trimesh

import drape_meshes as dm
from garnav.drape import link_drape, lift_polyline, lift_route, surface_to_pattern
from garnav.drape.locate import barycentric_2d
from garnav.errors import QueryError
from garnav.plan import Crossing, Leg, Planner, Route


@pytest.fixture(scope="module")
def cyl():
    g, m = dm.cylinder(radius=50.0, length=300.0, n_around=128, n_along=30)
    return g, link_drape(g, m)


@pytest.fixture(scope="module")
def cone():
    g, m = dm.cone(sin_half_angle=0.5, s_in=60.0, s_out=300.0)
    return g, link_drape(g, m)


def _length(pts):
    return float(np.linalg.norm(np.diff(pts, axis=0), axis=1).sum())


def test_cylinder_segment_lifts_to_helix(cyl):
    g, d = cyl
    r = 50.0
    circ = 2 * math.pi * r
    a, b = np.array([5.0, 20.0]), np.array([5.0 + 0.9 * circ, 270.0])
    path = lift_polyline(d, "tube", np.array([a, b]))
    pts = d.to_3d(path.face, path.bary)
    dtheta = (b[0] - a[0]) / r
    # helix arc length sqrt((r Δθ)² + Δz²) (standard result, e.g. Stewart, Calculus, §13.3)
    helix = math.hypot(r * dtheta, b[1] - a[1])
    assert _length(pts) == pytest.approx(helix, rel=2e-3)
    # every point within the chord error r (1 - cos(Δθ/2)) of the true cylinder
    chord_err = r * (1 - math.cos(math.pi / 128))
    rho = np.hypot(pts[:, 0], pts[:, 1])
    assert np.all(rho <= r + 1e-9) and np.all(rho >= r - chord_err - 1e-9)
    # the helix rises linearly with the angle turned (up to the facets' chord error)
    theta = np.unwrap(np.arctan2(pts[:, 1], pts[:, 0]))
    rise = (theta - theta[0]) * r * (250.0 / (0.9 * circ))
    np.testing.assert_allclose(pts[:, 2] - 20.0, rise, atol=1e-3)


def test_lifted_points_lie_on_the_mesh(cyl):
    g, d = cyl
    rng = np.random.default_rng(3)
    circ = 2 * math.pi * 50.0
    pts2 = np.column_stack([rng.uniform(1, circ - 1, 12), rng.uniform(1, 299, 12)])
    path = lift_polyline(d, "tube", pts2)
    pts = d.to_3d(path.face, path.bary)
    mesh = trimesh.Trimesh(d.positions, d.faces, process=False)
    # reference: trimesh.proximity.closest_point (trimesh's own BVH query)
    _, dist, _ = trimesh.proximity.closest_point(mesh, pts)
    assert dist.max() < 1e-12  # observed 2.9e-14 mm
    # the dense pattern points lie on the input polyline, waypoints exactly
    np.testing.assert_allclose(path.pattern[path.waypoint_index], pts2, rtol=0, atol=1e-12)  # observed 2.8e-14 mm


def test_cone_segment_lifts_to_geodesic(cone):
    g, d = cone
    # two points in the development plane: slant s, angle φ (the sector spans φ in [0, π])
    sa, pa, sb, pb = 100.0, 0.3, 280.0, 2.2
    a = np.array([sa * math.cos(pa), sa * math.sin(pa)])
    b = np.array([sb * math.cos(pb), sb * math.sin(pb)])
    path = lift_polyline(d, "cone", np.array([a, b]))
    pts = d.to_3d(path.face, path.bary)
    # the straight segment lies in the sector (convex between its radii), so it is the geodesic;
    # its length by the law of cosines in the development plane
    geodesic = math.sqrt(sa**2 + sb**2 - 2 * sa * sb * math.cos(pb - pa))
    assert _length(pts) == pytest.approx(geodesic, rel=4e-4)  # observed 3.6e-5 relative


def test_round_trip_pattern_3d_pattern(cyl, cone):
    for g, d, name in [(cyl[0], cyl[1], "tube"), (cone[0], cone[1], "cone")]:
        rng = np.random.default_rng(11)
        poly = g.piece(name).polygon
        lo = np.array(poly.bounds[:2])
        hi = np.array(poly.bounds[2:])
        cand = rng.uniform(lo, hi, (30000, 2))
        import shapely

        inside = shapely.contains_xy(poly.buffer(-0.5), cand[:, 0], cand[:, 1])
        pts = cand[inside][:10000]
        assert len(pts) == 10000
        xyz = d.pattern_to_3d(name, pts)
        back = surface_to_pattern(d, xyz)
        assert set(back.piece) == {name}
        assert np.abs(back.pattern - pts).max() < 1e-12  # observed 1.1e-13 mm
        assert back.distance.max() < 1e-12  # observed 6.4e-14 mm


def test_route_across_a_folded_seam():
    g, m = dm.folded_panels()
    d = link_drape(g, m)
    # left piece: from (100, 50) to the seam at (300, 150); right piece: on to (200, 350)
    legs = (
        Leg("left", np.array([[100.0, 50.0], [300.0, 150.0]])),
        Leg("right", np.array([[0.0, 150.0], [200.0, 350.0]])),
    )
    crossing = Crossing("middle", "left", "right", legs[0].points[-1], legs[1].points[0], 0.375, 63.4)
    length = math.hypot(200, 100) + math.hypot(200, 200)
    route = Route(legs, (crossing,), length, length, np.array([18.4]), np.array([26.6, 26.6, 45.0, 45.0]))
    lr = lift_route(d, g, route)
    expect = math.hypot(200, 100) + math.hypot(200, 200)  # each leg is straight on a flat panel
    assert lr.length_3d_mm == pytest.approx(expect, rel=1e-9)
    assert lr.climb_up_mm == pytest.approx(300.0)
    assert lr.climb_down_mm == pytest.approx(0.0)
    # the crossing appears once (the seam closes), and every waypoint is indexed
    assert len(lr.waypoint_index) == 4
    assert lr.waypoint_index[1] == lr.waypoint_index[2]
    np.testing.assert_allclose(lr.points[lr.waypoint_index[1]], [300.0, 0.0, 150.0], atol=1e-9)
    assert lr.pieces[0] == "left" and lr.pieces[-1] == "right"
    # outside normals: the left panel (plane y = 0, pattern x along world x, pattern y up) faces -y
    np.testing.assert_allclose(lr.normals[0], [0.0, -1.0, 0.0], atol=1e-9)
    np.testing.assert_allclose(lr.normals[-1], [1.0, 0.0, 0.0], atol=1e-9)


def test_planned_route_on_folded_panels():
    g, m = dm.folded_panels()
    d = link_drape(g, m)
    route = Planner(g).route("left_centre", "right_centre")
    assert route.seams_crossed == ("middle",)
    lr = lift_route(d, g, route)
    # folding is an isometry: the 3D length is the planner's pattern length
    assert lr.length_3d_mm == pytest.approx(route.length_mm, rel=1e-9)
    assert lr.climb_up_mm == pytest.approx(0.0, abs=1e-12) and lr.climb_down_mm == pytest.approx(0.0, abs=1e-12)  # observed 2.8e-14 mm
    np.testing.assert_allclose(lr.points[0], [150.0, 0.0, 200.0], atol=1e-9)
    np.testing.assert_allclose(lr.points[-1], [300.0, 150.0, 200.0], atol=1e-9)


def test_lift_errors(cyl):
    g, d = cyl
    with pytest.raises(QueryError, match="no piece 'tubes'.*did you mean 'tube'"):
        lift_polyline(d, "tubes", np.array([[1.0, 1.0], [2.0, 2.0]]))
    with pytest.raises(QueryError, match=r"outside the drape's triangles"):
        lift_polyline(d, "tube", np.array([[1.0, 1.0], [50.0, 400.0]]))


def test_segment_through_vertices(cyl):
    g, d = cyl
    # a diagonal along grid vertices (the grid cell is circ/128 × 10 mm)
    cell = 2 * math.pi * 50.0 / 128
    a, b = np.array([cell * 2, 20.0]), np.array([cell * 12, 120.0])
    path = lift_polyline(d, "tube", np.array([a, b]))
    pts = d.to_3d(path.face, path.bary)
    assert np.all(np.linalg.norm(np.diff(pts, axis=0), axis=1) > 0)
    t = (path.pattern - a) @ (b - a) / np.dot(b - a, b - a)
    assert np.all(np.diff(t) > 0)


def test_segment_over_a_gap_in_the_mesh():
    from garnav.drape.meshio import uv_mesh_from_arrays

    g, m = dm.flat_sheet(nx=40, ny=30)  # 10 mm cells, pattern = world x, y
    centre = m.positions[m.faces].mean(axis=1)
    notch = (centre[:, 0] > 100) & (centre[:, 0] < 110) & (centre[:, 1] < 10)
    assert notch.sum() == 2
    cut = uv_mesh_from_arrays(m.positions, m.faces[~notch], m.corner_uv[~notch])
    d = link_drape(g, cut)
    seg = np.array([[50.0, 5.0], [150.0, 5.0]])
    with pytest.raises(QueryError, match=r"leaves the drape's triangles at \(100\.0, 5\.0\) mm for 10\.0 mm, up to 5\.0 mm away"):
        lift_polyline(d, "panel", seg, snap_mm=1.0)
    path = lift_polyline(d, "panel", seg, snap_mm=12.0)
    pts = d.to_3d(path.face, path.bary)
    assert np.linalg.norm(np.diff(pts, axis=0), axis=1).sum() == pytest.approx(100.0)
    np.testing.assert_allclose(pts[:, :2], path.pattern, atol=1e-9)


def test_segment_hugging_the_boundary_follows_it_in_3d(cyl):
    # a route that hugs an edge lies a few µm outside the mesh after file rounding; it may do so for
    # its whole length (the snap distance bounds how far out, not how long) and is lifted onto
    # the boundary vertex by vertex: here the tube's bottom edge, a circle of radius 50 in z = 0
    g, d = cyl
    r = 50.0
    a, b = np.array([5.0, -0.002]), np.array([5.0 + 0.5 * math.pi * r, -0.002])
    path = lift_polyline(d, "tube", np.array([a, b]))
    pts = d.to_3d(path.face, path.bary)
    assert len(pts) > 30  # every boundary vertex passed (128 around the full circle)
    np.testing.assert_allclose(pts[:, 2], 0.0, atol=1e-9)
    # reference: arc length r·Δθ of a circle; the facets' chords are shorter by at most a factor
    # sin(π/128)/(π/128) (chord 2r·sin(Δθ/2) of each facet)
    chord = math.sin(math.pi / 128) / (math.pi / 128)
    assert _length(pts) <= 0.5 * math.pi * r + 1e-6
    assert _length(pts) >= 0.5 * math.pi * r * chord - 1e-6
    # half a millimetre outside is within the default 1 mm too (a gap is refused: see below)
    far = lift_polyline(d, "tube", np.array([[5.0, -0.5], [80.0, -0.5]]))
    assert np.all(np.abs(d.to_3d(far.face, far.bary)[:, 2]) < 1e-9) and len(far.pattern) > 10


def test_many_segments_including_ones_along_mesh_edges(cyl):
    g, d = cyl
    circ = 2 * math.pi * 50.0
    cell_x = circ / 128
    rng = np.random.default_rng(17)
    segs = [rng.uniform([1, 1], [circ - 1, 299], (2, 2)) for _ in range(40)]
    # along grid lines (mesh edges), along cell diagonals (mesh edges too), and through vertices
    segs += [np.array([[cell_x * 3, 50.0], [cell_x * 90, 50.0]])]
    segs += [np.array([[cell_x * 7, 10.0], [cell_x * 7, 280.0]])]
    segs += [np.array([[cell_x * 5, 20.0], [cell_x * 25, 220.0]])]
    segs += [np.array([[cell_x * 40, 270.0], [cell_x * 20, 70.0]])]
    mesh = trimesh.Trimesh(d.positions, d.faces, process=False)
    for seg in segs:
        path = lift_polyline(d, "tube", seg)
        pts = d.to_3d(path.face, path.bary)
        # pattern points advance monotonically along the segment and stay on it
        t = (path.pattern - seg[0]) @ (seg[1] - seg[0]) / np.dot(seg[1] - seg[0], seg[1] - seg[0])
        assert np.all(np.diff(t) > 0) and t[0] == pytest.approx(0) and t[-1] == pytest.approx(1)
        u, v = seg[1] - seg[0], path.pattern - seg[0]
        off = np.abs(u[0] * v[:, 1] - u[1] * v[:, 0]) / np.linalg.norm(u)
        assert off.max() < 1e-12  # observed 7.9e-14 mm
        # each dense point maps back to the pattern position it came from
        np.testing.assert_allclose(d.to_pattern(path.face, path.bary), path.pattern, rtol=0, atol=2e-12)  # observed 2.0e-13 mm
        # consecutive points lie in one triangle (the one holding their midpoint), so each 3D
        # piece is a chord of one flat facet and lies on the surface
        mid = 0.5 * (path.pattern[1:] + path.pattern[:-1])
        fm = d.locate("tube", mid).face
        tri = d.corner_pattern[fm]
        assert barycentric_2d(tri, path.pattern[:-1]).min() >= -1e-9
        assert barycentric_2d(tri, path.pattern[1:]).min() >= -1e-9
    # reference: trimesh.proximity.closest_point puts the last path on the surface
    _, dist, _ = trimesh.proximity.closest_point(mesh, pts)
    assert dist.max() < 1e-13  # observed 7.9e-15 mm


def test_lift_onto_poses_is_lift_route_on_each_drape():
    """``lift_route_poses`` does the pattern side once for drapes of one UV link; every result must
    be ``lift_route``'s on that drape exactly — rigid copies (rotations from scipy), and a pose whose
    seam is open (the crossing then has two 3D images) — and follow the rigid motion."""
    import dataclasses

    from scipy.spatial.transform import Rotation

    from garnav.drape.lift import lift_route_poses

    g, m = dm.folded_panels()
    _, m_gap = dm.folded_panels(gap=0.5)  # under the 1 mm seam gap a drape may have
    rots = Rotation.random(3, random_state=np.random.default_rng(4))
    shift = np.array([10.0, -20.0, 30.0])
    moved = [dataclasses.replace(m, positions=r.apply(np.array(m.positions)) + shift) for r in rots]
    drapes = [link_drape(g, x) for x in [m, m_gap, *moved]]
    assert len({d.pattern_key for d in drapes}) == 1
    route = Planner(g).route("left_centre", "right_centre")
    lifted = lift_route_poses(drapes, g, route)
    for d, lr in zip(drapes, lifted):
        one = lift_route(d, g, route)
        for key in ("points", "normals", "piece_index", "pattern", "face", "bary", "waypoint_index"):
            np.testing.assert_array_equal(getattr(lr, key), getattr(one, key))
        assert lr.max_snap_mm == one.max_snap_mm
    assert len(lifted[1].points) == len(lifted[0].points) + 1  # the open seam's two images
    for r, lr in zip(rots, lifted[2:]):
        np.testing.assert_allclose(lr.points, r.apply(lifted[0].points) + shift, atol=1e-9)  # observed 5.7e-14 mm
        np.testing.assert_allclose(lr.normals, r.apply(lifted[0].normals), atol=1e-12)  # observed 2.4e-15
    g2, m2 = dm.folded_panels(nx=20)
    assert link_drape(g2, m2).pattern_key != drapes[0].pattern_key  # another triangulation
