"""3D garment surfaces without UVs for the flattening tests, built in Python.

Developable ones (every strip between two neighbouring generators is planar, so the polyhedral
surface has an exact isometric development): an open tube on a cylinder, a cone with its apex,
an open prism over an irregular hexagon and a closed box (the prism with its two caps). Not
developable: a spherical cap of given angular radius.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np


def _ring_strip(rings: list[np.ndarray]) -> tuple[np.ndarray, np.ndarray]:
    """Positions and CCW-outward triangles of stacked closed rings (each (n, 3), same n)."""
    n = len(rings[0])
    pos = np.vstack(rings)
    faces = []
    for j in range(len(rings) - 1):
        for i in range(n):
            a, b = j * n + i, j * n + (i + 1) % n
            faces += [[a, b, b + n], [a, b + n, a + n]]
    return pos, np.array(faces, dtype=np.int64)


def tube(radius: float = 50.0, length: float = 300.0, n_around: int = 64, n_along: int = 20):
    """An open cylinder about the z axis (vertex j·n + i at angle 2πi/n, height length·j/m)."""
    t = 2 * np.pi * np.arange(n_around) / n_around
    rings = [np.column_stack([radius * np.cos(t), radius * np.sin(t), np.full(n_around, z)])
             for z in np.linspace(0.0, length, n_along + 1)]
    return _ring_strip(rings)


def cone(half_angle_deg: float = 30.0, slant: float = 300.0, n_around: int = 64, n_along: int = 20):
    """A cone with its apex at the origin (vertex 0) opening downwards, slant length ``slant``."""
    a = math.radians(half_angle_deg)
    t = 2 * np.pi * np.arange(n_around) / n_around
    rings = [np.column_stack([s * math.sin(a) * np.cos(t), s * math.sin(a) * np.sin(t),
                              np.full(n_around, -s * math.cos(a))])
             for s in np.linspace(slant / n_along, slant, n_along)]
    pos, faces = _ring_strip(rings)
    pos = np.vstack([[0.0, 0.0, 0.0], pos])
    faces = faces + 1
    # apex fan; the rings run counter-clockwise seen from +z, the outside faces away from the axis
    fan = [[0, 1 + i, 1 + (i + 1) % n_around] for i in range(n_around)]
    strip = faces[:, ::-1]  # rings descend (z decreasing): reverse to keep the normals outward
    return pos, np.vstack([np.array(fan), strip])


def hexagon(width: float = 300.0) -> np.ndarray:
    """An irregular convex hexagon (6, 2) in mm, counter-clockwise."""
    ang = np.radians([0, 55, 118, 180, 240, 300])
    rad = np.array([1.0, 0.8, 0.95, 1.1, 0.85, 0.9]) * width / 2
    return np.column_stack([rad * np.cos(ang), rad * np.sin(ang)])


def _polygon_ring(poly: np.ndarray, per_side: int) -> np.ndarray:
    pts = []
    for k in range(len(poly)):
        p, q = poly[k], poly[(k + 1) % len(poly)]
        for s in np.arange(per_side) / per_side:
            pts.append(p + s * (q - p))
    return np.array(pts)


def prism(height: float = 250.0, per_side: int = 6, n_along: int = 12):
    """The sides of a prism over :func:`hexagon` (planar faces), open at both ends.

    Vertex j·n + i: ring j (height height·j/n_along), point i; ring points 0, per_side, ... are
    the hexagon's corners (the prism's vertical edges)."""
    ring = _polygon_ring(hexagon(), per_side)
    rings = [np.column_stack([ring, np.full(len(ring), z)])
             for z in np.linspace(0.0, height, n_along + 1)]
    return _ring_strip(rings)


def closed_box(height: float = 250.0, per_side: int = 6, n_along: int = 12, n_cap: int = 4):
    """The prism of :func:`prism` closed by its bottom and top caps (fans of rings toward the
    centre). Returns positions, faces and the vertex ids of the bottom rim, the top rim and the
    vertical edge at ring point 0 (bottom to top)."""
    pos, faces = prism(height, per_side, n_along)
    n = 6 * per_side
    ring = _polygon_ring(hexagon(), per_side)
    parts_p, parts_f = [pos], [faces]
    offset = len(pos)
    for z, rim0, up in ((0.0, 0, False), (height, n_along * n, True)):
        # inner rings scaled towards the centre, then the centre point
        ids = [np.arange(rim0, rim0 + n)]
        for k in range(1, n_cap):
            s = 1.0 - k / n_cap
            parts_p.append(np.column_stack([ring * s, np.full(n, z)]))
            ids.append(np.arange(offset, offset + n))
            offset += n
        parts_p.append(np.array([[0.0, 0.0, z]]))
        centre = offset
        offset += 1
        fs = []
        for k in range(n_cap - 1):
            a, b = ids[k], ids[k + 1]
            for i in range(n):
                i1 = (i + 1) % n
                fs += [[a[i], b[i1], a[i1]], [a[i], b[i], b[i1]]]
        last = ids[-1]
        fs += [[last[i], centre, last[(i + 1) % n]] for i in range(n)]
        fs = np.array(fs, dtype=np.int64)
        parts_f.append(fs[:, ::-1] if up else fs)  # top: normals up; bottom: normals down
    bottom = list(range(n)) + [0]
    top = [n_along * n + i for i in range(n)] + [n_along * n]
    vertical = [j * n for j in range(n_along + 1)]
    return np.vstack(parts_p), np.vstack(parts_f), bottom, top, vertical


def spherical_cap(alpha: float, radius: float = 100.0, n_rings: int = 20, n_around: int = 72):
    """A cap of angular radius ``alpha`` (radians) of a sphere about the origin, pole at +z."""
    pts = [[0.0, 0.0, radius]]
    for i in range(1, n_rings + 1):
        th = alpha * i / n_rings
        ph = 2 * np.pi * np.arange(n_around) / n_around
        pts += np.column_stack([radius * np.sin(th) * np.cos(ph), radius * np.sin(th) * np.sin(ph),
                                np.full(n_around, radius * np.cos(th))]).tolist()
    faces = [[0, 1 + j, 1 + (j + 1) % n_around] for j in range(n_around)]
    for i in range(1, n_rings):
        a, b = 1 + (i - 1) * n_around, 1 + i * n_around
        for j in range(n_around):
            j1 = (j + 1) % n_around
            faces += [[a + j, b + j, b + j1], [a + j, b + j1, a + j1]]
    return np.array(pts), np.array(faces, dtype=np.int64)


def write_obj(path: Path, positions: np.ndarray, faces: np.ndarray) -> Path:
    lines = ["# invented test surface, mm"]
    lines += [f"v {p[0]!r} {p[1]!r} {p[2]!r}" for p in positions.tolist()]
    lines += [f"f {a + 1} {b + 1} {c + 1}" for a, b, c in faces.tolist()]
    path.write_text("\n".join(lines) + "\n")
    return path


def write_cuts(path: Path, cuts: dict[str, list], pieces: dict[str, list] | None = None,
               extra: str = "") -> Path:
    """A cut file: ``cuts`` name → vertex ids (ints) or points ([x, y, z])."""
    lines = ['format = "garnav-cuts"', extra]
    for name, seq in cuts.items():
        key = "vertices" if seq and isinstance(seq[0], int) else "points"
        lines += ["[[cut]]", f'name = "{name}"', f"{key} = {seq!r}"]
    for name, at in (pieces or {}).items():
        lines += ["[[piece]]", f'name = "{name}"', f"at = {list(at)!r}"]
    path.write_text("\n".join(lines) + "\n")
    return path
