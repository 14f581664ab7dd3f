"""Read and write triangle meshes with per-corner texture coordinates (UV).

A garment drape is a triangle mesh whose UVs are the flattened pattern: UV = sheet position /
sheet size. A seam of the garment is a line where one 3D position carries two UVs (one per piece),
so UVs are kept **per face corner**, never per vertex, and coincident 3D positions are welded
(within a tolerance) so that the 3D surface is whole across seams.

Formats: Wavefront OBJ (own parser: ``v``, ``vt``, ``f`` with any polygon size, negative indices),
glTF 2.0 / GLB and PLY (through trimesh). glTF stores texture coordinates with the origin at the
top-left (v pointing down; Khronos glTF 2.0 specification, section 3.7.2.1 "Meshes", attribute
``TEXCOORD_n``); trimesh converts them to the OBJ convention (v up) on import and back on export,
and this module relies on that conversion (tested against the raw file contents).

Scene files (glTF) are flattened node by node with each node's world transform; meshes are never
concatenated by trimesh, because concatenating textured meshes can repack their UVs.

The pure part, :func:`uv_mesh_from_arrays`, welds, drops degenerate triangles and checks the mesh;
:func:`load_uv_mesh` reads a file and calls it.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path

import numpy as np
import scipy.sparse
import scipy.sparse.csgraph
from scipy.spatial import cKDTree

from garnav.atomic import write_text_atomic
from garnav.drape.objplain import parse_plain_obj
from garnav.errors import MeshError
from garnav.textio import decode_text, file_problem, read_bytes

__all__ = [
    "UVMesh",
    "uv_mesh_from_arrays",
    "load_uv_mesh",
    "mesh_file_bytes",
    "parse_obj",
    "parse_obj_lines",
    "dumps_obj",
    "save_obj",
    "weld_positions",
    "load_body_mesh",
    "MESH_SUFFIXES",
]

MESH_SUFFIXES = (".obj", ".gltf", ".glb", ".ply")

#: UVs may stray this far outside [0, 1] (rounding in exporters) before the mesh is refused.
UV_RANGE_TOL = 1e-3


def readonly_array(a: np.ndarray) -> np.ndarray:
    """A contiguous, read-only view of ``a`` (array fields of the frozen mesh types)."""
    a = np.ascontiguousarray(a)
    a.flags.writeable = False
    return a


@dataclass(frozen=True, eq=False)
class UVMesh:
    """A welded triangle mesh with per-corner UVs.

    Parameters
    ----------
    positions : (V, 3) float array
        Vertex positions, world mm; coincident positions are welded to one vertex.
    faces : (F, 3) int array
        Vertex indices of each triangle.
    corner_uv : (F, 3, 2) float array
        Texture coordinates of each face corner (unitless, one sheet = [0, 1]²).
    source : str
        The file the mesh came from, for messages ("<memory>" for meshes built in Python).
    notes : tuple of str
        What loading changed, e.g. how many degenerate triangles were skipped.
    """

    positions: np.ndarray
    faces: np.ndarray
    corner_uv: np.ndarray
    source: str = "<memory>"
    notes: tuple[str, ...] = field(default=())

    def __post_init__(self) -> None:
        object.__setattr__(self, "positions", readonly_array(np.asarray(self.positions, dtype=float)))
        object.__setattr__(self, "faces", readonly_array(np.asarray(self.faces, dtype=np.int64)))
        object.__setattr__(self, "corner_uv", readonly_array(np.asarray(self.corner_uv, dtype=float)))

    @property
    def n_faces(self) -> int:
        return int(len(self.faces))

    @cached_property
    def face_area_3d(self) -> np.ndarray:
        """(F,) triangle areas in mm²."""
        return _area_3d(self.positions[self.faces])

    @cached_property
    def face_area_uv(self) -> np.ndarray:
        """(F,) *signed* triangle areas in UV units² (positive = counter-clockwise in UV)."""
        return signed_area_2d(self.corner_uv)


def _area_3d(tri: np.ndarray) -> np.ndarray:
    return 0.5 * np.linalg.norm(np.cross(tri[:, 1] - tri[:, 0], tri[:, 2] - tri[:, 0]), axis=1)


def signed_area_2d(tri: np.ndarray) -> np.ndarray:
    """(F,) signed areas of 2D triangles (F, 3, 2); positive when counter-clockwise."""
    a = tri[:, 1] - tri[:, 0]
    b = tri[:, 2] - tri[:, 0]
    return 0.5 * (a[:, 0] * b[:, 1] - a[:, 1] * b[:, 0])


def _no_uv_message(source: str) -> str:
    return (
        f"{source}: the mesh has no texture coordinates (UV); garnav needs the flattened "
        "pattern as UVs to link the mesh to the pieces"
    )


def weld_positions(positions: np.ndarray, tol: float) -> tuple[np.ndarray, np.ndarray]:
    """Merge points closer than ``tol`` (transitively).

    Parameters
    ----------
    positions : (N, d) float array
        Positions in mm, or any points to cluster (UV corners use (u, v, offset vertex id)).
    tol : float
        Same unit as the points.

    Returns
    -------
    welded : (V, d) float array
        One position per group (the first member's, in input order), groups ordered by their
        first member.
    index : (N,) int array
        Group of each input position.
    """
    positions = np.asarray(positions, dtype=float)
    n = len(positions)
    if n == 0:
        return positions, np.zeros(0, dtype=np.int64)
    pairs = cKDTree(positions).query_pairs(r=tol, output_type="ndarray")
    graph = scipy.sparse.coo_matrix(
        (np.ones(len(pairs)), (pairs[:, 0], pairs[:, 1])) if len(pairs) else ([], ([], [])),
        shape=(n, n),
    )
    _, labels = scipy.sparse.csgraph.connected_components(graph, directed=False)
    # renumber groups by first occurrence so the result does not depend on scipy's labelling
    first = np.full(labels.max() + 1, n, dtype=np.int64)
    np.minimum.at(first, labels, np.arange(n))
    order = np.argsort(first, kind="stable")
    rank = np.empty_like(order)
    rank[order] = np.arange(len(order))
    return positions[first[order]], rank[labels]


def uv_mesh_from_arrays(
    positions: np.ndarray,
    faces: np.ndarray,
    corner_uv: np.ndarray,
    *,
    source: str = "<memory>",
    weld_tol_mm: float = 1e-4,
    area_tol_mm2: float = 1e-10,
    uv_area_tol: float = 1e-16,
) -> UVMesh:
    """Build a checked :class:`UVMesh` from raw arrays.

    Welds coincident positions, drops triangles that are degenerate in UV (zero UV area: no pattern
    point lies on them, so nothing is lost) and whose 3D area is zero too, and refuses meshes that
    cannot serve as a drape.

    Parameters
    ----------
    positions : (N, 3) float array, mm
    faces : (F, 3) int array
    corner_uv : (F, 3, 2) float array
    source : str
        File name for messages.
    weld_tol_mm : float
        Positions closer than this are one vertex.
    area_tol_mm2, uv_area_tol : float
        Triangles with smaller 3D area (mm²) or UV area are degenerate.

    Raises
    ------
    MeshError
        No triangles, no UVs, non-finite values, UVs outside the unit sheet, triangles collapsed in
        3D but not in UV, non-manifold edges.
    """
    positions = np.asarray(positions, dtype=float)
    faces = np.asarray(faces)
    corner_uv = np.asarray(corner_uv, dtype=float)
    if positions.ndim != 2 or positions.shape[1] != 3 or faces.size == 0:
        raise MeshError(f"{source}: not a triangle mesh (no faces found)")
    if faces.ndim != 2 or faces.shape[1] != 3:
        raise MeshError(f"{source}: faces must be triangles, got shape {faces.shape}")
    if corner_uv.size == 0:
        raise MeshError(_no_uv_message(source))
    if corner_uv.shape != (len(faces), 3, 2):
        raise MeshError(f"{source}: expected (F, 3, 2) corner UVs, got shape {corner_uv.shape}")
    faces = faces.astype(np.int64)
    if faces.min() < 0 or faces.max() >= len(positions):
        raise MeshError(f"{source}: a face refers to a vertex that does not exist")
    if not np.all(np.isfinite(positions)):
        raise MeshError(f"{source}: vertex positions contain NaN or infinity")
    if not np.all(np.isfinite(corner_uv)):
        raise MeshError(f"{source}: texture coordinates contain NaN or infinity")
    lo, hi = corner_uv.reshape(-1, 2).min(axis=0), corner_uv.reshape(-1, 2).max(axis=0)
    if np.any(lo < -UV_RANGE_TOL) or np.any(hi > 1.0 + UV_RANGE_TOL):
        raise MeshError(
            f"{source}: texture coordinates span u {lo[0]:.4g}..{hi[0]:.4g}, "
            f"v {lo[1]:.4g}..{hi[1]:.4g}; garnav expects all pieces on one sheet, UV within 0..1"
        )

    used = np.unique(faces)
    welded, index = weld_positions(positions[used], weld_tol_mm)
    remap = np.full(len(positions), -1, dtype=np.int64)
    remap[used] = index
    faces = remap[faces]

    notes: list[str] = []
    area3 = _area_3d(welded[faces])
    area_uv = np.abs(signed_area_2d(corner_uv))
    flat_uv = area_uv <= uv_area_tol
    flat_3d = area3 <= area_tol_mm2
    collapsed = flat_3d & ~flat_uv
    if np.any(collapsed):
        first = int(np.flatnonzero(collapsed)[0])
        raise MeshError(
            f"{source}: {int(collapsed.sum())} triangle(s) have zero area in 3D but not in UV "
            f"(first: face {first}); the drape folds part of the pattern onto a line"
        )
    if np.any(flat_uv):
        keep = ~flat_uv
        notes.append(
            f"skipped {int(flat_uv.sum())} degenerate triangle(s) with zero UV area "
            f"(first: face {int(np.flatnonzero(flat_uv)[0])})"
        )
        if not np.any(keep):
            raise MeshError(f"{source}: all {len(faces)} triangles are degenerate (zero UV area)")
        faces, corner_uv = faces[keep], corner_uv[keep]

    # non-manifold edges: a welded 3D edge used by more than two triangles
    edges = np.sort(faces[:, [0, 1, 1, 2, 2, 0]].reshape(-1, 2), axis=1)
    uniq, counts = np.unique(edges, axis=0, return_counts=True)
    bad = counts > 2
    if np.any(bad):
        e = uniq[np.flatnonzero(bad)[0]]
        p, q = welded[e[0]], welded[e[1]]
        raise MeshError(
            f"{source}: {int(bad.sum())} non-manifold edge(s) shared by more than two triangles "
            f"(first: from ({p[0]:.1f}, {p[1]:.1f}, {p[2]:.1f}) to "
            f"({q[0]:.1f}, {q[1]:.1f}, {q[2]:.1f}) mm, {int(counts[bad][0])} triangles)"
        )
    # drop vertices no face uses any more
    used = np.unique(faces)
    if len(used) != len(welded):
        remap = np.full(len(welded), -1, dtype=np.int64)
        remap[used] = np.arange(len(used))
        welded, faces = welded[used], remap[faces]
    return UVMesh(welded, faces, corner_uv, source=source, notes=tuple(notes))


# ----------------------------------------------------------------------------------------- OBJ


def parse_obj(text: str, source: str = "<string>") -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Parse Wavefront OBJ text into positions, faces and per-corner UVs.

    Polygons are split into triangle fans. Lines other than ``v``, ``vt`` and ``f`` are ignored.

    Returns
    -------
    positions : (N, 3) float array
    faces : (F, 3) int array
    corner_uv : (F, 3, 2) float array, or shape (0,) when any face corner has no ``vt``

    Raises
    ------
    MeshError
        On a malformed ``v``/``vt``/``f`` line or an index out of range.
    """
    plain = parse_plain_obj(text)  # the same arrays, read in blocks, for plain triangle files
    if plain is not None:
        return plain
    return parse_obj_lines(text, source)


def parse_obj_lines(text: str, source: str = "<string>") -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """:func:`parse_obj` one line at a time: any OBJ text, with a message naming the bad line."""
    verts: list[list[float]] = []
    uvs: list[list[float]] = []
    fv: list[int] = []
    ft: list[int] = []
    missing_uv = False
    for lineno, raw in enumerate(text.splitlines(), start=1):
        line = raw.split("#", 1)[0].strip()
        if not line:
            continue
        head, _, rest = line.partition(" ")
        try:
            if head == "v":
                vals = rest.split()
                verts.append([float(vals[0]), float(vals[1]), float(vals[2])])
            elif head == "vt":
                vals = rest.split()
                uvs.append([float(vals[0]), float(vals[1]) if len(vals) > 1 else 0.0])
            elif head == "f":
                corners = rest.split()
                if len(corners) < 3:
                    raise ValueError("a face needs at least three corners")
                vi, ti = [], []
                for c in corners:
                    parts = c.split("/")
                    v = int(parts[0])
                    vi.append(v - 1 if v > 0 else len(verts) + v)
                    if len(parts) > 1 and parts[1]:
                        t = int(parts[1])
                        ti.append(t - 1 if t > 0 else len(uvs) + t)
                    else:
                        ti.append(-1)
                        missing_uv = True
                for k in range(1, len(vi) - 1):  # triangle fan
                    fv.extend((vi[0], vi[k], vi[k + 1]))
                    ft.extend((ti[0], ti[k], ti[k + 1]))
        except (ValueError, IndexError) as exc:
            raise MeshError(f"{source}: line {lineno}: cannot read '{raw.strip()[:60]}': {exc}") from None
    # ranges checked on the Python ints: an index beyond int64 is out of range, not an overflow
    if fv and (min(fv) < 0 or max(fv) >= len(verts)):
        raise MeshError(f"{source}: a face refers to a vertex that does not exist")
    positions = np.array(verts, dtype=float).reshape(-1, 3)
    faces = np.array(fv, dtype=np.int64).reshape(-1, 3)
    if missing_uv or not uvs:
        return positions, faces, np.zeros(0)
    if ft and (min(ft) < 0 or max(ft) >= len(uvs)):
        raise MeshError(f"{source}: a face refers to a texture coordinate that does not exist")
    tidx = np.array(ft, dtype=np.int64).reshape(-1, 3)
    return positions, faces, np.array(uvs, dtype=float)[tidx]


def dumps_obj(mesh: UVMesh, *, precision: int = 9) -> str:
    """OBJ text of a mesh: shared positions, one ``vt`` per distinct corner UV, ``f v/vt``."""
    uv_flat = mesh.corner_uv.reshape(-1, 2)
    uniq, inverse = np.unique(uv_flat, axis=0, return_inverse=True)
    tidx = inverse.reshape(-1, 3) + 1
    vidx = mesh.faces + 1
    fmt = f"{{:.{precision}g}}"
    lines = ["# garnav drape: positions in mm, UV = sheet position / sheet size"]
    lines += ["v " + " ".join(fmt.format(c) for c in p) for p in mesh.positions]
    lines += ["vt " + " ".join(fmt.format(c) for c in t) for t in uniq]
    lines += [
        f"f {a}/{ta} {b}/{tb} {c}/{tc}"
        for (a, b, c), (ta, tb, tc) in zip(vidx.tolist(), tidx.tolist())
    ]
    return "\n".join(lines) + "\n"


def save_obj(mesh: UVMesh, path: str | os.PathLike) -> Path:
    """Write a mesh as OBJ with per-corner UVs (atomically). Returns the path."""
    return write_text_atomic(path, dumps_obj(mesh))


# ------------------------------------------------------------------------------- glTF and PLY


def _trimesh_arrays(path: Path, source: str) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Positions, faces and corner UVs of every mesh in a glTF/GLB/PLY file (world transforms)."""
    import trimesh

    try:
        loaded = trimesh.load(str(path), process=False, force=None)
    except Exception as exc:  # trimesh raises many kinds for bad files
        raise MeshError(f"{source}: not a readable mesh file: {exc}") from None
    parts: list[tuple[np.ndarray, np.ndarray, np.ndarray | None]] = []
    if isinstance(loaded, trimesh.Scene):
        for node in sorted(loaded.graph.nodes_geometry):
            transform, name = loaded.graph[node]
            geom = loaded.geometry[name]
            if not isinstance(geom, trimesh.Trimesh):
                continue
            verts = trimesh.transform_points(np.asarray(geom.vertices, dtype=float), transform)
            parts.append((verts, np.asarray(geom.faces), _vertex_uv(geom)))
    elif isinstance(loaded, trimesh.Trimesh):
        parts.append((np.asarray(loaded.vertices, dtype=float), np.asarray(loaded.faces), _vertex_uv(loaded)))
    if not parts or all(len(f) == 0 for _, f, _ in parts):
        raise MeshError(f"{source}: not a triangle mesh (no faces found)")
    if any(uv is None for _, _, uv in parts):
        raise MeshError(_no_uv_message(source))
    positions, faces, corner = [], [], []
    offset = 0
    for verts, f, uv in parts:
        positions.append(verts)
        faces.append(np.asarray(f, dtype=np.int64) + offset)
        corner.append(uv[f])
        offset += len(verts)
    return np.vstack(positions), np.vstack(faces), np.vstack(corner)


def _vertex_uv(geom) -> np.ndarray | None:
    uv = getattr(geom.visual, "uv", None)
    if uv is None or len(uv) != len(geom.vertices):
        return None
    return np.asarray(uv, dtype=float)


# -------------------------------------------------------------------------------------- entry


def checked_mesh_file(path: str | os.PathLike) -> tuple[Path, str, str]:
    """(path, source for messages, lower-case suffix) of a mesh file that exists and has a known
    suffix; MeshError otherwise."""
    p = Path(path)
    source = str(path)
    problem = file_problem(p)
    if problem is not None:
        raise MeshError(f"{source}: {problem}")
    suffix = p.suffix.lower()
    if suffix not in MESH_SUFFIXES:
        raise MeshError(
            f"{source}: unknown mesh format '{suffix}'; use one of " + ", ".join(MESH_SUFFIXES)
        )
    return p, source, suffix


def mesh_file_bytes(path: str | os.PathLike) -> bytes:
    """The bytes of a mesh file, read with the checks :func:`load_uv_mesh` makes before parsing
    (exists, known format, not an incompletely written output; :func:`garnav.textio.read_bytes`)."""
    p, source, _ = checked_mesh_file(path)
    return read_bytes(p, lambda reason: MeshError(f"{source}: {reason}"))


def load_uv_mesh(path: str | os.PathLike, *, weld_tol_mm: float = 1e-4, data: bytes | None = None) -> UVMesh:
    """Read a UV-mapped triangle mesh (OBJ, glTF/GLB, PLY) with per-corner UVs.

    Parameters
    ----------
    path : path-like
    weld_tol_mm : float
        Positions closer than this (mm) become one vertex, which joins pieces across seams.
    data : bytes, optional
        An OBJ file's bytes when they were already read (:func:`mesh_file_bytes`); other formats
        are always read from ``path``.

    Raises
    ------
    MeshError
        File missing or unreadable, not a mesh, no UVs, or any problem of
        :func:`uv_mesh_from_arrays`.
    """
    p, source, suffix = checked_mesh_file(path)
    if suffix == ".obj":
        def error(reason: str) -> MeshError:
            return MeshError(f"{source}: {reason}")

        text = decode_text(read_bytes(p, error) if data is None else data, error,
                           binary_reason="is not a mesh file (an OBJ file is text, this is binary)")
        positions, faces, corner = parse_obj(text, source)
    else:
        positions, faces, corner = _trimesh_arrays(p, source)
    return uv_mesh_from_arrays(positions, faces, corner, source=source, weld_tol_mm=weld_tol_mm)


def load_body_mesh(path: str | os.PathLike) -> tuple[np.ndarray, np.ndarray]:
    """Read a mannequin (body) mesh: any triangle mesh trimesh reads; UVs are not needed.

    Returns
    -------
    vertices : (B, 3) float array, world mm
    faces : (G, 3) int64 array

    Raises
    ------
    MeshError
        File missing or unreadable, or a mesh with no triangles.
    """
    import trimesh

    p = Path(path)
    if not p.is_file():
        raise MeshError(f"{p}: body mesh not found")
    try:
        mesh = trimesh.load(p, force="mesh", process=False)
    except Exception as exc:  # trimesh raises many kinds on bad files
        raise MeshError(f"{p}: cannot read the body mesh: {exc}") from None
    if len(mesh.faces) == 0:
        raise MeshError(f"{p}: the body mesh has no triangles")
    return np.asarray(mesh.vertices, dtype=float), np.asarray(mesh.faces, dtype=np.int64)
