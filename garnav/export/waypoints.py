"""The route document (``garnav-route`` JSON, version 1) and its CSV waypoint table.

:func:`route_document` is pure: it builds a JSON-ready dict from a route, the garment and the robot,
and — when a lifted route is given — adds world positions, surface normals, orientation quaternions
and the dense 3D path. The writers put it in files with :mod:`garnav.atomic`. The format is
described by the JSON Schema shipped as ``garnav/data/route.schema.json`` and in
docs/route-format.md.

Orientation quaternions are written **scalar-last, [x, y, z, w]** (key ``orientation_xyzw``), for
the robot's body frame: x along the travel direction, z along the surface normal on the side the robot
drives on (the outward normal for ``side = "outside"``, its opposite for ``"inside"``), y = z × x
(the robot's left). The rotation-matrix → quaternion step is Shepperd's method (S. W. Shepperd,
"Quaternion from rotation matrix", J. Guidance and Control 1(3), 1978), with w >= 0.

Time estimate: the wheels roll at ``speed_mm_s``; a straight go of d mm takes d / speed; a turn in
place by θ rad moves each wheel along an arc of θ·wheel_base/2 (differential-drive kinematics,
Siegwart & Nourbakhsh, *Introduction to Autonomous Mobile Robots*, §3.2), so it takes
|θ|·wheel_base / (2·speed). Acceleration is ignored.
"""

from __future__ import annotations

import csv
import io
import json
import math
from importlib import resources
from pathlib import Path
from typing import Any, Protocol, Sequence

import numpy as np

from garnav.atomic import write_text_atomic
from garnav.errors import QueryError
from garnav.export.commands import DEFAULT_TOLERANCE_MM, CommandList, Turn, commands_to_json, route_commands
from garnav.export.path import Waypoint, route_waypoints
from garnav.model import Garment, Robot
from garnav.plan.route import route_headings_deg
from garnav.textio import read_json_document

__all__ = [
    "FORMAT_NAME",
    "FORMAT_VERSION",
    "CSV_COLUMNS",
    "LiftedLike",
    "route_document",
    "document_json",
    "document_csv",
    "write_route_json",
    "write_route_csv",
    "read_route_document",
    "document_route",
    "route_schema",
    "quaternion_xyzw",
    "body_frame",
]

FORMAT_NAME = "garnav-route"
FORMAT_VERSION = 1

CSV_COLUMNS = (
    "index",
    "leg",
    "piece",
    "x_mm",
    "y_mm",
    "heading_deg",
    "world_x_mm",
    "world_y_mm",
    "world_z_mm",
    "normal_x",
    "normal_y",
    "normal_z",
    "qx",
    "qy",
    "qz",
    "qw",
    "grip_margin",
    "hold_margin",
    "drive_margin",
)


class LiftedLike(Protocol):
    """What the export reads from a lifted route (``garnav.drape.LiftedRoute``).

    Attributes
    ----------
    points : (M, 3) array, world mm
    normals : (M, 3) array, unit outward surface normals
    pieces : sequence of M piece names
    pattern : (M, 2) array, piece-frame mm
    waypoint_index : (K,) int array, the dense index of each route waypoint
    length_3d_mm, climb_up_mm, climb_down_mm : float
    """

    points: np.ndarray
    normals: np.ndarray
    waypoint_index: np.ndarray
    length_3d_mm: float
    climb_up_mm: float
    climb_down_mm: float


def route_schema() -> dict:
    """The JSON Schema (draft 2020-12) of the route document, as shipped in ``garnav/data``."""
    text = resources.files("garnav").joinpath("data/route.schema.json").read_text(encoding="utf-8")
    return json.loads(text)


# --------------------------------------------------------------------------- 3D frames


