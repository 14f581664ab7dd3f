"""UMBmark calibration of a differential-drive robot's two systematic odometry errors.

Borenstein & Feng, *Measurement and correction of systematic odometry errors in mobile robots*,
IEEE Trans. Robotics and Automation 12(6), 1996, §4–5: the robot drives a square of side L by its
odometry, n times clockwise (cw) and n times counter-clockwise (ccw); the return-position errors
(actual end − start, as the odometry believes it is back at the start) have centres of gravity
(x_cw, y_cw) and (x_ccw, y_ccw). Two errors explain them:

* type A, the wheel-base error E_b = b_actual / b_nominal: every 90° turn is off by α;
* type B, the wheel-diameter ratio E_d = D_R / D_L: every straight leg curves by β.

With the frame **pinned** as here — the start at the origin, the first leg along +x, ccw runs
turning left (+90°) and cw runs turning right at each corner, x and y in that start frame — the
paper's equations read (radians):

    α = (x_cw + x_ccw) / (−4L)            β = (x_cw − x_ccw) / (−4L)
    R = (L/2) / sin(β/2)                   E_d = (R + b/2) / (R − b/2)
    E_b = (π/2) / (π/2 − α)

(eqs. 5.1, 6.1, 8, 9, 11 of the paper; the frame decides the signs, and a rotated first leg swaps
x for ±y — :func:`square_run` drives the pinned frame so tests can check it). The corrected wheel
base is E_b·b; the wheel travel per tick is scaled by 2/(E_d + 1) (left) and 2/(1/E_d + 1) (right).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace
from pathlib import Path
from typing import Any

import numpy as np

from garnav.errors import GarnavError
from garnav.model import Robot
from garnav.uncertainty.model import OdometryModel

__all__ = ["UMBmark", "umbmark", "square_run", "read_runs", "CalibrationError", "calibrated_robot", "robot_toml"]


class CalibrationError(GarnavError):
    """A UMBmark runs file is unreadable or inconsistent; names the file, the item and the reason."""


@dataclass(frozen=True)
class UMBmark:
    """UMBmark result: α, β (rad), curvature radius R (mm, inf when β = 0), E_d, E_b."""

    alpha_rad: float
    beta_rad: float
    radius_mm: float
    diameter_ratio: float
    wheel_base_ratio: float

    @property
    def left_scale(self) -> float:
        """Correction factor of the left wheel's travel per tick, 2 / (E_d + 1)."""
        return 2.0 / (self.diameter_ratio + 1.0)

    @property
    def right_scale(self) -> float:
        """Correction factor of the right wheel's travel per tick, 2 / (1/E_d + 1)."""
        return 2.0 / (1.0 / self.diameter_ratio + 1.0)


def umbmark(cw: np.ndarray, ccw: np.ndarray, side_mm: float, wheel_base_mm: float) -> UMBmark:
    """E_d and E_b from the cw and ccw return errors ((n, 2) each, mm; see the module notes).

    Examples
    --------
    Only a wheel-base error (both runs' x errors equal and of the same sign): β = 0, E_d = 1.

    >>> r = umbmark(np.array([[-40.0, 0.0]]), np.array([[-40.0, 0.0]]), 1000.0, 300.0)
    >>> round(r.alpha_rad, 6), r.diameter_ratio, round(r.wheel_base_ratio, 6)
    (0.02, 1.0, 1.012897)
    """
    cw, ccw = np.asarray(cw, dtype=float).reshape(-1, 2), np.asarray(ccw, dtype=float).reshape(-1, 2)
    xcw, xccw = float(cw[:, 0].mean()), float(ccw[:, 0].mean())
    L, b = float(side_mm), float(wheel_base_mm)
    alpha = (xcw + xccw) / (-4.0 * L)
    beta = (xcw - xccw) / (-4.0 * L)
    if beta == 0.0:
        radius, ed = math.inf, 1.0
    else:
        radius = (L / 2.0) / math.sin(beta / 2.0)
        ed = (radius + b / 2.0) / (radius - b / 2.0)
    eb = (math.pi / 2.0) / (math.pi / 2.0 - alpha)
    return UMBmark(alpha, beta, radius, ed, eb)


def _arc(x: float, y: float, th: float, s_r: float, s_l: float, b: float) -> tuple[float, float, float]:
    """Exact pose after wheel travels s_r, s_l (mm) on wheel base b (mm): a circular arc."""
    dth = (s_r - s_l) / b
    d = 0.5 * (s_r + s_l)
    k = 1.0 if abs(dth) < 1e-12 else math.sin(dth / 2.0) / (dth / 2.0)
    return x + d * k * math.cos(th + dth / 2.0), y + d * k * math.sin(th + dth / 2.0), th + dth


