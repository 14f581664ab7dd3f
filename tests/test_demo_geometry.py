"""The demo garment against outside references: elliptic integrals, the cone development, the
isometry of the drape, seam closure, the surfaces' implicit equations, free space, reproducibility.
"""

from __future__ import annotations

import math
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
import shapely
import trimesh
from scipy import integrate
from scipy.special import ellipe

from garnav.demo import build_demo, build_design, demo_garment
from garnav.demo.build import DEMO_FILE_NAMES, DRAPE_NAME
from garnav.demo.mesh import build_drape, triangulate_piece
from garnav.errors import MeshError
from garnav.model import Landmark
from garnav.polyline import cumulative_length, point_at_length, sub_polyline

MESHES = Path(__file__).resolve().parents[1] / "meshes"


@pytest.fixture(scope="module")
def design():
    return build_design()


@pytest.fixture(scope="module")
def drape(design):
    return build_drape(design)


@pytest.fixture(scope="module")
def loaded_drape():
    return trimesh.load(MESHES / DRAPE_NAME, force="mesh", process=False)


def test_torso_width_is_half_the_ellipse_perimeter(design):
    dims = design.dims
    a, b = dims.half_width, dims.half_depth
    m = 1.0 - b**2 / a**2
    # Ellipse perimeter 4·a·E(m), E the complete elliptic integral of the second kind
    # (DLMF §19.9.9; scipy.special.ellipe).
    expected = 2.0 * a * ellipe(m)
    # Independent: the arc-length integral ∫ sqrt(a² sin²t + b² cos²t) dt over [0, π] (scipy quad).
    quad, _ = integrate.quad(lambda t: math.hypot(a * math.sin(t), b * math.cos(t)), 0.0, math.pi)
    assert quad == pytest.approx(expected, rel=1e-13)  # observed 7.8e-15 relative
    for name in ("front", "back"):
        piece = design.garment.piece(name)
        assert piece.edge("hem").length == pytest.approx(expected, rel=5e-7)  # observed 4.3e-8 relative (edge sampling)
        assert piece.edge("yoke").length == pytest.approx(expected, rel=5e-7)  # observed 4.3e-8 relative (edge sampling)
    for edge in ("front", "back"):
        assert design.garment.piece("yoke").edge(edge).length == pytest.approx(expected, rel=1e-3)


def _line_intersection(p0, d0, p1, d1) -> np.ndarray:
    t = np.linalg.solve(np.column_stack([d0, -d1]), p1 - p0)
    return p0 + t[0] * d0


@pytest.mark.parametrize("side", ["left", "right"])
def test_sleeve_is_an_annular_sector_of_angle_2_pi_r_over_s(design, side):
    dims = design.dims
    piece = design.garment.piece(f"sleeve_{side}")
    # Lateral surface of a right circular cone of base radius r and slant height s unrolls to a
    # circular sector of angle 2π·r/s (standard development, e.g. Bronshtein–Semendyayev,
    # Handbook of Mathematics, §3.3 "cone"). Here r and s are taken at the wrist.
    r_w = dims.sleeve_radius_wrist
    axial = dims.sleeve_length * r_w / (dims.sleeve_radius_shoulder - r_w)  # wrist to apex
    s_w = math.hypot(axial, r_w)
    expected_angle = 2.0 * math.pi * r_w / s_w
    # the straight edges right after and right before the cuff (counter-clockwise order)
    assert piece.edges[0].name == "cuff"
    front = piece.edges[1].array  # rising from the cuff
    back = piece.edges[-1].array  # falling to the cuff
    apex = _line_intersection(front[0], front[-1] - front[0], back[0], back[-1] - back[0])
    d0, d1 = front[-1] - front[0], back[0] - back[-1]  # both from the cuff towards the armhole
    angle = math.acos(np.dot(d0, d1) / (np.linalg.norm(d0) * np.linalg.norm(d1)))
    assert angle == pytest.approx(expected_angle, rel=1e-6)
    cuff = piece.edge("cuff")
    assert np.linalg.norm(cuff.array - apex, axis=1) == pytest.approx(
        np.full(len(cuff.points), s_w), rel=1e-6
    )
    # the cuff arc is the wrist circle's circumference 2π·r
    assert cuff.length == pytest.approx(2.0 * math.pi * r_w, rel=7e-6)  # observed 6.4e-7 relative
    # the straight edges are generators: they point at the apex
    for end in (front[0], back[-1]):
        assert np.linalg.norm(end - apex) == pytest.approx(s_w, rel=1e-6)


