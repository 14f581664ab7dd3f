"""A simulated robot on the garment: runs received command lists, reports 10 Hz telemetry samples.

Each plan (a command list, split at its ``wait`` commands into driving parts) is driven with
:func:`garnav.telemetry.simulate.simulate_run` from the robot's *true* pose — the pose the
simulation carries, which drifts from the station's estimate exactly as the odometry error model
(:class:`~garnav.uncertainty.OdometryModel`, ``[robot.odometry]``) says. Without a model the motion
is ideal. Every part reuses the same seed, so the robot's constant errors (distance and turn
scale, gyro bias) stay the same for the whole run, as they would on one physical robot; the start
error is drawn only at the robot's first placement.

The sensors report what the controller measured: encoder counters (wrapping at ``encoder_bits``)
and the gyro rate about the surface normal, plus the heading the robot integrates from its gyro
(robot's view: counter-clockwise seen from the side it drives on), and the planar pose its own
odometry integrates from them every period in its start frame (``odom_x_mm``, ``odom_y_mm``; x
along its heading when it was put down, y to its left). :meth:`SimulatedRobot.stop`
halts it at once: the next sample shows no motion. The battery drains at the profile's idle and
driving power (:class:`~garnav.mechanics.profile.RobotPhysics`, or its invented defaults).

Pure: the caller advances time with :meth:`SimulatedRobot.step` (see :mod:`garnav.link.simserver`).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field

import numpy as np

from garnav.errors import GarnavError
from garnav.export.commands import Command, CommandList, Start, Wait
from garnav.mechanics.profile import RobotPhysics
from garnav.model import Garment, Robot
from garnav.telemetry.simulate import simulate_run, wheel_mm_per_tick
from garnav.uncertainty.model import OdometryModel

__all__ = ["SimulatedRobot", "Sample", "split_at_waits"]


@dataclass(frozen=True)
class Sample:
    """One telemetry period of the simulated robot (see the protocol's ``telemetry`` message).

    ``truth`` is the simulation's ground truth (piece, x mm, y mm, heading deg), never sent.
    """

    time_s: float
    plan: int
    state: str
    left_ticks: int
    right_ticks: int
    gyro_z_deg_s: float
    heading_deg: float
    seam_bump: bool
    battery_fraction: float
    plan_mm: float
    truth: tuple[str, float, float, float]
    odom_xy: tuple[float, float] = (0.0, 0.0)

    def fields(self) -> dict:
        """The telemetry message's fields."""
        return {"time_s": round(self.time_s, 6), "plan": self.plan, "state": self.state,
                "left_ticks": self.left_ticks, "right_ticks": self.right_ticks,
                "gyro_z_deg_s": round(self.gyro_z_deg_s, 9), "heading_deg": round(self.heading_deg, 9),
                "seam_bump": self.seam_bump, "battery_fraction": round(self.battery_fraction, 6),
                "plan_mm": round(self.plan_mm, 4), "odom_x_mm": round(self.odom_xy[0], 6),
                "odom_y_mm": round(self.odom_xy[1], 6)}


def split_at_waits(commands: tuple[Command, ...]) -> list[tuple[Command, ...] | Wait]:
    """The commands as driving parts and the waits between them, in order.

    >>> from garnav.export.commands import Go
    >>> split_at_waits((Go(1.0), Wait(2.0), Go(3.0)))
    [(Go(distance_mm=1.0),), Wait(seconds=2.0), (Go(distance_mm=3.0),)]
    """
    out: list[tuple[Command, ...] | Wait] = []
    part: list[Command] = []
    for c in commands:
        if isinstance(c, Wait):
            if part:
                out.append(tuple(part))
                part = []
            out.append(c)
        else:
            part.append(c)
    if part:
        out.append(tuple(part))
    return out


@dataclass
class _Part:
    """Per-sample arrays of one driving part (rows after its start row)."""

    d_left: np.ndarray
    d_right: np.ndarray
    gyro: np.ndarray
    bump: np.ndarray
    truth: list[tuple[str, float, float, float]]
    fell_off: str | None = None
    k: int = 0


@dataclass
class SimulatedRobot:
    """The simulated robot's state; advance it with :meth:`step` once per telemetry period.

    Parameters
    ----------
    garment, robot : Garment, Robot
    start : (piece, x mm, y mm, heading deg)
        Where it is put down (piece frame).
    model : OdometryModel or None
        Errors drawn; None: ideal motion (sensors still quantised to encoder ticks).
    seed : int
    rate_hz : float
        Telemetry rate (10 Hz).
    """

    garment: Garment
    robot: Robot
    start: tuple[str, float, float, float]
    model: OdometryModel | None = None
    seed: int = 0
    rate_hz: float = 10.0
    time_s: float = 0.0
    state: str = "idle"
    plan: int = 0
    events: list[dict] = field(default_factory=list)

    def __post_init__(self) -> None:
        piece, x, y, h = self.start
        self.garment.piece(piece)  # KeyError for an unknown piece: the CLI checks first
        m = self.model
        if m is not None:  # the placement error, once
            rng = np.random.default_rng([self.seed, 1])
            x += m.start_position_mm * rng.standard_normal()
            y += m.start_position_mm * rng.standard_normal()
            h += m.start_heading_deg * rng.standard_normal()
        self.truth: tuple[str, float, float, float] = (piece, float(x), float(y), float(h))
        self.left = 0
        self.right = 0
        self.heading_deg = 0.0
        self.gyro = 0.0
        self.plan_mm = 0.0
        self.odom = (0.0, 0.0)
        phys = self.robot.physics or RobotPhysics()
        self.physics = phys
        self.charge = float(phys.start_charge_fraction)
        self.queue: list[tuple[Command, ...] | Wait] = []
        self.part: _Part | None = None
        self.wait_left = 0
        odo = self.robot.odometry or OdometryModel()
        self.sensors = dataclasses.replace(odo if m is None else m, start_position_mm=0.0, start_heading_deg=0.0)

    # ------------------------------------------------------------------ commands

    def load(self, plan: int, commands: CommandList) -> None:
        """Start executing ``commands`` (a new plan replaces whatever runs)."""
        self.plan = int(plan)
        self.plan_mm = 0.0
        self.queue = split_at_waits(commands.commands)
        self.part = None
        self.wait_left = 0
        self.side = commands.side
        self.state = "driving"
        self._next_part()

    def stop(self, reason: str) -> None:
        """Halt now; the plan is dropped. Noted in :attr:`events`."""
        was = self.state
        self.queue, self.part, self.wait_left = [], None, 0
        self.state = "stopped"
        self.gyro = 0.0
        if was in ("driving", "waiting"):
            self.events.append({"event": "done", "plan": self.plan, "completed": False, "reason": reason})

    def _next_part(self) -> None:
        while self.queue:
            item = self.queue.pop(0)
            if isinstance(item, Wait):
                self.wait_left = int(math.ceil(item.seconds * self.rate_hz - 1e-9))
                if self.wait_left > 0:
                    self.state = "waiting"
                    return
                continue
            part = self._simulate(item)
            if part is not None and len(part.d_left):
                self.part, self.state = part, "driving"
                return
            if part is not None and part.fell_off:
                return
        self.part = None
        self.state = "idle"
        self.events.append({"event": "done", "plan": self.plan, "completed": True})

    def _simulate(self, cmds: tuple[Command, ...]) -> _Part | None:
        piece, x, y, h = self.truth
        cl = CommandList(cmds, side=self.robot.side, start=Start(piece, x, y, h))
        model = self.model if self.model is not None else self.sensors
        try:
            sim = simulate_run(self.garment, self.robot, cl, dataclasses.replace(model, start_position_mm=0.0,
                                                                                 start_heading_deg=0.0),
                               seed=self.seed, rate_hz=self.rate_hz, noise=self.model is not None)
        except GarnavError as exc:
            self.stop(f"cannot run the commands: {exc}")
            self.events.append({"event": "error", "code": "bad_commands", "text": str(exc)})
            return None
        full = 1 << int(self.sensors.encoder_bits)
        half = full >> 1
        log, tr = sim.log, sim.truth
        d_left = np.mod(np.diff(log.left_ticks) + half, full) - half
        d_right = np.mod(np.diff(log.right_ticks) + half, full) - half
        truth = [(tr.piece[i], float(tr.x_mm[i]), float(tr.y_mm[i]), float(tr.heading_deg[i])) for i in range(1, len(tr.time_s))]
        part = _Part(d_left.astype(np.int64), d_right.astype(np.int64), np.asarray(log.gyro_z_deg_s[1:], dtype=float),
                     np.asarray(log.seam_bump[1:], dtype=bool), truth, sim.fell_off)
        if sim.fell_off and not len(d_left):
            self._fell(sim.fell_off)
        return part

    def _fell(self, text: str) -> None:
        self.stop("off the fabric")
        self.events.append({"event": "error", "code": "off_fabric", "text": text})

    # ------------------------------------------------------------------ time

    def step(self) -> Sample:
        """Advance one telemetry period (1 / rate_hz s) and return the sample at its end."""
        dt = 1.0 / self.rate_hz
        self.time_s += dt
        moving = False
        bump = False
        self.gyro = 0.0
        if self.state == "driving" and self.part is not None:
            p = self.part
            k = p.k
            self.left += int(p.d_left[k])
            self.right += int(p.d_right[k])
            self.gyro = float(p.gyro[k])
            self.heading_deg += self.gyro * dt
            bump = bool(p.bump[k])
            kl, kr = wheel_mm_per_tick(self.sensors)
            ds = 0.5 * (int(p.d_left[k]) * kl + int(p.d_right[k]) * kr)
            self.plan_mm += abs(ds)
            # the robot's own odometry (its start frame, robot's view), midpoint rule per period
            mid = math.radians(self.heading_deg - 0.5 * self.gyro * dt)
            self.odom = (self.odom[0] + ds * math.cos(mid), self.odom[1] + ds * math.sin(mid))
            self.truth = p.truth[k]
            moving = True
            p.k += 1
            if p.k >= len(p.d_left):
                if p.fell_off:
                    self._fell(p.fell_off)
                else:
                    self._next_part()
        elif self.state == "waiting":
            self.wait_left -= 1
            if self.wait_left <= 0:
                self._next_part()
        power = self.physics.idle_power_w + (self.physics.drive_power_w if moving else 0.0)
        self.charge = max(0.0, self.charge - power * dt / self.physics.battery_j)
        full = 1 << int(self.sensors.encoder_bits)
        return Sample(self.time_s, self.plan, self.state, self.left % full, self.right % full, self.gyro,
                      self.heading_deg, bump, self.charge, self.plan_mm, self.truth, self.odom)

    def profile_fields(self, name: str | None = None) -> dict:
        """The ``profile`` message's fields: geometry, encoder settings, where it was put down."""
        r, s = self.robot, self.sensors
        piece, x, y, h = self.start
        return {"robot": name or r.name, "radius_mm": float(r.radius_mm), "wheel_base_mm": float(r.wheel_base_mm),
                "speed_mm_s": float(r.speed_mm_s), "side": r.side, "encoder_mm_per_tick": float(s.encoder_mm_per_tick),
                "encoder_bits": int(s.encoder_bits), "wheel_diameter_ratio": float(s.wheel_diameter_ratio),
                "placed": {"piece": piece, "x_mm": float(x), "y_mm": float(y), "heading_deg": float(h)},
                "rate_hz": float(self.rate_hz), "simulated": True}

