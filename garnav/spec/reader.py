"""Reading a garment spec: TOML text → raw dict (``tomllib``) → :class:`~garnav.model.Garment`.

The reader checks the *structure* of the file — known keys, required keys, value types, shape
fields, landmark forms — and collects every problem instead of stopping at the first. Whatever
could be built is then handed to :func:`garnav.spec.geometry_checks.garment_problems` for the checks
that need geometry (chaining edges, orientation, overlaps, references, ranges). All problems of both
passes are raised together as one :class:`~garnav.errors.SpecError`.
"""

from __future__ import annotations

import datetime
import os
from typing import Any

from garnav.errors import Problem, SpecError, did_you_mean
from garnav.textio import toml_object
from garnav.model import (
    Circle,
    Edge,
    Garment,
    KeepOut,
    Landmark,
    Opening,
    Piece,
    Placement,
    PolygonShape,
    Rectangle,
    Robot,
    Seam,
    SeamRun,
)
from garnav.spec.fields import FORMAT, SECTIONS, SHAPE_FIELDS, SHAPES, VERSION, Field
from garnav.spec.geometry_checks import geometry_problems
from garnav.mechanics.profile import physics_from_table
from garnav.textio import read_text

__all__ = ["parse_toml", "read_toml_text", "garment_from_dict", "loads_garment", "load_garment", "robot_from_table"]


def parse_toml(text: str, source: str = "<string>") -> dict[str, Any]:
    """Parse TOML text into a dict; an empty or malformed text raises :class:`SpecError`.

    Parameters
    ----------
    text : str
        The file's text.
    source : str
        File name used in messages.
    """
    if not text.strip():
        raise SpecError([Problem(source, "file", "is empty; a garment spec starts with "
                                 f'format = "{FORMAT}" and version = {VERSION}')])
    # A syntax error carries tomllib's "(at line L, column C)".
    data = toml_object(text, source, lambda message: SpecError(
        [Problem(source, "file", message.split(": ", 1)[1].replace("not valid TOML", "is not valid TOML"))]))
    if not data:
        raise SpecError([Problem(source, "file", "has no keys (only comments or blank lines)")])
    return data


def loads_garment(text: str, source: str = "<string>") -> Garment:
    """Read a garment from spec text, validating it fully.

    Raises
    ------
    SpecError
        With every problem found, each naming ``source``, the item and the reason.
    """
    return garment_from_dict(parse_toml(text, source), source)


def read_toml_text(path: str | os.PathLike) -> tuple[str, str]:
    """(text, source) of a TOML input file (spec, robot, tasks, seams): a file that cannot be read
    raises :class:`SpecError` with the reason of :func:`garnav.textio.read_text`."""
    source = str(path)
    return read_text(path, lambda reason: SpecError([Problem(source, "file", reason)])), source


def load_garment(path: str | os.PathLike) -> Garment:
    """Read and validate the garment spec file at ``path`` (UTF-8 TOML)."""
    return loads_garment(*read_toml_text(path))


def garment_from_dict(data: dict[str, Any], source: str = "<string>") -> Garment:
    """Build a garment from parsed TOML, checking structure and geometry; raise on any problem."""
    return _Reader(source).garment(data)


def robot_from_table(table: Any, source: str = "<string>") -> Robot:
    """Build a :class:`Robot` from a parsed ``[robot]`` table (sub-tables included), checking
    every key and value; raise :class:`SpecError` with every problem."""
    reader = _Reader(source)
    if not isinstance(table, dict):
        raise SpecError([Problem(source, "robot", f"must be a table, found {_describe(table)}")])
    robot = reader.robot(table)
    if robot is not None:
        from garnav.spec.geometry_checks import robot_problems

        reader.problems.extend(robot_problems(robot, source))
    if reader.problems or robot is None:
        raise SpecError(sorted(reader.problems, key=lambda p: p.item != "robot"))
    return robot


