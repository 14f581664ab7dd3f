"""Triangle meshes of the demo: the draped garment (UV-mapped) and a mannequin body for previews.

The drape is meshed piece by piece in pattern space: the piece's boundary samples (see
:class:`garnav.demo.pattern.DemoDesign`) plus interior points of a triangular lattice are
Delaunay-triangulated (scipy ``Delaunay``); triangles outside the piece are dropped. The lattice
keeps a clearance of more than half a boundary step from the outline, so every boundary segment is
a Gabriel edge and hence a Delaunay edge; :func:`triangulate_piece` checks that and the area.
Vertices map to the world through each piece's exact development map. Along seams both runs are
sampled at the same world points, so those vertices are shared and the 3D mesh is one connected
surface; UVs stay per corner (one set per piece).

No file I/O here: :func:`drape_obj_text` and :func:`body_obj_text` return the OBJ text.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import shapely
from scipy.spatial import Delaunay

from garnav.demo.pattern import DemoDesign
from garnav.errors import MeshError

__all__ = [
    "DrapeMesh",
    "BodyMesh",
    "triangulate_piece",
    "build_drape",
    "build_body",
    "drape_obj_text",
    "body_obj_text",
]


@dataclass(frozen=True)
class DrapeMesh:
    """A UV-mapped garment mesh.

    Attributes
    ----------
    vertices : (nv, 3) float array
        World positions, mm.
    faces : (nf, 3) int array
        Vertex indices, counter-clockwise seen from the garment's outside.
    uv : (nt, 2) float array
        Texture coordinates = sheet position / sheet size.
    face_uv : (nf, 3) int array
        Per-corner indices into ``uv``.
    face_piece : (nf,) int array
        Index into ``piece_names`` of each face's piece.
    piece_names : tuple of str
    pattern : (nt, 2) float array
        Piece-frame position (mm) of each UV point.
    """

    vertices: np.ndarray
    faces: np.ndarray
    uv: np.ndarray
    face_uv: np.ndarray
    face_piece: np.ndarray
    piece_names: tuple[str, ...]
    pattern: np.ndarray


@dataclass(frozen=True)
class BodyMesh:
    """A closed-ish triangle mesh: (nv, 3) world mm vertices, (nf, 3) outward-wound faces."""

    vertices: np.ndarray
    faces: np.ndarray


def _lattice(polygon: shapely.Polygon, step: float, clearance: float) -> np.ndarray:
    """Triangular-lattice points (n, 2) inside ``polygon``, at least ``clearance`` from its edge."""
    minx, miny, maxx, maxy = polygon.bounds
    dy = step * math.sqrt(3.0) / 2.0
    rows = np.arange(miny + clearance, maxy - clearance + 1e-9, dy)
    pts = []
    for i, y in enumerate(rows):
        xs = np.arange(
            minx + clearance + (step / 2.0 if i % 2 else 0.0), maxx - clearance + 1e-9, step
        )
        pts.append(np.stack([xs, np.full_like(xs, y)], axis=-1))
    cand = np.vstack(pts) if pts else np.zeros((0, 2))
    inside = shapely.contains_xy(polygon, cand[:, 0], cand[:, 1])
    cand = cand[inside]
    far = shapely.distance(polygon.boundary, shapely.points(cand)) >= clearance
    return cand[far]


def triangulate_piece(
    outline: np.ndarray, holes: list[np.ndarray], step: float
) -> tuple[np.ndarray, np.ndarray]:
    """Triangulate a piece given by boundary rings, adding interior lattice points.

    Parameters
    ----------
    outline : (n, 2) array
        Outer ring, counter-clockwise, first point not repeated (mm).
    holes : list of (m, 2) arrays
        Hole rings, first point not repeated.
    step : float
        Interior lattice spacing (mm); boundary samples should be spaced at most ``step``.

    Returns
    -------
    points : (k, 2) array
        The boundary points (outline, then holes, in the given order) followed by interior points.
    triangles : (t, 3) int array
        Counter-clockwise triangles covering the piece exactly.

    Raises
    ------
    MeshError
        When a boundary segment is missing from the triangulation or the area does not match.
    """
    polygon = shapely.Polygon(outline, holes)
    rings = [np.asarray(outline, dtype=float)] + [np.asarray(h, dtype=float) for h in holes]
    boundary = np.vstack(rings)
    interior = _lattice(polygon, step, 0.6 * step)
    points = np.vstack([boundary, interior])
    tri = Delaunay(points)
    simplices = tri.simplices
    centroids = points[simplices].mean(axis=1)
    simplices = simplices[shapely.contains_xy(polygon, centroids[:, 0], centroids[:, 1])]
    p0, p1, p2 = (points[simplices[:, i]] for i in range(3))
    cross = (p1[:, 0] - p0[:, 0]) * (p2[:, 1] - p0[:, 1]) - (p1[:, 1] - p0[:, 1]) * (
        p2[:, 0] - p0[:, 0]
    )
    simplices = np.where((cross < 0)[:, None], simplices[:, [0, 2, 1]], simplices)
    # canonical form, independent of the Delaunay library's output order: smallest index first
    # (a rotation keeps the orientation), then rows sorted
    shift = np.argmin(simplices, axis=1)
    simplices = np.take_along_axis(simplices, (shift[:, None] + np.arange(3)) % 3, axis=1)
    simplices = simplices[np.lexsort(simplices.T[::-1])]
    # every boundary segment must be a triangle edge
    edges = set()
    for i, j in ((0, 1), (1, 2), (2, 0)):
        edges.update(zip(simplices[:, i].tolist(), simplices[:, j].tolist()))
    start = 0
    for ring in rings:
        n = len(ring)
        idx = np.arange(start, start + n)
        for i, j in zip(idx, np.roll(idx, -1)):
            if (int(i), int(j)) not in edges and (int(j), int(i)) not in edges:
                raise MeshError(
                    f"piece mesh: boundary segment {points[i].round(2).tolist()} - "
                    f"{points[j].round(2).tolist()} is not a triangle edge; "
                    "refine the boundary sampling"
                )
        start += n
    area = float(np.sum(np.abs(cross)) / 2.0)
    if abs(area - polygon.area) > 1e-6 * polygon.area:
        raise MeshError(
            f"piece mesh: triangles cover {area:.3f} mm², the piece {polygon.area:.3f} mm²"
        )
    return points, simplices


class _UnionFind:
    def __init__(self, n: int):
        self.parent = list(range(n))

    def find(self, i: int) -> int:
        while self.parent[i] != i:
            self.parent[i] = self.parent[self.parent[i]]
            i = self.parent[i]
        return i

    def union(self, i: int, j: int) -> None:
        ri, rj = self.find(i), self.find(j)
        if ri != rj:
            self.parent[max(ri, rj)] = min(ri, rj)


def _mesh_step(design: DemoDesign, piece: str) -> float:
    return design.dims.sleeve_step if piece.startswith("sleeve") else design.dims.torso_step


def build_drape(design: DemoDesign, weld_tol: float = 1e-3, progress=None) -> DrapeMesh:
    """Mesh every piece and join them along the seams into one UV-mapped surface.

    Parameters
    ----------
    design : DemoDesign
    weld_tol : float
        Largest distance (mm) between the world images of two samples that a seam identifies.
    progress : callable, optional
        Called with each piece name once that piece is meshed.
    """
    garment = design.garment
    # provisional ids for every edge sample
    key_base: dict[tuple[str, str], int] = {}
    total = 0
    for piece in garment.pieces:
        for edge in piece.edges:
            key_base[(piece.name, edge.name)] = total
            total += len(design.samples[(piece.name, edge.name)])
    uf = _UnionFind(total)
    for piece in garment.pieces:
        names = piece.edge_names
        for k, name in enumerate(names):
            nxt = names[(k + 1) % len(names)]
            last = key_base[(piece.name, name)] + len(design.samples[(piece.name, name)]) - 1
            uf.union(last, key_base[(piece.name, nxt)])
    for seam in garment.seams:
        na = len(design.samples[(seam.a.piece, seam.a.edge)])
        nb = len(design.samples[(seam.b.piece, seam.b.edge)])
        if na != nb or seam.a.reverse:
            raise MeshError(
                f"seam '{seam.name}': runs are not sampled alike ({na} and {nb} samples)"
            )
        ia = key_base[(seam.a.piece, seam.a.edge)] + np.arange(na)
        ib = key_base[(seam.b.piece, seam.b.edge)] + np.arange(nb)
        if seam.b.reverse:
            ib = ib[::-1]
        for i, j in zip(ia.tolist(), ib.tolist()):
            uf.union(i, j)
    # world position of every provisional id
    prov_world = np.zeros((total, 3))
    for (piece, edge), base in key_base.items():
        pts = design.samples[(piece, edge)]
        prov_world[base : base + len(pts)] = design.maps[piece].to_world(pts)
    roots = np.array([uf.find(i) for i in range(total)])
    spread = np.linalg.norm(prov_world - prov_world[roots], axis=1)
    if spread.max() > weld_tol:
        worst = int(np.argmax(spread))
        raise MeshError(
            f"drape: seam samples {spread.max():.4f} mm apart "
            f"at {prov_world[worst].round(2).tolist()}"
        )

    vertices: list[np.ndarray] = []
    root_vertex: dict[int, int] = {}
    n_vertices = 0
    faces, face_uv, face_piece, uvs, patterns = [], [], [], [], []
    n_uv = 0
    sheet = np.asarray(garment.sheet_size_mm, dtype=float)
    for pi, piece in enumerate(garment.pieces):
        ring_ids, ring_pts = [], []
        for edge in piece.edges:
            pts = design.samples[(piece.name, edge.name)]
            base = key_base[(piece.name, edge.name)]
            ring_ids.extend(range(base, base + len(pts) - 1))
            ring_pts.append(pts[:-1])
        holes = [design.opening_samples[(piece.name, o.name)] for o in piece.openings]
        points, tris = triangulate_piece(np.vstack(ring_pts), holes, _mesh_step(design, piece.name))
        n_ring = len(ring_ids)
        local_to_global = np.empty(len(points), dtype=np.int64)
        for k, prov in enumerate(ring_ids):
            root = int(roots[prov])
            if root not in root_vertex:
                root_vertex[root] = n_vertices
                vertices.append(prov_world[root][None])
                n_vertices += 1
            local_to_global[k] = root_vertex[root]
        rest = points[n_ring:]
        local_to_global[n_ring:] = n_vertices + np.arange(len(rest))
        vertices.append(design.maps[piece.name].to_world(rest))
        n_vertices += len(rest)
        faces.append(local_to_global[tris])
        face_uv.append(n_uv + tris)
        face_piece.append(np.full(len(tris), pi, dtype=np.int64))
        uvs.append(piece.placement.to_sheet(points) / sheet)
        patterns.append(points)
        n_uv += len(points)
        if progress is not None:
            progress(piece.name)
    return DrapeMesh(
        vertices=np.vstack(vertices),
        faces=np.vstack(faces),
        uv=np.vstack(uvs),
        face_uv=np.vstack(face_uv),
        face_piece=np.concatenate(face_piece),
        piece_names=tuple(p.name for p in garment.pieces),
        pattern=np.vstack(patterns),
    )


# --- the mannequin body --------------------------------------------------------------------------


def _grid_faces(rows: int, cols: int, offset: int, closed: bool = True) -> np.ndarray:
    """Faces (2·(rows−1)·cols, 3) of a rows × cols vertex grid, wrapped around in the columns."""
    r, c = np.meshgrid(np.arange(rows - 1), np.arange(cols), indexing="ij")
    c1 = (c + 1) % cols if closed else c + 1
    v00 = r * cols + c
    v01 = r * cols + c1
    v10 = (r + 1) * cols + c
    v11 = (r + 1) * cols + c1
    tri = np.concatenate(
        [np.stack([v00, v01, v11], -1).reshape(-1, 3), np.stack([v00, v11, v10], -1).reshape(-1, 3)]
    )
    return tri + offset


def _fan(
    ring: np.ndarray, centre: np.ndarray, offset: int, outward_ccw: bool
) -> tuple[np.ndarray, np.ndarray]:
    """Cap a ring of vertex indices with a fan around a new centre vertex."""
    n = len(ring)
    centre_index = offset
    tri = np.stack([ring, np.roll(ring, -1), np.full(n, centre_index)], -1)
    if not outward_ccw:
        tri = tri[:, [0, 2, 1]]
    return centre[None], tri


def build_body(
    design: DemoDesign, inset: float = 3.0, around: int = 96, arm_rings: tuple[int, int] = (30, 30)
) -> BodyMesh:
    """A mannequin of the same surfaces, ``inset`` mm inside the garment, with neck, head and hands.

    Each part (torso, neck, head, two arms) is a closed, outward-wound surface; parts overlap
    where they meet (the arms enter the torso), so the whole is for previews only.

    Parameters
    ----------
    design : DemoDesign
    inset : float
        Distance (mm) of the body surfaces inside the garment's.
    around : int
        Vertices around each ring.
    arm_rings : (int, int)
        Rings along the left and the right arm (a bent arm needs more).
    """
    dims = design.dims
    verts: list[np.ndarray] = []
    faces: list[np.ndarray] = []
    count = 0

    def add(v: np.ndarray, f: np.ndarray) -> None:
        nonlocal count
        verts.append(v)
        faces.append(f)
        count += len(v)

    t = np.linspace(0.0, 2 * math.pi, around, endpoint=False)
    # torso: elliptic tube from below the hem to just under the yoke, capped at both ends
    a, b = dims.half_width - inset, dims.half_depth - inset
    zs = np.linspace(dims.hem_z - 150.0, dims.shoulder_z - inset, 25)
    ring = np.stack([a * np.cos(t), b * np.sin(t)], -1)
    tube = np.concatenate([np.column_stack([ring, np.full(around, z)]) for z in zs])
    add(tube, _grid_faces(len(zs), around, count))
    bottom = np.arange(around) + count - len(tube)
    top = bottom + (len(zs) - 1) * around
    c, f = _fan(bottom, np.array([0.0, 0.0, zs[0]]), count, outward_ccw=False)
    add(c, f)
    c, f = _fan(top, np.array([0.0, 0.0, zs[-1]]), count, outward_ccw=True)
    add(c, f)
    # neck: elliptic tube inside the neck hole
    na, nb = dims.neck_half_width - 10.0, dims.neck_half_depth - 10.0
    zn = np.linspace(dims.shoulder_z - inset, dims.shoulder_z + 90.0, 6)
    ring = np.stack([na * np.cos(t), dims.neck_centre_y + nb * np.sin(t)], -1)
    tube = np.concatenate([np.column_stack([ring, np.full(around, z)]) for z in zn])
    add(tube, _grid_faces(len(zn), around, count))
    bottom = np.arange(around) + count - len(tube)
    top = bottom + (len(zn) - 1) * around
    c, f = _fan(bottom, np.array([0.0, dims.neck_centre_y, zn[0]]), count, outward_ccw=False)
    add(c, f)
    c, f = _fan(top, np.array([0.0, dims.neck_centre_y, zn[-1]]), count, outward_ccw=True)
    add(c, f)
    # head: an ellipsoid resting on the neck
    centre = np.array([0.0, dims.neck_centre_y + 10.0, dims.shoulder_z + 90.0 + 100.0])
    radii = np.array([75.0, 90.0, 110.0])
    lat = np.linspace(-math.pi / 2, math.pi / 2, 33)[1:-1]
    sphere = (
        np.concatenate(
            [
                np.column_stack(
                    [np.cos(la) * np.cos(t), np.cos(la) * np.sin(t), np.full(around, np.sin(la))]
                )
                for la in lat
            ]
        )
        * radii
        + centre
    )
    add(sphere, _grid_faces(len(lat), around, count))
    south = np.arange(around) + count - len(sphere)
    north = south + (len(lat) - 1) * around
    c, f = _fan(south, centre - [0, 0, radii[2]], count, outward_ccw=False)
    add(c, f)
    c, f = _fan(north, centre + [0, 0, radii[2]], count, outward_ccw=True)
    add(c, f)
    # arms: the sleeve cones moved inwards, from inside the torso to a hand beyond the cuff
    for side, rings in zip(("left", "right"), arm_rings):
        cone = design.cones[side]
        k = math.sin(cone.beta)
        rho_wrist = dims.sleeve_radius_wrist / k
        rho_joint = dims.sleeve_radius_shoulder / k
        rhos = np.linspace(rho_wrist - 160.0, rho_joint + 40.0, rings)
        phis = np.linspace(-math.pi, math.pi, around, endpoint=False)
        tube = np.concatenate(
            [
                cone.point(np.full(around, rho), phis) - inset * cone.outward_normal(phis)
                for rho in rhos
            ]
        )
        # rows run towards the body, columns counter-clockwise about d: flip to face outwards
        add(tube, _grid_faces(len(rhos), around, count)[:, [0, 2, 1]])
        outer = np.arange(around) + count - len(tube)
        inner = outer + (len(rhos) - 1) * around
        apex, axis = np.asarray(cone.apex), np.asarray(cone.d)
        # the point on the axis level with slant distance ρ
        hand_tip = apex - math.cos(cone.beta) * (rhos[0] - 20.0) * axis
        body_end = apex - math.cos(cone.beta) * rhos[-1] * axis
        # φ increases counter-clockwise about d, so a fan around the hand end faces +d (outwards)
        c, f = _fan(outer, hand_tip, count, outward_ccw=True)
        add(c, f)
        c, f = _fan(inner, body_end, count, outward_ccw=False)
        add(c, f)
    return BodyMesh(np.vstack(verts), np.vstack(faces).astype(np.int64))


# --- OBJ text ------------------------------------------------------------------------------------


def _fmt_rows(arr: np.ndarray, prefix: str, digits: int) -> list[str]:
    """Fixed-format text rows; rounding first and adding 0.0 removes negative zeros."""
    arr = np.round(np.asarray(arr, dtype=float), digits) + 0.0
    fmt = prefix + " " + " ".join([f"%.{digits}f"] * arr.shape[1])
    return [fmt % tuple(row) for row in arr.tolist()]


def drape_obj_text(mesh: DrapeMesh, name: str) -> str:
    """Wavefront OBJ text: shared ``v`` lines, then one ``o``/``g`` group per piece with its ``vt``
    (sheet UV) and ``f v/vt`` lines. World mm, z up."""
    lines = [
        f"# {name}: draped garment, world mm (z up), vt = sheet position / sheet size",
        f"# {len(mesh.vertices)} vertices, {len(mesh.faces)} triangles, "
        f"{len(mesh.piece_names)} pieces",
    ]
    lines += _fmt_rows(mesh.vertices, "v", 5)
    for pi, piece in enumerate(mesh.piece_names):
        sel = mesh.face_piece == pi
        f_v = mesh.faces[sel]
        f_t = mesh.face_uv[sel]
        lo, hi = int(f_t.min()), int(f_t.max())
        lines.append(f"o {piece}")
        lines.append(f"g {piece}")
        lines += _fmt_rows(mesh.uv[lo : hi + 1], "vt", 8)
        corners = np.stack([f_v + 1, f_t + 1], axis=-1).reshape(len(f_v), 6)
        lines += ["f %d/%d %d/%d %d/%d" % tuple(row) for row in corners.tolist()]
    return "\n".join(lines) + "\n"


def body_obj_text(mesh: BodyMesh, name: str = "mannequin") -> str:
    """Wavefront OBJ text of the body mesh (world mm, z up)."""
    lines = [f"# {name}: stylised mannequin, world mm (z up)", f"o {name}"]
    lines += _fmt_rows(mesh.vertices, "v", 4)
    lines += ["f %d %d %d" % tuple(row) for row in (mesh.faces + 1).tolist()]
    return "\n".join(lines) + "\n"
