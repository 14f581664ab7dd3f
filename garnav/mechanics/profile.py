"""The robot's physical profile: mass, magnet hold, grip, drive, battery and safety factors.

:class:`RobotPhysics` is the ``[robot.physics]`` table of a garment spec or of a standalone robot
file (:mod:`garnav.spec.robot`). Every quantity is SI or mm with its unit in the key name; the
known keys, defaults, units and allowed ranges live in :data:`PHYSICS_FIELDS`, which the reader,
the writer, the validator and the docs test all read.

The magnet's holding force through the fabric is either a constant (``magnet_force_n``) or a
force-versus-gap table (``magnet_table_gap_mm`` / ``magnet_table_force_n``), read at the fabric
thickness of each piece (``fabric_gap_mm``, per piece ``piece_gap_mm``). Magnet pull falls steeply
with the gap (wall-climbing robot literature, e.g. Shen, Shi and Yin, "Design of a permanent
magnetic adhesion wall-climbing robot", and the magnet makers' pull-versus-gap curves), so a thick
piece of fabric can be the weakest place on a garment.

>>> p = RobotPhysics()
>>> round(p.weight_n, 3), round(p.drive_force_n, 2)
(0.49, 0.6)
>>> physics_problems(RobotPhysics(mass_kg=0.0))
["'mass_kg' must be > 0 and <= 10, found 0"]
"""

from __future__ import annotations

import math
from dataclasses import dataclass, fields
from typing import Any

import numpy as np

__all__ = [
    "RobotPhysics",
    "PhysicsField",
    "PHYSICS_FIELDS",
    "STANDARD_GRAVITY_M_S2",
    "physics_problems",
    "physics_from_table",
    "physics_to_table",
]

#: Standard acceleration of gravity, m/s² (CGPM 1901, the conventional value).
STANDARD_GRAVITY_M_S2 = 9.80665


@dataclass(frozen=True)
class PhysicsField:
    """One key of ``[robot.physics]``: type (``float``, ``floats``, ``gaps``), default, unit,
    range (``low`` inclusive unless ``low_open``, ``high`` inclusive) and meaning."""

    key: str
    type: str
    default: object
    unit: str
    doc: str
    low: float | None = None
    high: float | None = None
    low_open: bool = False

    def range_text(self) -> str:
        if self.low is not None and self.high is not None:
            lo = ">" if self.low_open else ">="
            return f"{lo} {self.low:g} and <= {self.high:g}"
        if self.low is not None:
            return f"{'>' if self.low_open else '>='} {self.low:g}"
        return "any number"


def _f(key, default, unit, doc, low=None, high=None, low_open=False, type="float") -> PhysicsField:
    return PhysicsField(key, type, default, unit, doc, low, high, low_open)


PHYSICS_FIELDS: dict[str, PhysicsField] = {
    f.key: f
    for f in (
        _f("mass_kg", 0.05, "kg", "robot mass", 0.0, 10.0, True),
        _f("magnet_force_n", 3.0, "N",
           "magnet holding force through the fabric, normal to the surface (without a table)",
           0.0, 1000.0),
        _f("magnet_table_gap_mm", (), "mm",
           "force-versus-gap table: gaps, increasing (optional; replaces magnet_force_n)",
           0.0, 100.0, type="floats"),
        _f("magnet_table_force_n", (), "N",
           "force-versus-gap table: holding force at each gap", 0.0, 1000.0, type="floats"),
        _f("fabric_gap_mm", 1.0, "mm", "magnet gap (fabric thickness) where no piece says",
           0.0, 100.0),
        _f("piece_gap_mm", (), "mm", "magnet gap per piece: a table piece name = mm",
           0.0, 100.0, type="gaps"),
        _f("friction_coefficient", 0.6, "", "tyre–fabric friction coefficient μ", 0.0, 5.0, True),
        _f("rolling_resistance", 0.05, "",
           "rolling resistance coefficient C_rr (force over normal load)", 0.0, 1.0),
        _f("wheel_radius_mm", 6.0, "mm", "drive wheel radius", 0.0, 1000.0, True),
        _f("max_drive_force_n", 0.6, "N",
           "largest tractive force of both wheels together (0: from stall torque and gear)",
           0.0, 1000.0),
        _f("stall_torque_n_m", 0.0, "N·m", "stall torque of one motor (two motors)", 0.0, 100.0),
        _f("gear_ratio", 1.0, "", "gear ratio between motor and wheel", 0.0, 10000.0, True),
        _f("battery_mah", 100.0, "mAh", "battery capacity", 0.0, 1.0e6, True),
        _f("battery_voltage_v", 3.7, "V", "battery nominal voltage", 0.0, 100.0, True),
        _f("usable_fraction", 0.8, "", "fraction of the capacity the robot may use", 0.0, 1.0, True),
        _f("start_charge_fraction", 1.0, "", "charge at the start of a route (of capacity)",
           0.0, 1.0),
        _f("drive_power_w", 0.4, "W", "electrical power while driving on level fabric",
           0.0, 1000.0),
        _f("idle_power_w", 0.1, "W", "electronics' base load, always drawn", 0.0, 1000.0),
        _f("drive_efficiency", 0.3, "", "electrical to mechanical efficiency for climbing",
           0.0, 1.0, True),
        _f("safety_factor", 1.5, "", "required grip and hold margin", 1.0, 100.0),
        _f("drive_safety_factor", 1.1, "", "required drive margin", 1.0, 100.0),
    )
}


