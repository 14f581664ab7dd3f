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


def _vertices_of(drape, piece: str, garment) -> tuple[np.ndarray, np.ndarray]:
    """Mesh vertices used only by ``piece``'s faces, and their pattern positions (k, 2)."""
    pid = drape.piece_names.index(piece)
    sel = drape.face_piece == pid
    verts = drape.faces[sel].reshape(-1)
    xy = drape.corner_pattern[sel].reshape(-1, 2)
    others = np.unique(drape.faces[~sel])
    keep = ~np.isin(verts, others)
    verts, first = np.unique(verts[keep], return_index=True)
    return verts, xy[keep][first]


def test_routes_across_side_seams_match_exact_geodesics(open_torso):
    garment, drape, planner = open_torso
    torso = np.isin(drape.face_piece, [drape.piece_names.index("front"), drape.piece_names.index("back")])
    used, sub_faces = np.unique(drape.faces[torso], return_inverse=True)
    sub_faces = sub_faces.reshape(-1, 3)
    sub_pos = drape.positions[used]

    front_v, front_xy = _vertices_of(drape, "front", garment)
    back_v, back_xy = _vertices_of(drape, "back", garment)
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
        assert lifted.length_3d_mm == pytest.approx(exact, rel=1e-3)  # observed ~1e-6
        checked += 1
        crossed += len(route.crossings) > 0
    assert checked == 8
    assert crossed == 8  # every pair's route crosses a side seam

