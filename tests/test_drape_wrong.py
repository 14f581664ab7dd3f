"""Wrong drapes must not pass: mirrored, rotated, shifted or swapped UV islands, reversed or folded
triangles (tests/wrong_drapes.py builds each from the demo drape).

What happened before these checks (why they exist). Linking accepted all of these, so every
lifting command used them: a mirrored island, an island turned by 180°, two swapped sleeves, an
island shifted by 3 mm, an island with all its faces reversed, a pinch and a flipped band.
``garnav check --drape`` caught some only by their consequences -- seam gaps (mirrored: 340 mm,
swapped: 340 mm, shifted: 3 mm) or a seam point off the triangles (turned by 180°), never naming
the island's fault -- and passed the reversed island, the pinch and the band without a word. An
island turned by 90° already failed (it lies across pieces), and five reversed triangles failed
as "folded over in UV".
"""

from __future__ import annotations

import json
import shutil
import subprocess
import sys

import igl
import networkx as nx
import numpy as np
import pytest
import trimesh
from scipy.spatial.transform import Rotation

import drape_meshes as dm
import wrong_drapes as wd
from garnav.cli import main
from garnav.cli.check import SEAM_GAP_ERROR_MM
from garnav.drape.drape import link_drape
from garnav.drape.meshio import save_obj, uv_mesh_from_arrays
from garnav.drape.verify import SEAM_GAP_MAX_MM, drape_faults, fit_outline, rigid_fit_2d
from garnav.errors import MeshError


@pytest.fixture(scope="module")
def demo():
    return wd.demo()


def _faults(garment, mesh):
    return drape_faults(garment, link_drape(garment, mesh, verify=False))


def _reversed_share(garment, mesh, piece):
    """Share of the island's UV area turning clockwise, by libigl's signed double area (reference)."""
    sel = wd.island_of(garment, mesh, piece)
    uv = mesh.corner_uv[sel].reshape(-1, 2) * garment.sheet_size_mm
    a = igl.doublearea(uv, np.arange(len(uv)).reshape(-1, 3))
    return float(-a[a < 0].sum() / np.abs(a).sum())


def test_the_demo_drape_passes(demo):
    g, m = demo
    assert _faults(g, m) == ()
    link_drape(g, m)  # verifies
    assert SEAM_GAP_ERROR_MM == SEAM_GAP_MAX_MM  # check and the lifting commands use one limit


class TestMirrored:
    @pytest.mark.parametrize("piece, island", [("front", 0), ("sleeve_left", 2)])
    def test_mirrored_island_is_refused(self, demo, piece, island):
        g, m = demo
        bad = wd.mirrored(g, m, piece)
        assert _reversed_share(g, bad, piece) == 1.0  # libigl: every triangle turns clockwise
        with pytest.raises(MeshError, match=(
            rf"drape mirrored_{piece}\.obj: UV island {island} \(piece '{piece}'\) is mirrored: its pattern "
            r"→ 3D map reverses orientation on 100% of its area; its faces are wound like their "
            r"neighbours' across \d+ seam edges, so its UVs are mirrored")):
            link_drape(g, bad)
        assert [f.code for f in _faults(g, bad)] == ["drape_mirrored"]


class TestReversedWinding:
    def test_whole_island_wound_the_other_way(self, demo):
        g, m = demo
        bad = wd.whole_island_reversed(g, m, "back")
        with pytest.raises(MeshError, match=r"UV island 1 \(piece 'back'\) has its faces wound the other "
                           r"way: .* on 100% of its area and its faces run 322 of its 322 seam edges"):
            link_drape(g, bad)

    def test_a_few_reversed_triangles(self, demo):
        g, m = demo
        bad = wd.reversed_faces(g, m, "front", 5)
        with pytest.raises(MeshError, match=r"UV island 0 \(piece 'front'.*\) has 5 triangle\(s\) wound the "
                           "other way"):
            link_drape(g, bad)


    def test_3d_winding_reversed_but_not_the_uvs(self, demo):
        g, m = demo
        bad = wd.winding_only_reversed(g, m, "front", 5)
        # each such triangle becomes a one-triangle island sewn into the front's interior (and
        # before, linking it ended in a KeyError)
        with pytest.raises(MeshError, match=r"UV islands 0, 1, 2, 3, 4, 5 \(piece 'front'\) are sewn in the "
                           r"mesh where the spec has no seam: \d+ edge\(s\)"):
            link_drape(g, bad)


