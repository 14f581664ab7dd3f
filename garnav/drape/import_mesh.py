"""Mesh-first import: derive a garment (pieces, seams, open edges) from a UV-mapped drape.

Every UV island becomes a piece whose outline is the island's boundary loop on the sheet (mm,
counter-clockwise). A boundary edge whose 3D edge is shared with another boundary edge is sewn:
the two form a seam (across two islands, or within one island for a closing seam such as a
sleeve's underarm). Boundary edges on no other face are open (hems, cuffs, necklines). Each
island boundary is cut into named edges wherever it changes between open and sewn, or between
sewing partners.

The sheet size (UV → mm) is given, or fitted so that UV edge lengths match 3D edge lengths in the
least-squares sense: for every mesh edge, L² ≈ W² Δu² + H² Δv² is linear in (W², H²).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from garnav.drape.meshio import UVMesh
from garnav.drape.uvtopo import UVTopology, uv_topology
from garnav.errors import MeshError
from garnav.model import Edge, Garment, Opening, Piece, Placement, Seam, SeamRun

__all__ = ["fit_sheet_size", "garment_from_mesh"]


def fit_sheet_size(mesh: UVMesh) -> tuple[float, float]:
    """Sheet size (W, H) in mm that makes UV edges as long as their 3D edges (least squares).

    Raises
    ------
    MeshError
        When the fit is not positive (UVs unrelated to the 3D shape).
    """
    q = mesh.positions[mesh.faces]
    uv = mesh.corner_uv
    d3 = np.concatenate([q[:, 1] - q[:, 0], q[:, 2] - q[:, 1], q[:, 0] - q[:, 2]])
    duv = np.concatenate([uv[:, 1] - uv[:, 0], uv[:, 2] - uv[:, 1], uv[:, 0] - uv[:, 2]])
    a = duv**2  # (E, 2) columns Δu², Δv²
    b = (d3**2).sum(axis=1)
    sol, *_ = np.linalg.lstsq(a, b, rcond=None)
    if np.any(sol <= 0) or not np.all(np.isfinite(sol)):
        raise MeshError(
            f"{mesh.source}: cannot derive the sheet size from the UVs (they do not follow the 3D "
            "edge lengths); give it with --uv-scale"
        )
    w, h = np.sqrt(sol)
    return float(w), float(h)


@dataclass
class _Run:
    """Consecutive boundary half-edges of one loop that become one piece edge."""

    rows: list[int]  # rows of topo.boundary, in travel order
    mate_loop: int  # loop of the sewing partner, -1 when open


def _oriented_loops(topo: UVTopology, corner: np.ndarray):
    """Boundary loops as (island, rows, start corners (n, 2), signed area), each loop CCW."""
    f = topo.boundary[:, 0]
    c0, c1 = topo.boundary_corners()
    start_xy = corner[f, c0]
    out = []
    for loop in topo.boundary_loops():
        pts = start_xy[loop]
        area = 0.5 * float(np.sum(pts[:, 0] * np.roll(pts[:, 1], -1) - np.roll(pts[:, 0], -1) * pts[:, 1]))
        out.append([int(topo.island[f[loop[0]]]), loop, area])
    return out


@dataclass(frozen=True)
class _Boundary:
    """The island boundaries of a mesh on the sheet: what every phase of the import reads."""

    topo: UVTopology
    corner: np.ndarray  # (F, 3, 2) per-corner sheet positions, mm
    f: np.ndarray  # (B,) face of each boundary half-edge (row)
    c0: np.ndarray  # (B,) its start corner in that face
    c1: np.ndarray  # (B,) its end corner
    vstart: np.ndarray  # (B,) 3D vertex at the start of each row
    vend: np.ndarray  # (B,) 3D vertex at its end
    loops: list  # (island, rows, signed area) per loop, see _oriented_loops
    outer: dict[int, int]  # island -> its outer loop (the one enclosing the largest area)
    loop_of: np.ndarray  # (B,) loop of each row
    pos_in: np.ndarray  # (B,) position of each row in its loop

    @property
    def mate(self) -> np.ndarray:
        return self.topo.mate


@dataclass
class _Edges:
    """What the seam pairing needs to know about every piece edge built."""

    of_row: dict[int, tuple[str, str, int]]  # row -> (piece, edge, index in edge)
    rows: dict[tuple[str, str], list[int]]
    ends: dict[tuple[str, str], tuple[int, int]]  # 3D vertices where travel starts, ends


def _boundary(mesh: UVMesh, w: float, h: float) -> _Boundary:
    """Phase 1: boundary loops, each island's outer loop, and where every row sits in its loop."""
    topo = uv_topology(mesh)
    corner = mesh.corner_uv * np.array([w, h])
    f = topo.boundary[:, 0]
    c0, c1 = topo.boundary_corners()
    loops = _oriented_loops(topo, corner)
    outer: dict[int, int] = {}
    for li, (isl, _, area) in enumerate(loops):
        if isl not in outer or abs(area) > abs(loops[outer[isl]][2]):
            outer[isl] = li
    loop_of = np.empty(len(f), dtype=np.int64)
    pos_in = np.empty(len(f), dtype=np.int64)
    for li, (_, rows, _) in enumerate(loops):
        loop_of[rows] = li
        pos_in[rows] = np.arange(len(rows))
    return _Boundary(
        topo, corner, f, c0, c1, mesh.faces[f, c0], mesh.faces[f, c1], loops, outer, loop_of, pos_in
    )


