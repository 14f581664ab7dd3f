"""A robot's estimated pose on the pattern, dead-reckoned from its telemetry samples.

Each accepted sample moves the estimate by the distance of the wheel encoders since the previous
accepted sample (the mean of the two wheels' tick differences, taken modulo the counter width, times
their travel per tick) and turns it by the difference of the heading the robot integrates from its
gyro. Both are differences of running totals, so a lost sample costs no motion — only the
curvature inside the longer interval (the step is integrated at its mid heading, as in
:func:`garnav.telemetry.drive.drive_increments`, which carries the estimate across seams). This is
the same arithmetic as :func:`garnav.telemetry.track.track_log` on a log file, one sample at a time.

The uncertainty of the estimate is the linearised covariance of the plan being driven
(:func:`garnav.uncertainty.propagate.propagate_covariance`) at the step the robot has reached.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from garnav.model import Garment
from garnav.telemetry.drive import OffFabric, drive_increments
from garnav.uncertainty.model import OdometryModel
from garnav.uncertainty.plan_ops import MotionPlan
from garnav.uncertainty.propagate import ellipse_2sigma, propagate_covariance

__all__ = ["PoseEstimate", "EncoderSettings"]


@dataclass(frozen=True)
class EncoderSettings:
    """What the station needs of a robot's ``profile``: wheel travel per tick (left, right, mm),
    counter width (bits) and the side it drives on."""

    left_mm_per_tick: float
    right_mm_per_tick: float
    bits: int
    side: str

    @classmethod
    def from_profile(cls, profile: dict) -> "EncoderSettings":
        k, r = float(profile["encoder_mm_per_tick"]), float(profile["wheel_diameter_ratio"])
        return cls(2.0 * k / (1.0 + r), 2.0 * k * r / (1.0 + r), int(profile["encoder_bits"]), str(profile["side"]))


@dataclass
class PoseEstimate:
    """The estimated pose (piece, x mm, y mm, heading rad in the piece frame) and its track.

    Attributes
    ----------
    pose : (piece, x, y, heading rad)
    track : list of (piece, x, y)
        Every estimated position, for drawing.
    track_time_s : list of float
        The robot's time (s) of each track point (NaN for the placement).
    off_fabric : str or None
        Set when the estimate runs off the fabric (the robot is stopped by the station).
    """

    garment: Garment
    encoders: EncoderSettings
    pose: tuple[str, float, float, float]
    track: list[tuple[str, float, float]] = field(default_factory=list)
    track_time_s: list[float] = field(default_factory=list)
    off_fabric: str | None = None
    last: tuple[int, int, float, float, float] | None = None
    plan: MotionPlan | None = None
    plan_start_mm: float = 0.0
    driven_mm: float = 0.0

    def __post_init__(self) -> None:
        self.track.append(self.pose[:3])
        self.track_time_s.append(math.nan)

    def update(self, sample: dict) -> None:
        """Take one telemetry sample (the message dict); the first only sets the reference."""
        ox, oy = sample.get("odom_x_mm"), sample.get("odom_y_mm")
        has_odom = all(isinstance(v, (int, float)) and not isinstance(v, bool) for v in (ox, oy))
        now = (int(sample["left_ticks"]), int(sample["right_ticks"]), float(sample["heading_deg"]),
               float(ox) if has_odom else math.nan, float(oy) if has_odom else math.nan)  # type: ignore[arg-type]
        if self.last is None:
            self.last = now
            return
        full = 1 << self.encoders.bits
        half = full >> 1
        dl = (now[0] - self.last[0] + half) % full - half
        dr = (now[1] - self.last[1] + half) % full - half
        dh = math.radians(now[2] - self.last[2])
        last, self.last = self.last, now
        ds = 0.5 * (dl * self.encoders.left_mm_per_tick + dr * self.encoders.right_mm_per_tick)
        if ds == 0.0 and dh == 0.0 or self.off_fabric:
            return
        sign = 1.0 if self.encoders.side == "outside" else -1.0
        if math.isfinite(now[3]) and math.isfinite(last[3]):
            # the robot's own odometry gives the chord of the interval: drive it at its direction,
            # then turn the rest — right across lost samples (a turn and a go in one interval)
            cx, cy = now[3] - last[3], now[4] - last[4]
            chord = math.hypot(cx, cy)
            alpha = math.remainder(math.atan2(cy, cx) - math.radians(last[2]), 2 * math.pi) if chord > 1e-9 else 0.0
            steps_ds = np.array([math.copysign(chord, ds) if ds else chord, 0.0])
            if ds < 0:  # backwards: the chord points against the heading
                alpha = math.remainder(alpha + math.pi, 2 * math.pi)
            steps_dth = sign * np.array([2.0 * alpha, dh - 2.0 * alpha])
        else:
            steps_ds, steps_dth = np.array([ds]), np.array([sign * dh])
        planned = [st for st in self.plan.steps if st.kind == "cross"] if self.plan is not None else []
        try:
            path = drive_increments(self.garment, self.pose, steps_ds, steps_dth, planned)
        except OffFabric as exc:
            self.off_fabric = f"the estimated pose leaves the fabric: {exc}"
            return
        self.driven_mm += abs(ds)
        self.pose = (path.piece_of(len(steps_ds)), float(path.xy[-1, 0]), float(path.xy[-1, 1]), float(path.heading[-1]))
        self.track.append(self.pose[:3])
        self.track_time_s.append(float(sample["time_s"]))

    def start_plan(self, plan: MotionPlan) -> None:
        """A new plan begins from the current estimate."""
        self.plan = plan
        self.plan_start_mm = self.driven_mm

    @property
    def heading_deg(self) -> float:
        return math.degrees(math.remainder(self.pose[3], 2.0 * math.pi))

    def progress(self) -> float:
        """Fraction (0..1) of the current plan's distance driven."""
        if self.plan is None or self.plan.distance_mm <= 0:
            return 1.0
        return float(min(1.0, (self.driven_mm - self.plan_start_mm) / self.plan.distance_mm))

    def ellipse(self, model: OdometryModel) -> dict:
        """The 2σ position ellipse (``semi_major_mm``, ``semi_minor_mm``, ``angle_deg`` in the
        current piece frame) of the current plan at the progress reached; the start spread before
        any plan."""
        if self.plan is None:
            from garnav.uncertainty.propagate import initial_covariance

            return ellipse_2sigma(initial_covariance(model)[:2, :2])
        prop = propagate_covariance(self.plan, model)
        done = self.driven_mm - self.plan_start_mm
        k = 0
        for i, st in enumerate(self.plan.steps):
            if st.travelled_mm + st.length_mm <= done + 1e-6:
                k = i + 1
        return ellipse_2sigma(prop.covariances[min(k, len(prop.covariances) - 1), :2, :2])
