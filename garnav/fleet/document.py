"""The schedule as a JSON document (``garnav-fleet-schedule``, docs/fleet.md) and its writer."""

from __future__ import annotations

import json
import math

from garnav.atomic import write_text_atomic
from garnav.export.commands import commands_to_json
from garnav.fleet.check import CheckReport
from garnav.fleet.commands import plan_commands
from garnav.fleet.schedule import Schedule
from garnav.model import Garment

__all__ = ["schedule_document", "write_schedule_json", "FORMAT_NAME", "FORMAT_VERSION"]

FORMAT_NAME = "garnav-fleet-schedule"
FORMAT_VERSION = 1


def _f(v: float) -> float | None:
    return round(float(v), 6) if math.isfinite(v) else None


def schedule_document(garment: Garment, schedule: Schedule, report: CheckReport | None = None) -> dict:
    """JSON-ready dict: per robot timed waypoints (t_s, piece, x_mm, y_mm, heading_deg) and
    commands, the makespan, driving and waiting times, the method and the check."""
    robots = []
    for p in schedule.plans:
        wps = p.waypoints()
        heads = schedule.headings(p)
        robots.append({
            "name": p.name,
            "profile": {"name": p.robot.name, "radius_mm": p.robot.radius_mm, "speed_mm_s": p.robot.speed_mm_s,
                        "side": p.robot.side},
            "depart_s": _f(p.depart_s),
            "arrive_s": _f(p.arrive_s),
            "driving_s": _f(p.driving_s),
            "waiting_s": _f(p.waiting_s),
            "length_mm": _f(p.length_mm),
            "energy_j": None if p.energy_j is None else _f(p.energy_j),
            "lower_bound_s": _f(p.lower_bound_s),
            "final_heading_deg": _f(p.final_heading_deg),
            "waypoints": [{"t_s": _f(t), "piece": piece, "x_mm": _f(x), "y_mm": _f(y), "heading_deg": _f(h)}
                          for (t, piece, x, y), h in zip(wps, heads, strict=True)],
            "commands": commands_to_json(plan_commands(garment, p)),
        })
    doc = {
        "format": FORMAT_NAME,
        "version": FORMAT_VERSION,
        "garment": garment.name,
        "method": schedule.method,
        "priority_order": list(schedule.order),
        "orders_tried": schedule.orders_tried,
        "planning_s": _f(schedule.planning_s),
        "gap_mm": schedule.gap_mm,
        "makespan_s": _f(schedule.makespan_s),
        "sum_driving_s": _f(schedule.sum_driving_s),
        "lower_bound_s": _f(schedule.lower_bound_s),
        "robots": robots,
    }
    if report is not None:
        doc["check"] = {
            "step_s": report.step_s,
            "samples": report.samples,
            "min_gap_mm": _f(report.min_gap_mm),
            "gap_pair": list(report.gap_pair) if report.gap_pair else None,
            "gap_at_s": _f(report.gap_at_s) if report.gap_at_s is not None else None,
            "min_keepout_margin_mm": _f(report.min_keepout_margin_mm),
            "keepout": list(report.keepout) if report.keepout else None,
            "pass": report.ok,
        }
    return doc


def write_schedule_json(path, garment: Garment, schedule: Schedule, report: CheckReport | None = None):
    """Write :func:`schedule_document` atomically. Returns the path."""
    return write_text_atomic(path, json.dumps(schedule_document(garment, schedule, report), indent=1) + "\n")
