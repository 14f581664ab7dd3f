"""The fleet tasks file (TOML): robots, their tasks and named meetings.

Format (docs/fleet.md)::

    format = "garnav-fleet-tasks"
    version = 1
    garment = "../meshes/sensing_top.toml"   # relative to this file
    gap_mm = 2.0                             # kept between any two robots beyond their radii

    robot_files = ["mini.toml"]              # robot files (garnav.spec.robot), relative paths

    [[robot]]                                # extra profiles: the keys of the spec's [robot]
    name = "mini"
    radius_mm = 14.0
    speed_mm_s = 30.0

    [[task]]
    name = "left"                            # the physical robot (unique)
    robot = "mini"                           # profile; default: the spec's [robot]
    start = "wrist_left"                     # landmark, PIECE:X,Y or xyz:X,Y,Z
    goal = "dock"                            # or leave out and name the robot in a meeting
    start_s = 0.0                            # earliest start
    priority = 0                             # higher plans first
    arrive_by_s = 120.0                      # optional deadline

    [[meeting]]
    name = "link"
    kind = "side_by_side"                    # or "dock"
    at = "sternum_left"
    robots = ["left", "right"]               # left to right facing heading_deg / arrival order
    spacing_mm = 50.0                        # centre to centre
    heading_deg = 90.0                       # common heading, piece frame of the landmark
"""

from __future__ import annotations

import math
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from garnav.errors import Problem, SpecError, did_you_mean
from garnav.model import Robot
from garnav.spec.reader import robot_from_table
from garnav.spec.robot import load_robot

__all__ = ["Task", "Meeting", "FleetTasks", "load_tasks", "tasks_from_dict", "FORMAT", "VERSION"]

FORMAT = "garnav-fleet-tasks"
VERSION = 1
MEETING_KINDS = ("side_by_side", "dock")


@dataclass(frozen=True)
class Task:
    """One physical robot and where it goes.

    ``goal`` is None when the robot's goal is a slot of a meeting. Times in s, heading in degrees
    (piece frame of the goal; None = whatever the route ends with).
    """

    name: str
    robot: Robot
    start: str
    goal: str | None = None
    start_s: float = 0.0
    priority: int = 0
    arrive_by_s: float | None = None
    heading_deg: float | None = None


@dataclass(frozen=True)
class Meeting:
    """Robots that end together at ``at``: side by side (``robots`` left to right as seen facing
    ``heading_deg``) or queued at a dock (``robots`` in arrival order, the first at ``at``, the
    others behind it against the heading). ``spacing_mm`` is centre to centre."""

    name: str
    kind: str
    at: str
    robots: tuple[str, ...]
    spacing_mm: float
    heading_deg: float


@dataclass(frozen=True)
class FleetTasks:
    """A parsed tasks file. ``garment`` is the spec path (resolved), or None when the caller gives
    the garment."""

    tasks: tuple[Task, ...]
    meetings: tuple[Meeting, ...] = ()
    gap_mm: float = 2.0
    spacing_mm: float | None = None
    time_limit_s: float = 30.0
    garment: str | None = None
    source: str = "<memory>"

    def task(self, name: str) -> Task:
        for t in self.tasks:
            if t.name == name:
                return t
        raise KeyError(name)


_TOP = {"format", "version", "garment", "gap_mm", "spacing_mm", "time_limit_s", "robot", "robot_files", "task",
        "meeting"}
_TASK = {"name": "str", "robot": "str", "start": "str", "goal": "str", "start_s": "float",
         "priority": "int", "arrive_by_s": "float", "heading_deg": "float"}
_MEETING = {"name": "str", "kind": "str", "at": "str", "robots": "strs", "spacing_mm": "float",
            "heading_deg": "float"}