def quaternion_xyzw(matrix: np.ndarray) -> np.ndarray:
    """Unit quaternion [x, y, z, w] (scalar last, w >= 0) of a 3x3 rotation matrix.

    Shepperd's method: pick the largest of 4w², 4x², 4y², 4z² (from the trace and the diagonal) to
    divide by, which keeps the result accurate for every rotation.
    """
    m = np.asarray(matrix, dtype=float)
    tr = m[0, 0] + m[1, 1] + m[2, 2]
    cands = np.array([tr, m[0, 0], m[1, 1], m[2, 2]])
    k = int(np.argmax(cands))
    if k == 0:
        w = 0.5 * math.sqrt(max(1.0 + tr, 0.0))
        q = np.array([(m[2, 1] - m[1, 2]) / (4 * w), (m[0, 2] - m[2, 0]) / (4 * w), (m[1, 0] - m[0, 1]) / (4 * w), w])
    elif k == 1:
        x = 0.5 * math.sqrt(max(1.0 + 2 * m[0, 0] - tr, 0.0))
        q = np.array([x, (m[0, 1] + m[1, 0]) / (4 * x), (m[0, 2] + m[2, 0]) / (4 * x), (m[2, 1] - m[1, 2]) / (4 * x)])
    elif k == 2:
        y = 0.5 * math.sqrt(max(1.0 + 2 * m[1, 1] - tr, 0.0))
        q = np.array([(m[0, 1] + m[1, 0]) / (4 * y), y, (m[1, 2] + m[2, 1]) / (4 * y), (m[0, 2] - m[2, 0]) / (4 * y)])
    else:
        z = 0.5 * math.sqrt(max(1.0 + 2 * m[2, 2] - tr, 0.0))
        q = np.array([(m[0, 2] + m[2, 0]) / (4 * z), (m[1, 2] + m[2, 1]) / (4 * z), z, (m[1, 0] - m[0, 1]) / (4 * z)])
    q /= np.linalg.norm(q)
    return -q if q[3] < 0 else q


def body_frame(travel: np.ndarray, up: np.ndarray) -> np.ndarray:
    """Rotation matrix (3, 3) whose columns are the robot's x (travel), y (left), z (up) axes.

    ``travel`` is projected onto the plane normal to ``up`` first.
    """
    z = np.asarray(up, dtype=float)
    z = z / np.linalg.norm(z)
    x = np.asarray(travel, dtype=float) - np.dot(travel, z) * z
    nx = np.linalg.norm(x)
    if nx < 1e-12:
        raise ValueError("travel direction is parallel to the surface normal")
    x /= nx
    y = np.cross(z, x)
    return np.column_stack([x, y, z])


def _direction_at(points: np.ndarray, j: int, forward: bool) -> np.ndarray | None:
    """3D travel direction at dense index j: to the next distinct point, or from the previous."""
    step = 1 if forward else -1
    k = j + step
    while 0 <= k < len(points):
        d = points[k] - points[j] if forward else points[j] - points[k]
        if np.linalg.norm(d) > 1e-9:
            return d
        k += step
    return None


# --------------------------------------------------------------------------- the document


def _robot_dict(robot: Robot) -> dict:
    return {
        "name": robot.name,
        "radius_mm": float(robot.radius_mm),
        "wheel_base_mm": float(robot.wheel_base_mm),
        "speed_mm_s": float(robot.speed_mm_s),
        "side": robot.side,
        "edge_margin_mm": float(robot.edge_margin_mm),
    }


def _vec(v) -> list[float]:
    return [float(a) for a in v]


def route_document(
    route, garment: Garment, robot: Robot | None = None, lifted: LiftedLike | None = None, mechanics=None,
    command_tolerance_mm: float = DEFAULT_TOLERANCE_MM,
) -> dict:
    """The ``garnav-route`` document of a route, as a JSON-ready dict.

    Parameters
    ----------
    route : garnav.plan.Route
    garment : Garment
    robot : Robot, optional
        Defaults to ``garment.robot`` or ``Robot()``.
    lifted : LiftedRoute, optional
        The route lifted onto the drape (``garnav.drape.lift_route``); adds world positions, normals,
        orientations, 3D length and climbs, and the dense 3D path. Without it those are ``null``.
    mechanics : garnav.mechanics.RouteMechanics, optional
        The lifted route's mechanics (needs ``lifted``): adds the ``physics`` object (posture,
        gravity, energy, battery, margins per segment of ``path3d`` and per waypoint).
    command_tolerance_mm : float
        How far the ``commands`` may stray from the route where they merge tiny turns along arcs,
        mm (:func:`garnav.export.commands.route_commands`); recorded as ``command_tolerance_mm``.

    Returns
    -------
    dict
        Valid against :func:`route_schema`.
    """
    robot = robot or garment.robot or Robot()
    waypoints = route_waypoints(route)
    commands = route_commands(route, garment, robot, tolerance_mm=command_tolerance_mm)
    last_of_leg = {w.index for w in waypoints if w.index + 1 == len(waypoints) or waypoints[w.index + 1].leg != w.leg}

    world = normals = quats = None
    if lifted is not None:
        world, normals, quats = _lifted_waypoints(lifted, waypoints, last_of_leg, robot)

    wp_list = []
    for w in waypoints:
        item: dict[str, Any] = {
            "index": w.index,
            "leg": w.leg,
            "piece": w.piece,
            "x": w.x_mm,
            "y": w.y_mm,
            "heading_deg": w.heading_deg,
            "xyz": None if world is None else _vec(world[w.index]),
            "normal": None if normals is None else _vec(normals[w.index]),
            "orientation_xyzw": None if quats is None else _vec(quats[w.index]),
        }
        wp_list.append(item)

    crossings = [
        {
            "seam": c.seam,
            "from_piece": c.from_piece,
            "to_piece": c.to_piece,
            "from_mm": _vec(c.point_from),
            "to_mm": _vec(c.point_to),
            "fraction": float(c.fraction),
            "angle_deg": float(c.angle_deg),
        }
        for c in route.crossings
    ]
    doc = {
        "format": FORMAT_NAME,
        "version": FORMAT_VERSION,
        "units": {"length": "mm", "angle": "deg", "time": "s", "speed": "mm/s"},
        "quaternion_order": "xyzw",
        "garment": {"name": garment.name, "sheet_size_mm": _vec(garment.sheet_size_mm)},
        "robot": _robot_dict(robot),
        "length_mm": float(route.length_mm),
        "length_3d_mm": None if lifted is None else float(lifted.length_3d_mm),
        "summary": _summary(route, commands, robot, lifted),
        "waypoints": wp_list,
        "crossings": crossings,
        "commands": commands_to_json(commands),
        "command_tolerance_mm": float(command_tolerance_mm),
        "path3d": None if lifted is None else _vecs(lifted.points),
        "path3d_detail": None if lifted is None else _path3d_detail(lifted),
    }
    if mechanics is not None:
        if lifted is None:
            raise QueryError("route mechanics need the lifted route as well")
        physics = mechanics.to_dict()
        physics["waypoints"] = mechanics.waypoint_margins(lifted.waypoint_index)
        doc["physics"] = physics
    return doc


