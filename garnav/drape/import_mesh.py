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
    topo = uv_topology(mesh)
    corner = mesh.corner_uv * np.array([w, h])
    f = topo.boundary[:, 0]
    c0, c1 = topo.boundary_corners()
    vstart = mesh.faces[f, c0]  # 3D vertex at the start of each boundary half-edge
    vend = mesh.faces[f, c1]

    loops = _oriented_loops(topo, corner)
    # outer loop of each island: the one enclosing the largest area
    outer: dict[int, int] = {}
    for li, (isl, _, area) in enumerate(loops):
        if isl not in outer or abs(area) > abs(loops[outer[isl]][2]):
            outer[isl] = li
    # position of every boundary row in its loop
    loop_of = np.empty(len(f), dtype=np.int64)
    pos_in = np.empty(len(f), dtype=np.int64)
    for li, (_, rows, _) in enumerate(loops):
        loop_of[rows] = li
        pos_in[rows] = np.arange(len(rows))
    mate = topo.mate

    # cut each loop into runs
    runs_of_loop: dict[int, list[_Run]] = {}
    for li, (isl, rows, area) in enumerate(loops):
        rows = rows.tolist()
        n = len(rows)
        mloop = [int(loop_of[mate[r]]) if mate[r] >= 0 else -1 for r in rows]

        def is_break(i: int) -> bool:
            p, q = rows[i - 1], rows[i]
            if mloop[i - 1] != mloop[i]:
                return True
            if mloop[i] < 0:
                return False
            if mate[p] == q:  # the seam folds back on itself here
                return True
            size = len(loops[mloop[i]][1])
            step = (pos_in[mate[q]] - pos_in[mate[p]]) % size
            return step not in (1, size - 1)

        breaks = [i for i in range(n) if is_break(i)]
        if not breaks:
            # one run round the whole loop: start at its lowest 3D vertex, which the partner
            # loop (same 3D vertices) starts at too
            breaks = [int(np.argmin(vstart[rows]))]
        runs = []
        for bi, s in enumerate(breaks):
            e = breaks[bi + 1] if bi + 1 < len(breaks) else breaks[0] + n
            seg = [rows[i % n] for i in range(s, e)]
            runs.append(_Run(seg, mloop[s % n]))
        runs_of_loop[li] = runs

    # pieces
    pieces: list[Piece] = []
    edge_of_row: dict[int, tuple[str, str, int]] = {}  # row -> (piece, edge, index in edge)
    edge_rows: dict[tuple[str, str], list[int]] = {}
    edge_ends: dict[tuple[str, str], tuple[int, int]] = {}  # 3D vertices where travel starts, ends
    for isl in range(topo.n_islands):
        pname = f"piece_{isl + 1}"
        li_outer = outer[isl]
        ccw = loops[li_outer][2] > 0
        origin = corner[topo.island == isl].reshape(-1, 2).min(axis=0)
        placement = Placement(float(origin[0]), float(origin[1]), 0.0)
        edges: list[Edge] = []
        counts = {"open": 0, "seam": 0}
        runs = runs_of_loop[li_outer] if ccw else [
            _Run(r.rows[::-1], r.mate_loop) for r in runs_of_loop[li_outer][::-1]
        ]
        for run in runs:
            kind = "seam" if run.mate_loop >= 0 else "open"
            counts[kind] += 1
            ename = f"{kind}_{counts[kind]}"
            if ccw:
                pts = [corner[f[r], c0[r]] for r in run.rows] + [corner[f[run.rows[-1]], c1[run.rows[-1]]]]
            else:
                pts = [corner[f[r], c1[r]] for r in run.rows] + [corner[f[run.rows[-1]], c0[run.rows[-1]]]]
            pts = np.array(pts) - origin
            edges.append(Edge(ename, tuple((float(x), float(y)) for x, y in pts)))
            for k, r in enumerate(run.rows):
                edge_of_row[r] = (pname, ename, k)
            edge_rows[(pname, ename)] = run.rows
            first, last = run.rows[0], run.rows[-1]
            edge_ends[(pname, ename)] = (
                (int(vstart[first]), int(vend[last])) if ccw else (int(vend[first]), int(vstart[last]))
            )
        openings = []
        for li, (isl2, rows, _) in enumerate(loops):
            if isl2 != isl or li == li_outer:
                continue
            if np.any(mate[rows] >= 0):
                c = corner[f[rows[0]], c0[rows[0]]]
                raise MeshError(
                    f"{src}: UV island {isl} has an interior hole sewn to another edge near sheet "
                    f"({c[0]:.0f}, {c[1]:.0f}) mm; a piece's holes are always open edges"
                )
            pts = corner[f[rows], c0[rows]] - origin
            openings.append(Opening(f"opening_{len(openings) + 1}", tuple(map(tuple, pts.tolist()))))
        pieces.append(Piece(pname, tuple(edges), tuple(openings), placement))

    # seams: pair each sewn edge with the edge holding its mates
    seams: list[Seam] = []
    done: set[tuple[tuple[str, str], tuple[str, str]]] = set()
    for piece in pieces:
        for edge in piece.edges:
            key = (piece.name, edge.name)
            rows = edge_rows[key]
            if mate[rows[0]] < 0:
                continue
            partners = {edge_of_row[int(mate[r])][:2] for r in rows}
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
            other_rows = edge_rows[other]
            if len(other_rows) != len(rows):
                raise MeshError(
                    f"{src}: edge '{edge.name}' of {piece.name} and edge '{other[1]}' of {other[0]} "
                    "are sewn over different stretches; cannot pair the seam"
                )
            a0, a1 = edge_ends[key]
            b0, _ = edge_ends[other]
            if a0 != a1:  # an open run: the other run starts where this one starts, or ends
                reverse = b0 != a0
            else:  # a closed loop: compare the directions of travel at the common start
                reverse = edge_of_row[int(mate[rows[0]])][2] != 0
            seams.append(
                Seam(
                    f"seam_{len(seams) + 1}",
                    SeamRun(piece.name, edge.name),
                    SeamRun(other[0], other[1], reverse=reverse),
                )
            )
    return Garment(
        name,
        tuple(pieces),
        seams=tuple(seams),
        sheet_size_mm=(float(w), float(h)),
        drape=drape,
        description=f"derived from the UV islands of {src}",
    )
