"""The built-in demo garment: a long-sleeved sensing top for a rehabilitation lab (invented).

Every piece is the exact development of a developable part of the stylised mannequin
(:mod:`garnav.demo.mannequin`): front and back halves of an elliptic-cylinder torso, a flat yoke
in the shoulder plane with a neck hole, and two truncated-cone sleeves in an A-pose whose armhole
seams follow the true cone–cylinder intersection curves. The drape is therefore an isometry of
the pattern up to mesh chords, which gives exact check values.

:func:`build_design` returns the :class:`~garnav.model.Garment` together with, for every piece,
its exact pattern → world map and, for every edge, a dense sampling whose seam partners are the
same world points (the mesh builder shares vertices there).

Orientation: every piece map is orientation preserving in the right-handed world frame (z up,
y forward, x towards the wearer's right): (∂X/∂x × ∂X/∂y) · n_out > 0, so mesh tools find
outward normals and pattern turns keep their sign about the outward normal.
``DemoDimensions(left_x_sign=1.0)`` builds the mirror image (the wearer's left at +x) with every
other property unchanged.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field
from types import MappingProxyType

import numpy as np

from garnav.demo.mannequin import (
    Cone,
    EllipticCylinder,
    HorizontalPlane,
    cone_cylinder_intersection,
)
from garnav.demo.piecemaps import PieceMap, SleevePieceMap, TorsoPieceMap, YokePieceMap
from garnav.model import (
    Circle,
    Edge,
    Garment,
    KeepOut,
    Landmark,
    Opening,
    Piece,
    Placement,
    Rectangle,
    Robot,
    Seam,
    SeamRun,
)
from garnav.mechanics.profile import RobotPhysics
from garnav.demo.zones import demo_body_zones
from garnav.demo.poses import demo_poses
from garnav.polyline import cumulative_length

__all__ = [
    "DemoDimensions",
    "DemoDesign",
    "TorsoPieceMap",
    "SleevePieceMap",
    "YokePieceMap",
    "build_design",
    "demo_garment",
]


@dataclass(frozen=True)
class DemoDimensions:
    """Sizes of the stylised mannequin and the top, mm and degrees (invented, adult-like)."""

    half_width: float = 170.0  # torso ellipse semi-axis along x
    half_depth: float = 110.0  # torso ellipse semi-axis along y
    hem_z: float = 800.0
    shoulder_z: float = 1400.0  # the yoke plane
    arm_drop_deg: float = 40.0  # sleeve axis below horizontal (A-pose)
    arm_joint_below_shoulder: float = 130.0  # where the sleeve axis pierces the side line
    sleeve_radius_shoulder: float = 60.0  # cone radius where the axis meets the torso
    sleeve_radius_wrist: float = 40.0
    sleeve_length: float = 550.0  # along the axis, from the torso side line to the wrist
    neck_half_width: float = 70.0
    neck_half_depth: float = 55.0
    neck_centre_y: float = 5.0
    curve_step: float = 4.0  # sampling step of curved edges (armholes, yoke, cuff, neck)
    torso_step: float = 12.0  # boundary sampling of straight torso edges (mesh size)
    sleeve_step: float = 7.0  # boundary sampling of straight sleeve edges (mesh size)
    sheet_gap: float = 20.0  # gap between pieces on the sheet
    # −1: the wearer's left is at −x (the right-handed world frame); +1 builds the mirror image
    left_x_sign: float = -1.0

    def x_sign(self, side: str) -> float:
        """+1 or −1: the sign of x on the wearer's ``side`` ("left" or "right")."""
        return self.left_x_sign if side == "left" else -self.left_x_sign


