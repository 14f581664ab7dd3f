"""Loading UV-mapped meshes: per-corner UVs survive OBJ, glTF and PLY; bad files get clear errors."""

from __future__ import annotations

import json
import struct

import igl
import numpy as np
import pytest
import trimesh

import drape_meshes as dm
from garnav.drape.meshio import dumps_obj, load_uv_mesh, parse_obj, save_obj, uv_mesh_from_arrays
from garnav.errors import MeshError


def _corner_positions(mesh):
    return mesh.positions[mesh.faces]


def _same_mesh(a, b, atol):
    """Same triangles in the same order with the same corner positions and corner UVs."""
    assert a.faces.shape == b.faces.shape
    np.testing.assert_allclose(_corner_positions(a), _corner_positions(b), atol=atol)
    np.testing.assert_allclose(a.corner_uv, b.corner_uv, atol=atol)


def _split_trimesh(mesh) -> trimesh.Trimesh:
    """A trimesh with one vertex per distinct (position, UV) pair: the layout glTF and PLY need."""
    key = np.column_stack([mesh.faces.reshape(-1), mesh.corner_uv.reshape(-1, 2)])
    uniq, inverse = np.unique(key, axis=0, return_inverse=True)
    verts = mesh.positions[uniq[:, 0].astype(int)]
    faces = inverse.reshape(-1, 3)
    return trimesh.Trimesh(
        verts, faces, visual=trimesh.visual.TextureVisuals(uv=uniq[:, 1:]), process=False
    )


@pytest.fixture(scope="module")
def tube_mesh():
    return dm.cylinder(radius=40.0, length=100.0, n_around=24, n_along=5)[1]


def test_obj_round_trip_keeps_corner_uvs_and_seams(tube_mesh, tmp_path):
    path = save_obj(tube_mesh, tmp_path / "tube.obj")
    loaded = load_uv_mesh(path)
    _same_mesh(tube_mesh, loaded, atol=1e-7)
    # the closing seam: the positions of the seam are welded (one vertex, two UVs)
    assert len(loaded.positions) == 24 * 6
    uv_per_vertex = {}
    for v, uv in zip(loaded.faces.reshape(-1), loaded.corner_uv.reshape(-1, 2)):
        uv_per_vertex.setdefault(int(v), set()).add(tuple(np.round(uv, 9)))
    assert max(len(s) for s in uv_per_vertex.values()) == 2


def test_obj_parser_agrees_with_libigl(tube_mesh, tmp_path):
    path = tmp_path / "tube.obj"
    text = dumps_obj(tube_mesh)
    path.write_text(text)
    pos, faces, corner = parse_obj(text)
    # reference: libigl's OBJ reader (positions and per-corner texture indices kept apart)
    V, TC, _, F, FTC, _ = igl.readOBJ(str(path))
    np.testing.assert_allclose(pos, V)
    np.testing.assert_array_equal(faces, F)
    np.testing.assert_allclose(corner, TC[FTC])


def test_obj_polygons_and_negative_indices():
    text = "v 0 0 0\nv 1 0 0\nv 1 1 0\nv 0 1 0\nvt 0 0\nvt 1 0\nvt 1 1\nvt 0 1\nf -4/-4 -3/-3 -2/-2 -1/-1\n"
    pos, faces, corner = parse_obj(text)
    np.testing.assert_array_equal(faces, [[0, 1, 2], [0, 2, 3]])
    np.testing.assert_allclose(corner[1], [[0, 0], [1, 1], [0, 1]])


def test_obj_welds_split_positions():
    # two triangles that share an edge only by position (as a cloth simulator writes seams)
    pos = np.array([[0, 0, 0], [1, 0, 0], [0, 1, 0], [1, 0, 0], [1, 1, 0], [0, 1, 0]], float)
    uv = np.array([[[0, 0], [0.4, 0], [0, 0.4]], [[0.6, 0], [1, 0.4], [0.6, 0.4]]])
    mesh = uv_mesh_from_arrays(pos, [[0, 1, 2], [3, 4, 5]], uv)
    assert len(mesh.positions) == 4
    np.testing.assert_allclose(mesh.corner_uv, uv)


def _glb_texcoords(data: bytes) -> np.ndarray:
    """TEXCOORD_0 of the first primitive, read straight from a GLB container (glTF 2.0 §4.4)."""
    magic, _, _ = struct.unpack_from("<4sII", data, 0)
    assert magic == b"glTF"
    n_json, _ = struct.unpack_from("<II", data, 12)
    doc = json.loads(data[20 : 20 + n_json])
    bin_start = 20 + n_json + 8
    acc = doc["accessors"][doc["meshes"][0]["primitives"][0]["attributes"]["TEXCOORD_0"]]
    view = doc["bufferViews"][acc["bufferView"]]
    offset = bin_start + view.get("byteOffset", 0) + acc.get("byteOffset", 0)
    assert acc["componentType"] == 5126 and acc["type"] == "VEC2"  # float32 pairs
    return np.frombuffer(data, dtype="<f4", count=2 * acc["count"], offset=offset).reshape(-1, 2)