def test_drape_edges_keep_their_pattern_length(design, loaded_drape):
    # Reference reader: trimesh's OBJ loader (per-corner UVs through vertex splitting).
    mesh = loaded_drape
    sheet = np.asarray(design.garment.sheet_size_mm)
    uv = mesh.visual.uv[mesh.faces] * sheet  # sheet mm; placements are rigid, so lengths = pattern
    xyz = mesh.vertices[mesh.faces]
    worst = 0.0
    for i, j in ((0, 1), (1, 2), (2, 0)):
        flat = np.linalg.norm(uv[:, i] - uv[:, j], axis=1)
        space = np.linalg.norm(xyz[:, i] - xyz[:, j], axis=1)
        worst = max(worst, float(np.max(np.abs(space / flat - 1.0))))
    assert worst < 0.005


@pytest.mark.slow
def test_drape_is_one_consistently_oriented_surface(design, drape):
    mesh = trimesh.Trimesh(drape.vertices, drape.faces, process=False)
    assert mesh.is_winding_consistent
    # a sphere with four holes (hem, neckline, two cuffs): Euler characteristic 2 − 4
    assert mesh.euler_number == -2
    assert len(trimesh.graph.split(mesh, only_watertight=False)) == 1
    # every triangle faces outwards: pattern → world is orientation preserving
    tri = drape.vertices[drape.faces]
    normals = np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0])
    centres = drape.pattern[drape.face_uv].mean(axis=1)
    for index, name in enumerate(drape.piece_names):
        sel = drape.face_piece == index
        outward = design.maps[name].normal(centres[sel])
        assert np.all(np.sum(normals[sel] * outward, axis=1) > 0), name


def test_seam_runs_meet_in_3d(design):
    garment = design.garment
    fractions = np.linspace(0.0, 1.0, 401)
    for seam in garment.seams:
        worlds = []
        for run in (seam.a, seam.b):
            pts = garment.run_polyline(run)
            at = point_at_length(pts, fractions * cumulative_length(pts)[-1])
            worlds.append(design.maps[run.piece].to_world(at))
        gap = np.linalg.norm(worlds[0] - worlds[1], axis=1).max()
        assert gap < 0.5, (seam.name, gap)


def test_armhole_lies_on_cone_and_cylinder(design):
    dims = design.dims
    a, b = dims.half_width, dims.half_depth
    for side in ("left", "right"):
        cone = design.cones[side]
        for piece, edge in (
            (f"sleeve_{side}", "armhole_front"),
            (f"sleeve_{side}", "armhole_back"),
            ("front", f"armhole_{side}"),
            ("back", f"armhole_{side}"),
        ):
            p = design.maps[piece].to_world(design.samples[(piece, edge)])
            # implicit cylinder x²/a² + y²/b² = 1
            assert np.abs((p[:, 0] / a) ** 2 + (p[:, 1] / b) ** 2 - 1.0).max() < 1e-12  # observed 2.2e-14
            # implicit cone: the angle between p − apex and the axis is the half-angle β
            q = p - np.asarray(cone.apex)
            cos_angle = -(q @ np.asarray(cone.d)) / np.linalg.norm(q, axis=1)
            assert np.abs(cos_angle - math.cos(cone.beta)).max() < 1e-14  # observed 1.1e-16