class TestRotated:
    @pytest.mark.parametrize("piece", ["front", "sleeve_left"])
    def test_half_turn_is_refused_with_the_fitted_turn(self, demo, piece):
        g, m = demo
        bad = wd.rotated(g, m, piece, 180.0)
        (fault,) = _faults(g, bad)
        assert fault.code == "drape_misplaced" and fault.piece == piece
        # the builder turns the island about its corners' mean c_v; the piece's area centroid c_a
        # then lands at 2 c_v - c_a: the shift the message must give is 2 (c_v - c_a)
        sel = wd.island_of(g, m, piece)
        c_v = g.piece(piece).placement.from_sheet(m.corner_uv[sel] * g.sheet_size_mm).reshape(-1, 2).mean(axis=0)
        c_a = np.asarray(g.piece(piece).polygon.centroid.coords[0])
        dx, dy = 2 * (c_v - c_a)
        assert f"turned by 180.0° and shifted by ({dx:.1f}, {dy:.1f}) mm" in fault.reason \
            or f"turned by -180.0° and shifted by ({dx:.1f}, {dy:.1f}) mm" in fault.reason, fault.reason

    def test_quarter_turn_already_failed(self, demo):
        g, m = demo
        with pytest.raises(MeshError, match=r"lies across pieces 'sleeve_left' 58%"):
            link_drape(g, wd.rotated(g, m, "sleeve_left", 90.0))

    def test_one_degree_turn(self, demo):
        g, m = demo
        faults = _faults(g, wd.rotated(g, m, "front", 1.0))
        text = " ".join(str(f) for f in faults)
        assert "turned by 1.0°" in text or "seam 'side_left_lower'" in text, text

    def test_rigid_fit_matches_scipy(self):
        # reference: scipy's Rotation.align_vectors (Kabsch) on the same points lifted to z = 0
        rng = np.random.default_rng(7)
        src = rng.normal(size=(50, 2)) * 100
        angle = 0.7
        rot = np.array([[np.cos(angle), -np.sin(angle)], [np.sin(angle), np.cos(angle)]])
        dst = src @ rot.T + [30.0, -12.0] + rng.normal(scale=0.5, size=src.shape)
        got, shift = rigid_fit_2d(src, dst)
        c = lambda p: np.c_[p - p.mean(axis=0), np.zeros(len(p))]  # noqa: E731
        ref, _ = Rotation.align_vectors(c(dst), c(src))
        assert got == pytest.approx(ref.as_rotvec()[2], abs=1e-9)  # observed 1e-16
        assert np.allclose(src @ np.array([[np.cos(got), -np.sin(got)], [np.sin(got), np.cos(got)]]).T + shift,
                           dst, atol=2.0)

    def test_outline_fit_finds_a_turn_and_shift(self, demo):
        g, _ = demo
        outline = g.piece("front").outline
        a = np.radians(123.0)
        rot = np.array([[np.cos(a), -np.sin(a)], [np.sin(a), np.cos(a)]])
        moved = outline @ rot.T + [40.0, 25.0]
        angle, shift, rms = fit_outline(moved, outline)
        assert (np.degrees(angle) + 123.0 + 180) % 360 - 180 == pytest.approx(0.0, abs=0.05)  # observed 1e-3
        assert rms < 0.5  # observed 0.2 mm (nearest 1 mm samples)


class TestSwapped:
    def test_swapped_sleeves_are_named(self, demo):
        g, m = demo
        bad = wd.swapped(g, m, "sleeve_left", "sleeve_right")
        with pytest.raises(MeshError, match=(
            r"UV islands 3 \(on piece 'sleeve_left'\) and 2 \(on piece 'sleeve_right'\) are swapped: the "
            r"pieces have the same outline, but their seams \(armhole_left_front, .*\) gap by up to "
            r"\d+\.\d mm and close \(largest gap 0\.00\d mm\) when the two islands trade places")):
            link_drape(g, bad)
        assert [f.code for f in _faults(g, bad)] == ["drape_swapped"]