class _Collect:
    def __init__(self, source: str):
        self.source = source
        self.problems: list[Problem] = []

    def add(self, item: str, reason: str, hint: str | None = None) -> None:
        self.problems.append(Problem(self.source, item, reason, hint=hint))

    def table(self, data: Any, keys: dict[str, str], item: str, required: tuple[str, ...]) -> dict | None:
        if not isinstance(data, dict):
            self.add(item, f"must be a table, found {type(data).__name__}")
            return None
        out: dict[str, Any] = {}
        ok = True
        for k, v in data.items():
            want = keys.get(k)
            if want is None:
                self.add(item, f"unknown key '{k}'", did_you_mean(k, keys))
                ok = False
                continue
            good = (
                (want == "str" and isinstance(v, str))
                or (want == "float" and isinstance(v, (int, float)) and not isinstance(v, bool) and math.isfinite(v))
                or (want == "int" and isinstance(v, int) and not isinstance(v, bool))
                or (want == "strs" and isinstance(v, list) and all(isinstance(x, str) for x in v))
            )
            if not good:
                words = {"str": "a string", "float": "a finite number", "int": "an integer",
                         "strs": "an array of strings"}
                self.add(item, f"'{k}' must be {words[want]}, found {v!r}")
                ok = False
                continue
            out[k] = float(v) if want == "float" else (tuple(v) if want == "strs" else v)
        for k in required:
            if k not in data:
                self.add(item, f"missing required key '{k}'")
                ok = False
        return out if ok else None


def _robot(c: _Collect, data: Any, index: int) -> Robot | None:
    """A [[robot]] table through the spec reader's own robot checks
    (:func:`garnav.spec.reader.robot_from_table`, sub-tables such as [robot.physics] included)."""
    try:
        return robot_from_table(data, c.source)
    except SpecError as exc:
        c.problems.extend(exc.problems)
        return None