# --------------------------------------------------------------------------------------------
_TYPE_WORDS = {
    "str": "a string",
    "bool": "a boolean (true or false)",
    "int": "an integer",
    "float": "a number",
    "point2": "an array of 2 numbers [x, y]",
    "point3": "an array of 3 numbers [x, y, z]",
    "size2": "an array of 2 numbers [width, height]",
    "points": "an array of [x, y] points",
    "table": "a table",
    "tables": "an array of tables",
}


def _describe(value: Any) -> str:
    """A short description of a TOML value's type for messages."""
    if isinstance(value, bool):
        return f"a boolean ({'true' if value else 'false'})"
    if isinstance(value, int):
        return f"an integer ({value})" if abs(value) <= _MAX_INT else "an integer too large for TOML"
    if isinstance(value, float):
        return f"a number ({value})"
    if isinstance(value, str):
        shown = value if len(value) <= 30 else value[:27] + "..."
        return f"a string ({shown!r})"
    if isinstance(value, list):
        return f"an array of {len(value)} item{'s' if len(value) != 1 else ''}"
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, (datetime.date, datetime.time, datetime.datetime)):
        return "a date/time"
    return type(value).__name__


def _is_number(v: Any) -> bool:
    """A TOML integer or float, not a boolean, and small enough to be a float."""
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        return False
    return not isinstance(v, int) or abs(v) <= _MAX_INT


_MAX_INT = 2**63 - 1  # TOML integers are 64-bit; tomllib accepts longer ones


_SECTION_ORDER = ("file", "top level", "robot", "piece", "seam", "keepout", "landmark", "body_zone", "pose")


def _section_rank(problem: Problem) -> int:
    """Order problems as the sections of a file (a stable sort keeps the order within one)."""
    head = problem.item.split(" ")[0]
    if problem.item.startswith("top level"):
        head = "top level"
    return _SECTION_ORDER.index(head) if head in _SECTION_ORDER else len(_SECTION_ORDER)


def _control_character(text: str, allowed: str = "") -> str | None:
    """The first control character of ``text`` (C0, DEL, C1: Unicode category Cc) not in
    ``allowed``, or None."""
    for ch in text:
        code = ord(ch)
        if (code < 0x20 or 0x7F <= code < 0xA0) and ch not in allowed:
            return ch
    return None


class _Invalid(Exception):
    """A value has the wrong type; carries the reason."""