def test_spec_edges_chain_and_samples_follow_them(design):
    for piece in design.garment.pieces:
        for k, edge in enumerate(piece.edges):
            assert edge.points[0] == piece.edges[k - 1].points[-1]
            samples = design.samples[(piece.name, edge.name)]
            assert np.abs(samples[[0, -1]] - edge.array[[0, -1]]).max() < 5e-4  # observed 4.6e-5 mm
        assert piece.polygon.is_valid
        assert shapely.Polygon(piece.outline).exterior.is_ccw


def _free_space_problems(garment) -> list[str]:
    robot = garment.robot
    problems = []
    for lm in garment.landmarks:
        if not lm.on_pattern:
            continue
        piece = garment.piece(lm.piece)
        point = shapely.Point(lm.x, lm.y)
        if not piece.polygon.contains(point):
            problems.append(f"{lm.name}: outside piece {piece.name}")
        for run in garment.open_runs():
            if run.piece != piece.name:
                continue
            line = shapely.LineString(
                sub_polyline(piece.edge(run.edge).array, run.from_mm, run.to_mm)
            )
            if line.distance(point) <= robot.radius_mm + robot.edge_margin_mm:
                problems.append(f"{lm.name}: too close to open edge {run.edge}")
        for opening in piece.openings:
            if (
                shapely.LinearRing(opening.array).distance(point)
                <= robot.radius_mm + robot.edge_margin_mm
            ):
                problems.append(f"{lm.name}: too close to opening {opening.name}")
        for keepout in garment.keepouts_on(piece.name):
            if (
                keepout.shape.exact_geometry().distance(point)
                <= robot.radius_mm + keepout.clearance_mm
            ):
                problems.append(f"{lm.name}: inside grown keep-out {keepout.name}")
    return problems


def test_landmarks_lie_in_free_space(design):
    # Distances by shapely (GEOS), a general-purpose reference library.
    garment = design.garment
    assert _free_space_problems(garment) == []
    names = {lm.name for lm in garment.landmarks}
    for side in ("left", "right"):
        assert {f"wrist_{side}", f"olecranon_{side}", f"acromion_{side}"} <= names
    assert {"suprasternale", "sternum_left", "omphalion", "dock", "cervicale"} <= names


def test_body_landmark_snaps_to_free_space(design, drape):
    garment = design.garment
    cervicale = np.asarray(garment.landmark("cervicale").xyz)
    mesh = trimesh.Trimesh(drape.vertices, drape.faces, process=False)
    closest, distance, face = trimesh.proximity.closest_point(mesh, cervicale[None])
    assert distance[0] < 10.0
    piece = drape.piece_names[drape.face_piece[face[0]]]
    pattern = design.maps[piece].to_pattern(closest)[0]
    probe = replace(garment, landmarks=(Landmark("cervicale_snap", piece, *map(float, pattern)),))
    assert piece == "yoke"
    assert _free_space_problems(probe) == []


def test_landmark_check_catches_a_bad_point(design):
    garment = design.garment
    x, y = garment.piece("sleeve_left").edge("cuff").array[10] + [0.0, 10.0]
    bad = Landmark("near_cuff", "sleeve_left", float(x), float(y))
    assert _free_space_problems(replace(garment, landmarks=(bad,)))
    pocket = garment.keepouts[0].shape
    bad = Landmark("on_pocket", "front", pocket.cx, pocket.cy)
    assert _free_space_problems(replace(garment, landmarks=(bad,)))