@dataclass(frozen=True)
class DemoDesign:
    """The demo garment with its exact geometry.

    Attributes
    ----------
    garment : Garment
    dims : DemoDimensions
    torso : EllipticCylinder
    cones : dict str -> Cone
        Sleeve cones by side ("left", "right").
    maps : dict str -> piece map
        Exact pattern → world map of every piece (``to_world``, ``to_pattern``, ``normal``).
    samples : dict (piece, edge) -> (n, 2) array
        Dense boundary samples of every edge in the edge's own direction (piece frame, mm). Both
        runs of a seam have equally many samples and, paired in travel order, the same world points.
    opening_samples : dict (piece, opening) -> (n, 2) array
        Dense samples of every opening ring.
    """

    garment: Garment
    dims: DemoDimensions
    torso: EllipticCylinder
    cones: Mapping[str, Cone]
    maps: Mapping[str, PieceMap]
    samples: Mapping[tuple[str, str], np.ndarray]
    opening_samples: Mapping[tuple[str, str], np.ndarray]


def _count(length: float, step: float) -> int:
    """Number of intervals of at most ``step`` covering ``length`` (at least 1)."""
    return max(1, int(math.ceil(length / step - 1e-9)))


def _line(p0, p1, n: int) -> np.ndarray:
    t = np.linspace(0.0, 1.0, n + 1)[:, None]
    return (1 - t) * np.asarray(p0, dtype=float) + t * np.asarray(p1, dtype=float)


def _pts(arr: np.ndarray) -> tuple[tuple[float, float], ...]:
    """Points as float tuples rounded to 0.1 µm (keeps the spec file short and stable)."""
    return tuple((round(float(x), 4) + 0.0, round(float(y), 4) + 0.0) for x, y in np.asarray(arr))


def _chain(edges: tuple[Edge, ...]) -> tuple[Edge, ...]:
    """Round every edge's points and make each edge start exactly where the previous one ends."""
    out = []
    for k, e in enumerate(edges):
        pts = list(_pts(e.points))
        prev = edges[k - 1]
        pts[0] = _pts([prev.points[-1]])[0]
        out.append(Edge(e.name, tuple(pts)))
    return tuple(out)


def _sleeve_cone(dims: DemoDimensions, side: str) -> Cone:
    """The cone of one sleeve; its axis crosses the torso's side line at (±a, 0, z_joint)."""
    sgn = dims.x_sign(side)
    alpha = math.radians(dims.arm_drop_deg)
    d = np.array([sgn * math.cos(alpha), 0.0, -math.sin(alpha)])
    e1 = np.array([sgn * math.sin(alpha), 0.0, math.cos(alpha)])  # the top generator's side
    r0, rw, length = dims.sleeve_radius_shoulder, dims.sleeve_radius_wrist, dims.sleeve_length
    beta = math.atan((r0 - rw) / length)
    joint = np.array([sgn * dims.half_width, 0.0, dims.shoulder_z - dims.arm_joint_below_shoulder])
    apex = joint + (r0 / math.tan(beta)) * d
    return Cone(
        tuple(float(v) for v in apex), tuple(float(v) for v in d), tuple(float(v) for v in e1), beta
    )


def _armhole_phis(cone: Cone, cyl: EllipticCylinder, phi_end: float, step: float) -> np.ndarray:
    """Generator angles from the top (0) to ``phi_end`` (±π), spaced to about ``step`` mm in 3D."""
    fine = np.linspace(0.0, phi_end, 2001)
    pts = cone.point(cone_cylinder_intersection(cone, cyl, fine), fine)
    cum = cumulative_length(pts)
    n = _count(cum[-1], step)
    return np.interp(np.linspace(0.0, cum[-1], n + 1), cum, fine)


@dataclass
class _Parts:
    """Work in progress while building: maps, edge samples and edges of every piece."""

    maps: dict = field(default_factory=dict)
    samples: dict = field(default_factory=dict)
    edges: dict = field(default_factory=dict)
    cones: dict = field(default_factory=dict)
    armhole_z: dict = field(default_factory=dict)  # side -> (bottom, top) height of the armhole


