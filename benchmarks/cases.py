"""Seeded benchmark cases: cluttered single pieces, the demo garment with buttons, a large drape.

Every generator is a pure function of its arguments and seed (``numpy.random.default_rng``), so a
case is rebuilt identically in every run and on every machine.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
import shapely

from garnav.model import Circle, Edge, Garment, KeepOut, Piece, Placement, PolygonShape, Rectangle, Robot

__all__ = [
    "SinglePieceCase",
    "single_piece_case",
    "random_keepouts",
    "sample_pairs",
    "LiftCase",
    "lift_case",
    "prism_drape",
    "zigzag_route",
]

PIECE_W_MM = 600.0
PIECE_H_MM = 800.0
ROBOT = Robot(name="bench", radius_mm=8.0, wheel_base_mm=12.0, speed_mm_s=20.0, edge_margin_mm=2.0)
SIZE_RANGE_MM = (6.0, 30.0)


@dataclass(frozen=True)
class SinglePieceCase:
    """One rectangular piece cluttered with ``n`` keep-outs and seeded start/goal pairs.

    ``pairs`` is filled later (it needs the free space); see :func:`sample_pairs`.
    """

    name: str
    n: int
    seed: int
    garment: Garment
    robot: Robot
    pairs: np.ndarray = field(default_factory=lambda: np.zeros((0, 2, 2)))


def rect_piece(name: str, w: float, h: float, placement: Placement | None = None) -> Piece:
    """A w × h mm rectangle with edges bottom, right, top, left (counter-clockwise)."""
    extra = {} if placement is None else {"placement": placement}
    return Piece(
        name,
        (
            Edge("bottom", ((0.0, 0.0), (w, 0.0))),
            Edge("right", ((w, 0.0), (w, h))),
            Edge("top", ((w, h), (0.0, h))),
            Edge("left", ((0.0, h), (0.0, 0.0))),
        ),
        **extra,
    )


def random_keepouts(
    n: int,
    rng: np.random.Generator,
    region: tuple[float, float, float, float],
    piece: str,
    *,
    size_range: tuple[float, float] = SIZE_RANGE_MM,
    kinds: tuple[str, ...] = ("square", "octagon", "circle"),
    allowed: shapely.Geometry | None = None,
    avoid: list[tuple[float, float, float]] | None = None,
    gap_mm: float = 1.0,
    name_prefix: str = "k",
    keepout_kind: str = "custom",
    max_tries: int = 2_000_000,
) -> list[KeepOut]:
    """``n`` non-overlapping keep-outs (squares, regular octagons, circles) placed at random.

    Sizes are uniform in ``size_range`` (square side, octagon and circle diameter), mm. Two shapes
    are kept at least ``gap_mm`` apart (bounding circles). With ``allowed`` every shape must lie
    inside that polygon; ``avoid`` lists (x, y, radius) discs to stay clear of.
    """
    x0, y0, x1, y1 = region
    centres = np.zeros((0, 2))
    radii = np.zeros(0)
    if avoid:
        centres = np.array([[ax, ay] for ax, ay, _ in avoid], dtype=float)
        radii = np.array([ar for _, _, ar in avoid], dtype=float)
    inner = None
    if allowed is not None:
        # every shape's bounding circle must fit: erode by the largest bounding radius once
        inner = allowed.buffer(-size_range[1] / math.sqrt(2.0), quad_segs=4)
        shapely.prepare(inner)
    out: list[KeepOut] = []
    drawn = 0
    while len(out) < n:
        if drawn > max_tries:
            raise RuntimeError(f"could place only {len(out)} of {n} keep-outs")
        batch = 512
        drawn += batch
        size = rng.uniform(*size_range, size=batch)
        kind_i = rng.integers(len(kinds), size=batch)
        angle = rng.uniform(0.0, 90.0, size=batch)
        is_sq = np.array([kinds[k] == "square" for k in kind_i])
        rad = np.where(is_sq, size / math.sqrt(2.0), size / 2.0)
        c = rng.uniform(0.0, 1.0, size=(batch, 2)) * ([x1 - x0, y1 - y0] - 2 * rad[:, None]) + [x0, y0] + rad[:, None]
        if inner is not None:
            keep = shapely.contains_xy(inner, c[:, 0], c[:, 1])
        else:
            keep = np.ones(batch, dtype=bool)
        for k in np.flatnonzero(keep):
            if len(out) >= n:
                break
            if len(radii) and np.any(np.hypot(*(centres - c[k]).T) < radii + rad[k] + gap_mm):
                continue
            centres = np.vstack([centres, c[k]])
            radii = np.append(radii, rad[k])
            name = f"{name_prefix}{len(out):03d}"
            cx, cy, sz, ang, kind = float(c[k, 0]), float(c[k, 1]), float(size[k]), float(angle[k]), kinds[kind_i[k]]
            if kind == "square":
                shape = Rectangle(cx, cy, sz, sz, ang)
            elif kind == "circle":
                shape = Circle(cx, cy, sz / 2.0)
            else:
                t = np.radians(ang) + np.arange(8) * (np.pi / 4.0)
                pts = np.column_stack([cx + rad[k] * np.cos(t), cy + rad[k] * np.sin(t)])
                shape = PolygonShape(tuple((float(x), float(y)) for x, y in pts))
            out.append(KeepOut(name, piece, keepout_kind, shape, clearance_mm=0.0, hard=True))
    return out


def single_piece_case(n: int, seed: int = 0) -> SinglePieceCase:
    """A 600 × 800 mm piece with ``n`` random non-overlapping keep-outs, 8 mm robot."""
    rng = np.random.default_rng([seed, n])
    keepouts = random_keepouts(n, rng, (0.0, 0.0, PIECE_W_MM, PIECE_H_MM), "panel")
    garment = Garment(
        f"clutter_{n}",
        (rect_piece("panel", PIECE_W_MM, PIECE_H_MM),),
        keepouts=tuple(keepouts),
        robot=ROBOT,
        sheet_size_mm=(PIECE_W_MM + 20.0, PIECE_H_MM + 20.0),
    )
    return SinglePieceCase(f"single_N{n}", n, seed, garment, ROBOT)


def sample_pairs(
    region: shapely.Geometry,
    count: int,
    rng: np.random.Generator,
    *,
    min_dist_mm: float = 150.0,
    inset_mm: float = 0.5,
) -> np.ndarray:
    """``count`` start/goal pairs (count, 2, 2) in one connected part of ``region``.

    Points lie at least ``inset_mm`` inside the region (away from degenerate boundary contact);
    both ends of a pair lie in the same polygon of a multi-part region (so a route exists), and
    are at least ``min_dist_mm`` apart where the part allows it.
    """
    parts = sorted(shapely.get_parts(region), key=lambda p: -p.area)
    inner = [p.buffer(-inset_mm) for p in parts]
    weights = np.array([max(g.area, 0.0) for g in inner])
    if weights.sum() <= 0:
        raise RuntimeError("free space is empty")
    weights = weights / weights.sum()
    out = np.zeros((count, 2, 2))
    k = 0
    guard = 0
    while k < count:
        guard += 1
        if guard > 100000:
            raise RuntimeError("could not sample start/goal pairs")
        idx = int(rng.choice(len(inner), p=weights))
        g = inner[idx]
        if g.is_empty:
            continue
        x0, y0, x1, y1 = g.bounds
        pts = rng.uniform([x0, y0], [x1, y1], size=(64, 2))
        ok = shapely.contains_xy(g, pts[:, 0], pts[:, 1])
        pts = pts[ok]
        if len(pts) < 2:
            continue
        a, b = pts[0], pts[1]
        span = math.hypot(x1 - x0, y1 - y0)
        if np.hypot(*(b - a)) < min(min_dist_mm, 0.5 * span):
            far = pts[np.argmax(np.hypot(*(pts - a).T))]
            if np.hypot(*(far - a)) < min(min_dist_mm, 0.5 * span):
                continue
            b = far
        out[k, 0], out[k, 1] = a, b
        k += 1
    return out


# --------------------------------------------------------------------------------------------
# drape for lifting


@dataclass(frozen=True)
class LiftCase:
    """A UV-mapped drape, a route in the sheet frame, and random points to locate.

    Attributes
    ----------
    vertices : (v, 3) float, mm
    faces : (f, 3) int
    uv : (v, 2) float, sheet mm (UV × sheet size); one UV per vertex
    sheet_size_mm : (2,) float
    route : (m, 2) float, sheet mm, polyline whose corners are mesh vertices
    route_vertex_ids : (m,) int, mesh vertex index of each route corner
    query_uv : (q, 2) float, sheet mm, random points inside the UV domain
    """

    name: str
    vertices: np.ndarray
    faces: np.ndarray
    uv: np.ndarray
    sheet_size_mm: np.ndarray
    route: np.ndarray
    route_vertex_ids: np.ndarray
    query_uv: np.ndarray


def prism_drape(
    n_u: int, n_v: int, width_mm: float, height_mm: float, rng: np.random.Generator
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """A developable drape: a flat grid folded along its columns into a curved prism.

    Column ``i`` sits at pattern x = u_i (irregular spacing); rows are jittered per vertex in y, so
    triangles are irregular. The 3D cross-section is a polyline whose segment lengths equal the
    column spacings, turning by a smoothly varying angle, so each strip between two columns is a
    flat, isometric copy of its pattern strip: the mesh is exactly developable onto its UV layout
    and a straight pattern segment lifts to a geodesic of the same length.

    Returns
    -------
    vertices (v, 3), faces (f, 3), uv (v, 2) in mm; f = 2 (n_u − 1)(n_v − 1).
    """
    du = rng.uniform(0.6, 1.4, size=n_u - 1)
    u = np.concatenate([[0.0], np.cumsum(du)])
    u *= width_mm / u[-1]
    dv = height_mm / (n_v - 1)
    v = np.linspace(0.0, height_mm, n_v)[None, :] + rng.uniform(-0.3, 0.3, size=(n_u, n_v)) * dv
    v[:, 0] = 0.0
    v[:, -1] = height_mm
    # cross-section: unit-speed polyline turning by a smooth angle profile (total ~ 3/4 turn)
    s_mid = 0.5 * (u[:-1] + u[1:])
    heading = 1.5 * np.pi * (s_mid / width_mm) + 0.3 * np.sin(6.0 * np.pi * s_mid / width_mm)
    steps = np.diff(u)[:, None] * np.column_stack([np.cos(heading), np.sin(heading)])
    section = np.vstack([[0.0, 0.0], np.cumsum(steps, axis=0)])
    X = np.repeat(section[:, None, :], n_v, axis=1)
    verts = np.concatenate([X, v[:, :, None]], axis=2).reshape(-1, 3)
    uv = np.stack([np.repeat(u[:, None], n_v, axis=1), v], axis=2).reshape(-1, 2)
    idx = np.arange(n_u * n_v).reshape(n_u, n_v)
    a = idx[:-1, :-1].ravel()
    b = idx[1:, :-1].ravel()
    c = idx[1:, 1:].ravel()
    d = idx[:-1, 1:].ravel()
    faces = np.concatenate([np.column_stack([a, b, c]), np.column_stack([a, c, d])])
    return verts, faces, uv


def zigzag_route(
    uv: np.ndarray, n_u: int, n_v: int, corners: int, rng: np.random.Generator
) -> tuple[np.ndarray, np.ndarray]:
    """A polyline through ``corners`` mesh vertices zig-zagging across the sheet.

    Returns sheet points (m, 2) and their vertex ids (m,).
    """
    cols = np.where(np.arange(corners) % 2 == 0, rng.integers(1, n_u // 6, corners), rng.integers(5 * n_u // 6, n_u - 1, corners))
    rows = np.sort(rng.integers(1, n_v - 1, corners))
    ids = cols * n_v + rows
    return uv[ids].copy(), ids


def lift_case(target_faces: int = 100_000, route_corners: int = 11, n_query: int = 100_000, seed: int = 0) -> LiftCase:
    """A ~``target_faces`` triangle prism drape (sheet 900 × 700 mm), a zig-zag route, query points."""
    rng = np.random.default_rng([seed, target_faces])
    width, height = 900.0, 700.0
    # choose n_u, n_v with cells roughly square
    cells = target_faces / 2.0
    n_u = max(3, int(round(math.sqrt(cells * width / height)))) + 1
    n_v = max(3, int(round(cells / (n_u - 1)))) + 1
    verts, faces, uv = prism_drape(n_u, n_v, width, height, rng)
    offset = np.array([20.0, 30.0])
    uv_mm = uv + offset
    sheet = np.array([width + 40.0, height + 60.0])
    route, ids = zigzag_route(uv_mm, n_u, n_v, route_corners, rng)
    q = rng.uniform(offset, offset + [width, height], size=(n_query, 2))
    return LiftCase(f"lift_F{len(faces)}", verts, faces, uv_mm, sheet, route, ids, q)
