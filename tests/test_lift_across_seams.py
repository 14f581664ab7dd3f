"""Planned routes that cross seams, lifted onto the demo drape, against libigl's exact geodesic.

On the demo the torso is an elliptic cylinder cut into a front and a back piece: a developable
surface whose shortest paths are straight lines in its development. A route between two points of
the lower torso planned by garnav (obstacle-free, so the plan is the geodesic) crosses a side seam;
lifted onto the mesh, its length must equal the exact polyhedral geodesic distance computed by
libigl's ``exact_geodesic`` (MMP algorithm: Mitchell, Mount & Papadimitriou 1987) on the welded
front + back mesh.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

import igl
import numpy as np
import pytest

from garnav import Robot
from garnav.drape import link_drape, lift_route, load_uv_mesh
from garnav.plan import Planner
from garnav.spec import load_garment

MESHES = Path(__file__).resolve().parent.parent / "meshes"


@pytest.fixture(scope="module")
def open_torso():
    """Demo garment without keep-outs or crossing limits, its drape, and a planner for a tiny robot."""
    demo = load_garment(MESHES / "sensing_top.toml")
    seams = tuple(
        dataclasses.replace(s, crossing_cost_mm=0.0, min_crossing_angle_deg=0.0) for s in demo.seams
    )
    garment = dataclasses.replace(demo, keepouts=(), seams=seams)
    drape = link_drape(garment, load_uv_mesh(MESHES / "sensing_top_drape.obj"))
    planner = Planner(garment, Robot(radius_mm=0.5, edge_margin_mm=0.0))
    return garment, drape, planner


def _vertices_of(drape, piece: str) -> tuple[np.ndarray, np.ndarray]:
    """Mesh vertices used only by ``piece``'s faces, and their pattern positions (k, 2)."""
    pid = drape.piece_names.index(piece)
    sel = drape.face_piece == pid
    verts = drape.faces[sel].reshape(-1)
    xy = drape.corner_pattern[sel].reshape(-1, 2)
    others = np.unique(drape.faces[~sel])
    keep = ~np.isin(verts, others)
    verts, first = np.unique(verts[keep], return_index=True)
    return verts, xy[keep][first]


def _welded_submesh(drape, pieces) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The drape's faces of ``pieces``, re-indexed: (drape vertex ids (k,), positions (k, 3), faces (f, 3))."""
    sel = np.isin(drape.face_piece, [drape.piece_names.index(n) for n in pieces])
    used, faces = np.unique(drape.faces[sel], return_inverse=True)
    return used, drape.positions[used], faces.reshape(-1, 3)


@pytest.mark.slow
def test_routes_across_side_seams_match_exact_geodesics(open_torso):
    garment, drape, planner = open_torso
    used, sub_pos, sub_faces = _welded_submesh(drape, ("front", "back"))

    front_v, front_xy = _vertices_of(drape, "front")
    back_v, back_xy = _vertices_of(drape, "back")
    width = garment.piece("front").edge("hem").length
    rng = np.random.default_rng(5)

    def pick(verts, xy, x_range):
        ok = (xy[:, 1] > 40) & (xy[:, 1] < 300) & (xy[:, 0] > x_range[0]) & (xy[:, 0] < x_range[1])
        i = rng.choice(np.flatnonzero(ok))
        return int(verts[i]), xy[i]

    checked = crossed = 0
    for k in range(8):
        # start near one side of the front, goal near the same side of the back: the shortest
        # way crosses the side seam between them (either side, by k's parity)
        near = (0.0, 0.3 * width) if k % 2 == 0 else (0.7 * width, width)
        sv, sxy = pick(front_v, front_xy, near)
        gv, gxy = pick(back_v, back_xy, (width - near[1], width - near[0]))
        route = planner.route(
            f"front:{float(sxy[0])!r},{float(sxy[1])!r}", f"back:{float(gxy[0])!r},{float(gxy[1])!r}"
        )
        lifted = lift_route(drape, garment, route)
        # reference: libigl exact_geodesic (MMP) on the welded front + back mesh
        exact = float(
            igl.exact_geodesic(
                sub_pos,
                sub_faces,
                VS=np.searchsorted(used, [sv]),
                VT=np.searchsorted(used, [gv]),
            )[0]
        )
        assert lifted.length_3d_mm == pytest.approx(exact, rel=6e-5)  # observed 5.7e-6 relative
        checked += 1
        crossed += len(route.crossings) > 0
    assert checked == 8
    assert crossed == 8  # every pair's route crosses a side seam



@pytest.mark.slow
def test_routes_across_an_armhole_match_exact_geodesics(open_torso):
    """Across the curved armhole (a crease between cone and cylinder) the refined crossing keeps
    the route locally shortest; it must match the exact geodesic on the welded front + back +
    sleeve mesh (every piece such a route can use).

    Near the armhole's bottom corner, where four seams meet, the seam sequence chosen on portals
    20 mm apart used to go round by the side seam and the back although the way over the armhole
    was shorter (up to 0.11 % long; the former bound here was 0.2 %). The planner now also refines
    the sequences found with each crossed seam left out: observed excess at most 1.0e-6 relative
    (pinned at 1e-5)."""
    garment, drape, planner = open_torso
    used, sub_pos, sub_faces = _welded_submesh(drape, ("front", "back", "sleeve_left"))
    front_v, front_xy = _vertices_of(drape, "front")
    sleeve_v, sleeve_xy = _vertices_of(drape, "sleeve_left")
    width = garment.piece("front").edge("hem").length
    rng = np.random.default_rng(8)
    # front points beside the left armhole (the wearer's left is at larger x on the front);
    # sleeve points on the sleeve's front half, a hand's width below the armhole
    front_ok = np.flatnonzero((front_xy[:, 0] > width - 120) & (front_xy[:, 0] < width - 40)
                              & (front_xy[:, 1] > 420) & (front_xy[:, 1] < 530))
    sleeve_ok = np.flatnonzero((sleeve_xy[:, 0] > 250) & (sleeve_xy[:, 0] < 320)
                               & (sleeve_xy[:, 1] > 420) & (sleeve_xy[:, 1] < 490))
    checked = 0
    for _ in range(6):
        i, j = rng.choice(front_ok), rng.choice(sleeve_ok)
        route = planner.route(
            f"front:{float(front_xy[i, 0])!r},{float(front_xy[i, 1])!r}",
            f"sleeve_left:{float(sleeve_xy[j, 0])!r},{float(sleeve_xy[j, 1])!r}",
        )
        lifted = lift_route(drape, garment, route)
        # reference: libigl exact_geodesic (MMP) on the welded front + back + sleeve mesh
        exact = float(
            igl.exact_geodesic(
                sub_pos, sub_faces,
                VS=np.searchsorted(used, [front_v[i]]),
                VT=np.searchsorted(used, [sleeve_v[j]]),
            )[0]
        )
        seams = [c.seam for c in route.crossings]
        assert "armhole_left_front" in seams or "armhole_left_back" in seams
        assert exact * (1 - 1e-4) <= lifted.length_3d_mm <= exact * (1 + 1e-5)
        checked += 1
    assert checked == 6