def _yoke(dims: DemoDimensions, cyl: EllipticCylinder, parts: _Parts) -> np.ndarray:
    """The flat yoke and the torso top edges it is sewn to; returns the neck ring (n, 2)."""
    a, b = dims.half_width, dims.half_depth
    width, height = cyl.perimeter / 2.0, dims.shoulder_z - dims.hem_z
    yoke_map = YokePieceMap(HorizontalPlane(dims.shoulder_z), a, b)
    parts.maps["yoke"] = yoke_map
    n_half = _count(width, dims.curve_step)
    s_front = np.linspace(0.0, width, n_half + 1)
    theta_front = cyl.theta_at(s_front)  # 0 .. π, equal arc steps
    theta_back = cyl.theta_at(s_front + width)  # π .. 2π
    yoke_front = yoke_map.to_pattern(cyl.point(theta_front, dims.shoulder_z))
    yoke_back = yoke_map.to_pattern(cyl.point(theta_back, dims.shoulder_z))
    parts.samples[("yoke", "front")] = yoke_front
    parts.samples[("yoke", "back")] = yoke_back
    parts.edges["yoke"] = (Edge("front", _pts(yoke_front)), Edge("back", _pts(yoke_back)))
    # torso top edges run from u = width to 0 (counter-clockwise on the piece): the same points
    top = np.stack([s_front[::-1], np.full(n_half + 1, height)], -1)
    parts.samples[("front", "yoke")] = top
    parts.samples[("back", "yoke")] = top.copy()
    # sample count only: the rough perimeter π(p + q) is enough to pick a step
    n_neck = _count(math.pi * (dims.neck_half_width + dims.neck_half_depth), dims.curve_step)
    t = np.linspace(0.0, 2 * math.pi, n_neck, endpoint=False)
    return np.stack(
        [
            a + dims.neck_half_width * np.cos(t),
            b + dims.neck_centre_y + dims.neck_half_depth * np.sin(t),
        ],
        -1,
    )