@dataclass(frozen=True)
class RobotPhysics:
    """Physical figures of a two-wheeled magnet-held robot (SI, mm; see :data:`PHYSICS_FIELDS`).

    Parameters
    ----------
    mass_kg : float
    magnet_force_n : float
        Holding force through the fabric (N), normal to the surface, used when no table is given.
    magnet_table_gap_mm, magnet_table_force_n : tuple of float
        Optional force-versus-gap table (same length >= 2, gaps increasing); read linearly
        between rows and clamped at the ends.
    fabric_gap_mm : float
        Magnet gap (mm) on pieces not named in ``piece_gap_mm``.
    piece_gap_mm : tuple of (str, float)
        Magnet gap per piece (its fabric thickness, mm), sorted by piece name.
    friction_coefficient : float
        Tyre–fabric μ.
    rolling_resistance : float
        C_rr: rolling resistance force over normal load.
    wheel_radius_mm : float
    max_drive_force_n : float
        Largest tractive force of both wheels (N); 0 means 2 · stall torque · gear / wheel radius.
    stall_torque_n_m, gear_ratio : float
    battery_mah, battery_voltage_v, usable_fraction, start_charge_fraction : float
    drive_power_w, idle_power_w : float
        Electrical power while driving on level fabric, and the electronics' base load (W).
    drive_efficiency : float
        Electrical → mechanical efficiency applied to potential energy gained.
    safety_factor, drive_safety_factor : float
        A grip or hold margin below ``safety_factor`` (drive margin below ``drive_safety_factor``)
        marks a segment unsafe.
    """

    mass_kg: float = 0.05
    magnet_force_n: float = 3.0
    magnet_table_gap_mm: tuple[float, ...] = ()
    magnet_table_force_n: tuple[float, ...] = ()
    fabric_gap_mm: float = 1.0
    piece_gap_mm: tuple[tuple[str, float], ...] = ()
    friction_coefficient: float = 0.6
    rolling_resistance: float = 0.05
    wheel_radius_mm: float = 6.0
    max_drive_force_n: float = 0.6
    stall_torque_n_m: float = 0.0
    gear_ratio: float = 1.0
    battery_mah: float = 100.0
    battery_voltage_v: float = 3.7
    usable_fraction: float = 0.8
    start_charge_fraction: float = 1.0
    drive_power_w: float = 0.4
    idle_power_w: float = 0.1
    drive_efficiency: float = 0.3
    safety_factor: float = 1.5
    drive_safety_factor: float = 1.1

    @property
    def weight_n(self) -> float:
        """m·g, N (standard gravity)."""
        return self.mass_kg * STANDARD_GRAVITY_M_S2

    @property
    def drive_force_n(self) -> float:
        """Largest tractive force of both wheels together, N."""
        if self.max_drive_force_n > 0:
            return self.max_drive_force_n
        return 2.0 * self.stall_torque_n_m * self.gear_ratio / (self.wheel_radius_mm * 1e-3)

    @property
    def battery_j(self) -> float:
        """Full battery energy at the nominal voltage, J (mAh · 3.6 · V)."""
        return self.battery_mah * 3.6 * self.battery_voltage_v

    @property
    def power_w(self) -> float:
        """Electrical power while driving on level fabric, electronics included, W."""
        return self.drive_power_w + self.idle_power_w

    def gap_mm(self, piece: str) -> float:
        """The magnet gap (fabric thickness, mm) on ``piece``."""
        for name, gap in self.piece_gap_mm:
            if name == piece:
                return gap
        return self.fabric_gap_mm

    def magnet_force_at(self, gap_mm) -> np.ndarray:
        """Holding force (N) at gap(s) ``gap_mm``: the table read linearly (clamped), else the
        constant ``magnet_force_n``. Array in, array out."""
        gap = np.asarray(gap_mm, dtype=float)
        if len(self.magnet_table_gap_mm) >= 2:
            return np.interp(gap, self.magnet_table_gap_mm, self.magnet_table_force_n)
        return np.full(gap.shape, self.magnet_force_n)

    def piece_forces(self, pieces) -> np.ndarray:
        """(P,) holding force (N) on each of the named pieces."""
        return self.magnet_force_at([self.gap_mm(p) for p in pieces])


