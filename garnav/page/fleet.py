"""Fleet schedules on the page: each robot of a ``garnav-fleet-schedule`` (docs/fleet.md) as a route.

A schedule gives per robot its timed waypoints (``t_s``, ``piece``, ``x_mm``, ``y_mm``) and its
commands. :func:`fleet_routes` turns each robot into a route document the page draws like any
other (lifted onto the drape, on the sheet, in the table): legs split where the piece changes (two
waypoints at one time on two pieces are a seam crossing), waits dropped from the geometry, the
time from departure to arrival (waits included), turns and seams from the commands, and a
``fleet`` object (depart, arrive, driving and waiting times) whose figures the table lists.
"""

from __future__ import annotations

import math
import os
from pathlib import Path

from garnav.errors import QueryError
from garnav.textio import read_json_document

__all__ = ["FLEET_FORMAT", "read_fleet_document", "fleet_routes"]

FLEET_FORMAT = "garnav-fleet-schedule"


def _num(v) -> bool:
    return isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(float(v))


def read_fleet_document(path: str | os.PathLike) -> dict:
    """Read a ``garnav-fleet-schedule`` JSON file and check the fields the page uses.

    Raises
    ------
    QueryError
        Naming the file, the robot or waypoint and the problem.
    """
    p = Path(path)
    doc = read_json_document(p, QueryError, FLEET_FORMAT, 1, writer_hint="; write one with 'garnav fleet --json'")
    robots = doc.get("robots")
    if not isinstance(doc.get("garment"), str) or not isinstance(robots, list) or not robots:
        raise QueryError(f"{p}: 'garment' must be a name and 'robots' a non-empty list")
    for i, r in enumerate(robots):
        name = r.get("name") if isinstance(r, dict) else None
        if not isinstance(name, str):
            raise QueryError(f"{p}: robot {i}: 'name' is missing")
        wps = r.get("waypoints")
        if not isinstance(wps, list) or len(wps) < 2:
            raise QueryError(f"{p}: robot '{name}': 'waypoints' must be a list of at least two waypoints")
        for k, w in enumerate(wps):
            if not isinstance(w, dict) or not isinstance(w.get("piece"), str) or not all(
                    _num(w.get(key)) for key in ("t_s", "x_mm", "y_mm")):
                raise QueryError(f"{p}: robot '{name}': waypoint {k} needs 't_s', 'piece', 'x_mm' and 'y_mm'")
        for key in ("length_mm", "depart_s", "arrive_s"):
            if not _num(r.get(key)):
                raise QueryError(f"{p}: robot '{name}': '{key}' must be a number")
    return doc


def _route_document(robot: dict, garment: str) -> dict:
    waypoints: list[dict] = []
    leg = 0
    for w in robot["waypoints"]:
        x, y = float(w["x_mm"]), float(w["y_mm"])
        if waypoints:
            last = waypoints[-1]
            if last["piece"] != w["piece"]:
                leg += 1  # a seam crossing: the same place in the next piece's frame
            elif math.hypot(last["x"] - x, last["y"] - y) < 1e-9:
                continue  # a wait: no new geometry
        heading = float(w["heading_deg"]) if _num(w.get("heading_deg")) else 0.0
        waypoints.append({"index": len(waypoints), "leg": leg, "piece": w["piece"], "x": x, "y": y,
                          "heading_deg": heading})
    given = robot.get("commands")
    commands: list = given if isinstance(given, list) else []
    turns = [float(c["angle_deg"]) for c in commands
             if isinstance(c, dict) and c.get("op") == "turn" and _num(c.get("angle_deg"))]
    seams = [str(c["seam"]) for c in commands if isinstance(c, dict) and c.get("op") == "cross" and "seam" in c]
    pieces: list[str] = []
    for w in waypoints:
        if w["piece"] not in pieces:
            pieces.append(w["piece"])
    fleet = {k: float(robot[k]) for k in ("depart_s", "arrive_s", "driving_s", "waiting_s") if _num(robot.get(k))}
    return {
        "format": "garnav-route",
        "version": 1,
        "garment": {"name": garment},
        "robot": robot.get("profile") if isinstance(robot.get("profile"), dict) else {},
        "length_mm": float(robot["length_mm"]),
        "length_3d_mm": None,
        "summary": {
            "pieces": pieces,
            "seams_crossed": seams,
            "turn_count": len(turns),
            "turn_total_deg": float(sum(abs(t) for t in turns)),
            "estimated_time_s": float(robot["arrive_s"]) - float(robot["depart_s"]),
        },
        "waypoints": waypoints,
        "crossings": [],
        "path3d": None,
        "fleet": fleet,
    }


def fleet_routes(document: dict, source: str = "fleet") -> list[tuple[str, dict]]:
    """One (name, route document) per robot of a schedule, named ``SOURCE-STEM:ROBOT``."""
    stem = Path(source).stem
    return [(f"{stem}:{r['name']}", _route_document(r, document["garment"])) for r in document["robots"]]