def _sleeve(dims: DemoDimensions, cyl: EllipticCylinder, side: str, parts: _Parts) -> None:
    """One sleeve: the cone's development between the armhole curve and the wrist circle, cut
    along the bottom generator; also the torso sides of its armhole (the same world points)."""
    width = cyl.perimeter / 2.0
    cone = _sleeve_cone(dims, side)
    parts.cones[side] = cone
    # which half (φ < 0 or φ > 0) lies in front (y > 0)?
    neg_is_front = float(cone.outward_normal(np.array([-math.pi / 2]))[0, 1]) > 0
    phi_neg = _armhole_phis(cone, cyl, -math.pi, dims.curve_step)  # 0 .. −π
    phi_pos = _armhole_phis(cone, cyl, math.pi, dims.curve_step)  # 0 .. +π
    rho_neg = cone_cylinder_intersection(cone, cyl, phi_neg)
    rho_pos = cone_cylinder_intersection(cone, cyl, phi_pos)
    p_neg, p_pos = cone.point(rho_neg, phi_neg), cone.point(rho_pos, phi_pos)
    top, bottom = p_neg[0], p_neg[-1]
    parts.armhole_z[side] = (float(bottom[2]), float(top[2]))

    k = math.sin(cone.beta)
    rho_w = dims.sleeve_radius_wrist / k
    # place the development: apex at (x0, y0) so that the cuff corners sit at y = 0 and the
    # widest point at x = 0
    probe = SleevePieceMap(cone, 0.0, 0.0)
    outline = np.vstack([probe.from_cone(rho_neg, phi_neg), probe.from_cone(rho_pos, phi_pos)])
    smap = SleevePieceMap(cone, float(-outline[:, 0].min()), float(-rho_w * math.cos(math.pi * k)))
    name = f"sleeve_{side}"
    parts.maps[name] = smap

    # counter-clockwise: cuff (φ from +π to −π), rising straight edge at φ = −π, armhole
    # half φ −π → 0, armhole half 0 → +π, falling straight edge at φ = +π
    n_cuff = _count(2 * math.pi * dims.sleeve_radius_wrist, dims.curve_step)
    cuff = smap.from_cone(np.full(n_cuff + 1, rho_w), np.linspace(math.pi, -math.pi, n_cuff + 1))
    rho_bottom = float(rho_neg[-1])  # φ = ±π: the same generator
    n_under = _count(rho_bottom - rho_w, dims.sleeve_step)
    rho_line = np.linspace(rho_w, rho_bottom, n_under + 1)
    rise = smap.from_cone(rho_line, np.full(n_under + 1, -math.pi))
    fall = smap.from_cone(rho_line[::-1], np.full(n_under + 1, math.pi))
    half_a = smap.from_cone(rho_neg[::-1], phi_neg[::-1])  # −π → 0
    half_b = smap.from_cone(rho_pos, phi_pos)  # 0 → +π
    a_name, b_name = ("front", "back") if neg_is_front else ("back", "front")
    names = (
        "cuff",
        f"underarm_{a_name}",
        f"armhole_{a_name}",
        f"armhole_{b_name}",
        f"underarm_{b_name}",
    )
    arrays = (cuff, rise, half_a, half_b, fall)
    curved = {"cuff", f"armhole_{a_name}", f"armhole_{b_name}"}
    for edge_name, arr in zip(names, arrays):
        parts.samples[(name, edge_name)] = arr
    parts.edges[name] = tuple(
        Edge(n, _pts(arr) if n in curved else _pts(arr[[0, -1]])) for n, arr in zip(names, arrays)
    )
    # torso sides of the same armhole: the same world points, developed on the cylinder
    front_pts = p_neg if neg_is_front else p_pos  # top → bottom
    back_pts = p_pos if neg_is_front else p_neg
    # on the front, u = 0 is the +x side (edges there run downwards); on the back, u = width
    plus_x = dims.x_sign(side) > 0
    world = {
        "front": front_pts if plus_x else front_pts[::-1],
        "back": back_pts[::-1] if plus_x else back_pts,
    }
    for piece, pts in world.items():
        uv = parts.maps[piece].to_pattern(pts)
        uv[[0, -1], 0] = np.round(uv[[0, -1], 0] / width) * width  # exactly on the side line
        parts.samples[(piece, f"armhole_{side}")] = uv


def _torso(dims: DemoDimensions, cyl: EllipticCylinder, piece: str, parts: _Parts) -> None:
    """Edges of a torso half, counter-clockwise from the hem (armholes and top already sampled)."""
    width, height = cyl.perimeter / 2.0, dims.shoulder_z - dims.hem_z
    # ``first`` is the side at u = width (its edges rise), ``second`` the one at u = 0;
    # the front's u = width lies at x = −a, the back's at x = +a
    minus_x = "right" if dims.left_x_sign > 0 else "left"
    plus_x = "left" if dims.left_x_sign > 0 else "right"
    first, second = (minus_x, plus_x) if piece == "front" else (plus_x, minus_x)
    lo2, hi2 = (z - dims.hem_z for z in parts.armhole_z[first])
    lo1, hi1 = (z - dims.hem_z for z in parts.armhole_z[second])
    layout = [
        ("hem", (0.0, 0.0), (width, 0.0), dims.torso_step),
        (f"side_{first}_lower", (width, 0.0), (width, lo2), dims.torso_step),
        (f"armhole_{first}", None, None, None),
        (f"side_{first}_upper", (width, hi2), (width, height), dims.curve_step),
        ("yoke", (width, height), (0.0, height), None),
        (f"side_{second}_upper", (0.0, height), (0.0, hi1), dims.curve_step),
        (f"armhole_{second}", None, None, None),
        (f"side_{second}_lower", (0.0, lo1), (0.0, 0.0), dims.torso_step),
    ]
    edges = []
    for edge_name, p0, p1, step in layout:
        key = (piece, edge_name)
        if p0 is None:
            edges.append(Edge(edge_name, _pts(parts.samples[key])))
            continue
        if step is not None:
            parts.samples[key] = _line(p0, p1, _count(math.dist(p0, p1), step))
        edges.append(Edge(edge_name, (p0, p1)))
    parts.edges[piece] = tuple(edges)


