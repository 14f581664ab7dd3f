"""The drape functions on the demo garment (meshes/sensing_top.toml + sensing_top_drape.obj)."""

from __future__ import annotations

from pathlib import Path

import igl
import numpy as np
import pytest
import shapely

import drape_meshes as dm
from garnav.drape import drape_report, link_drape, lift_polyline, load_uv_mesh, locate_3d, surface_to_pattern
from garnav.drape.import_mesh import garment_from_mesh

MESHES = Path(__file__).resolve().parent.parent / "meshes"
SPEC = MESHES / "sensing_top.toml"
DRAPE = MESHES / "sensing_top_drape.obj"

@pytest.fixture(scope="module")
def demo():
    from garnav.spec import load_garment

    g = load_garment(SPEC)
    m = load_uv_mesh(DRAPE)
    return g, m, link_drape(g, m)


def test_demo_drape_report(demo):
    g, m, d = demo
    rep = drape_report(g, d)
    assert [p.piece for p in rep.pieces] == [p.name for p in g.pieces]
    assert all(p.coverage == pytest.approx(1.0, abs=1e-6) for p in rep.pieces)  # observed 8.8e-8
    # the demo drape is an exact development up to its facets: stretch within ±1 %
    assert 0.99 < rep.stretch.sigma_min <= rep.stretch.sigma_max < 1.01
    assert {c.seam for c in rep.seams} == {s.name for s in g.seams}
    assert max(c.max_gap_mm for c in rep.seams) < 0.05  # observed 0.0036 mm


def test_demo_round_trip(demo):
    g, m, d = demo
    rng = np.random.default_rng(7)
    worst = 0.0
    total = 0
    for piece in g.pieces:
        poly = piece.polygon.buffer(-1.0)
        lo, hi = np.array(poly.bounds[:2]), np.array(poly.bounds[2:])
        cand = rng.uniform(lo, hi, (6000, 2))
        pts = cand[shapely.contains_xy(poly, cand[:, 0], cand[:, 1])][:2000]
        xyz = d.pattern_to_3d(piece.name, pts)
        back = surface_to_pattern(d, xyz)
        assert set(back.piece) == {piece.name}
        worst = max(worst, float(np.abs(back.pattern - pts).max()))
        total += len(pts)
    assert total == 10000
    assert worst < 1e-11  # observed 4.6e-13 mm


def _vertex_pattern(d, piece_id):
    """Pattern position of every vertex used by the piece: {vertex: (x, y)}."""
    sel = d.face_piece == piece_id
    verts = d.faces[sel].reshape(-1)
    xy = d.corner_pattern[sel].reshape(-1, 2)
    return dict(zip(verts.tolist(), map(tuple, xy)))


def test_demo_lifted_segments_match_exact_geodesics(demo):
    g, m, d = demo
    rng = np.random.default_rng(11)
    pairs = 0
    for name in ("front", "back"):
        pid = d.piece_names.index(name)
        piece = g.piece(name)
        inner = piece.polygon.buffer(-80.0)  # well inside: no path through another piece is shorter
        vp = _vertex_pattern(d, pid)
        # the piece on its own (the shortest paths compared lie inside it)
        used, sub_faces = np.unique(d.faces[d.face_piece == pid], return_inverse=True)
        sub_faces = sub_faces.reshape(-1, 3)
        sub_pos = d.positions[used]
        verts = np.array(sorted(v for v, p in vp.items() if inner.contains(shapely.Point(p))))
        for source in rng.choice(verts, 2, replace=False):
            targets = []
            while len(targets) < 6:
                t = int(rng.choice(verts))
                seg = shapely.LineString([vp[int(source)], vp[t]])
                if seg.length > 60.0 and inner.contains(seg):
                    targets.append(t)
            # reference: libigl exact_geodesic (MMP, Mitchell, Mount, Papadimitriou 1987)
            exact = igl.exact_geodesic(
                sub_pos,
                sub_faces,
                VS=np.searchsorted(used, [source]),
                VT=np.searchsorted(used, targets),
            )
            for t, ref in zip(targets, exact):
                path = lift_polyline(d, name, np.array([vp[int(source)], vp[t]]))
                pts = d.to_3d(path.face, path.bary)
                lifted = float(np.linalg.norm(np.diff(pts, axis=0), axis=1).sum())
                assert lifted == pytest.approx(float(ref), rel=1e-7)  # observed 1e-8 relative
                pairs += 1
    assert pairs >= 20