class TestShifted:
    def test_shifted_island_opens_its_seams(self, demo):
        g, m = demo
        bad = wd.shifted(g, m, "front", 0.0, 3.0)
        faults = _faults(g, bad)
        assert {f.code for f in faults} == {"seam_gap"}
        # the side seams run straight up an elliptic cylinder's generator: the gap is the shift
        side = next(f for f in faults if f.item == "seam 'side_left_lower'")
        assert "up to 3.00 mm apart" in side.reason
        with pytest.raises(MeshError, match=r"seam 'side_left_lower' has its two runs up to 3\.00 mm apart"):
            link_drape(g, bad)


def _flipped_against(original, mesh):
    """(F,) faces whose winding normal turned more than 90° (trimesh; reference, same faces)."""
    n0 = trimesh.Trimesh(original.positions, original.faces, process=False).face_normals
    n1 = trimesh.Trimesh(mesh.positions, mesh.faces, process=False).face_normals
    return (n0 * n1).sum(axis=1) < 0


class TestFolded:
    def test_flipped_band_is_counted_and_placed(self, demo):
        g, m = demo
        bad = wd.band_flipped(g, m, ("front", "back"), 200.0, 60.0)
        truth = _flipped_against(m, bad)
        faults = _faults(g, bad)
        assert [f.code for f in faults] == ["drape_folded", "drape_folded"]
        for f, piece in zip(faults, ("front", "back")):
            want = int((truth & wd.island_of(g, m, piece)).sum())
            assert want > 300
            assert f"is folded in 3D: {want} triangle(s)" in f.reason
            assert "in 1 place(s), piece frame:" in f.reason and "within (0, 20" in f.reason

    def test_pinch_is_found(self, demo):
        g, m = demo
        bad = wd.pinched(g, m, "front", (220.0, 250.0), 40.0)
        truth = _flipped_against(m, bad)
        # reference count: networkx components of trimesh's face adjacency, cut where normals
        # turn by more than 90°; all but the largest are folded
        tm = trimesh.Trimesh(bad.positions, bad.faces, process=False)
        keep = tm.face_adjacency_angles < np.pi / 2
        graph = nx.Graph()
        graph.add_nodes_from(range(len(bad.faces)))
        graph.add_edges_from(tm.face_adjacency[keep].tolist())
        parts = sorted(nx.connected_components(graph), key=len)
        small = sum(len(p) for p in parts if len(p) < 100)
        assert small == int(truth.sum()) > 0
        with pytest.raises(MeshError, match=rf"UV island 0 \(piece 'front'\) is folded in 3D: {small} "
                           r"triangle\(s\) .* in 1 place\(s\), piece frame: \d+ around \(2\d\d\.\d, 2\d\d\.\d\) mm"):
            link_drape(g, bad)


    @pytest.mark.parametrize("bend_deg, folded", [(90.0, 0), (150.0, 600)])
    def test_a_square_crease_is_no_fold(self, bend_deg, folded):
        # the 400 x 300 mm panel (10 mm grid) bent about the line x = 300 by bend_deg: its
        # normals turn by exactly that angle there; the 600 triangles beyond it (10 columns x 30
        # rows x 2) are the smaller side
        g, m = dm.flat_sheet()
        x = m.positions[:, 0]
        a = np.radians(bend_deg)
        pos = m.positions.copy()
        beyond = x > 300.0
        pos[beyond, 0] = 300.0 + (x[beyond] - 300.0) * np.cos(a)
        pos[beyond, 2] = (x[beyond] - 300.0) * np.sin(a)
        bent = uv_mesh_from_arrays(pos, m.faces, m.corner_uv)
        faults = _faults(g, bent)
        assert len(faults) == (1 if folded else 0)
        if folded:
            assert f"is folded in 3D: {folded} triangle(s) (30000 mm², 25.00% of its area)" in faults[0].reason
            assert "within (300, 0)..(400, 300) mm" in faults[0].reason


