"""Writing a garment spec: :class:`~garnav.model.Garment` → plain dict → TOML text.

Lossless: every field of the model is written (numbers as floats, in Python's shortest round-trip
form), so ``load → write → load`` gives an equal garment and ``write → load → write`` gives the
same text. Values are formatted by ``tomli_w``; the document layout (sections in a fixed order,
``placement`` and seam runs as one-line inline tables) is assembled here so the file reads like a
hand-written one.
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import Any

import tomli_w

from garnav.atomic import write_text_atomic
from garnav.errors import GarnavError, SpecError
from garnav.model import Circle, Garment, KeepOut, Landmark, Piece, PolygonShape, Rectangle, Robot, Seam
from garnav.spec.fields import FORMAT, VERSION
from garnav.spec.geometry_checks import garment_problems

__all__ = ["garment_to_dict", "dumps_garment", "save_garment", "robot_lines", "robot_to_dict"]


def _f(v: float) -> float:
    return float(v)


def _pts(points) -> list[list[float]]:
    return [[_f(x), _f(y)] for x, y in points]


def _run(run) -> dict[str, Any]:
    d: dict[str, Any] = {"piece": run.piece, "edge": run.edge}
    if run.from_mm is not None:
        d["from_mm"] = _f(run.from_mm)
    if run.to_mm is not None:
        d["to_mm"] = _f(run.to_mm)
    d["reverse"] = bool(run.reverse)
    return d


def _piece(p: Piece) -> dict[str, Any]:
    d: dict[str, Any] = {
        "name": p.name,
        "placement": {
            "x": _f(p.placement.x),
            "y": _f(p.placement.y),
            "angle_deg": _f(p.placement.angle_deg),
        },
        "edge": [{"name": e.name, "points": _pts(e.points)} for e in p.edges],
    }
    if p.openings:
        d["opening"] = [{"name": o.name, "points": _pts(o.points)} for o in p.openings]
    return d


def _seam(s: Seam) -> dict[str, Any]:
    return {
        "name": s.name,
        "a": _run(s.a),
        "b": _run(s.b),
        "crossable": bool(s.crossable),
        "crossing_cost_mm": _f(s.crossing_cost_mm),
        "min_crossing_angle_deg": _f(s.min_crossing_angle_deg),
    }


def _keepout(k: KeepOut) -> dict[str, Any]:
    d: dict[str, Any] = {"name": k.name, "piece": k.piece, "kind": k.kind}
    s = k.shape
    if isinstance(s, Circle):
        d.update(shape="circle", center=[_f(s.cx), _f(s.cy)], radius=_f(s.radius))
    elif isinstance(s, Rectangle):
        d.update(shape="rectangle", center=[_f(s.cx), _f(s.cy)],
                 size=[_f(s.width), _f(s.height)], angle_deg=_f(s.angle_deg))
    elif isinstance(s, PolygonShape):
        d.update(shape="polygon", points=_pts(s.points))
    else:
        raise GarnavError(f"keepout '{k.name}': cannot write shape {type(s).__name__}")
    d.update(clearance_mm=_f(k.clearance_mm), hard=bool(k.hard), cost_factor=_f(k.cost_factor))
    return d


def _landmark(m: Landmark) -> dict[str, Any]:
    d: dict[str, Any] = {"name": m.name}
    if m.piece is not None:
        d["piece"] = m.piece
        d["at"] = [_f(float(m.x)), _f(float(m.y))]  # type: ignore[arg-type]  # a pattern landmark has x and y
    if m.xyz is not None:
        d["xyz"] = [_f(v) for v in m.xyz]
    if m.description:
        d["description"] = m.description
    return d


def robot_to_dict(r: Robot) -> dict[str, Any]:
    """The robot as the plain dict its ``[robot]`` table parses to (sub-tables as dicts)."""
    d: dict[str, Any] = {
        "name": r.name,
        "radius_mm": _f(r.radius_mm),
        "wheel_base_mm": _f(r.wheel_base_mm),
        "speed_mm_s": _f(r.speed_mm_s),
        "side": r.side,
        "edge_margin_mm": _f(r.edge_margin_mm),
    }
    if r.physics is not None:
        from garnav.mechanics.profile import physics_to_table

        d["physics"] = physics_to_table(r.physics)
    if r.sensor_swath_mm is not None:
        d["sensor_swath_mm"] = _f(r.sensor_swath_mm)
    if r.odometry is not None:  # [robot.odometry]: garnav.uncertainty
        from garnav.uncertainty.model import odometry_to_dict

        d["odometry"] = odometry_to_dict(r.odometry)
    return d


def garment_to_dict(garment: Garment) -> dict[str, Any]:
    """The garment as the plain dict a spec file parses to (``tomllib.loads(dumps(g))``)."""
    g = garment
    d: dict[str, Any] = {"format": FORMAT, "version": VERSION, "name": g.name}
    if g.description:
        d["description"] = g.description
    d["sheet_size_mm"] = [_f(v) for v in g.sheet_size_mm]
    if g.drape is not None:
        d["drape"] = g.drape
    if g.body is not None:
        d["body"] = g.body
    if g.robot is not None:
        d["robot"] = robot_to_dict(g.robot)
    d["piece"] = [_piece(p) for p in g.pieces]
    if g.seams:
        d["seam"] = [_seam(s) for s in g.seams]
    if g.keepouts:
        d["keepout"] = [_keepout(k) for k in g.keepouts]
    if g.landmarks:
        d["landmark"] = [_landmark(m) for m in g.landmarks]
    if g.body_zones:  # [[body_zone]]: garnav.zones.model
        from garnav.zones.model import body_zone_to_table

        d["body_zone"] = [body_zone_to_table(z) for z in g.body_zones]
    if g.poses:  # [[pose]]: garnav.poses.model
        from garnav.poses.model import pose_to_table

        d["pose"] = [pose_to_table(p) for p in g.poses]
    return d


# -- layout ------------------------------------------------------------------------------------
def _literal(value: Any) -> str:
    """One TOML value: scalars as tomli_w formats them, number arrays on one line."""
    if isinstance(value, list):
        return "[" + ", ".join(_literal(v) for v in value) + "]"
    text = tomli_w.dumps({"v": value})
    assert text.startswith("v = ") and text.endswith("\n")
    return text[4:-1]


def _line(key: str, value: Any) -> str:
    """``key = value``; an array of points too long for one line gets one point per line."""
    text = f"{key} = {_literal(value)}"
    if len(text) > _MAX_LINE and isinstance(value, list) and value and isinstance(value[0], list):
        return f"{key} = [\n" + "".join(f"    {_literal(v)},\n" for v in value) + "]"
    return text


_MAX_LINE = 100


def _inline(table: dict[str, Any]) -> str:
    return "{ " + ", ".join(f"{k} = {_literal(v)}" for k, v in table.items()) + " }"


def _body(table: dict[str, Any]) -> list[str]:
    """``key = value`` lines; nested tables become inline tables."""
    lines = []
    for k, v in table.items():
        if isinstance(v, dict):
            lines.append(f"{k} = {_inline(v)}")
        elif isinstance(v, list) and v and isinstance(v[0], dict):
            continue  # sub-arrays of tables are written by the caller
        else:
            lines.append(_line(k, v))
    return lines


def robot_lines(robot: dict[str, Any]) -> list[str]:
    """The ``[robot]`` table and its sub-tables (``[robot.physics]``, ...) as TOML lines."""
    top = {k: v for k, v in robot.items() if not isinstance(v, dict)}
    out = ["", "[robot]"] + _body(top)
    for key, sub in robot.items():
        if isinstance(sub, dict):
            out += ["", f"[robot.{key}]"] + _body(sub)
    return out


def dumps_garment(garment: Garment) -> str:
    """The garment as spec TOML text.

    Examples
    --------
    >>> from garnav import Edge, Garment, Piece
    >>> tri = Piece("tri", (Edge("a", ((0, 0), (10, 0))), Edge("b", ((10, 0), (0, 10))),
    ...                     Edge("c", ((0, 10), (0, 0)))))
    >>> print(dumps_garment(Garment("g", (tri,))).splitlines()[0])
    format = "garnav-garment"
    """
    d = garment_to_dict(garment)
    top = {k: v for k, v in d.items() if k not in ("robot", "piece", "seam", "keepout", "landmark", "body_zone", "pose")}
    out = _body(top)
    if "robot" in d:
        out += robot_lines(d["robot"])
    for p in d["piece"]:
        out += ["", "[[piece]]"] + _body(p)
        for e in p["edge"]:
            out += ["", "[[piece.edge]]"] + _body(e)
        for o in p.get("opening", ()):
            out += ["", "[[piece.opening]]"] + _body(o)
    for section in ("seam", "keepout", "landmark", "body_zone", "pose"):
        for t in d.get(section, ()):
            out += ["", f"[[{section}]]"] + _body(t)
    return "\n".join(out) + "\n"


def save_garment(garment: Garment, path: str | os.PathLike, check: bool = True) -> Path:
    """Write the garment as a spec file at ``path`` (atomically). Returns the path.

    Parameters
    ----------
    check : bool
        Run :func:`garnav.spec.garment_problems` first and raise :class:`SpecError` (writing
        nothing) when the garment has problems, so that every saved file loads again.
    """
    if check:
        problems = garment_problems(garment, str(path))
        if problems:
            raise SpecError(problems)
    return write_text_atomic(path, dumps_garment(garment))
