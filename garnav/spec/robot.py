"""The standalone robot file: a garment spec's ``[robot]`` table on its own (``--robot ROBOT.toml``).

A robot file reads like the robot part of a garment spec, so one robot can be used with any
garment or mesh::

    format = "garnav-robot"     # optional
    version = 1                 # optional

    [robot]
    name = "crawler"
    radius_mm = 20.0
    speed_mm_s = 25.0

    [robot.physics]             # optional: docs/physics.md
    mass_kg = 0.05
    magnet_force_n = 3.0

Its keys, defaults and ranges are those of the spec's ``[robot]`` table (docs/spec.md) and of
``[robot.physics]`` (docs/physics.md); every problem is reported at once, naming the file.
"""

from __future__ import annotations

import os
from pathlib import Path

from garnav.atomic import write_text_atomic
from garnav.errors import Problem, SpecError, did_you_mean
from garnav.model import Robot
from garnav.spec.reader import parse_toml, robot_from_table

__all__ = ["ROBOT_FORMAT", "ROBOT_VERSION", "load_robot", "loads_robot", "dumps_robot", "save_robot"]

ROBOT_FORMAT = "garnav-robot"
ROBOT_VERSION = 1
_TOP_KEYS = ("format", "version", "robot")


def loads_robot(text: str, source: str = "<string>") -> Robot:
    """Read a robot from robot-file text; raise :class:`SpecError` with every problem."""
    data = parse_toml(text, source)
    problems = []
    for key in data:
        if key not in _TOP_KEYS:
            hint = did_you_mean(key, _TOP_KEYS)
            if key in ("piece", "seam", "keepout", "landmark", "name"):
                hint = "this is a garment spec, not a robot file; a robot file holds only [robot]"
            problems.append(Problem(source, "top level", f"unknown key '{key}'", hint=hint))
    fmt = data.get("format", ROBOT_FORMAT)
    if fmt != ROBOT_FORMAT:
        problems.append(Problem(source, "top level", f"format is {fmt!r}, not a robot file",
                                hint=f'write format = "{ROBOT_FORMAT}" or leave it out'))
    ver = data.get("version", ROBOT_VERSION)
    if ver != ROBOT_VERSION or isinstance(ver, bool):
        problems.append(Problem(source, "top level", f"version {ver!r} is not supported; this "
                                f"garnav reads version {ROBOT_VERSION}"))
    if "robot" not in data:
        problems.append(Problem(source, "top level", "has no [robot] table"))
    if problems:
        raise SpecError(problems)
    return robot_from_table(data["robot"], source)


def load_robot(path: str | os.PathLike) -> Robot:
    """Read and validate the robot file at ``path`` (UTF-8 TOML)."""
    from garnav.spec.reader import read_toml_text

    return loads_robot(*read_toml_text(path))


def dumps_robot(robot: Robot) -> str:
    """The robot as robot-file text (``loads_robot(dumps_robot(r)) == r``)."""
    from garnav.spec.writer import robot_lines, robot_to_dict

    lines = [f'format = "{ROBOT_FORMAT}"', f"version = {ROBOT_VERSION}"] + robot_lines(robot_to_dict(robot))
    return "\n".join(lines) + "\n"


def save_robot(robot: Robot, path: str | os.PathLike) -> Path:
    """Write the robot file at ``path`` atomically; return the path."""
    from garnav.spec.geometry_checks import robot_problems

    problems = robot_problems(robot, str(path))
    if problems:
        raise SpecError(problems)
    return write_text_atomic(path, dumps_robot(robot))