def tasks_from_dict(data: dict, source: str = "<memory>", spec_robot: Robot | None = None) -> FleetTasks:
    """Build :class:`FleetTasks` from a parsed TOML dict; all problems at once as :class:`SpecError`.

    ``spec_robot`` is the garment's own ``[robot]`` (a task without ``robot`` uses it); it may be
    given later by :func:`garnav.fleet.plan_fleet` too, so unknown profile names are only checked
    against the file's ``[[robot]]`` tables and ``spec_robot``'s name when it is given.
    """
    c = _Collect(source)
    for k in data:
        if k not in _TOP:
            c.add("top level", f"unknown key '{k}'", did_you_mean(k, _TOP))
    if data.get("format", FORMAT) != FORMAT:
        raise SpecError([Problem(source, "top level", f"format is {data.get('format')!r}, not a fleet tasks file",
                                 hint=f'the first line should be format = "{FORMAT}"')])
    if data.get("version", VERSION) != VERSION:
        raise SpecError([Problem(source, "top level", f"version {data.get('version')!r} is not supported; "
                                 f"this garnav reads version {VERSION}")])
    numbers = {}
    for key, low in (("gap_mm", 0.0), ("spacing_mm", 1.0), ("time_limit_s", 0.0)):
        if key in data:
            v = data[key]
            if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v) or v < low:
                c.add("top level", f"'{key}' must be a number >= {low:g}, found {v!r}")
            else:
                numbers[key] = float(v)
    robots: dict[str, Robot] = {}
    if spec_robot is not None:
        robots[spec_robot.name] = spec_robot
    tables = list(_list(c, data, "robot"))
    files = data.get("robot_files", [])
    if not isinstance(files, list) or not all(isinstance(f, str) for f in files):
        c.add("top level", f"'robot_files' must be an array of paths, found {files!r}")
        files = []
    loaded: list[Robot | None] = []
    for f in files:
        path = Path(source).parent / f if source != "<memory>" else Path(f)
        try:
            loaded.append(load_robot(path))  # the standalone robot file (garnav.spec.robot)
        except SpecError as exc:
            c.problems.extend(exc.problems)
    for i, t in enumerate(tables):
        loaded.append(_robot(c, t, i))
    for r in loaded:
        if r is None:
            continue
        if r.name in robots:
            c.add(f"robot '{r.name}'", "name is used by an earlier profile" +
                  (" (the garment's own [robot])" if spec_robot is not None and r.name == spec_robot.name else ""))
            continue
        robots[r.name] = r
    default = spec_robot or (next(iter(robots.values())) if len(robots) == 1 else None)
    tasks: list[Task] = []
    names: set[str] = set()
    for i, t in enumerate(_list(c, data, "task")):
        name = t.get("name") if isinstance(t, dict) else None
        item = f"task '{name}'" if isinstance(name, str) else f"task #{i + 1}"
        v = c.table(t, _TASK, item, ("name", "start"))
        if v is None:
            continue
        if v["name"] in names:
            c.add(item, "name is used by an earlier task; every task is one robot with its own name")
            continue
        names.add(v["name"])
        prof = v.pop("robot", None)
        if prof is None:
            if default is None:
                c.add(item, "no 'robot' given and the garment has no [robot] profile")
                continue
            robot = default
        elif prof in robots:
            robot = robots[prof]
        else:
            c.add(item, f"unknown robot profile '{prof}'",
                  did_you_mean(prof, robots) or f"known: {', '.join(sorted(robots)) or 'none'}")
            continue
        if v.get("arrive_by_s") is not None and v["arrive_by_s"] < v.get("start_s", 0.0):
            c.add(item, f"'arrive_by_s' ({v['arrive_by_s']:g} s) is before 'start_s' ({v.get('start_s', 0.0):g} s)")
            continue
        if v.get("start_s", 0.0) < 0:
            c.add(item, f"'start_s' must be >= 0, found {v['start_s']:g}")
            continue
        tasks.append(Task(robot=robot, **v))
    meetings: list[Meeting] = []
    in_meeting: dict[str, str] = {}
    for i, t in enumerate(_list(c, data, "meeting")):
        name = t.get("name") if isinstance(t, dict) else None
        item = f"meeting '{name}'" if isinstance(name, str) else f"meeting #{i + 1}"
        v = c.table(t, _MEETING, item, ("name", "kind", "at", "robots", "spacing_mm", "heading_deg"))
        if v is None:
            continue
        bad = False
        if v["kind"] not in MEETING_KINDS:
            c.add(item, f"'kind' must be one of {', '.join(MEETING_KINDS)}, found {v['kind']!r}",
                  did_you_mean(v["kind"], MEETING_KINDS))
            bad = True
        if len(v["robots"]) < 2:
            c.add(item, f"needs at least two robots, found {len(v['robots'])}")
            bad = True
        if v["spacing_mm"] <= 0:
            c.add(item, f"'spacing_mm' must be > 0, found {v['spacing_mm']:g}")
            bad = True
        for r in v["robots"]:
            if r not in names:
                c.add(item, f"unknown robot '{r}' (robots are task names)", did_you_mean(r, names))
                bad = True
            elif r in in_meeting:
                c.add(item, f"robot '{r}' is already in meeting '{in_meeting[r]}'")
                bad = True
            elif next(tk for tk in tasks if tk.name == r).goal is not None:
                c.add(item, f"robot '{r}' also has a 'goal'; a robot in a meeting takes its goal from the meeting")
                bad = True
        if len(set(v["robots"])) != len(v["robots"]):
            c.add(item, "names a robot twice")
            bad = True
        if bad:
            continue
        for r in v["robots"]:
            in_meeting[r] = v["name"]
        meetings.append(Meeting(v["name"], v["kind"], v["at"], v["robots"], v["spacing_mm"], v["heading_deg"]))
    for tk in tasks:
        if tk.goal is None and tk.name not in in_meeting:
            c.add(f"task '{tk.name}'", "has no 'goal' and is in no meeting")
    if not tasks and not c.problems:
        c.add("top level", "no [[task]] tables: nothing to plan")
    if c.problems:
        raise SpecError(c.problems)
    garment = data.get("garment")
    if garment is not None and not isinstance(garment, str):
        raise SpecError([Problem(source, "top level", f"'garment' must be a path string, found {garment!r}")])
    if isinstance(garment, str) and source != "<memory>":
        garment = str(Path(source).parent / garment)
    return FleetTasks(tuple(tasks), tuple(meetings), garment=garment, source=source, **numbers)


def _list(c: _Collect, data: dict, key: str) -> list:
    v = data.get(key, [])
    if not isinstance(v, list):
        c.add("top level", f"'{key}' must be an array of tables (written [[{key}]]), found {type(v).__name__}")
        return []
    return v


def read_tasks_toml(path: str | os.PathLike) -> tuple[dict, str]:
    """Read and parse a tasks file; problems as :class:`SpecError`. Returns (dict, source)."""
    from garnav.spec.reader import read_toml_text

    text, source = read_toml_text(path)
    from garnav.textio import toml_object

    return toml_object(text, source, lambda message: SpecError(
        [Problem(source, "file", message.split(": ", 1)[1].replace("not valid TOML", "is not valid TOML"))])), source


def load_tasks(path: str | os.PathLike, spec_robot: Robot | None = None) -> FleetTasks:
    """Read a tasks file (see the module docstring)."""
    data, source = read_tasks_toml(path)
    return tasks_from_dict(data, source, spec_robot)