def test_gltf_round_trip_and_v_flip(tube_mesh, tmp_path):
    tm = _split_trimesh(tube_mesh)
    data = tm.export(file_type="glb")
    path = tmp_path / "tube.glb"
    path.write_bytes(data)
    loaded = load_uv_mesh(path)
    _same_mesh(tube_mesh, loaded, atol=1e-5)  # glTF stores float32
    # glTF 2.0 (Khronos spec §3.7.2.1): UV origin at the top-left, so the file holds 1 - v
    raw = _glb_texcoords(data)  # vertices in the order trimesh wrote them
    np.testing.assert_allclose(raw[:, 0], tm.visual.uv[:, 0], atol=1e-6)
    np.testing.assert_allclose(raw[:, 1], 1.0 - tm.visual.uv[:, 1], atol=1e-6)


def test_gltf_scene_with_transform(tube_mesh, tmp_path):
    tm = _split_trimesh(tube_mesh)
    scene = trimesh.Scene()
    shift = trimesh.transformations.translation_matrix([0.0, 0.0, 1000.0])
    scene.add_geometry(tm, transform=shift)
    path = tmp_path / "scene.glb"
    path.write_bytes(scene.export(file_type="glb"))
    loaded = load_uv_mesh(path)
    np.testing.assert_allclose(
        _corner_positions(loaded), _corner_positions(tube_mesh) + [0, 0, 1000.0], atol=1e-4
    )
    np.testing.assert_allclose(loaded.corner_uv, tube_mesh.corner_uv, rtol=0, atol=5e-7)  # observed 4.0e-8


def test_ply_vertex_uvs_from_trimesh(tube_mesh, tmp_path):
    path = tmp_path / "tube.ply"
    path.write_bytes(_split_trimesh(tube_mesh).export(file_type="ply"))
    loaded = load_uv_mesh(path)
    _same_mesh(tube_mesh, loaded, atol=1e-5)


def test_ply_per_face_texcoords(tmp_path):
    # a square of two triangles whose shared vertex 0 carries two UVs (a seam), written with the
    # per-face "texcoord" list property
    text = "\n".join(
        [
            "ply",
            "format ascii 1.0",
            "element vertex 4",
            "property float x",
            "property float y",
            "property float z",
            "element face 2",
            "property list uchar int vertex_indices",
            "property list uchar float texcoord",
            "end_header",
            "0 0 0",
            "1 0 0",
            "1 1 0",
            "0 1 0",
            "3 0 1 2 6 0.1 0.1 0.4 0.1 0.4 0.4",
            "3 0 2 3 6 0.6 0.1 0.9 0.4 0.6 0.4",
        ]
    )
    path = tmp_path / "square.ply"
    path.write_text(text + "\n")
    loaded = load_uv_mesh(path)
    assert len(loaded.positions) == 4
    pos = loaded.positions[loaded.faces]
    np.testing.assert_allclose(pos[0], [[0, 0, 0], [1, 0, 0], [1, 1, 0]])
    np.testing.assert_allclose(loaded.corner_uv[0], [[0.1, 0.1], [0.4, 0.1], [0.4, 0.4]], rtol=0, atol=1e-7)  # observed 6.0e-9
    np.testing.assert_allclose(loaded.corner_uv[1], [[0.6, 0.1], [0.9, 0.4], [0.6, 0.4]], atol=1e-6)


# --------------------------------------------------------------------------------- bad input


def test_missing_file(tmp_path):
    with pytest.raises(MeshError, match=r"nothing\.obj: does not exist"):
        load_uv_mesh(tmp_path / "nothing.obj")


def test_unknown_format(tmp_path):
    p = tmp_path / "mesh.stl"
    p.write_text("solid x\nendsolid x\n")
    with pytest.raises(MeshError, match=r"unknown mesh format '\.stl'"):
        load_uv_mesh(p)


def test_not_a_mesh(tmp_path):
    p = tmp_path / "notes.obj"
    p.write_text("hello world\n")
    with pytest.raises(MeshError, match=r"notes\.obj: not a triangle mesh"):
        load_uv_mesh(p)
    b = tmp_path / "junk.glb"
    b.write_bytes(b"\x00\x01binary junk" * 10)
    with pytest.raises(MeshError, match=r"junk\.glb: not a readable mesh file"):
        load_uv_mesh(b)
    o = tmp_path / "image.obj"
    o.write_bytes(b"\x89PNG\r\n\x1a\n\xff\xfe")
    with pytest.raises(MeshError, match="not a mesh file"):
        load_uv_mesh(o)


def test_point_cloud_ply_is_not_a_mesh(tmp_path):
    p = tmp_path / "cloud.ply"
    p.write_bytes(trimesh.PointCloud(np.eye(3)).export(file_type="ply"))
    with pytest.raises(MeshError, match=r"cloud\.ply: not a triangle mesh"):
        load_uv_mesh(p)