def _match_side_seams(parts: _Parts) -> None:
    """Sample both runs of every straight side seam at the same heights."""
    for side in ("left", "right"):
        for part in ("lower", "upper"):
            keys = (("front", f"side_{side}_{part}"), ("back", f"side_{side}_{part}"))
            n = max(len(parts.samples[k]) for k in keys) - 1
            for piece, edge_name in keys:
                e = next(x for x in parts.edges[piece] if x.name == edge_name)
                parts.samples[(piece, edge_name)] = _line(e.points[0], e.points[-1], n)


def _layout(dims: DemoDimensions, parts: _Parts, neck: np.ndarray):
    """Pieces placed in one row on the sheet, without overlap; returns (pieces, sheet size)."""
    margin = 10.0
    cursor = margin
    pieces = []
    tallest = 0.0
    for name in ("front", "back", "sleeve_left", "sleeve_right", "yoke"):
        pts = np.vstack([parts.samples[(name, e.name)] for e in parts.edges[name]])
        lo, hi = pts.min(axis=0), pts.max(axis=0)
        placement = Placement(float(round(cursor - lo[0], 3)), float(round(margin - lo[1], 3)), 0.0)
        openings = (Opening("neckline", _pts(neck)),) if name == "yoke" else ()
        pieces.append(Piece(name, _chain(parts.edges[name]), openings, placement))
        cursor += hi[0] - lo[0] + dims.sheet_gap
        tallest = max(tallest, hi[1] - lo[1])
    sheet = (
        float(math.ceil(cursor - dims.sheet_gap + margin)),
        float(math.ceil(tallest + 2 * margin)),
    )
    return tuple(pieces), sheet


def _seams(parts: _Parts) -> tuple[Seam, ...]:
    """The twelve seams; run b's direction is chosen so that both runs start at the same point.

    Crossing costs and angles: common practice, no source (a flat-felled or overlocked seam is a
    ridge of a few mm that small wheels take best square on).
    """

    def seam(name, pa, ea, pb, eb, cost, angle):
        wa = _edge_world(parts.maps, parts.samples, pa, ea)
        wb = _edge_world(parts.maps, parts.samples, pb, eb)
        reverse = bool(np.linalg.norm(wa[0] - wb[0]) > np.linalg.norm(wa[0] - wb[-1]))
        return Seam(name, SeamRun(pa, ea), SeamRun(pb, eb, reverse=reverse), True, cost, angle)

    seams = []
    for side in ("left", "right"):
        for part in ("lower", "upper"):
            e = f"side_{side}_{part}"
            seams.append(seam(e, "front", e, "back", e, 8.0, 20.0))
    for side in ("left", "right"):
        for half in ("front", "back"):
            seams.append(
                seam(
                    f"armhole_{side}_{half}",
                    half,
                    f"armhole_{side}",
                    f"sleeve_{side}",
                    f"armhole_{half}",
                    12.0,
                    30.0,
                )
            )
    seams.append(seam("yoke_front", "front", "yoke", "yoke", "front", 10.0, 30.0))
    seams.append(seam("yoke_back", "back", "yoke", "yoke", "back", 10.0, 30.0))
    for side in ("left", "right"):
        seams.append(
            seam(
                f"underarm_{side}",
                f"sleeve_{side}",
                "underarm_front",
                f"sleeve_{side}",
                "underarm_back",
                8.0,
                20.0,
            )
        )
    return tuple(seams)


