"""The dead-reckoning error model of a robot profile (``[robot.odometry]`` in a garment spec).

The robot counts distance with wheel encoders and holds and changes its heading with a gyro about
the surface normal (DESIGN.md, "The one idea"). What goes wrong, and how it is written here:

* **distance scale** — the encoders' millimetres per tick are off: a systematic part (a constant of
  the robot, unknown sign, ``distance_scale_error`` is its 1σ as a fraction) and a random part that
  grows like a random walk with distance (``distance_random_mm_per_sqrt_m``: 1σ after 1 m, mm).
* **turn scale** — a commanded turn θ turns θ·(1 + e), e ~ N(0, ``turn_scale_error``²). For a gyro
  this is its scale-factor error; for a robot that counts turns on its wheels it is the wheel-base
  error (true / nominal wheel base − 1 ≈ −e).
* **gyro** — bias instability ``gyro_bias_deg_h`` (deg/h, 1σ of the in-run bias, constant within a
  run) and angle random walk ``gyro_arw_deg_sqrt_h`` (deg/√h), the terms and units of gyro data
  sheets (IEEE Std 952-1997, *Specification format guide and test procedure for single-axis
  interferometric fiber optic gyros*, annex C: rate random walk, angle random walk, bias
  instability). The controller holds the gyro's heading, so the true heading drifts by −bias·t
  plus a random walk of N·√t.
* **seam crossing** — a ridge jolts the robot: a heading step (``seam_heading_deg``, 1σ) and an
  along-track slip (``seam_distance_mm``, 1σ) too short for the gyro and encoders to register.
* **seam re-localisation** (``seam_relocalise``) — when the gyro/accelerometer registers the bump,
  the robot knows it is on the seam line and counts the rest of the go from there: the component of
  its position error across the seam vanishes (docs/uncertainty.md).
* **start** — the pose it is put down at: ``start_position_mm`` (1σ per axis) and
  ``start_heading_deg`` (1σ).
* **encoders** (for telemetry): ``encoder_mm_per_tick`` (nominal wheel travel per tick),
  ``encoder_bits`` (counter width: counts wrap modulo 2**bits) and ``wheel_diameter_ratio`` (right /
  left effective wheel diameter, 1 = equal; the UMBmark correction of :mod:`garnav.uncertainty.calibrate`).

The defaults are **invented for the demo** (a hobby-grade MEMS gyro and small rubber wheels);
measure your own robot (``garnav calibrate``, and an Allan-variance run of the gyro).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, fields
from typing import Any

from garnav.errors import Problem, did_you_mean

__all__ = ["OdometryModel", "ODOMETRY_FIELDS", "parse_odometry", "odometry_to_dict", "NOISE_FREE"]


@dataclass(frozen=True)
class OdometryModel:
    """Dead-reckoning error model (1σ values; see the module notes). Defaults invented for the demo.

    Parameters
    ----------
    distance_scale_error : float
        1σ of the robot's constant distance scale error, fraction (0.01 = 1 %).
    distance_random_mm_per_sqrt_m : float
        Random distance error after 1 m of driving, mm (grows with √distance).
    turn_scale_error : float
        1σ of the constant turn scale error, fraction.
    gyro_bias_deg_h : float
        1σ of the in-run gyro bias, deg/h.
    gyro_arw_deg_sqrt_h : float
        Gyro angle random walk, deg/√h.
    seam_heading_deg : float
        1σ heading jolt at a seam crossing, degrees.
    seam_distance_mm : float
        1σ along-track slip at a seam crossing, mm.
    seam_relocalise : bool
        Use the seam bump to fix the position across the seam.
    start_position_mm, start_heading_deg : float
        1σ of the start pose, per axis.
    encoder_mm_per_tick : float
        Nominal wheel travel per encoder tick, mm.
    encoder_bits : int
        Width of the encoder counters; counts wrap modulo 2**bits.
    wheel_diameter_ratio : float
        Right / left effective wheel diameter (1 = equal).
    """

    distance_scale_error: float = 0.01
    distance_random_mm_per_sqrt_m: float = 2.0
    turn_scale_error: float = 0.01
    gyro_bias_deg_h: float = 36.0
    gyro_arw_deg_sqrt_h: float = 0.6
    seam_heading_deg: float = 1.0
    seam_distance_mm: float = 0.5
    seam_relocalise: bool = False
    start_position_mm: float = 0.5
    start_heading_deg: float = 0.5
    encoder_mm_per_tick: float = 0.1
    encoder_bits: int = 16
    wheel_diameter_ratio: float = 1.0

    # -- SI / radians for the computations ----------------------------------------------------
    @property
    def gyro_bias_rad_s(self) -> float:
        """1σ gyro bias in rad/s."""
        return math.radians(self.gyro_bias_deg_h) / 3600.0

    @property
    def gyro_arw_rad_sqrt_s(self) -> float:
        """Angle random walk in rad/√s (deg/√h ÷ 60 = deg/√s)."""
        return math.radians(self.gyro_arw_deg_sqrt_h) / 60.0

    @property
    def distance_random_var_per_mm(self) -> float:
        """Variance of the random distance error per mm driven, mm²/mm."""
        return self.distance_random_mm_per_sqrt_m**2 / 1000.0


#: Every error switched off (the encoder settings stay): the simulator then drives the plan exactly.
NOISE_FREE = OdometryModel(
    distance_scale_error=0.0,
    distance_random_mm_per_sqrt_m=0.0,
    turn_scale_error=0.0,
    gyro_bias_deg_h=0.0,
    gyro_arw_deg_sqrt_h=0.0,
    seam_heading_deg=0.0,
    seam_distance_mm=0.0,
    start_position_mm=0.0,
    start_heading_deg=0.0,
)

# key: (type, low, low_open, high, unit, meaning) — the spec docs list these.
ODOMETRY_FIELDS: dict[str, tuple[str, float | None, bool, float | None, str, str]] = {
    "distance_scale_error": ("float", 0.0, False, 0.5, "", "1σ constant distance scale error, fraction"),
    "distance_random_mm_per_sqrt_m": ("float", 0.0, False, 1000.0, "mm/√m", "random distance error after 1 m"),
    "turn_scale_error": ("float", 0.0, False, 0.5, "", "1σ constant turn scale (wheel-base / gyro scale) error"),
    "gyro_bias_deg_h": ("float", 0.0, False, 1.0e5, "deg/h", "1σ in-run gyro bias"),
    "gyro_arw_deg_sqrt_h": ("float", 0.0, False, 1.0e3, "deg/√h", "gyro angle random walk"),
    "seam_heading_deg": ("float", 0.0, False, 90.0, "deg", "1σ heading jolt at a seam crossing"),
    "seam_distance_mm": ("float", 0.0, False, 100.0, "mm", "1σ along-track slip at a seam crossing"),
    "seam_relocalise": ("bool", None, False, None, "", "fix the position across a seam at its bump"),
    "start_position_mm": ("float", 0.0, False, 1000.0, "mm", "1σ start position, per axis"),
    "start_heading_deg": ("float", 0.0, False, 180.0, "deg", "1σ start heading"),
    "encoder_mm_per_tick": ("float", 0.0, True, 100.0, "mm", "wheel travel per encoder tick"),
    "encoder_bits": ("int", 8, False, 64, "", "encoder counter width, bits"),
    "wheel_diameter_ratio": ("float", 0.5, False, 2.0, "", "right / left effective wheel diameter"),
}


def parse_odometry(table: Any, source: str) -> tuple[OdometryModel | None, list[Problem]]:
    """Read a ``[robot.odometry]`` table: the model (None when there are problems) and every problem.

    Parameters
    ----------
    table : dict
        The parsed TOML table.
    source : str
        The file name, for the messages.

    Examples
    --------
    >>> parse_odometry({"gyro_bias_deg_h": 10}, "a.toml")[0].gyro_bias_deg_h
    10.0
    >>> print(parse_odometry({"gyro_bias": 10}, "a.toml")[1][0])
    a.toml: robot.odometry: unknown key 'gyro_bias'; did you mean 'gyro_bias_deg_h'?
    """
    item = "robot.odometry"
    if not isinstance(table, dict):
        return None, [Problem(source, item, f"must be a table, found {type(table).__name__}")]
    problems: list[Problem] = []
    values: dict[str, Any] = {}
    for key, value in table.items():
        spec = ODOMETRY_FIELDS.get(key)
        if spec is None:
            problems.append(Problem(source, item, f"unknown key '{key}'", hint=did_you_mean(key, ODOMETRY_FIELDS)))
            continue
        kind, low, low_open, high, _, _ = spec
        if kind == "bool":
            if not isinstance(value, bool):
                problems.append(Problem(source, item, f"'{key}' must be true or false, found {value!r}"))
                continue
            values[key] = value
            continue
        is_int = isinstance(value, int) and not isinstance(value, bool)
        if kind == "int" and not is_int or kind == "float" and not (is_int or isinstance(value, float)):
            word = "an integer" if kind == "int" else "a number"
            problems.append(Problem(source, item, f"'{key}' must be {word}, found {value!r}"))
            continue
        v = float(value)
        if not math.isfinite(v):
            problems.append(Problem(source, item, f"'{key}' must be a finite number, found {value}"))
            continue
        if low is not None and (v < low or (low_open and v <= low)) or high is not None and v > high:
            rng = f"{'>' if low_open else '>='} {low:g} and <= {high:g}"
            problems.append(Problem(source, item, f"'{key}' must be {rng}, found {v:g}"))
            continue
        values[key] = int(value) if kind == "int" else v
    if problems:
        return None, problems
    return OdometryModel(**values), []


def odometry_to_dict(model: OdometryModel) -> dict[str, Any]:
    """The model as the ``[robot.odometry]`` table (every key, in field order)."""
    out: dict[str, Any] = {}
    for f in fields(model):
        v = getattr(model, f.name)
        out[f.name] = v if isinstance(v, (bool, int)) else float(v)
    return out