@pytest.mark.slow
def test_triangulation_rejects_a_too_coarse_boundary():
    # a long slot side with lattice points on both sides is no Delaunay edge: any circle through
    # its ends holds a cap of height >= half its length on one side
    outline = np.array(
        [
            [0.0, 0.0],
            [100.0, 0.0],
            [100.0, 45.0],
            [20.0, 45.0],
            [20.0, 55.0],
            [100.0, 55.0],
            [100.0, 100.0],
            [0.0, 100.0],
        ]
    )
    with pytest.raises(MeshError):
        triangulate_piece(outline, [], 2.0)
    # the same shape with a fine boundary meshes, covering the area exactly
    ring = np.vstack(
        [
            sub_polyline(np.vstack([outline, outline[:1]]), s, s + 1.5)[0]
            for s in np.arange(0.0, 560.0, 1.5)
        ]
    )
    points, triangles = triangulate_piece(ring, [], 2.0)
    area = shapely.Polygon(ring).area
    p = points[triangles]
    cross = (p[:, 1, 0] - p[:, 0, 0]) * (p[:, 2, 1] - p[:, 0, 1]) - (p[:, 1, 1] - p[:, 0, 1]) * (
        p[:, 2, 0] - p[:, 0, 0]
    )
    assert np.all(cross > 0)
    assert cross.sum() / 2 == pytest.approx(area, rel=1e-9)


@pytest.mark.slow
def test_build_reproduces_committed_files(tmp_path):
    files = build_demo(tmp_path)
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted(DEMO_FILE_NAMES)
    for name in DEMO_FILE_NAMES:
        assert (tmp_path / name).read_bytes() == (MESHES / name).read_bytes(), name
    assert files.triangles > 0
    mesh = trimesh.load(tmp_path / DRAPE_NAME, force="mesh", process=False)
    uv = mesh.visual.uv[mesh.faces]
    assert uv.shape == (len(mesh.faces), 3, 2)
    assert uv.min() >= 0.0 and uv.max() <= 1.0


def test_demo_garment_matches_design():
    assert demo_garment() == build_design().garment
    assert [p.name for p in demo_garment().pieces] == [
        "front",
        "back",
        "sleeve_left",
        "sleeve_right",
        "yoke",
    ]
    assert {s.name for s in demo_garment().seams} == {
        "side_left_lower",
        "side_left_upper",
        "side_right_lower",
        "side_right_upper",
        "armhole_left_front",
        "armhole_left_back",
        "armhole_right_front",
        "armhole_right_back",
        "yoke_front",
        "yoke_back",
        "underarm_left",
        "underarm_right",
    }


@pytest.mark.slow
def test_mirrored_build_keeps_every_property():
    # left_x_sign = +1 mirrors the default layout (the wearer's left at +x)
    from garnav.demo.pattern import DemoDimensions

    mirrored = build_design(DemoDimensions(left_x_sign=1.0))
    garment = mirrored.garment
    assert _free_space_problems(garment) == []
    mesh = build_drape(mirrored)
    left = mesh.face_piece == mesh.piece_names.index("sleeve_left")
    assert np.all(mesh.vertices[np.unique(mesh.faces[left])][:, 0] > 0)
    tri = mesh.vertices[mesh.faces]
    normals = np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0])
    centres = mesh.pattern[mesh.face_uv].mean(axis=1)
    for index, name in enumerate(mesh.piece_names):
        sel = mesh.face_piece == index
        assert np.all(np.sum(normals[sel] * mirrored.maps[name].normal(centres[sel]), axis=1) > 0)
    assert trimesh.Trimesh(mesh.vertices, mesh.faces, process=False).euler_number == -2