def physics_problems(p: RobotPhysics, piece_names=None) -> list[str]:
    """Why the profile is not valid, one short reason per bad value (empty when it is fine).

    Parameters
    ----------
    piece_names : iterable of str, optional
        When given, every ``piece_gap_mm`` entry must name one of these pieces.
    """
    out: list[str] = []
    for key, f in PHYSICS_FIELDS.items():
        value = getattr(p, key)
        if f.type == "float":
            values = [value]
        elif f.type == "floats":
            values = list(value)
        else:
            values = [g for _, g in value]
        for v in values:
            reason = _range(f, v)
            if reason:
                out.append(f"'{key}' {reason}")
                break
    gaps, forces = p.magnet_table_gap_mm, p.magnet_table_force_n
    if len(gaps) != len(forces):
        out.append(f"'magnet_table_gap_mm' has {len(gaps)} values but 'magnet_table_force_n' "
                   f"has {len(forces)}; give one force per gap")
    elif len(gaps) == 1:
        out.append("the magnet table needs at least 2 rows (or none: use 'magnet_force_n')")
    elif len(gaps) >= 2 and not all(b > a for a, b in zip(gaps[:-1], gaps[1:], strict=True)):
        out.append("'magnet_table_gap_mm' must increase strictly")
    if p.max_drive_force_n <= 0 and p.stall_torque_n_m <= 0:
        out.append("needs 'max_drive_force_n' > 0, or 'stall_torque_n_m' > 0 with 'gear_ratio'")
    if piece_names is not None:
        known = set(piece_names)
        for name, _ in p.piece_gap_mm:
            if name not in known:
                out.append(f"'piece_gap_mm' names piece '{name}', which the garment does not have")
    names = [n for n, _ in p.piece_gap_mm]
    if len(set(names)) != len(names):
        out.append("'piece_gap_mm' names a piece twice")
    return out


def _range(f: PhysicsField, value: Any) -> str | None:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return f"must be a number, found {value!r}"
    v = float(value)
    if not math.isfinite(v):
        return f"must be a finite number, found {v}"
    if f.low is not None and (v < f.low or (f.low_open and v <= f.low)):
        return f"must be {f.range_text()}, found {v:g}"
    if f.high is not None and v > f.high:
        return f"must be {f.range_text()}, found {v:g}"
    return None


def _describe(value: Any) -> str:
    if isinstance(value, bool):
        return "a boolean"
    if isinstance(value, (int, float)):
        return f"a number ({value})"
    if isinstance(value, str):
        return f"a string ({value!r})"
    if isinstance(value, list):
        return f"an array of {len(value)} items"
    if isinstance(value, dict):
        return "a table"
    return type(value).__name__


def _number(v: Any) -> bool:
    """A TOML integer (64-bit) or float, not a boolean; finiteness is checked with the range."""
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        return False
    return isinstance(v, float) or abs(v) < 2**63


def physics_from_table(table: Any, item: str = "robot physics") -> tuple[RobotPhysics | None, list[tuple[str, str, str | None]]]:
    """Build a profile from a parsed ``[robot.physics]`` table.

    Returns
    -------
    physics : RobotPhysics or None
        None when any value is bad.
    problems : list of (item, reason, hint)
        In the spec reader's style (the caller adds the file name).
    """
    from garnav.errors import did_you_mean

    problems: list[tuple[str, str, str | None]] = []
    if not isinstance(table, dict):
        return None, [(item, f"must be a table ([robot.physics]), found {_describe(table)}", None)]
    values: dict[str, Any] = {}
    for key, value in table.items():
        f = PHYSICS_FIELDS.get(key)
        if f is None:
            problems.append((item, f"unknown key '{key}'", did_you_mean(key, PHYSICS_FIELDS)))
            continue
        if f.type == "float":
            if not _number(value):
                problems.append((item, f"'{key}' must be a number ({f.unit or 'no unit'}), "
                                 f"found {_describe(value)}", None))
                continue
            values[key] = float(value)
        elif f.type == "floats":
            if not isinstance(value, list) or not all(map(_number, value)):
                problems.append((item, f"'{key}' must be an array of numbers ({f.unit}), "
                                 f"found {_describe(value)}", None))
                continue
            values[key] = tuple(float(v) for v in value)
        else:  # gaps: a table piece = mm
            if not isinstance(value, dict) or not all(map(_number, value.values())):
                problems.append((item, f"'{key}' must be a table of piece = mm, "
                                 f"found {_describe(value)}", None))
                continue
            values[key] = tuple(sorted((str(k), float(v)) for k, v in value.items()))
    if problems:
        return None, problems
    physics = RobotPhysics(**values)
    bad = physics_problems(physics)
    if bad:
        return None, [(item, reason, None) for reason in bad]
    return physics, []


def physics_to_table(p: RobotPhysics) -> dict[str, Any]:
    """The profile as the plain dict ``[robot.physics]`` parses to (empty table rows omitted)."""
    out: dict[str, Any] = {}
    for f in fields(p):
        v = getattr(p, f.name)
        kind = PHYSICS_FIELDS[f.name].type
        if kind == "float":
            out[f.name] = float(v)
        elif kind == "floats":
            if v:
                out[f.name] = [float(x) for x in v]
        elif v:
            out[f.name] = {name: float(g) for name, g in v}
    return out