def _summary(route, commands: CommandList, robot: Robot, lifted) -> dict:
    turns = [c.angle_deg for c in commands.commands if isinstance(c, Turn)]
    turn_total = float(sum(abs(t) for t in turns))
    drive = commands.distance_mm
    speed = float(robot.speed_mm_s)
    drive_time = drive / speed
    turn_time = math.radians(turn_total) * robot.wheel_base_mm / 2.0 / speed
    pieces: list[str] = []
    for leg in route.legs:
        if leg.piece not in pieces:
            pieces.append(leg.piece)
    return {
        "cost": float(route.cost),
        "pieces": pieces,
        "seams_crossed": [c.seam for c in route.crossings],
        "crossing_count": len(route.crossings),
        "turn_count": len(turns),
        "turn_total_deg": turn_total,
        "climb_up_mm": None if lifted is None else float(lifted.climb_up_mm),
        "climb_down_mm": None if lifted is None else float(lifted.climb_down_mm),
        "drive_time_s": drive_time,
        "turn_time_s": turn_time,
        "estimated_time_s": drive_time + turn_time,
    }


def _lifted_waypoints(lifted, waypoints: Sequence[Waypoint], last_of_leg: set[int], robot: Robot):
    points = np.asarray(lifted.points, dtype=float)
    normals = np.asarray(lifted.normals, dtype=float)
    index = np.asarray(lifted.waypoint_index, dtype=int)
    if len(index) != len(waypoints):
        raise QueryError(
            f"the lifted route has {len(index)} waypoints but the route has {len(waypoints)}: "
            f"lift this very route"
        )
    up_sign = 1.0 if robot.side == "outside" else -1.0
    world = points[index]
    wn = normals[index]
    quats = np.zeros((len(index), 4))
    for w in waypoints:
        j = int(index[w.index])
        forward = w.index not in last_of_leg
        d = _direction_at(points, j, forward)
        if d is None:
            d = _direction_at(points, j, not forward)
        if d is None:
            raise QueryError("the lifted route has no extent: cannot orient its waypoints")
        quats[w.index] = quaternion_xyzw(body_frame(d, up_sign * normals[j]))
    return world, wn, quats


def _vecs(rows) -> list[list[float]]:
    return [_vec(r) for r in np.asarray(rows, dtype=float)]


def _path3d_detail(lifted) -> dict:
    """What belongs to each point of ``path3d``: normals, waypoint positions, pieces, pattern."""
    out = {
        "normals": _vecs(lifted.normals),
        "waypoint_index": [int(i) for i in np.asarray(lifted.waypoint_index)],
    }
    pieces = getattr(lifted, "pieces", None)
    if pieces is not None:
        out["pieces"] = [str(p) for p in pieces]
    pattern = getattr(lifted, "pattern", None)
    if pattern is not None:
        out["pattern"] = _vecs(pattern)
    return out


