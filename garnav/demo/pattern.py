"""The built-in demo garment: a long-sleeved sensing top for a rehabilitation lab (invented scenario).

Every piece is the exact development of a developable part of the stylised mannequin
(:mod:`garnav.demo.mannequin`): front and back halves of an elliptic-cylinder torso, a flat yoke
in the shoulder plane with a neck hole, and two truncated-cone sleeves in an A-pose whose armhole
seams follow the true cone–cylinder intersection curves. The drape is therefore an isometry of
the pattern up to mesh chords, which gives exact check values.

:func:`build_design` returns the :class:`~garnav.model.Garment` together with, for every piece,
its exact pattern → world map and, for every edge, a dense sampling whose seam partners are the
same world points (the mesh builder shares vertices there).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from functools import lru_cache
from types import MappingProxyType

import numpy as np

from garnav.demo.mannequin import Cone, EllipticCylinder, HorizontalPlane, cone_cylinder_intersection
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
    left_x_sign: float = 1.0  # +1: the wearer's left is at +x (the project's world frame); −1 mirrors

    def x_sign(self, side: str) -> float:
        """+1 or −1: the sign of x on the wearer's ``side`` ("left" or "right")."""
        return self.left_x_sign if side == "left" else -self.left_x_sign


class TorsoPieceMap:
    """Pattern (u, v) of a torso half → world: u = arc length from θ0, v = height above the hem."""

    kind = "cylinder"

    def __init__(self, cyl: EllipticCylinder, theta0: float):
        self.cyl = cyl
        self.theta0 = float(theta0)
        self.s0 = float(cyl.arc_length(theta0))

    def to_world(self, pts: np.ndarray) -> np.ndarray:
        """World points (n, 3) of pattern points (n, 2), mm."""
        pts = np.asarray(pts, dtype=float).reshape(-1, 2)
        theta = self.cyl.theta_at(pts[:, 0] + self.s0)
        return self.cyl.point(theta, pts[:, 1] + self.cyl.z_bottom)

    def to_pattern(self, world: np.ndarray) -> np.ndarray:
        """Pattern points (n, 2) of world points (n, 3) on this half of the cylinder."""
        world = np.asarray(world, dtype=float).reshape(-1, 3)
        rel = np.mod(self.cyl.theta_of(world) - self.theta0 + math.pi / 2, 2 * math.pi) - math.pi / 2
        u = self.cyl.arc_length(self.theta0 + rel) - self.s0
        return np.stack([u, world[:, 2] - self.cyl.z_bottom], axis=-1)

    def normal(self, pts: np.ndarray) -> np.ndarray:
        pts = np.asarray(pts, dtype=float).reshape(-1, 2)
        return self.cyl.outward_normal(self.cyl.theta_at(pts[:, 0] + self.s0))