def _is_break(b: _Boundary, rows: list[int], mloop: list[int], i: int) -> bool:
    """Whether a new piece edge starts at position ``i`` of a loop (rows in travel order,
    ``mloop`` the partner loop of each row, -1 when open)."""
    p, q = rows[i - 1], rows[i]
    if mloop[i - 1] != mloop[i]:
        return True
    if mloop[i] < 0:
        return False
    if b.mate[p] == q:  # the seam folds back on itself here
        return True
    size = len(b.loops[mloop[i]][1])
    step = (b.pos_in[b.mate[q]] - b.pos_in[b.mate[p]]) % size
    return step not in (1, size - 1)


def _loop_runs(b: _Boundary, rows_arr: np.ndarray) -> list[_Run]:
    """Phase 2: cut one loop into runs wherever it changes between open and sewn or partners."""
    rows = rows_arr.tolist()
    n = len(rows)
    mloop = [int(b.loop_of[b.mate[r]]) if b.mate[r] >= 0 else -1 for r in rows]
    breaks = [i for i in range(n) if _is_break(b, rows, mloop, i)]
    if not breaks:
        # one run round the whole loop: start at its lowest 3D vertex, which the partner
        # loop (same 3D vertices) starts at too
        breaks = [int(np.argmin(b.vstart[rows]))]
    runs = []
    for bi, s in enumerate(breaks):
        e = breaks[bi + 1] if bi + 1 < len(breaks) else breaks[0] + n
        runs.append(_Run([rows[i % n] for i in range(s, e)], mloop[s % n]))
    return runs


def _island_piece(b: _Boundary, isl: int, outer_runs: list[_Run], edges_out: _Edges, src: str) -> Piece:
    """Phase 3: the piece of one island: its outer loop cut into edges (CCW), its holes openings.
    Records every edge's rows and 3D ends in ``edges_out``."""
    corner, f, c0, c1 = b.corner, b.f, b.c0, b.c1
    pname = f"piece_{isl + 1}"
    li_outer = b.outer[isl]
    ccw = b.loops[li_outer][2] > 0
    origin = corner[b.topo.island == isl].reshape(-1, 2).min(axis=0)
    placement = Placement(float(origin[0]), float(origin[1]), 0.0)
    edges: list[Edge] = []
    counts = {"open": 0, "seam": 0}
    runs = outer_runs if ccw else [_Run(r.rows[::-1], r.mate_loop) for r in outer_runs[::-1]]
    for run in runs:
        kind = "seam" if run.mate_loop >= 0 else "open"
        counts[kind] += 1
        ename = f"{kind}_{counts[kind]}"
        last = run.rows[-1]
        if ccw:
            pts = [corner[f[r], c0[r]] for r in run.rows] + [corner[f[last], c1[last]]]
        else:
            pts = [corner[f[r], c1[r]] for r in run.rows] + [corner[f[last], c0[last]]]
        xy = np.array(pts) - origin
        edges.append(Edge(ename, tuple((float(x), float(y)) for x, y in xy)))
        for k, r in enumerate(run.rows):
            edges_out.of_row[r] = (pname, ename, k)
        edges_out.rows[(pname, ename)] = run.rows
        first = run.rows[0]
        edges_out.ends[(pname, ename)] = (
            (int(b.vstart[first]), int(b.vend[last])) if ccw else (int(b.vend[first]), int(b.vstart[last]))
        )
    openings = []
    for li, (isl2, rows, _) in enumerate(b.loops):
        if isl2 != isl or li == li_outer:
            continue
        if np.any(b.mate[rows] >= 0):
            c = corner[f[rows[0]], c0[rows[0]]]
            raise MeshError(
                f"{src}: UV island {isl} has an interior hole sewn to another edge near sheet "
                f"({c[0]:.0f}, {c[1]:.0f}) mm; a piece's holes are always open edges"
            )
        hole = corner[f[rows], c0[rows]] - origin
        openings.append(Opening(f"opening_{len(openings) + 1}", tuple(map(tuple, hole.tolist()))))
    return Piece(pname, tuple(edges), tuple(openings), placement)