def _keepouts(dims: DemoDimensions, width: float) -> tuple[KeepOut, ...]:
    height = dims.shoulder_z - dims.hem_z
    mid = round(width / 2.0, 3)
    towards_left = -dims.left_x_sign  # on the front, u grows towards −x
    return (
        KeepOut(
            "chest_pocket",
            "front",
            "pocket",
            Rectangle(mid + towards_left * 100.0, 400.0, 100.0, 120.0),
            5.0,
        ),
        # The top button sits 50 mm below the yoke seam, so the neck base stays reachable.
        KeepOut("placket", "front", "buttonhole", Rectangle(mid, height - 175.0, 30.0, 250.0), 3.0),
        KeepOut("neck_label", "back", "label", Rectangle(mid, height - 25.0, 50.0, 25.0), 3.0),
        KeepOut(
            "back_print",
            "back",
            "print",
            Circle(mid, 380.0, 70.0),
            0.0,
            hard=False,
            cost_factor=3.0,
        ),
        KeepOut("charging_dock", "back", "dock", Rectangle(mid, 120.0, 80.0, 50.0), 5.0),
    )


def _landmarks(dims: DemoDimensions, width: float, parts: _Parts) -> tuple[Landmark, ...]:
    a, b = dims.half_width, dims.half_depth
    height = dims.shoulder_z - dims.hem_z
    mid = round(width / 2.0, 3)
    towards_left = -dims.left_x_sign
    landmarks = [
        Landmark(
            "suprasternale",
            "yoke",
            a,
            b + dims.neck_centre_y + dims.neck_half_depth + 35.0,
            description="jugular notch, front of the neck base",
        ),
        Landmark(
            "sternum_left",
            "front",
            mid + towards_left * 60.0,
            height - 25.0,
            description="left chest beside the placket, above the pocket",
        ),
        Landmark("sternum_right", "front", mid - towards_left * 60.0, height - 60.0,
                 description="right chest beside the placket, away from the implant"),
        Landmark("omphalion", "front", mid, 230.0, description="navel, front centre"),
        Landmark(
            "dock", "back", mid + 90.0, 120.0, description="parking spot beside the charging dock"
        ),
    ]
    for side in ("left", "right"):
        landmarks.append(
            Landmark(
                f"acromion_{side}",
                "yoke",
                a + dims.x_sign(side) * (a - 30.0),
                b,
                description="shoulder tip, top of the shoulder",
            )
        )
    for side in ("left", "right"):
        cone, smap = parts.cones[side], parts.maps[f"sleeve_{side}"]
        rho_w = dims.sleeve_radius_wrist / math.sin(cone.beta)
        wrist = smap.from_cone(np.array([rho_w + 40.0]), np.array([0.0]))[0]
        landmarks.append(
            Landmark(
                f"wrist_{side}",
                f"sleeve_{side}",
                round(float(wrist[0]), 3),
                round(float(wrist[1]), 3),
                description="back of the wrist",
            )
        )
        back_is_pos = float(cone.outward_normal(np.array([math.pi / 2]))[0, 1]) < 0
        back_phi = math.pi / 2 if back_is_pos else -math.pi / 2
        elbow = smap.from_cone(np.array([rho_w + dims.sleeve_length / 2.0]), np.array([back_phi]))[
            0
        ]
        landmarks.append(
            Landmark(
                f"olecranon_{side}",
                f"sleeve_{side}",
                round(float(elbow[0]), 3),
                round(float(elbow[1]), 3),
                description="point of the elbow, back of the arm",
            )
        )
    landmarks.append(
        Landmark(
            "scapula_right",
            xyz=(-dims.left_x_sign * 80.0, -97.0, dims.shoulder_z - 170.0),
            description="below the right shoulder blade, on the back (on the body)",
        )
    )
    landmarks.append(
        Landmark(
            "cervicale",
            xyz=(0.0, dims.neck_centre_y - dims.neck_half_depth - 38.0, dims.shoulder_z - 3.0),
            description="seventh cervical vertebra, back of the neck base (on the body)",
        )
    )
    return tuple(landmarks)