# --------------------------------------------------------------------------- text forms


def _dumps(obj: Any, indent: int = 0) -> str:
    """Deterministic JSON: objects one key per line, lists of numbers on one line."""
    pad = "  " * indent
    if isinstance(obj, dict):
        if not obj:
            return "{}"
        items = [f'{pad}  {json.dumps(k)}: {_dumps(v, indent + 1)}' for k, v in obj.items()]
        return "{\n" + ",\n".join(items) + "\n" + pad + "}"
    if isinstance(obj, (list, tuple)):
        if all(not isinstance(v, (dict, list, tuple)) for v in obj):
            return "[" + ", ".join(json.dumps(v, allow_nan=False) for v in obj) + "]"
        items = [pad + "  " + _dumps(v, indent + 1) for v in obj]
        return "[\n" + ",\n".join(items) + "\n" + pad + "]"
    return json.dumps(obj, allow_nan=False)


def document_json(document: dict) -> str:
    """The JSON text of a route document (deterministic, ``\\n`` line ends)."""
    try:
        return _dumps(document) + "\n"
    except ValueError as exc:  # NaN or infinity somewhere
        raise QueryError(f"route document cannot be written as JSON: {exc}") from None


def _cell(v) -> str:
    if v is None:
        return ""
    if isinstance(v, float):
        return repr(v)
    return str(v)


def document_csv(document: dict) -> str:
    """The waypoint table of a route document as CSV (header row with units; empty 3D cells
    without a drape)."""
    buf = io.StringIO()
    writer = csv.writer(buf, lineterminator="\n")
    writer.writerow(CSV_COLUMNS)
    for w in document["waypoints"]:
        world = w["xyz"] or [None] * 3
        normal = w["normal"] or [None] * 3
        quat = w["orientation_xyzw"] or [None] * 4
        margins = [None] * 3
        if document.get("physics"):
            per = document["physics"]["waypoints"]
            margins = [per[f"{k}_margin"][w["index"]] for k in ("grip", "hold", "drive")]
        row = [w["index"], w["leg"], w["piece"], w["x"], w["y"], w["heading_deg"], *world, *normal, *quat, *margins]
        writer.writerow([_cell(v) for v in row])
    return buf.getvalue()


def write_route_json(path, document: dict):
    """Write a route document as JSON, atomically. Returns the path."""
    return write_text_atomic(path, document_json(document))


def write_route_csv(path, document: dict):
    """Write a route document's waypoint table as CSV, atomically. Returns the path."""
    return write_text_atomic(path, document_csv(document))


def read_route_document(path) -> dict:
    """Read a ``garnav-route`` JSON file and check what readers rely on.

    The check covers the format name and version and the waypoint fields; the full description is
    the JSON Schema (:func:`route_schema`), which a general validator can apply.

    Raises
    ------
    QueryError
        Naming the file and the problem.
    """
    p = Path(path)
    doc = read_json_document(p, QueryError, FORMAT_NAME, FORMAT_VERSION)
    garment = doc.get("garment")
    if not isinstance(garment, dict) or not isinstance(garment.get("name"), str):
        raise QueryError(f"{p}: 'garment' must be an object with a 'name' string")
    crossings = doc.get("crossings", [])
    need = ("seam", "from_piece", "to_piece", "from_mm", "to_mm", "fraction", "angle_deg")
    if not isinstance(crossings, list) or not all(isinstance(c, dict) and all(k in c for k in need) for c in crossings):
        raise QueryError(f"{p}: 'crossings' must be a list of objects with " + ", ".join(need))
    for j, c in enumerate(crossings):
        _check_crossing(c, f"{p}: crossing {j}")
    _check_robot(doc.get("robot"), f"{p}: 'robot'")
    wps = doc.get("waypoints")
    if not isinstance(wps, list) or len(wps) < 2:
        raise QueryError(f"{p}: 'waypoints' must be a list of at least two waypoints")
    if isinstance(wps[0], dict) and "x_mm" in wps[0] and "x" not in wps[0]:
        raise QueryError(
            f"{p}: written with the early key names (waypoint x_mm, y_mm, world_mm; summary "
            f"pattern_length_mm; path_3d); plan the route again to write length_mm, x, y, xyz, path3d"
        )
    for i, w in enumerate(wps):
        for key, kind, what in (("leg", int, "int"), ("piece", str, "str"), ("x", (int, float), "a number"),
                                ("y", (int, float), "a number")):
            if not isinstance(w, dict) or not isinstance(w.get(key), kind) or isinstance(w.get(key), bool):
                raise QueryError(f"{p}: waypoint {i}: '{key}' is missing or not {what}")
        if "heading_deg" in w and _finite(w["heading_deg"]) is None:
            raise QueryError(f"{p}: waypoint {i}: 'heading_deg' is not a finite number ({_shown(w['heading_deg'])})")
    path3d = doc.get("path3d")
    if path3d is not None:
        if not isinstance(path3d, list) or not all(isinstance(q, list) and len(q) == 3 for q in path3d):
            raise QueryError(f"{p}: 'path3d' must be a list of [x, y, z] points")
    detail = doc.get("path3d_detail")
    normals = detail.get("normals") if isinstance(detail, dict) else None
    if normals is not None and (not isinstance(normals, list) or len(normals) != len(path3d or [])):
        raise QueryError(f"{p}: 'path3d_detail.normals' must have one normal per 'path3d' point")
    return doc