def _pair_seams(pieces: list[Piece], edges: _Edges, mate: np.ndarray, src: str) -> list[Seam]:
    """Phase 4: pair each sewn edge with the edge holding its mates."""
    seams: list[Seam] = []
    done: set[tuple[tuple[str, str], ...]] = set()
    for piece in pieces:
        for edge in piece.edges:
            key = (piece.name, edge.name)
            rows = edges.rows[key]
            if mate[rows[0]] < 0:
                continue
            partners = {edges.of_row[int(mate[r])][:2] for r in rows}
            if len(partners) != 1:
                raise MeshError(
                    f"{src}: edge '{edge.name}' of {piece.name} is sewn to several edges "
                    f"({', '.join(sorted('/'.join(p) for p in partners))}); cannot pair the seam"
                )
            other = partners.pop()
            pair = tuple(sorted([key, other]))
            if pair in done:
                continue
            done.add(pair)
            if len(edges.rows[other]) != len(rows):
                raise MeshError(
                    f"{src}: edge '{edge.name}' of {piece.name} and edge '{other[1]}' of {other[0]} "
                    "are sewn over different stretches; cannot pair the seam"
                )
            a0, a1 = edges.ends[key]
            b0, _ = edges.ends[other]
            if a0 != a1:  # an open run: the other run starts where this one starts, or ends
                reverse = b0 != a0
            else:  # a closed loop: compare the directions of travel at the common start
                reverse = edges.of_row[int(mate[rows[0]])][2] != 0
            seams.append(
                Seam(
                    f"seam_{len(seams) + 1}",
                    SeamRun(piece.name, edge.name),
                    SeamRun(other[0], other[1], reverse=reverse),
                )
            )
    return seams


def garment_from_mesh(
    mesh: UVMesh,
    *,
    sheet_size_mm: tuple[float, float] | None = None,
    name: str = "imported",
    drape: str | None = None,
) -> Garment:
    """Derive pieces, seams and open edges from a UV-mapped mesh.

    Parameters
    ----------
    mesh : UVMesh
    sheet_size_mm : (float, float), optional
        UV → sheet mm scale; fitted by :func:`fit_sheet_size` when omitted.
    name : str
        The garment's name.
    drape : str, optional
        Stored as the garment's ``drape`` path.

    Returns
    -------
    Garment
        Pieces ``piece_1`` … (one per island, in island order) with edges ``open_k`` / ``seam_k``
        and openings ``opening_k``; seams ``seam_1`` … joining the sewn edges.

    Raises
    ------
    MeshError
        A sewn edge on an island's interior hole, or seam runs that do not pair up.
    """
    src = mesh.source
    w, h = sheet_size_mm if sheet_size_mm is not None else fit_sheet_size(mesh)
    b = _boundary(mesh, w, h)
    edges = _Edges({}, {}, {})
    pieces = [
        _island_piece(b, isl, _loop_runs(b, b.loops[b.outer[isl]][1]), edges, src)
        for isl in range(b.topo.n_islands)
    ]
    seams = _pair_seams(pieces, edges, b.mate, src)
    return Garment(
        name,
        tuple(pieces),
        seams=tuple(seams),
        sheet_size_mm=(float(w), float(h)),
        drape=drape,
        description=f"derived from the UV islands of {src}",
    )
