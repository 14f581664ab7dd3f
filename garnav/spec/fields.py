"""The table of known keys of a garment spec file: per section, each key's type, default, unit,
allowed range and meaning. Reader, writer, validators and docs all take their facts from here.

Value types (``Field.type``):

``str``, ``bool``, ``int``
    TOML string, boolean, integer.
``float``
    A TOML integer or float (not a boolean), finite.
``point2`` / ``point3``
    An array of 2 / 3 numbers, mm.
``size2``
    An array of 2 numbers, mm, both > 0.
``points``
    An array of ``[x, y]`` arrays, mm.
``table`` / ``tables``
    A TOML table / array of tables (``[[...]]``), described by another section.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from garnav.model import KEEPOUT_KINDS

__all__ = [
    "FORMAT",
    "VERSION",
    "Field",
    "SECTIONS",
    "SHAPES",
    "SHAPE_FIELDS",
    "ROBOT_SIDES",
    "range_problem",
    "MAX_ABS",
]

MAX_ABS = 1.0e7
"""Largest magnitude of any number in a spec (mm, degrees, factors): 10 km. Larger values are
refused so that sums and squares of coordinates stay far from float overflow."""

FORMAT = "garnav-garment"
VERSION = 1

SHAPES = ("circle", "rectangle", "polygon")
ROBOT_SIDES = ("outside", "inside")

# Keys of a [[keepout]] that describe its shape: which ones each shape needs and allows.
SHAPE_FIELDS: dict[str, tuple[tuple[str, ...], tuple[str, ...]]] = {
    # shape: (required, optional)
    "circle": (("center", "radius"), ()),
    "rectangle": (("center", "size"), ("angle_deg",)),
    "polygon": (("points",), ()),
}


@dataclass(frozen=True)
class Field:
    """One known key of a spec section.

    Parameters
    ----------
    key : str
    type : str
        See the module docstring.
    required : bool
    default : object
        Value used when the key is absent (None: no value).
    unit : str
        "mm", "deg", "mm/s", "" (none).
    doc : str
        One-line meaning, used by the docs test.
    low, high : float, optional
        Allowed range of a number (or of each number in a size).
    low_open : bool
        True when ``low`` itself is not allowed (value must be > low).
    choices : tuple of str, optional
        Allowed values of a string.
    min_items : int
        Least number of points of a ``points`` value.
    section : str, optional
        For ``table``/``tables``: the name of the section that describes it.
    """

    key: str
    type: str
    required: bool = False
    default: object = None
    unit: str = ""
    doc: str = ""
    low: float | None = None
    high: float | None = None
    low_open: bool = False
    choices: tuple[str, ...] | None = None
    min_items: int = 0
    section: str | None = None

    def range_text(self) -> str:
        """The allowed range in words, e.g. ``"> 0"`` or ``"between 0 and 90"``."""
        if self.low is not None and self.high is not None:
            return f"between {_num(self.low)} and {_num(self.high)}"
        if self.low is not None:
            return f"{'>' if self.low_open else '>='} {_num(self.low)}"
        if self.high is not None:
            return f"<= {_num(self.high)}"
        return "any number"


def _num(v: float) -> str:
    return f"{v:g}"


def _fields(*fields: Field) -> dict[str, Field]:
    return {f.key: f for f in fields}


SECTIONS: dict[str, dict[str, Field]] = {
    "top": _fields(
        Field("format", "str", True, doc=f'file format, always "{FORMAT}"'),
        Field("version", "int", True, doc=f"format version, {VERSION}"),
        Field("name", "str", True, doc="garment name"),
        Field("description", "str", default="", doc="free text"),
        Field(
            "sheet_size_mm",
            "size2",
            default=(1000.0, 1000.0),
            unit="mm",
            low=0.0,
            low_open=True,
            doc="(width, height) of the sheet the pieces lie on; UV = sheet position / size",
        ),
        Field("drape", "str", doc="draped mesh (UV-mapped OBJ), path relative to this file"),
        Field("body", "str", doc="body mesh, path relative to this file"),
        Field("robot", "table", section="robot", doc="the robot profile"),
        Field("piece", "tables", True, section="piece", doc="pattern pieces"),
        Field("seam", "tables", section="seam", doc="seams joining edge runs"),
        Field("keepout", "tables", section="keepout", doc="zones the robot keeps out of"),
        Field("landmark", "tables", section="landmark", doc="named points"),
        Field("body_zone", "tables", doc="zones on the body kept away from through the drape: "
              "[[body_zone]] (docs/zones.md)"),
        Field("pose", "tables", doc="further drapes of the same pattern, one per pose of the "
              "wearer: [[pose]] (docs/poses.md)"),
    ),
    "robot": _fields(
        Field("name", "str", default="robot", doc="robot name"),
        Field("radius_mm", "float", default=20.0, unit="mm", low=0.0, low_open=True,
              doc="radius of the disc covering the footprint"),
        Field("wheel_base_mm", "float", default=30.0, unit="mm", low=0.0, low_open=True,
              doc="distance between the wheel contact points"),
        Field("speed_mm_s", "float", default=20.0, unit="mm/s", low=0.0, low_open=True,
              doc="cruise speed, for time estimates"),
        Field("side", "str", default="outside", choices=ROBOT_SIDES,
              doc="garment face it drives on"),
        Field("edge_margin_mm", "float", default=5.0, unit="mm", low=0.0,
              doc="distance kept from open edges beyond the radius"),
        Field("sensor_swath_mm", "float", unit="mm", low=0.0, low_open=True,
              doc="width covered by the robot's sensor, for sweeps"),
        Field("physics", "table", doc="mass, magnet, grip, drive and battery: [robot.physics] "
              "(docs/physics.md)"),
    ),
    "piece": _fields(
        Field("name", "str", True, doc="piece name, unique"),
        Field("placement", "table", section="placement",
              doc="piece frame → sheet frame rigid motion"),
        Field("edge", "tables", True, section="edge",
              doc="outline as consecutive named edges, counter-clockwise"),
        Field("opening", "tables", section="opening", doc="interior holes (open edges)"),
    ),
    "placement": _fields(
        Field("x", "float", default=0.0, unit="mm", doc="shift along the sheet x"),
        Field("y", "float", default=0.0, unit="mm", doc="shift along the sheet y"),
        Field("angle_deg", "float", default=0.0, unit="deg",
              doc="counter-clockwise rotation, applied before the shift"),
    ),
    "edge": _fields(
        Field("name", "str", True, doc="edge name, unique within the piece"),
        Field("points", "points", True, unit="mm", min_items=2,
              doc="polyline in the piece frame; starts where the previous edge ends"),
    ),
    "opening": _fields(
        Field("name", "str", True, doc="opening name, unique within the piece"),
        Field("points", "points", True, unit="mm", min_items=3,
              doc="closed ring (first point not repeated) inside the piece"),
    ),
    "seam": _fields(
        Field("name", "str", True, doc="seam name, unique"),
        Field("a", "table", True, section="run", doc="first edge run"),
        Field("b", "table", True, section="run", doc="second edge run, matched to a by fraction"),
        Field("crossable", "bool", default=True, doc="whether the robot may drive over it"),
        Field("crossing_cost_mm", "float", default=0.0, unit="mm", low=0.0,
              doc="extra cost of one crossing, in mm of driving"),
        Field("min_crossing_angle_deg", "float", default=0.0, unit="deg", low=0.0, high=90.0,
              doc="smallest allowed angle between route and seam"),
    ),
    "run": _fields(
        Field("piece", "str", True, doc="piece name"),
        Field("edge", "str", True, doc="edge name on that piece"),
        Field("from_mm", "float", unit="mm", low=0.0,
              doc="start, arc length along the edge (default: edge start)"),
        Field("to_mm", "float", unit="mm", low=0.0,
              doc="end, arc length along the edge (default: edge end)"),
        Field("reverse", "bool", default=False, doc="run against the edge's direction"),
    ),
    "keepout": _fields(
        Field("name", "str", True, doc="keep-out name, unique"),
        Field("piece", "str", True, doc="piece it lies on"),
        Field("kind", "str", True, choices=KEEPOUT_KINDS, doc="what it is"),
        Field("shape", "str", True, choices=SHAPES, doc="circle, rectangle or polygon"),
        Field("center", "point2", unit="mm", doc="circle/rectangle centre, piece frame"),
        Field("radius", "float", unit="mm", low=0.0, low_open=True, doc="circle radius"),
        Field("size", "size2", unit="mm", low=0.0, low_open=True,
              doc="rectangle (width, height) before rotation"),
        Field("angle_deg", "float", default=0.0, unit="deg",
              doc="rectangle rotation, counter-clockwise"),
        Field("points", "points", unit="mm", min_items=3, doc="polygon vertices, piece frame"),
        Field("clearance_mm", "float", default=0.0, unit="mm", low=0.0,
              doc="distance kept beyond the robot radius"),
        Field("hard", "bool", default=True, doc="true: never entered; false: entered at a cost"),
        Field("cost_factor", "float", default=1.0, low=1.0,
              doc="soft zones: length inside counts this many times"),
    ),
    "landmark": _fields(
        Field("name", "str", True, doc="landmark name, unique"),
        Field("piece", "str", doc="pattern landmark: piece it lies on"),
        Field("at", "point2", unit="mm", doc="pattern landmark: position in the piece frame"),
        Field("xyz", "point3", unit="mm", doc="body landmark: world position"),
        Field("description", "str", default="", doc="free text"),
    ),
}


def range_problem(section: str, key: str, value: float) -> str | None:
    """Why ``value`` is not allowed for ``section.key`` (None when it is fine).

    Non-finite numbers are never allowed.

    >>> range_problem("robot", "radius_mm", 0.0)
    'must be > 0, found 0'
    >>> range_problem("robot", "radius_mm", 3.0) is None
    True
    """
    f = SECTIONS[section][key]
    v = float(value)
    if not math.isfinite(v):
        return f"must be a finite number, found {value}"
    if abs(v) > MAX_ABS:
        return f"is too large ({v:g}); numbers must lie within ±{MAX_ABS:g}"
    if f.low is not None and (v < f.low or (f.low_open and v <= f.low)):
        return f"must be {f.range_text()}, found {v:g}"
    if f.high is not None and v > f.high:
        return f"must be {f.range_text()}, found {v:g}"
    return None