#: The demo robot's physical figures: invented for the demo, plausible for a palm-sized magnet-held
#: crawler (docs/demo.md, docs/physics.md). The magnet table falls steeply with the gap; the gap is
#: the fabric: thin jersey sleeves, the torso's knit, the double-layer yoke. The drive (0.6 N)
#: climbs the A-pose sleeves but not straight up the vertical chest, where it needs switchbacks.
DEMO_PHYSICS = RobotPhysics(
    mass_kg=0.05,
    magnet_table_gap_mm=(0.5, 1.0, 1.5, 2.0, 3.0),
    magnet_table_force_n=(4.2, 3.0, 2.2, 1.6, 0.9),
    fabric_gap_mm=1.0,
    piece_gap_mm=(("sleeve_left", 0.8), ("sleeve_right", 0.8), ("yoke", 1.6)),
    friction_coefficient=0.6,
    rolling_resistance=0.05,
    wheel_radius_mm=6.0,
    max_drive_force_n=0.6,
    battery_mah=100.0,
    battery_voltage_v=3.7,
    usable_fraction=0.8,
    drive_power_w=0.4,
    idle_power_w=0.1,
    drive_efficiency=0.3,
    safety_factor=1.5,
    drive_safety_factor=1.1,
)


def build_design(dims: DemoDimensions = DemoDimensions()) -> DemoDesign:
    """Build the demo garment and its exact geometry from the dimensions (pure, deterministic).

    Parameters
    ----------
    dims : DemoDimensions
        Sizes in mm and degrees.

    Returns
    -------
    DemoDesign
        The garment, the surfaces, every piece's exact map and the edge samples.
    """
    cyl = EllipticCylinder(dims.half_width, dims.half_depth, dims.hem_z, dims.shoulder_z)
    width = cyl.perimeter / 2.0
    parts = _Parts()
    parts.maps["front"] = TorsoPieceMap(cyl, 0.0)
    parts.maps["back"] = TorsoPieceMap(cyl, math.pi)
    neck = _yoke(dims, cyl, parts)
    for side in ("left", "right"):
        _sleeve(dims, cyl, side, parts)
    for piece in ("front", "back"):
        _torso(dims, cyl, piece, parts)
    _match_side_seams(parts)
    pieces, sheet = _layout(dims, parts, neck)
    garment = Garment(
        name="sensing_top",
        pieces=pieces,
        seams=_seams(parts),
        keepouts=_keepouts(dims, width),
        landmarks=_landmarks(dims, width, parts),
        body_zones=demo_body_zones(dims),
        robot=Robot("demo_crawler", radius_mm=20.0, wheel_base_mm=30.0, speed_mm_s=25.0, side="outside",
                    edge_margin_mm=5.0, physics=DEMO_PHYSICS),
        sheet_size_mm=sheet,
        drape="sensing_top_drape.obj",
        body="mannequin.obj",
        poses=demo_poses(),
        description=(
            "Demo: a long-sleeved sensing top for a rehabilitation lab (invented scenario). "
            "Pieces are exact developments of a stylised mannequin (elliptic-cylinder torso, "
            "flat yoke, truncated-cone sleeves in an A-pose)."
        ),
    )
    neck.flags.writeable = False
    for arr in parts.samples.values():
        arr.flags.writeable = False
    return DemoDesign(
        garment,
        dims,
        cyl,
        MappingProxyType(parts.cones),
        MappingProxyType(parts.maps),
        MappingProxyType(parts.samples),
        MappingProxyType({("yoke", "neckline"): neck}),
    )


def _edge_world(maps, samples, piece: str, edge: str) -> np.ndarray:
    return maps[piece].to_world(samples[(piece, edge)])


def demo_garment() -> Garment:
    """The demo garment ``sensing_top`` (five pieces, twelve seams, keep-outs, landmarks, robot)."""
    return build_design().garment