def square_run(side_mm: float, wheel_base_mm: float, diameter_ratio: float, wheel_base_ratio: float,
               direction: str) -> tuple[float, float]:
    """Drive the UMBmark square by encoder odometry on a robot with known errors; the return error.

    The robot believes its nominal wheel base b and equal wheels; its actual wheels have
    D_R / D_L = ``diameter_ratio`` (mean diameter kept) and its actual wheel base is
    ``wheel_base_ratio``·b. Each leg: equal encoder travel on both wheels (it believes it drives
    straight); each corner: ±b·π/4 on each wheel (it believes it turns 90°). Frame as pinned in the
    module notes. Returns the actual end position (x, y) mm relative to the start.
    """
    ed, b = float(diameter_ratio), float(wheel_base_mm)
    fr, fl = 2.0 * ed / (1.0 + ed), 2.0 / (1.0 + ed)
    b_act = b * float(wheel_base_ratio)
    turn = 1.0 if direction == "ccw" else -1.0
    x = y = th = 0.0
    for _ in range(4):
        x, y, th = _arc(x, y, th, side_mm * fr, side_mm * fl, b_act)
        w = turn * b * math.pi / 4.0
        x, y, th = _arc(x, y, th, w * fr, -w * fl, b_act)
    return x, y


def _points(data: Any, key: str, source: str) -> np.ndarray:
    runs = data.get(key)
    if not isinstance(runs, list) or not runs:
        raise CalibrationError(f"{source}: needs at least one [[{key}]] run with x_mm and y_mm")
    out = []
    for i, r in enumerate(runs):
        if not isinstance(r, dict):
            raise CalibrationError(f"{source}: {key} run {i + 1}: must be a table with x_mm and y_mm")
        unknown = sorted(set(r) - {"x_mm", "y_mm", "note"})
        if unknown:
            raise CalibrationError(f"{source}: {key} run {i + 1}: unknown key '{unknown[0]}' (known: x_mm, y_mm, note)")
        row = []
        for k in ("x_mm", "y_mm"):
            v = r.get(k)
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(float(v)):
                raise CalibrationError(f"{source}: {key} run {i + 1}: '{k}' must be a finite number of mm, found {v!r}")
            row.append(float(v))
        out.append(row)
    return np.array(out)


def read_runs(path) -> tuple[np.ndarray, np.ndarray, float, float | None]:
    """Read a UMBmark runs file (docs/uncertainty.md): (cw (n, 2), ccw (m, 2), side mm, wheel base mm or None).

    Raises
    ------
    CalibrationError
    """
    p = Path(path)
    from garnav.textio import read_text, toml_object

    data = toml_object(read_text(p, lambda reason: CalibrationError(f"{p}: {reason}")), p, CalibrationError)
    if data.get("format") != "garnav-umbmark":
        raise CalibrationError(f"{p}: not a UMBmark runs file: the first line should be format = \"garnav-umbmark\"")
    unknown = sorted(set(data) - {"format", "version", "side_mm", "wheel_base_mm", "cw", "ccw", "note"})
    if unknown:
        raise CalibrationError(f"{p}: unknown key '{unknown[0]}'")
    side = data.get("side_mm")
    if isinstance(side, bool) or not isinstance(side, (int, float)) or not float(side) > 0:
        raise CalibrationError(f"{p}: 'side_mm' (the square's side) must be a positive number of mm, found {side!r}")
    base = data.get("wheel_base_mm")
    if base is not None and (isinstance(base, bool) or not isinstance(base, (int, float)) or not float(base) > 0):
        raise CalibrationError(f"{p}: 'wheel_base_mm' must be a positive number of mm, found {base!r}")
    cw, ccw = _points(data, "cw", str(p)), _points(data, "ccw", str(p))
    if np.abs(np.vstack([cw, ccw])).max() > 0.5 * float(side):
        raise CalibrationError(f"{p}: a return error is more than half the square's side: not a UMBmark run")
    return cw, ccw, float(side), None if base is None else float(base)


def calibrated_robot(robot: Robot, result: UMBmark) -> Robot:
    """The robot with its wheel base corrected (× E_b) and the diameter ratio set (× E_d)."""
    odo = robot.odometry or OdometryModel()
    odo = replace(odo, wheel_diameter_ratio=odo.wheel_diameter_ratio * result.diameter_ratio)
    return replace(robot, wheel_base_mm=robot.wheel_base_mm * result.wheel_base_ratio, odometry=odo)


def robot_toml(robot: Robot) -> str:
    """The robot profile as a ``[robot]`` table with its ``[robot.odometry]`` sub-table."""
    import tomli_w

    from garnav.uncertainty.model import odometry_to_dict

    head = {"name": robot.name, "radius_mm": float(robot.radius_mm), "wheel_base_mm": float(robot.wheel_base_mm),
            "speed_mm_s": float(robot.speed_mm_s), "side": robot.side, "edge_margin_mm": float(robot.edge_margin_mm)}
    text = tomli_w.dumps({"robot": head})
    if robot.odometry is not None:
        text += "\n" + tomli_w.dumps({"robot": {"odometry": odometry_to_dict(robot.odometry)}})
    return text