def test_no_texture_coordinates(tmp_path):
    p = tmp_path / "plain.obj"
    p.write_text("v 0 0 0\nv 1 0 0\nv 0 1 0\nf 1 2 3\n")
    with pytest.raises(MeshError, match=r"plain\.obj: the mesh has no texture coordinates"):
        load_uv_mesh(p)
    g = tmp_path / "plain.glb"
    g.write_bytes(trimesh.creation.box().export(file_type="glb"))
    with pytest.raises(MeshError, match="no texture coordinates"):
        load_uv_mesh(g)


def test_uv_out_of_range():
    pos = np.eye(3)
    with pytest.raises(MeshError, match=r"span u 0\.\.2.*within 0\.\.1"):
        uv_mesh_from_arrays(pos, [[0, 1, 2]], [[[0, 0], [2, 0], [0, 1]]])


def test_degenerate_triangles_skipped_and_reported():
    pos = np.array([[0, 0, 0], [1, 0, 0], [0, 1, 0], [1, 1, 0]], float)
    uv = np.array([[[0, 0], [0.5, 0], [0, 0.5]], [[0.5, 0], [0.5, 0], [0.5, 0]]])
    mesh = uv_mesh_from_arrays(pos, [[0, 1, 2], [1, 1, 3]], uv)
    assert mesh.n_faces == 1
    assert "skipped 1 degenerate triangle(s) with zero UV area (first: face 1)" in mesh.notes[0]
    with pytest.raises(MeshError, match="all 1 triangles are degenerate"):
        uv_mesh_from_arrays(pos, [[1, 1, 3]], uv[1:])


def test_collapsed_in_3d_is_refused():
    pos = np.array([[0, 0, 0], [1, 0, 0], [2, 0, 0]], float)
    with pytest.raises(MeshError, match=r"1 triangle\(s\) have zero area in 3D but not in UV"):
        uv_mesh_from_arrays(pos, [[0, 1, 2]], [[[0, 0], [0.5, 0], [0, 0.5]]])


def test_non_manifold_edge(tmp_path):
    # three triangles on the edge (0,0,0)-(1,0,0)
    pos = np.array([[0, 0, 0], [1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1]], float)
    faces = [[0, 1, 2], [1, 0, 3], [0, 1, 4]]
    uv = np.array([[[0.1, 0.1], [0.2, 0.1], [0.1, 0.2]]] * 3)
    mesh = uv_mesh_from_arrays(pos, [[0, 1, 2]], uv[:1])
    path = tmp_path / "fan.obj"
    path.write_text(
        "".join(f"v {x} {y} {z}\n" for x, y, z in pos)
        + "vt 0.1 0.1\nvt 0.2 0.1\nvt 0.1 0.2\n"
        + "".join(f"f {a + 1}/1 {b + 1}/2 {c + 1}/3\n" for a, b, c in faces)
    )
    assert mesh.n_faces == 1
    with pytest.raises(MeshError, match=r"fan\.obj: 1 non-manifold edge\(s\).*3 triangles"):
        load_uv_mesh(path)


def test_bad_obj_line(tmp_path):
    p = tmp_path / "bad.obj"
    p.write_text("v 0 0 0\nv 1 x 0\n")
    with pytest.raises(MeshError, match=r"bad\.obj: line 2: cannot read 'v 1 x 0'"):
        load_uv_mesh(p)
    q = tmp_path / "index.obj"
    q.write_text("v 0 0 0\nvt 0 0\nf 1/1 2/1 3/1\n")
    with pytest.raises(MeshError, match="refers to a vertex that does not exist"):
        load_uv_mesh(q)


def test_gltf_with_one_mesh_per_piece_is_welded_at_the_seam(tmp_path):
    # each piece its own mesh (as exporters write one primitive per material); trimesh must not
    # concatenate them (that can repack UVs), and the loader welds the shared seam vertices
    g, m = dm.folded_panels(nx=6, ny=8)
    half = len(m.faces) // 2
    scene = trimesh.Scene()
    for name, sel in (("left", slice(0, half)), ("right", slice(half, None))):
        part = uv_mesh_from_arrays(m.positions, m.faces[sel], m.corner_uv[sel])
        scene.add_geometry(_split_trimesh(part), geom_name=name, node_name=name)
    path = tmp_path / "pieces.glb"
    path.write_bytes(scene.export(file_type="glb"))
    loaded = load_uv_mesh(path)
    assert len(loaded.positions) == len(m.positions)  # seam vertices welded once more
    assert _triangle_set(loaded) == _triangle_set(m)


def _triangle_set(mesh) -> list[tuple]:
    """Every triangle as (corner positions, corner UVs), rounded, in sorted order."""
    rows = np.concatenate(
        [mesh.positions[mesh.faces].reshape(len(mesh.faces), -1), mesh.corner_uv.reshape(len(mesh.faces), -1)],
        axis=1,
    )
    return sorted(map(tuple, np.round(rows, 4).tolist()))


def test_gltf_text_with_separate_buffer(tube_mesh, tmp_path):
    files = _split_trimesh(tube_mesh).export(file_type="gltf")
    for name, data in files.items():
        (tmp_path / name).write_bytes(data)
    (gltf,) = [n for n in files if n.endswith(".gltf")]
    loaded = load_uv_mesh(tmp_path / gltf)
    _same_mesh(tube_mesh, loaded, atol=1e-5)
