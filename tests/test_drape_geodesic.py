"""Lifted straight pattern segments against libigl's exact polyhedral geodesics (MMP)."""

from __future__ import annotations

import math

import igl
import numpy as np
import pytest
import shapely

import drape_meshes as dm
from garnav.drape import link_drape, lift_polyline


def test_lifted_segments_match_exact_geodesics_on_a_cone():
    n_around, n_radial = 48, 16
    g, m = dm.cone(sin_half_angle=0.5, s_in=60.0, s_out=300.0, n_around=n_around, n_radial=n_radial)
    d = link_drape(g, m)
    piece = g.piece("cone")
    # grid vertices of the development (vertex id = j * (n_around + 1) + i, see drape_meshes.cone)
    s = np.linspace(60.0, 300.0, n_radial + 1)
    phi = np.linspace(0.0, math.pi, n_around + 1)
    rng = np.random.default_rng(2024)
    checked = 0
    while checked < 20:
        (i1, i2), (j1, j2) = rng.integers(1, n_around, 2), rng.integers(0, n_radial + 1, 2)
        a = np.array([s[j1] * math.cos(phi[i1]), s[j1] * math.sin(phi[i1])])
        b = np.array([s[j2] * math.cos(phi[i2]), s[j2] * math.sin(phi[i2])])
        seg = shapely.LineString([a, b])
        direct = float(np.linalg.norm(b - a))
        # the straight segment is the shortest path only if it stays on the piece and no copy of
        # b rotated by the cone's full development angle (π here: around the cone) is nearer
        around = min(
            float(np.linalg.norm(b @ np.array([[math.cos(t), math.sin(t)], [-math.sin(t), math.cos(t)]]) - a))
            for t in (math.pi, -math.pi)
        )
        if direct < 50.0 or not piece.polygon.buffer(1e-6).contains(seg) or around <= direct * 1.02:
            continue
        path = lift_polyline(d, "cone", np.array([a, b]))
        pts = d.to_3d(path.face, path.bary)
        lifted = float(np.linalg.norm(np.diff(pts, axis=0), axis=1).sum())
        # 3D vertex of each endpoint: the mesh vertex at that pattern point
        va = d.faces[path.face[0]][np.argmax(path.bary[0])]
        vb = d.faces[path.face[-1]][np.argmax(path.bary[-1])]
        # reference: libigl exact_geodesic (Mitchell, Mount, Papadimitriou 1987; MMP)
        exact = float(
            igl.exact_geodesic(d.positions, d.faces, VS=np.array([va]), VT=np.array([vb]))[0]
        )
        assert lifted == pytest.approx(exact, rel=4e-6)  # observed 3.7e-7 relative
        checked += 1