@pytest.fixture(scope="module")
def folder(demo, tmp_path_factory):
    """The demo spec beside a drape with the left sleeve's island mirrored."""
    g, m = demo
    d = tmp_path_factory.mktemp("mirrored")
    shutil.copy(wd.SPEC, d / "sensing_top.toml")
    save_obj(wd.mirrored(g, m, "sleeve_left"), d / "sensing_top_drape.obj")
    return d


class TestCommands:
    """The commands refuse a wrong drape with the same message: exit 2, no traceback, no files."""

    def test_check_drape_exits_2_with_the_message(self, folder, capsys):
        assert main(["check", str(folder / "sensing_top.toml"), "--drape"]) == 2
        out = capsys.readouterr().out
        assert "UV island 2 (piece 'sleeve_left'): is mirrored: its pattern → 3D map reverses" in out
        assert "[drape_mirrored]" in out

    def test_check_json_carries_the_fault(self, folder, capsys):
        assert main(["check", str(folder / "sensing_top.toml"), "--json"]) == 2
        doc = json.loads(capsys.readouterr().out)
        (err,) = [e for e in doc["errors"] if e["code"] == "drape_mirrored"]
        assert err["item"].endswith("UV island 2 (piece 'sleeve_left')")
        assert err["reason"].startswith("is mirrored: its pattern → 3D map reverses orientation on 100%")
        assert doc["status"] == 2

    def test_check_json_carries_a_drape_that_does_not_link(self, demo, tmp_path, capsys):
        g, m = demo
        mesh = save_obj(wd.rotated(g, m, "sleeve_left", 90.0), tmp_path / "turned.obj")
        assert main(["check", str(wd.SPEC), "--drape", str(mesh), "--json"]) == 2
        doc = json.loads(capsys.readouterr().out)
        (err,) = [e for e in doc["errors"] if e["code"] == "drape_unreadable"]
        assert "lies across pieces 'sleeve_left' 58%" in err["reason"]

    def test_check_names_the_pose_whose_drape_is_wrong(self, demo, tmp_path, capsys):
        g, m = demo
        shutil.copy(wd.MESH, tmp_path / "sensing_top_drape.obj")
        save_obj(wd.mirrored(g, m, "front"), tmp_path / "arm_raised.obj")
        spec = tmp_path / "sensing_top.toml"
        text = wd.SPEC.read_text(encoding="utf-8")  # the demo's two poses, arm_raised's drape replaced
        assert 'drape = "sensing_top_arm_raised_drape.obj"' in text
        spec.write_text(text.replace('drape = "sensing_top_arm_raised_drape.obj"', 'drape = "arm_raised.obj"'),
                        encoding="utf-8")
        assert main(["check", str(spec), "--json"]) == 2
        doc = json.loads(capsys.readouterr().out)
        (err,) = doc["errors"]
        assert err["code"] == "drape_mirrored"
        assert err["item"].startswith("pose 'arm_raised' drape ") and "UV island 0 (piece 'front')" in err["item"]

    def test_route_refuses_and_writes_nothing(self, folder, tmp_path, capsys):
        out = tmp_path / "route.json"
        spec = str(folder / "sensing_top.toml")
        assert main(["route", spec, "--from", "wrist_left", "--to", "sternum_left", "--json", str(out)]) == 2
        err = capsys.readouterr().err
        assert "garnav route: error: drape " in err and "UV island 2 (piece 'sleeve_left') is mirrored" in err
        assert not out.exists() and list(tmp_path.iterdir()) == []

    @pytest.mark.slow
    def test_no_traceback_from_the_real_entry_point(self, folder):
        res = subprocess.run([sys.executable, "-m", "garnav", "check", str(folder / "sensing_top.toml"), "--drape"],
                             capture_output=True, text=True, timeout=120)
        assert res.returncode == 2 and "Traceback" not in res.stderr + res.stdout
