"""The station without a window: send each robot to its goal, track until done, exit with a status.

Exit status: 0 when every robot arrived (``until_arrived``) or finished its plan; 1 when one did
not — it was lost, reported an error, ended early, the time limit passed, or the emergency stop
was asked for (``stop_after_s``); every robot is then stopped (``stop`` sent first and repeated
until acknowledged, for at most ``STOP_WAIT_S``). Ctrl+C stops every robot too.
"""

from __future__ import annotations

from typing import Callable

from garnav.station.controller import Station

__all__ = ["run_headless", "STOP_WAIT_S"]

#: How long the station keeps repeating a stop while waiting for every acknowledgement, wall s.
STOP_WAIT_S = 3.0


def run_headless(station: Station, goals: dict, *, until_arrived: bool = True, timeout_s: float = 120.0,
                 stop_after_s: float | None = None, connect_timeout_s: float = 5.0,
                 say: Callable[[str], None] = print) -> int:
    """Connect, plan and send every goal, track (see the module notes). Returns the exit status."""
    try:
        station.planner_for()  # the spec robot's planner, built before any robot waits on it
        station.connect(connect_timeout_s)
        station.goto_many(goals)
        for name in goals:
            r = station.robots[name]
            say(f"{name}: plan {r.plan_id} sent to {r.goal.describe() if r.goal else '?'}")
        start = station.clock()
        while True:
            station.poll(0.02)
            now = station.clock() - start
            failed = {n: station.failed(n) for n in goals}
            failed = {n: why for n, why in failed.items() if why and not station.arrived(n)}
            if failed:
                for n, why in failed.items():
                    say(f"{n}: {why}")
                return _stop_all(station, "a robot failed: " + "; ".join(f"{n}: {w}" for n, w in failed.items()), say)
            done = [n for n in goals if station.finished(n)]
            if len(done) == len(goals):
                arrived = [n for n in goals if station.arrived(n)]
                for n in goals:
                    st = station.status(n)
                    say(f"{n}: {'arrived' if n in arrived else 'done'} at {st['pose']}, "
                        f"{st['distance_to_goal_mm']} mm from the goal, battery {_pct(st['battery_fraction'])}")
                station.event(None, "finished", arrived=arrived)
                return 0 if (len(arrived) == len(goals) or not until_arrived) else 1
            if stop_after_s is not None and now >= stop_after_s:
                return _stop_all(station, f"emergency stop after {stop_after_s:g} s (--stop-after)", say)
            if now > timeout_s:
                return _stop_all(station, f"time limit of {timeout_s:g} s passed", say)
    except KeyboardInterrupt:
        _stop_all(station, "interrupted (Ctrl+C)", say)
        raise


def _stop_all(station: Station, reason: str, say: Callable[[str], None]) -> int:
    say(f"stopping every robot: {reason}")
    station.emergency_stop(reason)
    end = station.clock() + STOP_WAIT_S
    while station.clock() < end and not station.all_stopped():
        station.poll(0.02)
    for r in station.robots.values():
        say(f"{r.name}: {'stopped' if r.stop_acked else 'NO STOP ACKNOWLEDGED'} (state {r.state})")
    station.event(None, "finished", arrived=[], stopped=[r.name for r in station.robots.values() if r.stop_acked])
    return 1


def _pct(v) -> str:
    return "?" if v is None else f"{100 * v:.1f} %"