@pytest.mark.parametrize(
    "piece, start, end",
    [
        ("front", (40.0, 100.0), (400.0, 250.0)),
        ("back", (30.0, 60.0), (420.0, 330.0)),
        ("sleeve_left", (150.0, 60.0), (210.0, 450.0)),
        ("sleeve_right", (150.0, 60.0), (210.0, 450.0)),
        ("yoke", (100.0, 200.0), (240.0, 200.0)),
    ],
)
def test_geodesics_on_the_drape_are_pattern_straight_lines(drape, piece, start, end):
    # Reference: potpourri3d's edge-flip geodesic solver (exact polyhedral geodesics). On an
    # isometric drape the surface distance between two points of a piece whose pattern segment
    # stays inside the piece is the pattern distance.
    import potpourri3d as pp3d

    index = drape.piece_names.index(piece)
    corners = drape.face_uv[drape.face_piece == index]
    faces = drape.faces[drape.face_piece == index]

    def vertex_near(xy):
        flat = np.linalg.norm(drape.pattern[corners] - np.asarray(xy), axis=-1)
        f, c = np.unravel_index(np.argmin(flat), flat.shape)
        return faces[f, c], drape.pattern[corners[f, c]]

    (i, a), (j, b) = vertex_near(start), vertex_near(end)
    solver = pp3d.EdgeFlipGeodesicSolver(drape.vertices, drape.faces)
    path = solver.find_geodesic_path(i, j)
    length = np.linalg.norm(np.diff(path, axis=0), axis=1).sum()
    assert length == pytest.approx(np.linalg.norm(a - b), rel=0.005)


def test_piece_maps_are_exact_isometries(design):
    # Identity between two computations: to_pattern ∘ to_world is the identity, and the Jacobian
    # of to_world (central differences) has both singular values 1 (a local isometry).
    rng = np.random.default_rng(7)
    for piece in design.garment.pieces:
        poly = piece.polygon
        lo, hi = np.array(poly.bounds[:2]), np.array(poly.bounds[2:])
        cand = lo + rng.random((400, 2)) * (hi - lo)
        pts = cand[shapely.contains_xy(poly, cand[:, 0], cand[:, 1])][:50]
        m = design.maps[piece.name]
        assert np.abs(m.to_pattern(m.to_world(pts)) - pts).max() < 1e-11, piece.name  # observed 4.0e-13 mm
        h = 1e-3
        jac = np.stack(
            [
                (m.to_world(pts + [h, 0]) - m.to_world(pts - [h, 0])) / (2 * h),
                (m.to_world(pts + [0, h]) - m.to_world(pts - [0, h])) / (2 * h),
            ],
            axis=-1,
        )
        sv = np.linalg.svd(jac, compute_uv=False)
        assert np.abs(sv - 1.0).max() < 3e-9, piece.name  # observed 2.1e-10


def test_ellipse_arc_length_inverse(design):
    cyl = design.torso
    s = np.linspace(-100.0, 2.5 * cyl.perimeter, 257)
    assert np.abs(cyl.arc_length(cyl.theta_at(s)) - s).max() < 1e-11  # observed 4.6e-13 mm
    # a quarter of the ellipse is a quarter of the perimeter (symmetry)
    assert float(cyl.arc_length(math.pi / 2)) == pytest.approx(cyl.perimeter / 4, rel=1e-12)


def test_body_is_closed_and_inside_the_garment(design, drape):
    from garnav.demo.mesh import build_body

    body = build_body(design)
    mesh = trimesh.Trimesh(body.vertices, body.faces, process=False)
    parts = mesh.split(only_watertight=False)
    assert len(parts) == 5  # torso, neck, head, two arms
    assert all(p.is_watertight and p.volume > 0 for p in parts)
    sample = drape.vertices[::23]
    _, distance, _ = trimesh.proximity.closest_point(mesh, sample)
    assert distance.min() > 2.0


def test_obj_has_one_group_per_piece():
    text = (MESHES / DRAPE_NAME).read_text()
    objects = [line[2:] for line in text.splitlines() if line.startswith("o ")]
    groups = [line[2:] for line in text.splitlines() if line.startswith("g ")]
    assert objects == groups == [p.name for p in demo_garment().pieces]


def test_demo_garment_passes_the_spec_checks(design):
    from garnav.spec import dumps_garment, garment_problems, loads_garment

    assert garment_problems(design.garment, "<demo>") == []
    assert loads_garment(dumps_garment(design.garment)) == design.garment