def test_demo_import_round_trip(demo):
    g, m, d = demo
    imported = garment_from_mesh(m, sheet_size_mm=g.sheet_size_mm)
    names = dm.match_pieces(g, imported)
    assert sorted(names.values()) == sorted(p.name for p in g.pieces)
    for p in imported.pieces:
        assert p.area == pytest.approx(g.piece(names[p.name]).area, rel=5e-6)  # shapely areas (observed 3.4e-7 relative)
    pairs = sorted(tuple(sorted((names[s.a.piece], names[s.b.piece]))) for s in imported.seams)
    assert pairs == sorted(tuple(sorted((s.a.piece, s.b.piece))) for s in g.seams)
    # the imported garment passes the spec's own checks
    from garnav.spec import garment_problems

    assert garment_problems(imported, "<import>") == []


def test_demo_body_landmark_snaps(demo):
    g, m, d = demo
    lm = g.landmark("cervicale")
    piece, x, y, dist = locate_3d(d, g, lm.xyz, what=f"landmark '{lm.name}'")
    assert piece in d.piece_names and dist < 10.0
    # the snapped pattern point maps back onto the closest surface point
    back = d.pattern_to_3d(piece, np.array([[x, y]]))[0]
    assert np.linalg.norm(back - np.asarray(lm.xyz)) == pytest.approx(dist, abs=1e-6)


@pytest.fixture(scope="module")
def demo_planner(demo):
    from garnav.drape import pattern_locator
    from garnav.plan import Planner

    g, m, d = demo
    return Planner(g, locate_3d=pattern_locator(d, g))


@pytest.mark.parametrize(
    "start, goal", [("omphalion", "dock"), ("wrist_left", "cervicale"), ("sternum_left", "wrist_right")]
)
@pytest.mark.slow
def test_demo_planned_routes_lift(demo, demo_planner, start, goal):
    from garnav.drape import lift_route

    g, m, d = demo
    route = demo_planner.route(start, goal, snap=True)
    lr = lift_route(d, g, route)
    # every waypoint of the plan is in the dense path, at its pattern position
    wps = route.waypoints()
    assert len(lr.waypoint_index) == len(wps)
    first_of_leg = np.r_[0, np.cumsum([len(leg.points) for leg in route.legs])[:-1]]
    for i, ((piece, x, y, _), k) in enumerate(zip(wps, lr.waypoint_index)):
        if lr.pieces[k] == piece:
            assert np.linalg.norm(lr.pattern[k] - [x, y]) <= lr.max_snap_mm + 1e-9
        else:  # a leg's first point merged into the previous leg's crossing point
            assert i in first_of_leg
    # at each crossing both legs meet in one 3D point (the demo's seams close)
    ends = np.cumsum([len(leg.points) for leg in route.legs])
    for e in ends[:-1]:
        assert lr.waypoint_index[e - 1] == lr.waypoint_index[e]
    # the drape is isometric within its stretch band (±0.3 %): 3D length ≈ pattern length
    assert lr.length_3d_mm == pytest.approx(route.length_mm, rel=5e-3)
    assert lr.climb_up_mm - lr.climb_down_mm == pytest.approx(lr.points[-1, 2] - lr.points[0, 2])
    assert np.allclose(np.linalg.norm(lr.normals, axis=1), 1.0)
    # outside normals point away from the body (the demo's torso and sleeves are convex): away
    # from the centroid of the piece's own triangles, for nearly all points
    centre = {name: d.positions[d.faces[d.piece_faces(name)]].reshape(-1, 3).mean(axis=0) for name in d.piece_names}
    for name in set(lr.pieces):
        sel = np.array([p == name for p in lr.pieces])
        if name == "yoke":  # flat and level: the outside is up (normals tilt only near its seams)
            assert np.all(lr.normals[sel, 2] > 0.5)
            continue
        out = lr.points[sel] - centre[name]
        assert np.mean(np.einsum("ij,ij->i", lr.normals[sel], out) > 0) > 0.9


@pytest.mark.slow
def test_demo_world_point_through_the_planner(demo_planner):
    from garnav.errors import QueryError

    # the body landmark snaps through the drape (3 mm off the garment in the demo)
    assert demo_planner.point("cervicale").piece == "yoke"
    with pytest.raises(QueryError, match=r"is 55\.0 mm from the garment; the largest snap distance is 10 mm"):
        demo_planner.point("xyz:0,-95,1455")
