"""Is a linked drape the right one? Orientation, folds, placement and seams of every UV island.

:func:`~garnav.drape.drape.link_drape` assigns each UV island to the piece it lies on. That alone
accepts drapes that are wrong in ways a lifted route would follow silently; this module finds them
(:func:`drape_faults`) and refuses them (:func:`verify_drape`, run by ``link_drape``):

* **Mirrored island** (``drape_mirrored``, ``drape_wound``). The pattern is seen from the
  garment's outside and a drape's faces are counter-clockwise seen from the outside (the front
  face of the Wavefront OBJ and glTF 2.0 conventions; garnav's flattening keeps it too,
  :mod:`garnav.flatten.param`). For a triangle with pattern corners p and 3D corners q, the
  pattern → 3D Jacobian J satisfies (q₁ - q₀) × (q₂ - q₀) = det[p₁ - p₀, p₂ - p₀] · (J_x × J_y),
  so the map keeps the orientation (its determinant relative to the face normal is positive)
  exactly when the triangle's pattern corners turn counter-clockwise. An island whose map
  reverses orientation on most of its area is mirrored (a robot would drive it on the inside,
  left and right swapped) -- or its faces are wound the other way; the seam edges tell which:
  across a seam, two consistently wound faces run the shared 3D edge in opposite directions.
  A mesh wound clockwise throughout (its file's normals point inwards) keeps that as its
  convention: then the islands turning counter-clockwise are the odd ones. So a drape whose
  every island is mirrored, or a one-island drape, cannot be told from one wound inwards; it is
  linked with a note (its seams still have to close).
* **Folded in 3D** (``drape_folded``). Inside an island, neighbouring triangles' outside normals
  (J_x × J_y, independent of the winding) must not point more than :data:`FOLD_ANGLE_DEG` apart.
  Crossing an edge where they do changes the side a triangle faces; the side of every triangle
  follows (:func:`fold_sides`) and the side with less pattern area is folded over (a tuck, a
  pinch, vertices pushed through the surface). Each place is named with its size, piece-frame
  centre and extent.
* **Misplaced island** (``drape_misplaced``). The piece's placement says where and at which angle
  its island lies on the sheet. An island that leaves more than :data:`OUTSIDE_TOL` of its area
  outside its piece is refused, with the rigid motion that would put it back (a piece only
  partly covered is not a fault: the check report gives the coverage, and a point off the
  triangles is refused when it is lifted): the island's boundary fitted to the piece's outline by
  the iterative closest point method (Besl and McKay, *A method for registration of 3-D shapes*,
  IEEE PAMI 14(2), 1992) with the least-squares rotation of each step in closed form (Kabsch,
  *A solution for the best rotation to relate two sets of vectors*, Acta Cryst. A32, 1976;
  Arun, Huang and Blostein, IEEE PAMI 9(5), 1987), started from several angles.
* **Sewn off the seams** (``drape_unsewn``). Where the mesh sews (a 3D edge with a different UV
  on each side), both sides must lie on seam runs of the spec (within :data:`SEAM_SNAP_MM`); an
  edge sewn inside a piece means corners whose 3D vertices and UVs are out of order, or a seam
  the spec lacks.
* **Seam gap** (``seam_gap``) and **swapped islands** (``drape_swapped``). Matching points of a
  seam's two runs, mapped through the drape, must meet in 3D within :data:`SEAM_GAP_MAX_MM`. Two
  pieces of the same outline whose islands traded places (a left and a right sleeve) pass every
  test above -- outline, area, orientation and stretch are the same -- and only their seams
  disagree; so when seams of such a pair gap, the seams are measured again with the two islands
  exchanged, and if they close then, the islands are named as swapped. This is the robust test:
  a swap changes which pattern edges the mesh sews together, and nothing else.

All tests are vectorised over triangles (numpy); only islands already found wrong get the
slower explanations (the fit, the swap test).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
import scipy.sparse
import scipy.sparse.csgraph
import shapely
from scipy.spatial import cKDTree

from garnav.drape.uvtopo import NEXT
from garnav.errors import MeshError, QueryError
from garnav.polyline import cumulative_length, point_at_length

if TYPE_CHECKING:
    from garnav.drape.drape import Drape
    from garnav.model import Garment

__all__ = [
    "DrapeFault",
    "drape_faults",
    "verify_drape",
    "rigid_fit_2d",
    "fit_outline",
    "fold_sides",
    "SEAM_GAP_MAX_MM",
    "FOLD_ANGLE_DEG",
    "OUTSIDE_TOL",
]

#: A seam whose two runs lie farther apart than this in 3D (through the drape) is wrong, mm: the
#: drape and the pattern disagree there and a lifted route would jump.
SEAM_GAP_MAX_MM = 1.0
#: Neighbouring triangles of one island whose outside normals differ by more than this face
#: opposite ways (a fold), degrees. A garment bends gently inside a piece, and even a piece
#: wrapped round a square edge turns by 90°; a fold turns by nearly 180° (167°..180° in the
#: tests' pinch and flipped band). Common practice, no source.
FOLD_ANGLE_DEG = 120.0
#: Share of an island's area allowed outside its piece.
OUTSIDE_TOL = 0.01
#: Island boundaries and piece outlines this close everywhere (mm) agree without measuring areas.
AGREE_MM = 1.0
#: Samples along every seam for the gap (the same as the check report's seam closure).
SEAM_SAMPLES = 33
#: How far (mm) a seam sample may lie outside its island's triangles (chords of curved outlines).
SEAM_SNAP_MM = 5.0
#: Folded parts named in a message (largest first); the rest are counted.
MAX_PLACES = 3


@dataclass(frozen=True)
class DrapeFault:
    """One way a drape does not fit its garment.

    Attributes
    ----------
    code : str
        ``drape_mirrored``, ``drape_wound``, ``drape_folded``, ``drape_misplaced``,
        ``drape_unsewn``, ``drape_swapped``, ``seam_gap`` or ``seam_off_drape``.
    item : str
        What it is about, e.g. ``"UV island 3 (piece 'sleeve_left')"`` or ``"seam 'yoke_front'"``.
    reason : str
        What is wrong, with the measure.
    piece : str or None
        The piece concerned, when one.
    where : (float, float) or None
        A place in that piece's frame, mm (the largest folded place; the reason names them all).
    """

    code: str
    item: str
    reason: str
    piece: str | None = None
    where: tuple[float, float] | None = None

    def __str__(self) -> str:
        return f"{self.item} {self.reason}"


def verify_drape(garment: "Garment", drape: "Drape", *, seam_gap_mm: float = SEAM_GAP_MAX_MM) -> None:
    """Raise :class:`MeshError` naming every fault :func:`drape_faults` finds (nothing when none)."""
    faults = drape_faults(garment, drape, seam_gap_mm=seam_gap_mm)
    if faults:
        raise MeshError(f"drape {drape.source}: " + "\n  ".join(str(f) for f in faults))


def drape_faults(garment: "Garment", drape: "Drape", *, seam_gap_mm: float = SEAM_GAP_MAX_MM) -> tuple[DrapeFault, ...]:
    """Every way the drape does not fit the garment (module docstring), islands first, then seams.

    Sewn edges and seams of pieces whose islands are already faulted are not measured (they fail
    as a consequence).
    """
    island_piece = _island_piece(drape)
    faults = list(_orientation_faults(drape, island_piece))
    faults += _fold_faults(drape, island_piece)
    faults += _placement_faults(garment, drape, island_piece)
    bad = {f.piece for f in faults if f.piece is not None}
    faults += _unsewn_faults(garment, drape, bad)
    bad |= {f.piece for f in faults if f.piece is not None}
    faults += _seam_faults(garment, drape, seam_gap_mm, bad)
    return tuple(faults)


# ---------------------------------------------------------------------------------- islands


def _island_piece(drape: "Drape") -> np.ndarray:
    """(n_islands,) piece index of each island."""
    out = np.zeros(drape.topology.n_islands, dtype=np.int64)
    out[drape.topology.island] = drape.face_piece
    return out


def _label(drape: "Drape", isl: int, island_piece: np.ndarray) -> tuple[str, str]:
    piece = drape.piece_names[int(island_piece[isl])]
    return f"UV island {isl} (piece '{piece}')", piece


def _signed_pattern_area(drape: "Drape") -> np.ndarray:
    p = drape.corner_pattern
    a, b = p[:, 1] - p[:, 0], p[:, 2] - p[:, 0]
    return 0.5 * (a[:, 0] * b[:, 1] - a[:, 1] * b[:, 0])


def _orientation_faults(drape: "Drape", island_piece: np.ndarray) -> list[DrapeFault]:
    """Islands whose pattern → 3D map reverses orientation (relative to the faces' winding) on
    most of their area: mirrored UVs, or faces wound the other way."""
    topo = drape.topology
    signed = _signed_pattern_area(drape)
    area = np.abs(signed)
    n = topo.n_islands
    total = np.bincount(topo.island, weights=area, minlength=n)
    # the drape's own convention: counter-clockwise seen from the outside, unless most of the
    # area turns clockwise (a mesh wound inwards throughout: the map is right, the file's normals
    # point in; link_drape notes it)
    ref = 1.0 if area[signed > 0].sum() >= area[signed < 0].sum() else -1.0
    reversed_area = np.bincount(topo.island, weights=np.where(signed * ref < 0, area, 0.0), minlength=n)
    share = reversed_area / np.where(total > 0, total, 1.0)
    # seam edges: does the mate run the same 3D edge the other way (consistent winding)?
    f, k = topo.boundary[:, 0], topo.boundary[:, 1]
    start, end = drape.faces[f, NEXT[k]], drape.faces[f, NEXT[NEXT[k]]]
    sewn = np.flatnonzero((topo.mate >= 0) & (topo.island[f] != topo.island[f[np.maximum(topo.mate, 0)]]))
    consistent = start[topo.mate[sewn]] == end[sewn]
    turn = "counter-clockwise" if ref > 0 else "clockwise"
    out = []
    for isl in np.flatnonzero(share > 0.5).tolist():
        item, piece = _label(drape, isl, island_piece)
        mine = topo.island[f[sewn]] == isl
        n_sewn, n_cons = int(mine.sum()), int(consistent[mine].sum())
        measure = f"its pattern → 3D map reverses orientation on {share[isl]:.0%} of its area"
        if n_sewn and n_cons * 2 < n_sewn:
            out.append(DrapeFault(
                "drape_wound", item,
                f"has its faces wound the other way: {measure} and its faces run {n_sewn - n_cons} "
                f"of its {n_sewn} seam edges the same way as the neighbouring island's; reverse "
                f"this island's faces (the drape's faces turn {turn} seen from the outside)",
                piece))
        else:
            why = (f"its faces are wound like their neighbours' across {n_cons} seam edges, so its "
                   "UVs are mirrored" if n_sewn else
                   f"relative to its faces' winding ({turn} seen from the outside, as in the rest "
                   "of the drape): its UVs are mirrored, or its faces are wound the other way")
            out.append(DrapeFault("drape_mirrored", item, f"is mirrored: {measure}; {why}", piece))
    return out


def fold_sides(n_f: int, island: np.ndarray, a: np.ndarray, b: np.ndarray, normal: np.ndarray,
               cos_limit: float) -> np.ndarray:
    """Which side of the surface each triangle faces, relative to its island's first triangle.

    Crossing an edge whose two triangles' normals are more than the limit apart changes side.
    Around a closed loop of triangles the changes should cancel; near a crumpled spot they may
    not, so the sides are read along the spanning tree that uses the most clear-cut edges (the
    minimum spanning tree of 2 - |n_a · n_b|; Kruskal, Proc. AMS 7, 1956, as scipy implements
    it), each triangle's side by pointer jumping to its island's root (vectorised).

    Parameters
    ----------
    n_f : int
    island : (n_f,) int array
    a, b : (E,) int arrays
        Neighbouring triangles (each pair once).
    normal : (n_f, 3) float array
        Unit outside normals.
    cos_limit : float

    Returns
    -------
    (n_f,) bool array
        True where a triangle faces the other side from its island's first triangle.
    """
    dot = (normal[a] * normal[b]).sum(axis=1)
    w = scipy.sparse.coo_matrix((2.0 - np.abs(dot), (a, b)), shape=(n_f + 1, n_f + 1))
    tree = scipy.sparse.csgraph.minimum_spanning_tree(w.tocsr()).tocoo()
    first = np.full(int(island.max()) + 1, n_f, dtype=np.int64)
    np.minimum.at(first, island, np.arange(n_f))
    root = np.full(len(first), n_f)  # a virtual root tied to every island's first triangle
    rows, cols = np.r_[tree.row, root], np.r_[tree.col, first]
    g = scipy.sparse.coo_matrix((np.ones(len(rows)), (rows, cols)), shape=(n_f + 1, n_f + 1)).tocsr()
    _, pred = scipy.sparse.csgraph.breadth_first_order(g, n_f, directed=False, return_predecessors=True)
    pred = pred[:n_f].astype(np.int64)
    is_first = pred == n_f
    pred = np.where(is_first | (pred < 0), np.arange(n_f), pred)
    flip = ((normal * normal[pred]).sum(axis=1) <= cos_limit) & ~is_first
    while True:  # pointer jumping: side = XOR of the changes along the path to the root
        nxt = pred[pred]
        if np.array_equal(nxt, pred):
            break
        flip = flip ^ flip[pred]
        pred = nxt
    return flip


def _fold_faults(drape: "Drape", island_piece: np.ndarray) -> list[DrapeFault]:
    """Parts of islands whose outside normals face the other way from the rest (folds): the side
    (:func:`fold_sides`) with the smaller pattern area of each island."""
    topo = drape.topology
    n_f = len(drape.faces)
    normal = drape.face_normals
    nb = topo.neighbor.reshape(-1)
    me = np.repeat(np.arange(n_f), 3)
    pair = nb > me
    a, b = me[pair], nb[pair]
    cos_limit = float(np.cos(np.radians(FOLD_ANGLE_DEG)))
    agree = (normal[a] * normal[b]).sum(axis=1) > cos_limit
    if agree.all():
        return []
    parea = drape.pattern_area
    n_i = topo.n_islands
    other = fold_sides(n_f, topo.island, a, b, normal, cos_limit)
    other_area = np.bincount(topo.island, weights=np.where(other, parea, 0.0), minlength=n_i)
    island_area = np.bincount(topo.island, weights=parea, minlength=n_i)
    minority_is_other = other_area <= 0.5 * island_area
    folded = other == minority_is_other[topo.island]
    # places: folded triangles connected by agreeing edges
    keep = agree & folded[a] & folded[b]
    adj = scipy.sparse.coo_matrix((np.ones(int(keep.sum())), (a[keep], b[keep])), shape=(n_f, n_f))
    n_c, comp = scipy.sparse.csgraph.connected_components(adj, directed=False)
    comp_area = np.bincount(comp, weights=parea, minlength=n_c)
    island_area = np.bincount(topo.island, weights=parea, minlength=n_i)
    centre = drape.corner_pattern.mean(axis=1)
    out = []
    for isl in np.unique(topo.island[folded]).tolist():
        item, piece = _label(drape, isl, island_piece)
        sel = folded & (topo.island == isl)
        parts = np.unique(comp[sel])
        parts = parts[np.argsort(-comp_area[parts], kind="stable")]
        places, where = [], None
        for c in parts[:MAX_PLACES].tolist():
            fc = sel & (comp == c)
            w = parea[fc]
            x, y = (centre[fc] * w[:, None]).sum(axis=0) / w.sum()
            where = where or (round(float(x), 1), round(float(y), 1))
            lo, hi = drape.corner_pattern[fc].reshape(-1, 2).min(axis=0), drape.corner_pattern[fc].reshape(-1, 2).max(axis=0)
            places.append(f"{int(fc.sum())} around ({x:.1f}, {y:.1f}) mm, within "
                          f"({lo[0]:.0f}, {lo[1]:.0f})..({hi[0]:.0f}, {hi[1]:.0f}) mm")
        more = f" and {len(parts) - MAX_PLACES} more place(s)" if len(parts) > MAX_PLACES else ""
        out.append(DrapeFault(
            "drape_folded", item,
            f"is folded in 3D: {int(sel.sum())} triangle(s) ({parea[sel].sum():.0f} mm², "
            f"{parea[sel].sum() / island_area[isl]:.2%} of its area) face the other way from the "
            f"rest (outside normals more than {FOLD_ANGLE_DEG:g}° from their neighbours') in "
            f"{len(parts)} place(s), piece frame: {'; '.join(places)}{more}",
            piece, where))
    return out


# ---------------------------------------------------------------------------------- placement


def rigid_fit_2d(src: np.ndarray, dst: np.ndarray) -> tuple[float, np.ndarray]:
    """Least-squares rotation and shift taking points ``src`` (n, 2) onto ``dst`` (n, 2).

    The Kabsch / Arun solution in the plane: with both sets centred, the angle is
    atan2(Σ s × d, Σ s · d); the shift carries the rotated centroid of ``src`` onto that of ``dst``.

    Returns
    -------
    angle : float
        Radians, counter-clockwise.
    shift : (2,) float array
        So that ``dst ≈ src @ R(angle).T + shift``.
    """
    cs, cd = src.mean(axis=0), dst.mean(axis=0)
    s, d = src - cs, dst - cd
    angle = float(np.arctan2((s[:, 0] * d[:, 1] - s[:, 1] * d[:, 0]).sum(), (s * d).sum()))
    c, si = np.cos(angle), np.sin(angle)
    rot = np.array([[c, -si], [si, c]])
    return angle, cd - rot @ cs


def fit_outline(points: np.ndarray, outline: np.ndarray, *, starts: int = 12, iterations: int = 40,
                spacing_mm: float = 1.0) -> tuple[float, np.ndarray, float]:
    """Rigid motion taking boundary ``points`` (n, 2) onto the closed polyline ``outline`` (m, 2).

    Iterative closest point (Besl and McKay 1992) from ``starts`` angles about the centroids, each
    step's motion by :func:`rigid_fit_2d`; the result with the least RMS distance wins.

    Returns
    -------
    angle : float
        Radians, counter-clockwise, about the origin.
    shift : (2,) float array
        ``outline ≈ points @ R(angle).T + shift``.
    rms : float
        Root mean square distance of the moved points to the outline samples, mm.
    """
    ring = np.vstack([outline, outline[:1]])
    length = cumulative_length(ring)
    dense = point_at_length(ring, np.linspace(0.0, length[-1], max(16, int(length[-1] / spacing_mm)), endpoint=False))
    tree = cKDTree(dense)
    c_pts, c_out = points.mean(axis=0), dense.mean(axis=0)
    best = (np.inf, 0.0, np.zeros(2))
    for a0 in np.linspace(0.0, 2 * np.pi, starts, endpoint=False):
        c, s = np.cos(a0), np.sin(a0)
        angle, shift = float(a0), c_out - np.array([[c, -s], [s, c]]) @ c_pts
        for _ in range(iterations):
            c, s = np.cos(angle), np.sin(angle)
            moved = points @ np.array([[c, -s], [s, c]]).T + shift
            _, idx = tree.query(moved)
            angle, shift = rigid_fit_2d(points, dense[idx])
        c, s = np.cos(angle), np.sin(angle)
        dist, _ = tree.query(points @ np.array([[c, -s], [s, c]]).T + shift)
        rms = float(np.sqrt((dist**2).mean()))
        if rms < best[0]:
            best = (rms, angle, shift)
    return best[1], best[2], best[0]


def _placement_faults(garment: "Garment", drape: "Drape", island_piece: np.ndarray) -> list[DrapeFault]:
    """Islands not where their piece's placement puts them (module docstring)."""
    from garnav.drape.drape import island_polygons

    topo = drape.topology
    regions = island_polygons(topo, drape.corner_pattern)  # in each island's piece frame
    out = []
    for isl, region in enumerate(regions):
        pi = int(island_piece[isl])
        poly = garment.pieces[pi].polygon
        if not region.is_valid or region.area <= 0:
            continue  # an island overlapping itself is refused when linking
        if _outlines_agree(region, poly):
            continue
        outside = shapely.difference(region, poly).area / region.area
        if outside > OUTSIDE_TOL:
            out.append(_misplaced(drape, garment, isl, pi, region, f"{outside:.1%} of its area lies "
                                  "outside the piece's outline"))
    return out


def _rings(poly) -> list[np.ndarray]:
    return [np.asarray(r.coords) for r in (poly.exterior, *poly.interiors)]


def _dense(rings: list[np.ndarray], spacing_mm: float) -> np.ndarray:
    out = []
    for r in rings:
        length = cumulative_length(r)
        n = max(8, int(np.ceil(length[-1] / spacing_mm)))
        out.append(point_at_length(r, np.linspace(0.0, length[-1], n, endpoint=False)))
    return np.vstack(out)


def _outlines_agree(region, poly, tol_mm: float = AGREE_MM) -> bool:
    """Fast test that an island's boundary vertices and its piece's outline vertices lie within
    about ``tol_mm`` of the other outline (nearest samples at a spacing of ``tol_mm``, so a sample
    distance overstates the true one by at most half that). A misfit that small is not measured
    by area: it is left to the seams, which it opens by about as much."""
    a, b = _rings(region), _rings(poly)
    if len(a) != len(b):
        return False
    d_ab, _ = cKDTree(_dense(b, tol_mm)).query(np.vstack(a), distance_upper_bound=2 * tol_mm)
    if not np.all(d_ab <= 1.5 * tol_mm):
        return False
    d_ba, _ = cKDTree(_dense(a, tol_mm)).query(np.vstack(b), distance_upper_bound=2 * tol_mm)
    return bool(np.all(d_ba <= 1.5 * tol_mm))


def _misplaced(drape, garment, isl: int, pi: int, region, measure: str) -> DrapeFault:
    item, piece = _label(drape, isl, np.full(isl + 1, pi))
    pc = garment.pieces[pi]
    pts = np.asarray(region.exterior.coords)[:-1]
    angle, shift, rms = fit_outline(pts, pc.outline)
    # the island is the piece turned by -angle about the piece's centroid, then shifted
    c = np.asarray(pc.polygon.centroid.coords[0])
    ca, sa = np.cos(-angle), np.sin(-angle)
    back = np.array([[ca, -sa], [sa, ca]])
    offset = back @ (c - shift) - c  # where the piece's centroid goes
    deg = (np.degrees(-angle) + 180.0) % 360.0 - 180.0
    pl = pc.placement
    at = f"placement x {pl.x:g}, y {pl.y:g} mm, angle {pl.angle_deg:g}°"
    if rms <= 2.0:
        how = (f"it matches the piece's outline turned by {deg:.1f}° and shifted by "
               f"({offset[0]:.1f}, {offset[1]:.1f}) mm (piece frame) from the piece's {at} "
               f"(fit RMS {rms:.2f} mm)")
    else:
        how = (f"its outline matches the piece's at no rigid placement (best fit RMS {rms:.1f} mm, "
               f"turned by {deg:.1f}°): the island of another piece, or a different outline")
    return DrapeFault("drape_misplaced", item, f"is not where the piece's placement puts it: {measure}; {how}",
                      piece)


# ---------------------------------------------------------------------------------- seams


def _unsewn_faults(garment: "Garment", drape: "Drape", bad: set) -> list[DrapeFault]:
    """Places the mesh sews (one 3D edge, two UV edges) that lie on none of the spec's seam runs
    of their piece: UVs that belong elsewhere, or a seam the spec lacks. Pieces in ``bad`` (an
    island already faulted) are skipped."""
    topo = drape.topology
    has = topo.mate >= 0
    if not has.any():
        return []
    rows = np.flatnonzero(has)
    f, k = topo.boundary[rows, 0], topo.boundary[rows, 1]
    a = drape.corner_pattern[f, NEXT[k]]
    b = drape.corner_pattern[f, NEXT[NEXT[k]]]
    mid = 0.5 * (a + b)
    piece = drape.face_piece[f]
    off = np.zeros(len(rows), dtype=bool)
    for pi, pc in enumerate(garment.pieces):
        sel = np.flatnonzero(piece == pi)
        if not len(sel) or pc.name in bad:
            continue
        runs = [garment.run_polyline(r) for s in garment.seams for r in (s.a, s.b) if r.piece == pc.name]
        if not runs:
            off[sel] = True
            continue
        d = shapely.distance(shapely.MultiLineString(runs), shapely.points(mid[sel]))
        off[sel] = d > SEAM_SNAP_MM
    if not off.any():
        return []
    mate_isl = topo.island[topo.boundary[topo.mate[rows], 0]]
    own = topo.island[f]
    pair = np.minimum(own, mate_isl) * topo.n_islands + np.maximum(own, mate_isl)
    length = np.linalg.norm(b - a, axis=1)
    out = []
    for pi in np.unique(piece[off]).tolist():
        pname = drape.piece_names[pi]
        sel = off & (piece == pi)
        isl = np.unique(own[sel]).tolist()
        places = [tuple(round(float(v), 1) for v in mid[sel & (pair == q)].mean(axis=0))
                  for q in np.unique(pair[sel]).tolist()]
        more = f" and {len(places) - MAX_PLACES} more place(s)" if len(places) > MAX_PLACES else ""
        shown = ", ".join(f"({x:.1f}, {y:.1f})" for x, y in places[:MAX_PLACES])
        out.append(DrapeFault(
            "drape_unsewn", f"UV island{'s' if len(isl) > 1 else ''} {', '.join(map(str, isl))} (piece '{pname}')",
            f"{'are' if len(isl) > 1 else 'is'} sewn in the mesh where the spec has no seam: "
            f"{int(sel.sum())} edge(s) ({length[sel].sum():.0f} mm) more than {SEAM_SNAP_MM:g} mm "
            f"from every seam run of the piece, around {shown} mm{more} (piece frame): corners "
            "whose 3D vertices and UVs are out of order, or a seam missing from the spec",
            pname, places[0]))
    return out


def _seam_gaps(garment: "Garment", drape: "Drape", seam, on: dict[str, str] | None = None) -> np.ndarray:
    """(SEAM_SAMPLES,) 3D gaps between matching points of a seam's runs, mm; ``on`` maps a piece
    to the piece whose island stands in for it (the swap test). Raises QueryError off the drape."""
    t = np.linspace(0.0, 1.0, SEAM_SAMPLES)
    pa = garment.run_polyline(seam.a)
    a_pts = point_at_length(pa, t * cumulative_length(pa)[-1])
    b_pts = garment.seam_partner(seam, "a", t)
    on = on or {}
    qa = drape.pattern_to_3d(on.get(seam.a.piece, seam.a.piece), a_pts, SEAM_SNAP_MM)
    qb = drape.pattern_to_3d(on.get(seam.b.piece, seam.b.piece), b_pts, SEAM_SNAP_MM)
    return np.linalg.norm(qa - qb, axis=1)


def _seam_faults(garment: "Garment", drape: "Drape", tol: float, bad: set) -> list[DrapeFault]:
    out: list[DrapeFault] = []
    gapped: dict[str, float] = {}
    for seam in garment.seams:
        if seam.a.piece in bad or seam.b.piece in bad:
            continue
        try:
            gap = float(_seam_gaps(garment, drape, seam).max())
        except QueryError as exc:
            gap = float("inf")
            msg = str(exc).removeprefix(f"{drape.source}: ")
            gapped[seam.name] = gap
            out.append(DrapeFault("seam_off_drape", f"seam '{seam.name}'", f"does not lie on the drape: {msg}"))
            continue
        if gap > tol:
            gapped[seam.name] = gap
            out.append(DrapeFault("seam_gap", f"seam '{seam.name}'",
                                  f"has its two runs up to {gap:.2f} mm apart on the drape (more than "
                                  f"{tol:g} mm): drape and pattern disagree"))
    if not gapped:
        return out
    swaps = _swaps(garment, drape, tol, gapped)
    if not swaps:
        return out
    explained = {s for _, _, names, _ in swaps for s in names}
    return [_swap_fault(drape, *s) for s in swaps] + [
        f for f in out if f.item.removeprefix("seam '").removesuffix("'") not in explained]


def _swaps(garment: "Garment", drape: "Drape", tol: float, gapped: dict[str, float]):
    """Pairs of same-outline pieces whose gapped seams close when their islands trade places."""
    by_name = {s.name: s for s in garment.seams}
    pieces = sorted({p for n in gapped for p in (by_name[n].a.piece, by_name[n].b.piece)})
    found = []
    for i, p in enumerate(pieces):
        for q in pieces[i + 1:]:
            pp, pq = garment.piece(p), garment.piece(q)
            if pp.polygon.symmetric_difference(pq.polygon).area > OUTSIDE_TOL * pp.area:
                continue  # not the same outline: the islands cannot trade places
            seams = [s for s in garment.seams if {s.a.piece, s.b.piece} & {p, q}]
            try:
                after = max(float(_seam_gaps(garment, drape, s, {p: q, q: p}).max()) for s in seams)
            except QueryError:
                continue
            if after <= tol:
                names = tuple(s.name for s in seams)
                before = max(gapped.get(n, 0.0) for n in names)
                found.append((p, q, names, (before, after)))
    return found


def _swap_fault(drape: "Drape", p: str, q: str, names: tuple[str, ...], gaps) -> DrapeFault:
    ip = int(np.unique(drape.topology.island[drape.piece_faces(p)])[0])
    iq = int(np.unique(drape.topology.island[drape.piece_faces(q)])[0])
    before, after = gaps
    return DrapeFault(
        "drape_swapped", f"UV islands {ip} (on piece '{p}') and {iq} (on piece '{q}')",
        f"are swapped: the pieces have the same outline, but their seams ({', '.join(names)}) gap by "
        f"up to {before:.1f} mm and close (largest gap {after:.3f} mm) when the two islands trade "
        "places; exchange their UVs in the mesh", p)
