"""Boustrophedon cells and lanes of one polygonal domain (piece frame, mm; pure geometry).

Lanes are parallel lines ``spacing`` apart across the domain. In a frame rotated so that the lanes
run along +x, each lane meets the domain in a set of segments. Following the boustrophedon cellular
decomposition (H. Choset, "Coverage of known spaces: the boustrophedon cellular decomposition",
*Autonomous Robots* 9, 2000, 247–253) a cell is a run of consecutive lanes whose segments overlap
one to one; where the number of segments changes (a critical point of the sweep line: an obstacle
starts or ends, the outline folds) the cells split or merge. This is the decomposition taken at
the lane positions, which is all a sweep with that lane spacing can see.

Within a cell the robot drives lane after lane, alternating direction. The number of turns is
proportional to the number of lanes, i.e. to the cell's width across the lanes, so the best lane
direction is the one of least width (W. H. Huang, "Optimal line-sweep-based decompositions for
coverage algorithms", ICRA 2001): for a convex shape the least width is attained with the lanes
parallel to an edge of its convex hull (rotating calipers), so those directions are the candidates.

shapely may return the parts of a line ∩ polygon in either direction (a boundary-coincident part
comes out reversed): every segment here is re-oriented by its x range.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import shapely
from shapely import affinity

__all__ = ["Cell", "min_width_direction", "best_direction", "lane_offsets", "slice_lanes", "boustrophedon_cells", "cell_path", "to_frame", "from_frame"]

# Segments shorter than this (mm) where a lane only grazes the domain are dropped.
MIN_SEGMENT_MM = 1e-3


@dataclass(frozen=True)
class Cell:
    """A run of consecutive lanes, one segment each, in the lane frame (lanes along +x).

    ``lanes`` is (k, 3): rows (y, x_start, x_end) with x_start <= x_end, y increasing, mm.
    ``angle_rad`` is the lane direction in the piece frame.
    """

    lanes: np.ndarray
    angle_rad: float


def to_frame(geom: shapely.Geometry, angle_rad: float) -> shapely.Geometry:
    """Rotate piece-frame geometry by −angle about the origin, so lanes at ``angle_rad`` run along +x."""
    return affinity.rotate(geom, -angle_rad, origin=(0.0, 0.0), use_radians=True)


def from_frame(points: np.ndarray, angle_rad: float) -> np.ndarray:
    """Lane-frame points (n, 2) back to the piece frame (rotate by +angle)."""
    c, s = math.cos(angle_rad), math.sin(angle_rad)
    pts = np.asarray(points, dtype=float).reshape(-1, 2)
    return pts @ np.array([[c, s], [-s, c]])


def width_across(geom: shapely.Geometry, angle_rad: float) -> float:
    """Extent (mm) of ``geom`` across lanes running at ``angle_rad``."""
    hull = np.asarray(shapely.convex_hull(geom).exterior.coords) if geom.area > 0 else np.zeros((1, 2))
    n = np.array([-math.sin(angle_rad), math.cos(angle_rad)])
    proj = hull @ n
    return float(proj.max() - proj.min())


def min_width_direction(geom: shapely.Geometry, spacing: float | None = None) -> tuple[float, float]:
    """Lane direction (rad, in [0, π)) of least width across, and that width (mm).

    Candidates are the convex hull's edge directions (Huang 2001). With ``spacing`` the comparison is
    by the number of lanes, ``ceil(width / spacing)``, ties broken by the smaller width, then by the
    smaller angle (deterministic).

    >>> box = shapely.box(0, 0, 300, 200)
    >>> angle, width = min_width_direction(box)
    >>> round(math.degrees(angle), 6), round(width, 6)
    (0.0, 200.0)
    """
    hull = shapely.convex_hull(geom)
    if hull.geom_type != "Polygon" or hull.area <= 0:
        return 0.0, 0.0
    ring = np.asarray(hull.exterior.coords)
    d = np.diff(ring, axis=0)
    d = d[np.hypot(d[:, 0], d[:, 1]) > 1e-9]
    angles = sorted({round(math.atan2(v[1], v[0]) % math.pi, 12) % math.pi for v in d})
    best: tuple | None = None
    for a in angles:
        w = width_across(hull, a)
        lanes = math.ceil(w / spacing - 1e-9) if spacing else 0
        key = (lanes, round(w, 9), a)
        if best is None or key < best[0]:
            best = (key, a, w)
    assert best is not None
    return best[1], best[2]


def best_direction(domain: shapely.Geometry, spacing: float, inset: float = 0.0, max_edges: int = 8) -> float:
    """Lane direction (rad, in [0, π)) that needs the fewest lanes over the whole domain.

    For a convex domain this is the least-width direction (Huang 2001). A non-convex domain is cut
    into cells, and the lanes of all cells count: an L-shaped domain is best swept along one arm,
    not across its hull's diagonal. Candidates are the ``max_edges`` hull edge directions of least
    width and the directions of the domain's ``max_edges`` longest edges; each is decomposed and its lanes counted; ties go to
    fewer cells, then to the smaller width across, then to the smaller angle.
    """
    hull = shapely.convex_hull(domain)
    if hull.geom_type != "Polygon" or hull.area <= 0:
        return 0.0
    d = np.diff(np.asarray(hull.exterior.coords), axis=0)
    hull_dirs = sorted({round(math.atan2(v[1], v[0]) % math.pi, 12) % math.pi for v in d if math.hypot(*v) > 1e-9})
    # the hull directions of least width (a curved outline has many nearly equal ones)
    cands = set(sorted(hull_dirs, key=lambda a: (round(width_across(hull, a), 9), a))[:max_edges])
    edges = []
    for poly in shapely.get_parts(domain):
        for ring in [poly.exterior, *poly.interiors]:
            d = np.diff(np.asarray(ring.coords), axis=0)
            edges += [(math.hypot(*v), round(math.atan2(v[1], v[0]) % math.pi, 12) % math.pi) for v in d]
    cands |= {a for _, a in sorted(edges, key=lambda e: (-e[0], e[1]))[:max_edges]}
    best: tuple | None = None
    for a in sorted(cands):
        cells = boustrophedon_cells(domain, spacing, a, inset)
        key = (sum(len(c.lanes) for c in cells), len(cells), round(width_across(hull, a), 9), a)
        if best is None or key < best:
            best = key
    assert best is not None
    return float(best[3])


def lane_offsets(low: float, high: float, spacing: float) -> np.ndarray:
    """Lane positions from ``low`` to ``high`` (mm), both ends included, evenly spaced no more
    than ``spacing`` apart: ``ceil((high − low)/spacing) + 1`` lanes (one lane in the middle when
    ``high − low`` is below 1e-9).

    >>> lane_offsets(10.0, 190.0, 20.0).tolist()[:3], len(lane_offsets(10.0, 190.0, 20.0))
    ([10.0, 30.0, 50.0], 10)
    """
    span = high - low
    if span <= 1e-9:
        return np.array([(low + high) / 2.0])
    n = int(math.ceil(span / spacing - 1e-9)) + 1
    return np.linspace(low, high, n)


def slice_lanes(domain: shapely.Geometry, ys: np.ndarray) -> list[list[tuple[float, float]]]:
    """Segments (x0, x1), x0 <= x1, sorted by x0, of each horizontal lane y (lane frame).

    Lanes exactly on the domain's bottom or top are moved 1e-7 mm inwards, so a lane on a straight
    border still meets the inside.
    """
    if domain.is_empty:
        return [[] for _ in ys]
    x0, y0, x1, y1 = domain.bounds
    eps = 1e-7
    yy = np.clip(np.asarray(ys, dtype=float), y0 + eps, y1 - eps)
    lines = shapely.linestrings([[[x0 - 1.0, y], [x1 + 1.0, y]] for y in yy])
    cuts = shapely.intersection(lines, domain)
    out: list[list[tuple[float, float]]] = []
    for cut in cuts:
        segs = []
        for part in shapely.get_parts(cut):
            if part.geom_type != "LineString" or part.is_empty:
                continue
            xs = np.asarray(part.coords)[:, 0]
            a, b = float(xs.min()), float(xs.max())
            if b - a >= MIN_SEGMENT_MM:
                segs.append((a, b))
        segs.sort()
        merged: list[tuple[float, float]] = []
        for a, b in segs:  # touching parts of one lane (split at a vertex) join up
            if merged and a <= merged[-1][1] + 1e-9:
                merged[-1] = (merged[-1][0], max(merged[-1][1], b))
            else:
                merged.append((a, b))
        out.append(merged)
    return out


def boustrophedon_cells(domain: shapely.Geometry, spacing: float, angle_rad: float, inset: float = 0.0) -> list[Cell]:
    """Cells of ``domain`` (piece frame) for lanes at ``angle_rad`` no more than ``spacing`` apart.

    The first and last lanes lie ``inset`` mm inside the domain's extreme points across the lanes
    (0: on them). Returns cells in order of their first lane (then x). See the module docstring.
    """
    framed = to_frame(domain, angle_rad)
    if framed.is_empty:
        return []
    _, y0, _, y1 = framed.bounds
    inset = min(float(inset), (y1 - y0) / 2.0)
    ys = lane_offsets(y0 + inset, y1 - inset, spacing)
    segs = slice_lanes(framed, ys)
    cells: list[list[tuple[float, float, float]]] = []
    open_: dict[int, int] = {}  # segment index on the previous lane -> cell index
    prev: list[tuple[float, float]] = []
    for y, cur in zip(ys, segs, strict=True):
        nxt: dict[int, int] = {}
        # overlap graph between previous and current segments
        up = {i: [j for j, (a, b) in enumerate(cur) if a <= prev[i][1] and b >= prev[i][0]] for i in range(len(prev))}
        down = {j: [i for i in range(len(prev)) if j in up[i]] for j in range(len(cur))}
        for j, (a, b) in enumerate(cur):
            src = down[j]
            if len(src) == 1 and len(up[src[0]]) == 1 and src[0] in open_:
                c = open_[src[0]]
            else:
                cells.append([])
                c = len(cells) - 1
            cells[c].append((float(y), a, b))
            nxt[j] = c
        open_, prev = nxt, cur
    return [Cell(np.array(c, dtype=float), float(angle_rad)) for c in cells if c]


def cell_path(cell: Cell, *, reverse_lanes: bool = False, start_right: bool = False) -> np.ndarray:
    """Boustrophedon polyline (m, 2) of a cell in the piece frame: lane, step to the next lane at
    the same end, next lane the other way, and so on.

    ``reverse_lanes`` starts from the last lane; ``start_right`` drives the first lane from its
    right (x_end) end. Repeated points are dropped.
    """
    lanes = cell.lanes[::-1] if reverse_lanes else cell.lanes
    pts = []
    right = start_right
    for y, a, b in lanes:
        if right:
            pts += [(b, y), (a, y)]
        else:
            pts += [(a, y), (b, y)]
        right = not right
    arr = np.array(pts, dtype=float)
    keep = np.r_[True, np.hypot(*np.diff(arr, axis=0).T) > 1e-9]
    return from_frame(arr[keep], cell.angle_rad)