class _Reader:
    def __init__(self, source: str):
        self.source = source
        self.problems: list[Problem] = []
        self.broken_pieces: set[str] = set()  # named in the file but not buildable

    # -- collecting --------------------------------------------------------------------------
    def add(self, item: str, reason: str, where=None, hint: str | None = None) -> None:
        self.problems.append(Problem(self.source, item, reason, where, hint))

    def build(self, item: str, make, *args, **kwargs):
        """``make(*args, **kwargs)``, or None with the constructor's problems (non-finite numbers)
        recorded against ``item`` of this file."""
        try:
            return make(*args, **kwargs)
        except SpecError as exc:
            for p in exc.problems:
                self.add(item, p.reason, p.where, p.hint)
            return None

    # -- values ------------------------------------------------------------------------------
    def convert(self, f: Field, value: Any) -> Any:
        """Check ``value``'s type against field ``f``; return it converted (floats, tuples)."""
        t = f.type
        want = _TYPE_WORDS[t]
        if t == "str":
            if not isinstance(value, str):
                raise _Invalid(f"must be {want}, found {_describe(value)}")
            bad = _control_character(value, "\n\t" if f.key == "description" else "")
            if bad is not None:  # it would move the cursor or clear the screen when printed
                raise _Invalid(f"contains the control character U+{ord(bad):04X}; use printable text")
            return value
        if t == "bool":
            if not isinstance(value, bool):
                raise _Invalid(f"must be {want}, found {_describe(value)}")
            return value
        if t == "int":
            if isinstance(value, bool) or not isinstance(value, int) or abs(value) > _MAX_INT:
                raise _Invalid(f"must be {want}, found {_describe(value)}")
            return value
        if t == "float":
            if not _is_number(value):
                raise _Invalid(f"must be {want}, found {_describe(value)}")
            return float(value)
        if t in ("point2", "point3", "size2"):
            n = 3 if t == "point3" else 2
            if not isinstance(value, list) or len(value) != n or not all(map(_is_number, value)):
                raise _Invalid(f"must be {want}, found {_describe(value)}")
            return tuple(float(v) for v in value)
        if t == "points":
            if not isinstance(value, list):
                raise _Invalid(f"must be {want}, found {_describe(value)}")
            out = []
            for i, p in enumerate(value):
                if not isinstance(p, list) or len(p) != 2 or not all(map(_is_number, p)):
                    raise _Invalid(
                        f"point {i + 1} must be an array of 2 numbers [x, y], found {_describe(p)}"
                    )
                out.append((float(p[0]), float(p[1])))
            if len(out) < f.min_items:
                raise _Invalid(f"needs at least {f.min_items} points, found {len(out)}")
            return tuple(out)
        if t == "table":
            if not isinstance(value, dict):
                raise _Invalid(f"must be {want}, found {_describe(value)}")
            return value
        if t == "tables":
            if not isinstance(value, list) or not all(isinstance(v, dict) for v in value):
                raise _Invalid(
                    f"must be {want} (written [[{f.key}]]), found {_describe(value)}"
                )
            return value
        raise AssertionError(t)  # pragma: no cover - fields.py only uses the types above

    def section(
        self, data: dict[str, Any], section: str, item: str, allowed: set[str] | None = None
    ) -> tuple[dict[str, Any], bool]:
        """Check a table's keys and value types against ``SECTIONS[section]``.

        Returns the converted values (absent optional keys → their default) and whether every
        key was fine. ``allowed`` narrows the known keys further (keep-out shapes).
        """
        fields = SECTIONS[section]
        ok = True
        values: dict[str, Any] = {}
        for key in data:
            if key not in fields:
                self.add(item, f"unknown key '{key}'", hint=did_you_mean(key, fields))
                ok = False
        for key, f in fields.items():
            if key not in data:
                if f.required:
                    self.add(item, f"missing required key '{key}' ({_TYPE_WORDS[f.type]})")
                    ok = False
                values[key] = f.default
                continue
            try:
                values[key] = self.convert(f, data[key])
            except _Invalid as exc:
                self.add(item, f"'{key}' {exc}")
                ok = False
                values[key] = None
        return values, ok

    # -- the garment -------------------------------------------------------------------------
    def garment(self, data: dict[str, Any]) -> Garment:
        v, _ = self.section(data, "top", "top level")
        fmt = data.get("format")
        if isinstance(fmt, str) and fmt != FORMAT:
            raise SpecError([Problem(self.source, "top level",
                                     f"format is '{fmt}', not a garnav garment spec",
                                     hint=f'the first line should be format = "{FORMAT}"')])
        ver = data.get("version")
        if isinstance(ver, int) and not isinstance(ver, bool) and ver != VERSION:
            raise SpecError([Problem(self.source, "top level",
                                     f"version {ver} is not supported; this garnav reads "
                                     f"version {VERSION}")])

        robot = self.robot(v["robot"]) if v["robot"] is not None else None
        pieces = [p for i, t in enumerate(v["piece"] or ()) if (p := self.piece(t, i)) is not None]
        seams = [s for i, t in enumerate(v["seam"] or ()) if (s := self.seam(t, i)) is not None]
        keepouts = [
            k for i, t in enumerate(v["keepout"] or ()) if (k := self.keepout(t, i)) is not None
        ]
        landmarks = [
            m for i, t in enumerate(v["landmark"] or ()) if (m := self.landmark(t, i)) is not None
        ]
        body_zones: tuple = ()
        if v["body_zone"] is not None:  # [[body_zone]]: garnav.zones.model
            from garnav.zones.model import parse_body_zones

            known = {m.name: True for m in landmarks}
            known.update({t["name"]: True for t in (v["landmark"] or ()) if isinstance(t.get("name"), str)})
            body_zones, found = parse_body_zones(v["body_zone"], self.source, known)
            for item, reason, hint in found:
                self.add(item, reason, hint=hint)
        poses: tuple = ()
        drape, body = v["drape"], v["body"]
        if v["pose"] is not None:  # [[pose]]: garnav.poses.model
            from garnav.poses.model import default_pose_problems, parse_poses

            poses, found = parse_poses(v["pose"], self.source)
            found += default_pose_problems(poses, drape)
            for item, reason, hint in found:
                self.add(item, reason, hint=hint)
            default = next((p for p in poses if p.drape == drape), poses[0] if poses else None)
            if default is not None:  # the top-level drape's pose (else the first) is the default
                drape, body = default.drape, (default.body if body is None else body)
        garment = Garment(
            name=v["name"] if isinstance(v["name"], str) else "",
            pieces=tuple(pieces),
            seams=tuple(seams),
            keepouts=tuple(keepouts),
            landmarks=tuple(landmarks),
            robot=robot,
            sheet_size_mm=v["sheet_size_mm"] or (1000.0, 1000.0),
            drape=drape,
            body=body,
            description=v["description"] or "",
            body_zones=body_zones,
            poses=poses,
        )
        self.problems.extend(
            geometry_problems(
                garment,
                self.source,
                broken_pieces=self.broken_pieces,
                check_sheet=v["sheet_size_mm"] is not None,
                check_pieces=v["piece"] is not None,
            )
        )
        if self.problems:
            raise SpecError(sorted(self.problems, key=_section_rank))
        return garment

    @staticmethod
    def _label(kind: str, table: dict[str, Any], index: int) -> str:
        name = table.get("name")
        return f"{kind} '{name}'" if isinstance(name, str) else f"{kind} #{index + 1}"

    def robot(self, table: dict[str, Any]) -> Robot | None:
        table = dict(table)
        odometry_table = table.pop("odometry", None)  # [robot.odometry]: garnav.uncertainty
        v, ok = self.section(table, "robot", "robot")
        if odometry_table is not None:
            from garnav.uncertainty.model import parse_odometry

            v["odometry"], odometry_problems = parse_odometry(odometry_table, self.source)
            self.problems.extend(odometry_problems)
            ok &= not odometry_problems
        if v.get("physics") is not None:
            v["physics"], found = physics_from_table(v["physics"], "robot physics")
            for item, reason, hint in found:
                self.add(item, reason, hint=hint)  # the rest of [robot] is still checked
        return self.build("robot", Robot, **v) if ok else None

    def piece(self, table: dict[str, Any], index: int) -> Piece | None:
        item = self._label("piece", table, index)
        v, ok = self.section(table, "piece", item)
        placement = Placement()
        if v["placement"] is not None:
            pv, pok = self.section(v["placement"], "placement", f"{item} placement")
            ok &= pok
            if pok:
                placement = Placement(**pv)
        edges = []
        for i, t in enumerate(v["edge"] or ()):
            ev, eok = self.section(t, "edge", f"{item} {self._label('edge', t, i)}")
            ok &= eok
            if eok:
                edges.append(Edge(ev["name"], ev["points"]))
        if v["edge"] == []:
            self.add(item, "has no edges; give its outline as [[piece.edge]] tables")
            ok = False
        openings = []
        for i, t in enumerate(v["opening"] or ()):
            ov, ook = self.section(t, "opening", f"{item} {self._label('opening', t, i)}")
            ok &= ook
            if ook:
                openings.append(Opening(ov["name"], ov["points"]))
        if not ok:
            if isinstance(v["name"], str):
                self.broken_pieces.add(v["name"])
            return None
        return Piece(v["name"], tuple(edges), tuple(openings), placement)

    def seam(self, table: dict[str, Any], index: int) -> Seam | None:
        item = self._label("seam", table, index)
        v, ok = self.section(table, "seam", item)
        runs = {}
        for side in ("a", "b"):
            if v[side] is None:
                continue
            rv, rok = self.section(v[side], "run", f"{item} run {side}")
            ok &= rok
            if rok:
                runs[side] = SeamRun(**rv)
        if not ok:
            return None
        return Seam(
            v["name"],
            runs["a"],
            runs["b"],
            crossable=v["crossable"],
            crossing_cost_mm=v["crossing_cost_mm"],
            min_crossing_angle_deg=v["min_crossing_angle_deg"],
        )

    def keepout(self, table: dict[str, Any], index: int) -> KeepOut | None:
        item = self._label("keepout", table, index)
        v, ok = self.section(table, "keepout", item)
        shape = v["shape"]
        if isinstance(shape, str) and shape not in SHAPES:
            self.add(item, f"unknown shape '{shape}'; valid shapes: {', '.join(SHAPES)}",
                     hint=did_you_mean(shape, SHAPES))
            return None
        if not ok or shape is None:
            return None
        required, optional = SHAPE_FIELDS[shape]
        all_shape_keys = {k for r, o in SHAPE_FIELDS.values() for k in r + o}
        for key in sorted(all_shape_keys):
            if key in table and key not in required + optional:
                self.add(item, f"'{key}' does not apply to a {shape} keep-out",
                         hint=f"a {shape} takes {', '.join(required + optional)}")
                ok = False
        for key in required:
            if key not in table:
                self.add(item, f"a {shape} keep-out needs '{key}'")
                ok = False
        if not ok:
            return None
        if shape == "circle":
            geometry = self.build(item, Circle, v["center"][0], v["center"][1], v["radius"])
        elif shape == "rectangle":
            geometry = self.build(item, Rectangle, v["center"][0], v["center"][1], v["size"][0], v["size"][1],
                                  v["angle_deg"])
        else:
            geometry = self.build(item, PolygonShape, v["points"])
        if geometry is None:
            return None
        return self.build(
            item,
            KeepOut,
            v["name"],
            v["piece"],
            v["kind"],
            geometry,
            clearance_mm=v["clearance_mm"],
            hard=v["hard"],
            cost_factor=v["cost_factor"],
        )

    def landmark(self, table: dict[str, Any], index: int) -> Landmark | None:
        item = self._label("landmark", table, index)
        v, ok = self.section(table, "landmark", item)
        has_at, has_xyz, has_piece = "at" in table, "xyz" in table, "piece" in table
        if has_at and has_xyz:
            self.add(item, "has both 'at' (pattern point) and 'xyz' (body point); give one",
                     hint="a pattern landmark takes piece + at, a body landmark takes xyz")
            return None
        if not has_at and not has_xyz:
            self.add(item, "has neither 'at' nor 'xyz'",
                     hint="a pattern landmark takes piece + at = [x, y], a body landmark "
                     "takes xyz = [x, y, z]")
            return None
        if has_at and not has_piece:
            self.add(item, "has 'at' but no 'piece'; a pattern point needs the piece it lies on")
            return None
        if has_xyz and has_piece:
            self.add(item, "has 'piece' and 'xyz'; a body landmark (xyz) takes no piece",
                     hint="for a pattern landmark give piece + at instead of xyz")
            return None
        if not ok:
            return None
        if has_at:
            return self.build(item, Landmark, v["name"], piece=v["piece"], x=v["at"][0], y=v["at"][1],
                              description=v["description"])
        return self.build(item, Landmark, v["name"], xyz=v["xyz"], description=v["description"])

