"""The simulated robot's loop: answer the station over a transport, stream telemetry in (scaled) real time.

After a station's ``hello`` the robot answers with its ``profile`` and sends one ``telemetry``
sample every telemetry period (0.1 s of simulated time at 10 Hz; ``speedup`` × faster in wall
time), a ``battery`` message every second, ``done`` when a plan ends and ``error`` when something
goes wrong. The telemetry stream is the robot's heartbeat. It stops itself when it hears nothing
from the station for ``heartbeat_timeout_s`` of wall time while it drives (the timeout the
station's hello asks for). A ``stop`` takes effect before the next sample; a ``commands`` message
older than the newest stop is ignored (a late resend must never move a stopped robot).

Every loop is bounded: ``max_seconds`` of wall time, and ``quit_after_silence_s`` of silence once a
station has spoken.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field
from typing import Callable

from garnav.link.protocol import LinkError, message_commands
from garnav.link.robot import SimulatedRobot
from garnav.link.session import LinkSession
from garnav.link.transport import Transport

__all__ = ["serve", "ServeResult", "HEARTBEAT_TIMEOUT_S"]

#: Silence (wall s) after which a driving robot stops itself, unless the hello asks otherwise.
HEARTBEAT_TIMEOUT_S = 1.0


@dataclass
class ServeResult:
    """What the loop did: ``records`` (JSON-ready dicts: messages and truth, in order), why it ended."""

    records: list[dict] = field(default_factory=list)
    reason: str = ""
    samples: int = 0


def serve(robot: SimulatedRobot, transport: Transport, *, name: str | None = None, speedup: float = 1.0,
          max_seconds: float = 600.0, quit_after_silence_s: float | None = None,
          heartbeat_timeout_s: float = HEARTBEAT_TIMEOUT_S, loss_note: str = "",
          clock: Callable[[], float] = time.monotonic, wall: Callable[[], float] = time.time) -> ServeResult:
    """Run the simulated robot on ``transport`` until a bound is reached (see the module notes)."""
    if not speedup > 0:
        raise LinkError(f"speedup must be positive, found {speedup:g}")
    result = ServeResult()
    name = name or robot.robot.name

    def log(direction: str, msg: dict) -> None:
        result.records.append({"wall_s": round(wall(), 6), "sim_s": round(robot.time_s, 4), "dir": direction, "msg": msg})

    session = LinkSession(transport, name, clock=clock, log=log)
    period = 1.0 / (robot.rate_hz * speedup)
    t0 = clock()
    next_tick = t0 + period
    greeted = False
    last_stop_seq = 0
    timeout = float(heartbeat_timeout_s)
    if loss_note:
        result.records.append({"note": loss_note})
    while True:
        now = clock()
        if now - t0 > max_seconds:
            result.reason = f"ran for the --max-seconds limit ({max_seconds:g} s)"
            break
        if greeted and quit_after_silence_s is not None and session.silent_for() > quit_after_silence_s:
            result.reason = f"the station was silent for {quit_after_silence_s:g} s"
            break
        for msg in session.poll(max(0.0, min(next_tick - now, 0.05))):
            kind = msg["t"]
            if kind == "hello":
                greeted = True
                timeout = float(msg.get("heartbeat_timeout_s", timeout))
                session.send("profile", **robot.profile_fields(name))
            elif kind == "stop":
                last_stop_seq = max(last_stop_seq, int(msg["seq"]))
                robot.stop(f"stop from the station: {msg['reason']}")
                result.records.append({"wall_s": round(wall(), 6), "sim_s": round(robot.time_s, 4), "event": "stopped",
                                       "reason": msg["reason"], "truth": list(robot.truth)})
            elif kind == "commands":
                if int(msg["seq"]) < last_stop_seq:
                    continue  # sent before the newest stop
                try:
                    commands = message_commands(msg, transport.description)
                    if commands.side != robot.robot.side:
                        raise LinkError(f"the plan is for a robot on the {commands.side}, this one drives on the {robot.robot.side}")
                except LinkError as exc:
                    session.send("error", code="bad_commands", text=str(exc))
                    continue
                robot.load(int(msg["plan"]), commands)
        now = clock()
        if now < next_tick:
            continue
        if not greeted:
            next_tick = now + period
            continue
        if robot.state in ("driving", "waiting") and session.silent_for() > timeout:
            robot.stop("heartbeat lost")
            robot.events.append({"event": "error", "code": "heartbeat_lost",
                                 "text": f"no message from the station for {timeout:g} s: stopped"})
        sample = robot.step()
        result.samples += 1
        session.send("telemetry", **sample.fields())
        result.records.append({"sim_s": round(sample.time_s, 4), "truth": list(sample.truth), "state": sample.state})
        if result.samples % int(round(robot.rate_hz)) == 0:
            volts = robot.physics.battery_voltage_v * (0.9 + 0.1 * sample.battery_fraction)
            session.send("battery", fraction=round(sample.battery_fraction, 6), voltage_v=round(volts, 4))
        for ev in robot.events:
            if ev["event"] == "done":
                extra = {"reason": ev["reason"]} if "reason" in ev else {}
                session.send("done", plan=int(ev["plan"]), completed=bool(ev["completed"]), **extra)
            else:
                session.send("error", code=ev["code"], text=ev["text"])
        robot.events.clear()
        next_tick += period
        if next_tick < now - period:
            next_tick = now + period  # fell behind (a loaded machine): do not burst
    return result
