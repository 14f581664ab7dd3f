"""Mechanics of a lifted route: per-segment margins, energy and time, and route totals.

The lifted route (:class:`garnav.drape.LiftedRoute`) is already split at every triangle edge of the
drape, so each of its M − 1 segments lies in one triangle: that triangle's outside normal (flipped
for a robot on the inside) is the segment's support normal, and the force balance of
:mod:`garnav.mechanics.balance` gives its grip, hold and drive margins.

Energy model (stated in docs/physics.md): per segment of 3D length L driven at the cruise speed v,

    E = (P_drive + P_idle) · L / v + max(W Δh, 0) / η

where P_drive is the electrical power while driving on level fabric (it includes the level
rolling losses), P_idle the electronics' base load, Δh the rise against gravity and η the drive
efficiency; potential energy lost going down is not recovered.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from garnav.drape.locate import barycentric_2d
from garnav.mechanics.balance import Balance, force_balance
from garnav.mechanics.profile import RobotPhysics

__all__ = ["RouteMechanics", "route_mechanics", "segment_faces", "margin_text", "MARGIN_KEYS"]

MARGIN_KEYS = ("grip", "hold", "drive")


def segment_faces(lifted, drape) -> np.ndarray:
    """(M − 1,) drape triangle of each segment of a lifted route.

    A segment between two split points lies in the triangle of its first point when its
    midpoint is inside that triangle (pattern frame), else in the triangle of its second point.
    """
    face = np.asarray(lifted.face, dtype=int)
    fa, fb = face[:-1], face[1:]
    pat = np.asarray(lifted.pattern, dtype=float)
    pidx = np.asarray(lifted.piece_index, dtype=int)
    mid = 0.5 * (pat[:-1] + pat[1:])
    same_piece = (pidx[:-1] == pidx[1:]) & (np.asarray(drape.face_piece)[fa] == pidx[1:])
    lam = barycentric_2d(np.asarray(drape.corner_pattern)[fa], mid)
    inside = same_piece & (lam.min(axis=1) >= -1e-9)
    return np.where((fa == fb) | inside, fa, fb)


@dataclass(frozen=True, eq=False)
class RouteMechanics:
    """Mechanics of one lifted route in one posture.

    Attributes
    ----------
    posture : str
    gravity : (3,) float array
        Unit gravity direction in the body frame.
    length_mm, rise_mm : (k,) float arrays
        3D length and rise against gravity of each segment (k = M − 1).
    face : (k,) int array
    piece_names : tuple of str
        The drape's piece names.
    piece_index : (k,) int array
        Index into ``piece_names`` of each segment's piece.
    magnet_n : (k,) float array
        Holding force at each segment's fabric gap, N.
    balance : Balance
        Forces and margins per segment.
    time_s, energy_j : (k,) float arrays
    unsafe : tuple of (int, str)
        (segment index, reason) of every segment below a required margin.
    physics : RobotPhysics
    """

    posture: str
    gravity: np.ndarray
    length_mm: np.ndarray
    rise_mm: np.ndarray
    face: np.ndarray
    piece_names: tuple[str, ...]
    piece_index: np.ndarray
    magnet_n: np.ndarray
    balance: Balance
    time_s: np.ndarray
    energy_j: np.ndarray
    unsafe: tuple[tuple[int, str], ...]
    physics: RobotPhysics

    @property
    def safe(self) -> bool:
        return not self.unsafe

    @property
    def total_energy_j(self) -> float:
        return float(self.energy_j.sum())

    @property
    def total_energy_mah(self) -> float:
        """Charge drawn at the nominal voltage, mAh (J / (V · 3.6))."""
        return self.total_energy_j / (self.physics.battery_voltage_v * 3.6)

    @property
    def total_time_s(self) -> float:
        return float(self.time_s.sum())

    @property
    def battery_used_fraction(self) -> float:
        return self.total_energy_j / self.physics.battery_j

    @property
    def charge_left_fraction(self) -> float:
        return self.physics.start_charge_fraction - self.battery_used_fraction

    @property
    def battery_ok(self) -> bool:
        """Whether the route stays within the usable part of the battery."""
        return self.charge_left_fraction >= 1.0 - self.physics.usable_fraction - 1e-12

    def min_margin(self, key: str) -> float:
        """Smallest ``grip``, ``hold`` or ``drive`` margin over the route (inf: none needed)."""
        m = getattr(self.balance, f"{key}_margin")
        return float(np.min(m)) if len(m) else math.inf

    @property
    def tightest(self) -> np.ndarray:
        """(k,) each segment's tightest margin relative to its requirement (1 = just safe):
        min(grip/s, hold/s, drive/s_d)."""
        p = self.physics
        b = self.balance
        return np.minimum.reduce([b.grip_margin / p.safety_factor, b.hold_margin / p.safety_factor,
                                  b.drive_margin / p.drive_safety_factor])

    def worst(self) -> tuple[str, float]:
        """The margin that comes closest to its requirement, and its value."""
        p = self.physics
        rel = {k: self.min_margin(k) / (p.drive_safety_factor if k == "drive" else p.safety_factor)
               for k in MARGIN_KEYS}
        key = min(rel, key=lambda k: rel[k])
        return key, self.min_margin(key)

    def to_dict(self) -> dict:
        """The route document's ``physics`` object (docs/route-format.md); ``null`` = unlimited."""
        b = self.balance

        def num(v: float) -> float | None:
            return None if not math.isfinite(v) else round(float(v), 6)

        def arr(a: np.ndarray) -> list:
            return [num(v) for v in a]

        p = self.physics
        from garnav.mechanics.profile import physics_to_table

        return {
            "profile": physics_to_table(p),
            "posture": self.posture,
            "gravity": [round(float(v), 12) for v in self.gravity],
            "energy_j": num(self.total_energy_j),
            "energy_mah": num(self.total_energy_mah),
            "time_s": num(self.total_time_s),
            "battery_used_fraction": num(self.battery_used_fraction),
            "charge_left_fraction": num(self.charge_left_fraction),
            "battery_ok": bool(self.battery_ok),
            "min_grip_margin": num(self.min_margin("grip")),
            "min_hold_margin": num(self.min_margin("hold")),
            "min_drive_margin": num(self.min_margin("drive")),
            "safety_factor": p.safety_factor,
            "drive_safety_factor": p.drive_safety_factor,
            "unsafe_segments": [{"index": int(i), "reason": r} for i, r in self.unsafe],
            "segments": {
                "grip_margin": arr(b.grip_margin),
                "hold_margin": arr(b.hold_margin),
                "drive_margin": arr(b.drive_margin),
                "energy_j": arr(self.energy_j),
            },
        }

    def waypoint_margins(self, waypoint_index) -> dict[str, list]:
        """Per waypoint, the smallest grip, hold and drive margins of the stretch of path leaving
        it (up to the next waypoint); None where the stretch is empty or needs nothing.

        ``waypoint_index`` (K,) is the lifted route's dense index of every waypoint."""
        wi = np.asarray(waypoint_index, dtype=int)
        out: dict[str, list] = {f"{k}_margin": [] for k in MARGIN_KEYS}
        for k in range(len(wi)):
            a = int(wi[k])
            b = int(wi[k + 1]) if k + 1 < len(wi) else a
            for key in MARGIN_KEYS:
                m = getattr(self.balance, f"{key}_margin")[a:b]
                v = float(np.min(m)) if len(m) else math.inf
                out[f"{key}_margin"].append(round(v, 6) if math.isfinite(v) else None)
        return out

    def lines(self) -> list[str]:
        """Summary lines in the style of the route table."""
        worst, value = self.worst()
        rows = [
            ("posture", f"{self.posture} (gravity {', '.join(f'{v:.3f}' for v in self.gravity)})"),
            ("energy", f"{self.total_energy_j:.1f} J = {self.total_energy_mah:.2f} mAh, "
             f"{100 * self.battery_used_fraction:.1f} % of the battery "
             f"({100 * self.charge_left_fraction:.1f} % left)"),
            ("margins", f"grip {margin_text(self.min_margin('grip'))}, hold "
             f"{margin_text(self.min_margin('hold'))}, drive {margin_text(self.min_margin('drive'))}"
             f" (worst: {worst} {margin_text(value)})"),
            ("unsafe", f"{len(self.unsafe)} segment{'s' if len(self.unsafe) != 1 else ''}"
             + (f": first {self.unsafe[0][1]}" if self.unsafe else "")),
        ]
        width = max(len(k) for k, _ in rows)
        return [f"{k:<{width}}  {v}" for k, v in rows]