def _finite(v) -> float | None:
    """``v`` as a float when it is a finite JSON number (not a boolean), else None."""
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        return None
    try:
        f = float(v)
    except OverflowError:  # an integer of hundreds of digits
        return None
    return f if math.isfinite(f) else None


def _shown(v) -> str:
    text = repr(v)
    return text if len(text) <= 40 else text[:37] + "..."


def _check_crossing(c: dict, where: str) -> None:
    """Refuse a crossing whose names are not strings or whose numbers are not finite."""
    for key in ("seam", "from_piece", "to_piece"):
        if not isinstance(c[key], str):
            raise QueryError(f"{where}: '{key}' is not a string ({_shown(c[key])})")
    for key in ("from_mm", "to_mm"):
        q = c[key]
        if not isinstance(q, list) or len(q) != 2 or any(_finite(v) is None for v in q):
            raise QueryError(f"{where}: '{key}' is not two finite numbers [x, y] ({_shown(q)})")
    for key in ("fraction", "angle_deg"):
        if _finite(c[key]) is None:
            raise QueryError(f"{where}: '{key}' is not a finite number ({_shown(c[key])})")


def _check_robot(robot, where: str) -> None:
    """Refuse a ``robot`` entry that is not an object or whose sizes are not finite and positive."""
    if robot is None:
        return
    if not isinstance(robot, dict):
        raise QueryError(f"{where} must be an object, found {_shown(robot)}")
    if "name" in robot and not isinstance(robot["name"], str):
        raise QueryError(f"{where}: 'name' is not a string ({_shown(robot['name'])})")
    if robot.get("side", "outside") not in ("outside", "inside"):
        raise QueryError(f"{where}: 'side' must be \"outside\" or \"inside\", found {_shown(robot['side'])}")
    for key, low in (("radius_mm", 0.0), ("wheel_base_mm", 0.0), ("speed_mm_s", 0.0), ("edge_margin_mm", None)):
        if key not in robot:
            continue
        v = _finite(robot[key])
        if v is None or (v <= low if low is not None else v < 0.0):
            want = "a finite number > 0" if low is not None else "a finite number >= 0"
            raise QueryError(f"{where}: '{key}' must be {want}, found {_shown(robot[key])}")


def document_route(document: dict):
    """A Route-shaped view of a route document: ``legs`` (piece, points (n, 2) mm) and
    ``crossings`` (seam, from_piece, to_piece, point_from, point_to, fraction, angle_deg) and the
    document's ``headings_deg`` (one per waypoint; computed by :func:`garnav.plan.route.route_headings_deg`
    where the document has none), enough to draw, lift or export it."""
    from types import SimpleNamespace

    legs: dict[int, list] = {}
    for w in document["waypoints"]:
        legs.setdefault(int(w["leg"]), []).append(w)
    leg_objs = tuple(
        SimpleNamespace(piece=ws[0]["piece"], points=np.array([[w["x"], w["y"]] for w in ws], dtype=float))
        for _, ws in sorted(legs.items())
    )
    crossings = tuple(
        SimpleNamespace(
            seam=c["seam"],
            from_piece=c["from_piece"],
            to_piece=c["to_piece"],
            point_from=np.array(c["from_mm"], dtype=float),
            point_to=np.array(c["to_mm"], dtype=float),
            fraction=float(c["fraction"]),
            angle_deg=float(c["angle_deg"]),
        )
        for c in document.get("crossings", [])
    )
    wps = document["waypoints"]
    if all("heading_deg" in w for w in wps):
        headings = np.array([float(w["heading_deg"]) for w in wps], dtype=float)
    else:  # a document without headings (e.g. a fleet schedule's routes): the route convention
        headings = route_headings_deg(leg_objs)
    return SimpleNamespace(legs=leg_objs, crossings=crossings, headings_deg=headings)