class SleevePieceMap:
    """Pattern (X, Y) of a sleeve → world through the cone's development.

    The development's apex sits at pattern point (x0, y0); a point at distance ρ from it and at
    angle ψ from the +Y axis (positive towards +X) is the cone point (ρ, φ = −ψ / sin β). The
    minus sign makes the map orientation preserving with the outward normal.
    """

    kind = "cone"

    def __init__(self, cone: Cone, x0: float, y0: float):
        self.cone = cone
        self.x0 = float(x0)
        self.y0 = float(y0)
        self.k = math.sin(cone.beta)

    def polar(self, pts: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        pts = np.asarray(pts, dtype=float).reshape(-1, 2)
        dx, dy = pts[:, 0] - self.x0, pts[:, 1] - self.y0
        return np.hypot(dx, dy), -np.arctan2(dx, dy) / self.k

    def to_world(self, pts: np.ndarray) -> np.ndarray:
        rho, phi = self.polar(pts)
        return self.cone.point(rho, phi)

    def from_cone(self, rho: np.ndarray, phi: np.ndarray) -> np.ndarray:
        """Pattern points (n, 2) of cone coordinates ρ (n,), φ (n,) with φ in [−π, π]."""
        psi = -np.asarray(phi, dtype=float) * self.k
        rho = np.asarray(rho, dtype=float)
        return np.stack([self.x0 + rho * np.sin(psi), self.y0 + rho * np.cos(psi)], axis=-1)

    def to_pattern(self, world: np.ndarray) -> np.ndarray:
        rho, phi = self.cone.coordinates(np.asarray(world, dtype=float).reshape(-1, 3))
        return self.from_cone(rho, phi)

    def normal(self, pts: np.ndarray) -> np.ndarray:
        return self.cone.outward_normal(self.polar(pts)[1])


class YokePieceMap:
    """Pattern (X, Y) of the yoke → world (X − x0, Y − y0, height)."""

    kind = "plane"

    def __init__(self, plane: HorizontalPlane, x0: float, y0: float):
        self.plane = plane
        self.x0 = float(x0)
        self.y0 = float(y0)

    def to_world(self, pts: np.ndarray) -> np.ndarray:
        pts = np.asarray(pts, dtype=float).reshape(-1, 2)
        return self.plane.point(pts - [self.x0, self.y0])

    def to_pattern(self, world: np.ndarray) -> np.ndarray:
        world = np.asarray(world, dtype=float).reshape(-1, 3)
        return world[:, :2] + [self.x0, self.y0]

    def normal(self, pts: np.ndarray) -> np.ndarray:
        n = np.asarray(pts, dtype=float).reshape(-1, 2).shape[0]
        return np.tile([0.0, 0.0, 1.0], (n, 1))


PieceMap = TorsoPieceMap | SleevePieceMap | YokePieceMap


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
    return Cone(tuple(float(v) for v in apex), tuple(float(v) for v in d),
                tuple(float(v) for v in e1), beta)


def _armhole_phis(cone: Cone, cyl: EllipticCylinder, phi_end: float, step: float) -> np.ndarray:
    """Generator angles from the top (0) to ``phi_end`` (±π), spaced to about ``step`` mm in 3D."""
    fine = np.linspace(0.0, phi_end, 2001)
    pts = cone.point(cone_cylinder_intersection(cone, cyl, fine), fine)
    cum = cumulative_length(pts)
    n = _count(cum[-1], step)
    return np.interp(np.linspace(0.0, cum[-1], n + 1), cum, fine)


@lru_cache(maxsize=4)
def build_design(dims: DemoDimensions = DemoDimensions()) -> DemoDesign:
    """Build the demo garment and its exact geometry from the dimensions (pure, deterministic)."""
    a, b = dims.half_width, dims.half_depth
    cyl = EllipticCylinder(a, b, dims.hem_z, dims.shoulder_z)
    height = dims.shoulder_z - dims.hem_z
    width = cyl.perimeter / 2.0
    maps: dict[str, PieceMap] = {
        "front": TorsoPieceMap(cyl, 0.0),
        "back": TorsoPieceMap(cyl, math.pi),
    }
    samples: dict[tuple[str, str], np.ndarray] = {}
    world: dict[tuple[str, str], np.ndarray] = {}  # world points of armhole samples

    # --- yoke: the shoulder plane between the torso ellipse and the neck hole -------------------
    plane = HorizontalPlane(dims.shoulder_z)
    yoke_map = YokePieceMap(plane, a, b)
    maps["yoke"] = yoke_map
    n_half = _count(width, dims.curve_step)
    s_front = np.linspace(0.0, width, n_half + 1)
    theta_front = cyl.theta_at(s_front)  # 0 .. π, equal arc steps
    theta_back = cyl.theta_at(s_front + width)  # π .. 2π
    yoke_front = yoke_map.to_pattern(cyl.point(theta_front, dims.shoulder_z))
    yoke_back = yoke_map.to_pattern(cyl.point(theta_back, dims.shoulder_z))
    samples[("yoke", "front")] = yoke_front
    samples[("yoke", "back")] = yoke_back
    # torso top edges run from u = width to 0 (counter-clockwise on the piece)
    samples[("front", "yoke")] = np.stack([s_front[::-1], np.full(n_half + 1, height)], -1)
    samples[("back", "yoke")] = samples[("front", "yoke")].copy()
    n_neck = _count(
        math.pi * (dims.neck_half_width + dims.neck_half_depth), dims.curve_step
    )
    t = np.linspace(0.0, 2 * math.pi, n_neck, endpoint=False)
    neck = np.stack(
        [a + dims.neck_half_width * np.cos(t), b + dims.neck_centre_y + dims.neck_half_depth * np.sin(t)],
        -1,
    )

    # --- sleeves and armholes ---------------------------------------------------------------------
    cones = {}
    sleeve_edges: dict[str, tuple[Edge, ...]] = {}
    armhole_z: dict[str, tuple[float, float]] = {}  # (bottom, top) heights of each armhole
    for side in ("left", "right"):
        cone = _sleeve_cone(dims, side)
        cones[side] = cone
        # which half (φ < 0 or φ > 0) lies in front (y > 0)?
        neg_is_front = float(cone.outward_normal(np.array([-math.pi / 2]))[0, 1]) > 0
        phi_neg = _armhole_phis(cone, cyl, -math.pi, dims.curve_step)  # 0 .. −π
        phi_pos = _armhole_phis(cone, cyl, math.pi, dims.curve_step)  # 0 .. +π
        rho_neg = cone_cylinder_intersection(cone, cyl, phi_neg)
        rho_pos = cone_cylinder_intersection(cone, cyl, phi_pos)
        p_neg, p_pos = cone.point(rho_neg, phi_neg), cone.point(rho_pos, phi_pos)
        top, bottom = p_neg[0], p_neg[-1]
        armhole_z[side] = (float(bottom[2]), float(top[2]))

        rho_w = dims.sleeve_radius_wrist / math.sin(cone.beta)
        k = math.sin(cone.beta)
        psi_max = math.pi * k
        # place the development: apex at (x0, y0) so that the cuff corners sit at y = 0 and the
        # widest point at x = 0
        probe = SleevePieceMap(cone, 0.0, 0.0)
        outline = np.vstack([probe.from_cone(rho_neg, phi_neg), probe.from_cone(rho_pos, phi_pos)])
        x0 = float(-outline[:, 0].min())
        y0 = float(-rho_w * math.cos(psi_max))
        smap = SleevePieceMap(cone, x0, y0)
        name = f"sleeve_{side}"
        maps[name] = smap

        # counter-clockwise: cuff (φ from +π to −π), rising straight edge at φ = −π, armhole
        # half φ −π → 0, armhole half 0 → +π, falling straight edge at φ = +π
        n_cuff = _count(2 * math.pi * dims.sleeve_radius_wrist, dims.curve_step)
        phi_cuff = np.linspace(math.pi, -math.pi, n_cuff + 1)
        cuff = smap.from_cone(np.full(n_cuff + 1, rho_w), phi_cuff)
        rho_bottom = float(rho_neg[-1])  # φ = ±π: the same generator
        n_under = _count(rho_bottom - rho_w, dims.sleeve_step)
        rho_line = np.linspace(rho_w, rho_bottom, n_under + 1)
        rise = smap.from_cone(rho_line, np.full(n_under + 1, -math.pi))
        fall = smap.from_cone(rho_line[::-1], np.full(n_under + 1, math.pi))
        half_a = smap.from_cone(rho_neg[::-1], phi_neg[::-1])  # −π → 0
        half_b = smap.from_cone(rho_pos, phi_pos)  # 0 → +π
        a_name, b_name = ("front", "back") if neg_is_front else ("back", "front")
        names = ("cuff", f"underarm_{a_name}", f"armhole_{a_name}", f"armhole_{b_name}",
                 f"underarm_{b_name}")
        arrays = (cuff, rise, half_a, half_b, fall)
        for edge_name, arr in zip(names, arrays):
            samples[(name, edge_name)] = arr
        world[(name, f"armhole_{a_name}")] = p_neg[::-1]
        world[(name, f"armhole_{b_name}")] = p_pos
        curved = {"cuff", f"armhole_{a_name}", f"armhole_{b_name}"}
        sleeve_edges[side] = tuple(
            Edge(n, _pts(arr) if n in curved else _pts(arr[[0, -1]])) for n, arr in zip(names, arrays)
        )
        # torso sides of the same armhole: the same world points, developed on the cylinder
        front_pts = p_neg if neg_is_front else p_pos  # top → bottom
        back_pts = p_pos if neg_is_front else p_neg
        # on the front, u = 0 is the +x side (edges there run downwards); on the back, u = width
        plus_x = dims.x_sign(side) > 0
        world[("front", f"armhole_{side}")] = front_pts if plus_x else front_pts[::-1]
        world[("back", f"armhole_{side}")] = back_pts[::-1] if plus_x else back_pts
        for piece in ("front", "back"):
            key = (piece, f"armhole_{side}")
            samples[key] = maps[piece].to_pattern(world[key])
            # exact side-line values: u = 0 or width at the ends
            samples[key][[0, -1], 0] = np.round(samples[key][[0, -1], 0] / width) * width

    # --- torso halves ---------------------------------------------------------------------------
    def torso_edges(piece: str) -> tuple[Edge, ...]:
        # (edge, start, end) counter-clockwise; front: u = 0 is the left side, back: the right side
        # ``first`` is the side at u = width (its edges rise), ``second`` the one at u = 0;
        # the front's u = width lies at x = −a, the back's at x = +a
        minus_x = "right" if dims.left_x_sign > 0 else "left"
        plus_x = "left" if dims.left_x_sign > 0 else "right"
        first, second = (minus_x, plus_x) if piece == "front" else (plus_x, minus_x)
        lo2, hi2 = armhole_z[first]  # the side at u = width, rising
        lo1, hi1 = armhole_z[second]  # the side at u = 0, falling
        zb = dims.hem_z
        spec = [
            ("hem", (0.0, 0.0), (width, 0.0), dims.torso_step),
            (f"side_{first}_lower", (width, 0.0), (width, lo2 - zb), dims.torso_step),
            (f"armhole_{first}", None, None, None),
            (f"side_{first}_upper", (width, hi2 - zb), (width, height), dims.curve_step),
            ("yoke", None, None, None),
            (f"side_{second}_upper", (0.0, height), (0.0, hi1 - zb), dims.curve_step),
            (f"armhole_{second}", None, None, None),
            (f"side_{second}_lower", (0.0, lo1 - zb), (0.0, 0.0), dims.torso_step),
        ]
        edges = []
        for edge_name, p0, p1, step in spec:
            key = (piece, edge_name)
            if p0 is not None:
                samples[key] = _line(p0, p1, _count(math.dist(p0, p1), step))
                edges.append(Edge(edge_name, (p0, p1)))
            elif edge_name == "yoke":
                edges.append(Edge(edge_name, ((width, height), (0.0, height))))
            else:
                edges.append(Edge(edge_name, _pts(samples[key])))
        return tuple(edges)

    front_edges = torso_edges("front")
    back_edges = torso_edges("back")
    # the straight side seams: both runs sampled at the same heights
    for side in ("left", "right"):
        for part in ("lower", "upper"):
            key_f, key_b = ("front", f"side_{side}_{part}"), ("back", f"side_{side}_{part}")
            n = max(len(samples[key_f]), len(samples[key_b])) - 1
            for key, edge in ((key_f, front_edges), (key_b, back_edges)):
                e = next(x for x in edge if x.name == key[1])
                samples[key] = _line(e.points[0], e.points[-1], n)

    yoke_piece_edges = (Edge("front", _pts(yoke_front)), Edge("back", _pts(yoke_back)))

    # --- placement on the sheet ----------------------------------------------------------------
    order = ("front", "back", "sleeve_left", "sleeve_right", "yoke")
    edge_sets = {
        "front": front_edges,
        "back": back_edges,
        "sleeve_left": sleeve_edges["left"],
        "sleeve_right": sleeve_edges["right"],
        "yoke": yoke_piece_edges,
    }
    margin = 10.0
    cursor = margin
    pieces = []
    top = 0.0
    for name in order:
        pts = np.vstack([samples[(name, e.name)] for e in edge_sets[name]])
        lo, hi = pts.min(axis=0), pts.max(axis=0)
        placement = Placement(float(round(cursor - lo[0], 3)), float(round(margin - lo[1], 3)), 0.0)
        openings = (Opening("neckline", _pts(neck)),) if name == "yoke" else ()
        pieces.append(Piece(name, _chain(edge_sets[name]), openings, placement))
        cursor += hi[0] - lo[0] + dims.sheet_gap
        top = max(top, hi[1] - lo[1])
    sheet = (float(math.ceil(cursor - dims.sheet_gap + margin)), float(math.ceil(top + 2 * margin)))

    # --- seams ----------------------------------------------------------------------------------
    # Crossing costs and angles: common practice, no source (a flat-felled or overlocked seam is a
    # ridge of a few mm that small wheels take best square on).
    def seam(name, pa, ea, pb, eb, cost, angle):
        wa = _edge_world(maps, samples, pa, ea)
        wb = _edge_world(maps, samples, pb, eb)
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
                seam(f"armhole_{side}_{half}", half, f"armhole_{side}", f"sleeve_{side}",
                     f"armhole_{half}", 12.0, 30.0)
            )
    seams.append(seam("yoke_front", "front", "yoke", "yoke", "front", 10.0, 30.0))
    seams.append(seam("yoke_back", "back", "yoke", "yoke", "back", 10.0, 30.0))
    for side in ("left", "right"):
        seams.append(seam(f"underarm_{side}", f"sleeve_{side}", "underarm_front",
                          f"sleeve_{side}", "underarm_back", 8.0, 20.0))

    # --- keep-outs ------------------------------------------------------------------------------
    mid = round(width / 2.0, 3)
    towards_left = -dims.left_x_sign  # on the front, u grows towards −x
    keepouts = (
        KeepOut("chest_pocket", "front", "pocket", Rectangle(mid + towards_left * 100.0, 400.0, 100.0, 120.0), 5.0),
        KeepOut("placket", "front", "zip", Rectangle(mid, height - 150.0, 30.0, 300.0), 3.0),
        KeepOut("neck_label", "back", "label", Rectangle(mid, height - 25.0, 50.0, 25.0), 3.0),
        KeepOut("back_print", "back", "print", Circle(mid, 380.0, 70.0), 0.0, hard=False,
                cost_factor=3.0),
        KeepOut("charging_dock", "back", "dock", Rectangle(mid, 120.0, 80.0, 50.0), 5.0),
    )

    # --- landmarks ------------------------------------------------------------------------------
    landmarks = [
        Landmark("suprasternale", "yoke", a, b + dims.neck_centre_y + dims.neck_half_depth + 35.0,
                 description="jugular notch, front of the neck base"),
        Landmark("sternum_left", "front", mid + towards_left * 60.0, height - 60.0,
                 description="left chest beside the placket, above the pocket"),
        Landmark("omphalion", "front", mid, 230.0, description="navel, front centre"),
        Landmark("dock", "back", mid + 90.0, 120.0, description="parking spot beside the charging dock"),
    ]
    for side in ("left", "right"):
        landmarks.append(Landmark(f"acromion_{side}", "yoke", a + dims.x_sign(side) * (a - 30.0), b,
                                  description="shoulder tip, top of the shoulder"))
    for side in ("left", "right"):
        cone, smap = cones[side], maps[f"sleeve_{side}"]
        rho_w = dims.sleeve_radius_wrist / math.sin(cone.beta)
        wrist = smap.from_cone(np.array([rho_w + 40.0]), np.array([0.0]))[0]
        landmarks.append(Landmark(f"wrist_{side}", f"sleeve_{side}", round(float(wrist[0]), 3),
                                  round(float(wrist[1]), 3), description="back of the wrist"))
        back_phi = math.pi / 2 if float(cone.outward_normal(np.array([math.pi / 2]))[0, 1]) < 0 else -math.pi / 2
        elbow = smap.from_cone(np.array([rho_w + dims.sleeve_length / 2.0]), np.array([back_phi]))[0]
        landmarks.append(Landmark(f"olecranon_{side}", f"sleeve_{side}", round(float(elbow[0]), 3),
                                  round(float(elbow[1]), 3), description="point of the elbow, back of the arm"))
    landmarks.append(
        Landmark("cervicale", xyz=(0.0, -88.0, dims.shoulder_z - 3.0),
                 description="seventh cervical vertebra, back of the neck base (on the body)")
    )

    garment = Garment(
        name="sensing_top",
        pieces=tuple(pieces),
        seams=tuple(seams),
        keepouts=keepouts,
        landmarks=tuple(landmarks),
        robot=Robot("demo_crawler", radius_mm=20.0, wheel_base_mm=30.0, speed_mm_s=25.0,
                    side="outside", edge_margin_mm=5.0),
        sheet_size_mm=sheet,
        drape="sensing_top_drape.obj",
        body="mannequin.obj",
        description=(
            "Demo: a long-sleeved sensing top for a rehabilitation lab (invented scenario). "
            "Pieces are exact developments of a stylised mannequin (elliptic-cylinder torso, "
            "flat yoke, truncated-cone sleeves in an A-pose)."
        ),
    )
    neck.flags.writeable = False
    for arr in samples.values():
        arr.flags.writeable = False
    return DemoDesign(
        garment,
        dims,
        cyl,
        MappingProxyType(cones),
        MappingProxyType(maps),
        MappingProxyType(samples),
        MappingProxyType({("yoke", "neckline"): neck}),
    )


def _edge_world(maps, samples, piece: str, edge: str) -> np.ndarray:
    return maps[piece].to_world(samples[(piece, edge)])


def demo_garment() -> Garment:
    """The demo garment ``sensing_top`` (five pieces, twelve seams, keep-outs, landmarks, robot)."""
    return build_design().garment