def margin_text(v: float) -> str:
    """A margin for people: ``2.31`` or ``unlimited``."""
    return "unlimited" if not math.isfinite(v) else f"{v:.2f}"


def route_mechanics(
    lifted,
    drape,
    physics: RobotPhysics,
    gravity: np.ndarray,
    *,
    speed_mm_s: float,
    side: str = "outside",
    posture: str = "custom",
) -> RouteMechanics:
    """Force balance, margins, energy and time of every segment of a lifted route.

    Parameters
    ----------
    lifted : LiftedRoute
        (M points) from :func:`garnav.drape.lift_route`.
    drape : Drape
        The drape it was lifted onto.
    physics : RobotPhysics
    gravity : (3,) float array
        Unit gravity direction in the body frame (:mod:`garnav.mechanics.gravity`).
    speed_mm_s : float
        Cruise speed.
    side : {"outside", "inside"}
        The face the robot drives on: the support normal is the outside normal or its opposite.
    posture : str
        Label written into the results.
    """
    g = np.asarray(gravity, dtype=float)
    g = g / np.linalg.norm(g)
    pts = np.asarray(lifted.points, dtype=float)
    d = np.diff(pts, axis=0)
    length = np.linalg.norm(d, axis=1)
    tangent = np.where(length[:, None] > 1e-9, d / np.where(length > 1e-9, length, 1.0)[:, None], 0.0)
    face = segment_faces(lifted, drape)
    normal = np.asarray(drape.face_normals)[face]
    if side == "inside":
        normal = -normal
    names = tuple(drape.piece_names)
    fpiece = np.asarray(drape.face_piece)[face]
    forces = physics.piece_forces(names)
    magnet = forces[fpiece]
    p = physics
    bal = force_balance(normal, tangent, g, p.weight_n, magnet, p.friction_coefficient,
                        p.rolling_resistance, p.drive_force_n)
    rise = -(d @ g)
    time_s = length / speed_mm_s
    energy = p.power_w * time_s + np.clip(p.weight_n * rise * 1e-3, 0.0, None) / p.drive_efficiency
    unsafe = []
    for i in np.flatnonzero((bal.grip_margin < p.safety_factor) | (bal.hold_margin < p.safety_factor)
                            | (bal.drive_margin < p.drive_safety_factor)):
        unsafe.append((int(i), _reason(bal, int(i), p, names[fpiece[i]], pts[i])))
    return RouteMechanics(posture, g, length, rise, face, names, fpiece, magnet,
                          bal, time_s, energy, tuple(unsafe), physics)


def _reason(b: Balance, i: int, p: RobotPhysics, piece: str, at: np.ndarray) -> str:
    parts = []
    if b.hold_margin[i] < p.safety_factor:
        parts.append(f"hold margin {b.hold_margin[i]:.2f} < {p.safety_factor:g} (overhang: the "
                     "weight pulls it off the fabric)")
    if b.grip_margin[i] < p.safety_factor:
        parts.append(f"grip margin {b.grip_margin[i]:.2f} < {p.safety_factor:g} (the tyres would slip)")
    if b.drive_margin[i] < p.drive_safety_factor:
        parts.append(f"drive margin {b.drive_margin[i]:.2f} < {p.drive_safety_factor:g} "
                     f"(climb of {np.degrees(np.arcsin(np.clip(b.along[i], -1, 1))):.0f}° along the path "
                     "is too steep for the drive)")
    where = ", ".join(f"{v:.0f}" for v in at)
    return f"segment {i} on piece '{piece}' at ({where}) mm: " + "; ".join(parts)
