"""A route as primitive motions for a two-wheeled robot, and the ``garnav-commands`` text format.

The robot counts distance with wheel encoders and heading with a gyro about the surface normal, both
intrinsic to the surface (DESIGN.md, "The one idea"), so the commands need no map on the robot:

* :class:`Turn` — rotate in place by a signed angle, counter-clockwise positive as seen from the
  side of the fabric the robot drives on. A robot on the inside sees every piece mirrored, so its
  turns have the opposite sign of the piece-frame turns.
* :class:`Go` — drive straight for a distance.
* :class:`Wait` — stand still for a time (several robots on one garment take turns).
* :class:`Cross` — a notice placed right before the :class:`Go` that drives over a seam: which seam,
  how far into that go the ridge lies, the crossing angle, and which wheel meets the ridge first and
  by how much travel it leads the other (``wheel_base × cot(angle)``, from the geometry of two wheel
  contacts ``wheel_base`` apart crossing a straight ridge).

Text syntax (documented in docs/commands.md)::

    garnav-commands 1
    # comment
    side outside
    start front 120 300 mm heading 45 deg
    turn +30 deg
    wait 2.5 s
    cross side_left_lower at 80 mm angle 72 deg lead left 11.04 mm
    go 200 mm

Numbers are written to a fixed precision — 0.01 mm for distances, 0.01° for angles, 0.001 mm for
the start position, 0.001 s for waits — with trailing zeros dropped. :func:`route_commands` puts
every number on that precision already, so a written list reads back equal to the one in memory.
It also merges the long chains of tiny turn/go pairs a route has along arcs into fewer, longer
ones within a stated tolerance (:mod:`garnav.export.steer`); :func:`precision_comment` says so
in the file's header.
"""

from __future__ import annotations

import math
import re
from pathlib import Path
from dataclasses import dataclass
from typing import Literal, Union

import numpy as np

from garnav.atomic import write_text_atomic
from garnav.errors import GarnavError, QueryError, did_you_mean
from garnav.export.path import ZERO_STEP_MM
from garnav.export.seams import seam_transfer
from garnav.export.steer import (
    ANGLE_DECIMALS,
    DEFAULT_TOLERANCE_MM,
    DISTANCE_DECIMALS,
    POSITION_DECIMALS,
    TIME_DECIMALS,
    Steering,
    merge_tolerance,
    round_deg,
    round_mm,
    round_position,
    simplify_leg,
)
from garnav.model import Garment, Robot, SeamSide
from garnav.plan.route import crossing_side
from garnav.spec.fields import MAX_ABS
from garnav.textio import read_text

__all__ = [
    "Turn",
    "Go",
    "Cross",
    "Wait",
    "Start",
    "CommandList",
    "Command",
    "CommandSyntaxError",
    "route_commands",
    "format_commands",
    "parse_commands",
    "write_commands",
    "read_commands",
    "commands_to_json",
    "FORMAT_NAME",
    "FORMAT_VERSION",
    "MAX_NUMBER",
    "DEFAULT_TOLERANCE_MM",
    "precision_comment",
]

FORMAT_NAME = "garnav-commands"
FORMAT_VERSION = 1

#: Largest magnitude of a number in a command list (mm, degrees, seconds): the garment spec's limit
#: (:data:`garnav.spec.fields.MAX_ABS`, 10 km), so a replayed go stays a bounded amount of work.
MAX_NUMBER = MAX_ABS


class CommandSyntaxError(GarnavError):
    """A command text is malformed; the message names the source, line, command and reason."""


@dataclass(frozen=True)
class Turn:
    """Rotate in place by ``angle_deg`` (CCW positive, seen from the side the robot drives on)."""

    angle_deg: float


@dataclass(frozen=True)
class Go:
    """Drive straight for ``distance_mm`` (>= 0)."""

    distance_mm: float


@dataclass(frozen=True)
class Wait:
    """Stand still for ``seconds`` (>= 0) s."""

    seconds: float


@dataclass(frozen=True)
class Cross:
    """Notice: the next :class:`Go` drives over seam ``seam`` after ``at_mm`` of its distance.

    Attributes
    ----------
    seam : str
    at_mm : float
        Distance from the start of the next go to the ridge, mm.
    angle_deg : float
        Angle between the travel direction and the seam, 0..90 degrees (90 = square on).
    lead : {"left", "right", "both"}
        The wheel that meets the ridge first, as the robot sees it ("both" when square on).
    lead_mm : float
        How much earlier (in travel) the leading wheel meets the ridge, mm.
    """

    seam: str
    at_mm: float
    angle_deg: float
    lead: Literal["left", "right", "both"] = "both"
    lead_mm: float = 0.0


@dataclass(frozen=True)
class Start:
    """The pose the commands start from (informational for the robot; used by replay)."""

    piece: str
    x_mm: float
    y_mm: float
    heading_deg: float


Command = Union[Turn, Go, Cross, Wait]


@dataclass(frozen=True)
class CommandList:
    """A command sequence with the robot's side and (optionally) the start pose."""

    commands: tuple[Command, ...]
    side: Literal["outside", "inside"] = "outside"
    start: Start | None = None

    @property
    def turn_total_deg(self) -> float:
        """Sum of the signed turns, degrees (robot's view)."""
        return float(sum(c.angle_deg for c in self.commands if isinstance(c, Turn)))

    @property
    def distance_mm(self) -> float:
        """Sum of the go distances, mm."""
        return float(sum(c.distance_mm for c in self.commands if isinstance(c, Go)))


# --------------------------------------------------------------------------- route -> commands


def route_commands(route, garment: Garment, robot: Robot | None = None,
                   tolerance_mm: float = DEFAULT_TOLERANCE_MM) -> CommandList:
    """Turn-and-go commands that drive ``route``, merged within ``tolerance_mm`` and rounded.

    Each leg is merged by Douglas–Peucker (start, seam crossings and goal kept, and the steps into
    and out of each crossing, so seams are crossed at their planned angle), then turns and
    distances are rounded to 0.01° and 0.01 mm in closed loop (:mod:`garnav.export.steer`). The
    merge uses the tolerance less what the rounding needs (0.1 mm, or half a tolerance below
    0.2 mm), so the replay of the list stays within ``tolerance_mm`` of the route everywhere as
    long as no go is longer than 1 m (a rounded go strays 0.005 mm + 8.7e-5 × its length).

    Parameters
    ----------
    route : garnav.plan.Route
        Uses ``legs`` (piece, points (n, 2) mm) and ``crossings`` (seam, from_piece, to_piece,
        point_from, point_to).
    garment : Garment
        For the seams' geometry.
    robot : Robot, optional
        Side and wheel base; defaults to ``garment.robot`` or ``Robot()``.
    tolerance_mm : float
        How far (mm) the merged path may stray from the planned one; 0 keeps every vertex.

    Returns
    -------
    CommandList
        Starts facing the first step of the route (no initial turn); every number on the written
        precision (a written file reads back equal).

    Raises
    ------
    QueryError
        When a crossing does not fit the garment's seams (unknown seam, wrong piece, or a
        ``point_to`` more than 1e-6 mm from the partner of ``point_from``), or the tolerance is
        negative or not finite.
    """
    robot = robot or garment.robot or Robot()
    if not (math.isfinite(tolerance_mm) and tolerance_mm >= 0.0):
        raise QueryError(f"the command tolerance must be zero or more mm, got {tolerance_mm!r}")
    sign = 1.0 if robot.side == "outside" else -1.0
    legs, crossings = tuple(route.legs), tuple(route.crossings)
    if len(crossings) != len(legs) - 1:
        raise QueryError(f"route has {len(legs)} legs but {len(crossings)} crossings (need legs - 1)")
    sides = [_checked_side(garment, c) for c in crossings]
    p0 = np.asarray(legs[0].points, dtype=float).reshape(-1, 2)[0]
    drive = Steering(garment, legs[0].piece, np.array([round_position(p0[0]), round_position(p0[1])]))
    for i, leg in enumerate(legs):
        pts = np.asarray(leg.points, dtype=float).reshape(-1, 2)
        merged = simplify_leg(pts, merge_tolerance(tolerance_mm), garment.piece(leg.piece).polygon,
                              keep_first_step=i > 0, keep_last_step=i < len(crossings))
        for prev, v in zip(merged[:-1], merged[1:]):
            drive.toward(v, prev)
        if i == len(crossings):
            break
        c = crossings[i]
        first = _first_heading(legs[i + 1 :], default=0.0)
        drive.cross(garment.seam(c.seam), sides[i], np.asarray(c.point_from, dtype=float),
                    first - seam_transfer(garment, garment.seam(c.seam), sides[i],
                                          np.asarray(c.point_from, dtype=float)).rotation_rad)
    drive.finish()
    commands: list[Command] = []
    for op in drive.ops:
        if op[0] == "turn":
            commands.append(Turn(sign * op[1]))
        elif op[0] == "go":
            commands.append(Go(op[1]))
        else:
            commands.append(_notice(op[1], op[2], op[3], op[4], robot, sign))
    if drive.start is None:
        first_leg = legs[0]
        q = np.asarray(first_leg.points, dtype=float).reshape(-1, 2)[0]
        start = Start(first_leg.piece, round_position(q[0]), round_position(q[1]), 0.0)
    else:
        start = Start(*drive.start)
    return CommandList(tuple(commands), side=robot.side, start=start)


def precision_comment(tolerance_mm: float) -> str:
    """The header comment line that states a list's rounding and merge tolerance."""
    merged = (f"arcs merged within {_num(tolerance_mm)} mm of the planned path" if tolerance_mm > 0
              else "every planned vertex kept")
    return f"turns to 0.01 deg, distances to 0.01 mm; {merged}"


def _checked_side(garment: Garment, c) -> SeamSide:
    """The seam side a route crossing leaves from, after checking it fits the garment's seams."""
    try:
        seam = garment.seam(c.seam)
    except KeyError:
        raise QueryError(f"route crosses seam '{c.seam}', which the garment does not have") from None
    side = crossing_side(garment, c)
    tr = seam_transfer(garment, seam, side, np.asarray(c.point_from, dtype=float))
    gap = float(np.hypot(*(tr.point_to - np.asarray(c.point_to, dtype=float))))
    if tr.to_piece != c.to_piece or gap > 1e-6:
        raise QueryError(
            f"route crossing at seam '{c.seam}': from {c.from_piece} "
            f"({c.point_from[0]:.3f}, {c.point_from[1]:.3f}) mm the partner point is on "
            f"'{tr.to_piece}' at ({tr.point_to[0]:.3f}, {tr.point_to[1]:.3f}) mm, but the route "
            f"continues on '{c.to_piece}' at ({c.point_to[0]:.3f}, {c.point_to[1]:.3f}) mm"
        )
    return side


def _first_heading(legs, default: float) -> float:
    for leg in legs:
        pts = np.asarray(leg.points, dtype=float).reshape(-1, 2)
        steps = np.diff(pts, axis=0)
        for dx, dy in steps:
            if math.hypot(dx, dy) > ZERO_STEP_MM:
                return math.atan2(dy, dx)
    return default


def _notice(seam: str, at_mm: float, heading: float, tangent: np.ndarray, robot: Robot, sign: float) -> Cross:
    """The crossing notice for travel ``heading`` (rad) over a seam with unit ``tangent``."""
    u = np.array([math.cos(heading), math.sin(heading)])
    along = float(u @ tangent)  # cos of the angle to the seam
    across = float(u[0] * tangent[1] - u[1] * tangent[0])  # sin of it (signed)
    angle = math.degrees(math.atan2(abs(across), abs(along)))
    if abs(along) <= 1e-12 or across == 0.0:
        return Cross(seam, round_mm(at_mm), round_deg(angle), "both", 0.0)
    # Left wheel (piece frame, outside view) sits at +90° from u; it meets the ridge first when
    # its offset points along the ridge normal m chosen with u·m > 0; rot90(u)·rot90(t) = u·t.
    left_first = along * math.copysign(1.0, -across) > 0
    if sign < 0:  # inside: the robot's left is the piece frame's right
        left_first = not left_first
    lead_mm = robot.wheel_base_mm * abs(along) / abs(across)
    return Cross(seam, round_mm(at_mm), round_deg(angle), "left" if left_first else "right", round_mm(lead_mm))


# --------------------------------------------------------------------------- text format

_NAME_RE = re.compile(r"[A-Za-z0-9_.:/+\-]+")
_NUMBER_RE = re.compile(r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?")
_UNESCAPE = {"n": "\n", "r": "\r"}
_TOKEN_RE = re.compile(r'\s*(?:(#.*)|("(?:[^"\\]|\\.)*")|([^\s"#]+))')


def _num(value: float, signed: bool = False, decimals: int | None = None) -> str:
    """``value`` as text: rounded to ``decimals`` places with trailing zeros dropped, or (None) in
    Python's shortest round-trip form (for messages)."""
    value = float(value)
    if decimals is None:
        text = repr(value + 0.0)
    else:
        text = f"{value:.{decimals}f}"
        if "." in text:
            text = text.rstrip("0").rstrip(".")
        if text in ("-0", ""):
            text = "0"
    if text.endswith(".0"):
        text = text[:-2]
    if text == "-0":
        text = "0"
    if signed and not text.startswith("-"):
        text = "+" + text
    return text


def _mm(value: float) -> str:
    return _num(value, decimals=DISTANCE_DECIMALS)


def _deg(value: float, signed: bool = False) -> str:
    return _num(value, signed, decimals=ANGLE_DECIMALS)


def _name(name: str) -> str:
    if _NAME_RE.fullmatch(name) and not _NUMBER_RE.fullmatch(name):
        return name
    escaped = name.replace("\\", "\\\\").replace('"', '\\"').replace("\n", "\\n").replace("\r", "\\r")
    return '"' + escaped + '"'


def format_commands(commands: CommandList, comment: str | None = None) -> str:
    """The ``garnav-commands`` text of a command list (one command per line, ``\\n`` line ends).

    ``comment`` (optional, may span lines) is written as ``#`` lines after the header.
    """
    lines = [f"{FORMAT_NAME} {FORMAT_VERSION}"]
    if comment:
        lines += [f"# {line}".rstrip() for line in comment.splitlines()]
    lines.append(f"side {commands.side}")
    s = commands.start
    if s is not None:
        lines.append(
            f"start {_name(s.piece)} {_num(s.x_mm, decimals=POSITION_DECIMALS)} "
            f"{_num(s.y_mm, decimals=POSITION_DECIMALS)} mm heading {_deg(s.heading_deg)} deg"
        )
    for c in commands.commands:
        if isinstance(c, Turn):
            lines.append(f"turn {_deg(c.angle_deg, signed=True)} deg")
        elif isinstance(c, Go):
            lines.append(f"go {_mm(c.distance_mm)} mm")
        elif isinstance(c, Wait):
            lines.append(f"wait {_num(c.seconds, decimals=TIME_DECIMALS)} s")
        elif isinstance(c, Cross):
            lines.append(
                f"cross {_name(c.seam)} at {_mm(c.at_mm)} mm angle {_deg(c.angle_deg)} deg "
                f"lead {c.lead} {_mm(c.lead_mm)} mm"
            )
        else:  # pragma: no cover - CommandList is typed
            raise TypeError(f"not a command: {c!r}")
    return "\n".join(lines) + "\n"


def _tokens(line: str, where: str) -> list[str]:
    out: list[str] = []
    pos = 0
    while pos < len(line):
        m = _TOKEN_RE.match(line, pos)
        if m is None or m.end() == pos:
            rest = line[pos:].strip()
            if not rest:
                break
            raise CommandSyntaxError(f"{where}: cannot read {rest[:20]!r} (unbalanced quote?)")
        pos = m.end()
        if m.group(1) is not None:
            break
        if m.group(2) is not None:
            raw = m.group(2)[1:-1]
            text = re.sub(r"\\(.)", lambda m: _UNESCAPE.get(m.group(1), m.group(1)), raw)
            out.append("\x00" + text)  # \x00 marks a quoted name
        elif m.group(3) is not None:
            out.append(m.group(3))
    return out


class _Line:
    """Cursor over one line's tokens with typed reads that raise clear errors."""

    def __init__(self, tokens: list[str], where: str, word: str):
        self.tokens, self.where, self.word, self.i = tokens, where, word, 1

    def fail(self, reason: str) -> CommandSyntaxError:
        return CommandSyntaxError(f"{self.where}: '{self.word}': {reason}")

    def _next(self, what: str) -> str:
        if self.i >= len(self.tokens):
            raise self.fail(f"missing {what}")
        tok = self.tokens[self.i]
        self.i += 1
        return tok

    def name(self, what: str) -> str:
        tok = self._next(what)
        return tok[1:] if tok.startswith("\x00") else tok

    def number(self, what: str) -> float:
        tok = self._next(what)
        if not _NUMBER_RE.fullmatch(tok):
            raise self.fail(f"{what} must be a number, got {tok.lstrip(chr(0))!r}")
        value = float(tok)
        if not abs(value) <= MAX_NUMBER:  # 1e999 reads as infinity; a huge go never ends on a tube
            shown = tok if len(tok) <= 24 else tok[:21] + "..."
            raise self.fail(f"{what} {shown} is too large: numbers in a command list are at most "
                            f"{MAX_NUMBER:.0e} in size (10 km in mm, as in a garment spec)")
        return value

    def keyword(self, *choices: str) -> str:
        tok = self._next(" or ".join(repr(c) for c in choices))
        if tok not in choices:
            raise self.fail(f"expected {' or '.join(repr(c) for c in choices)}, got {tok.lstrip(chr(0))!r}")
        return tok

    def unit(self, unit: str) -> None:
        tok = self._next(f"unit '{unit}'")
        if tok != unit:
            raise self.fail(f"expected unit '{unit}', got {tok.lstrip(chr(0))!r}")

    def end(self) -> None:
        if self.i < len(self.tokens):
            raise self.fail(f"unexpected {self.tokens[self.i].lstrip(chr(0))!r} at the end of the line")


def parse_commands(text: str, source: str = "<string>") -> CommandList:
    """Read a ``garnav-commands`` text.

    Raises
    ------
    CommandSyntaxError
        Naming the source, the line number, the command and the reason.
    """
    commands: list[Command] = []
    side: str = "outside"
    start: Start | None = None
    seen_header = seen_side = False
    pending: list[tuple[int, Cross]] = []
    # lines end at \n (and \r\n) only: other Unicode line breaks may sit inside quoted names
    for lineno, line in enumerate(text.split("\n"), start=1):
        line = line.removesuffix("\r")
        where = f"{source}:{lineno}"
        toks = _tokens(line, where)
        if not toks:
            continue
        word = toks[0]
        cur = _Line(toks, where, word)
        if not seen_header:
            if word != FORMAT_NAME:
                raise CommandSyntaxError(
                    f"{where}: the first statement must be '{FORMAT_NAME} {FORMAT_VERSION}', got {word.lstrip(chr(0))!r}"
                )
            version = cur.number("version")
            if version != FORMAT_VERSION:
                raise cur.fail(f"version {_num(version)} is not supported (this reader knows {FORMAT_VERSION})")
            cur.end()
            seen_header = True
            continue
        if word in ("side", "start") and (commands or pending):
            raise cur.fail("must come before the first motion command")
        if word == "side":
            if seen_side:
                raise cur.fail("given twice")
            side = cur.keyword("outside", "inside")
            seen_side = True
        elif word == "start":
            if start is not None:
                raise cur.fail("given twice")
            piece = cur.name("piece name")
            x = cur.number("x")
            y = cur.number("y")
            cur.unit("mm")
            cur.keyword("heading")
            h = cur.number("heading")
            cur.unit("deg")
            start = Start(piece, x, y, h)
        elif word == "turn":
            if pending:
                raise cur.fail(f"a 'cross' notice (line {pending[0][0]}) must be followed by the 'go' that crosses")
            commands.append(Turn(cur.number("angle")))
            cur.unit("deg")
        elif word == "go":
            d = cur.number("distance")
            cur.unit("mm")
            if d < 0:
                raise cur.fail(f"distance must be >= 0 mm, got {_num(d)}")
            for ln, notice in pending:
                if notice.at_mm > d + 1e-9:
                    raise cur.fail(f"the 'cross' notice on line {ln} puts the seam at {_num(notice.at_mm)} mm, beyond this go's {_num(d)} mm")
            commands.extend(n for _, n in pending)
            pending = []
            commands.append(Go(d))
        elif word == "wait":
            if pending:
                raise cur.fail(f"a 'cross' notice (line {pending[0][0]}) must be followed by the 'go' that crosses")
            w = cur.number("time")
            cur.unit("s")
            if w < 0:
                raise cur.fail(f"time must be >= 0 s, got {_num(w)}")
            commands.append(Wait(w))
        elif word == "cross":
            seam = cur.name("seam name")
            cur.keyword("at")
            at = cur.number("distance")
            cur.unit("mm")
            cur.keyword("angle")
            angle = cur.number("angle")
            cur.unit("deg")
            cur.keyword("lead")
            lead = cur.keyword("left", "right", "both")
            lead_mm = cur.number("lead distance")
            cur.unit("mm")
            if at < 0:
                raise cur.fail(f"'at' must be >= 0 mm, got {_num(at)}")
            if not 0.0 <= angle <= 90.0:
                raise cur.fail(f"angle must be within 0..90 deg, got {_num(angle)}")
            if lead_mm < 0:
                raise cur.fail(f"lead must be >= 0 mm, got {_num(lead_mm)}")
            pending.append((lineno, Cross(seam, at, angle, lead, lead_mm)))  # type: ignore[arg-type]
        else:
            known = ("turn", "go", "cross", "wait", "side", "start")
            hint = did_you_mean(word.lstrip("\x00"), known)
            raise CommandSyntaxError(
                f"{where}: unknown command {word.lstrip(chr(0))!r}"
                + (f"; {hint}" if hint else f" (known: {', '.join(known)})")
            )
        cur.end()
    if not seen_header:
        raise CommandSyntaxError(f"{source}: empty: no '{FORMAT_NAME} {FORMAT_VERSION}' header")
    if pending:
        raise CommandSyntaxError(f"{source}:{pending[0][0]}: 'cross': no 'go' follows this notice")
    return CommandList(tuple(commands), side=side, start=start)  # type: ignore[arg-type]


def write_commands(path, commands: CommandList, comment: str | None = None):
    """Write the command text to ``path`` atomically. Returns the path."""
    return write_text_atomic(path, format_commands(commands, comment))


def read_commands(path) -> CommandList:
    """Read a ``garnav-commands`` file."""
    p = Path(path)
    text = read_text(p, lambda reason: CommandSyntaxError(f"{p}: {reason}"))
    return parse_commands(text, source=str(p))


def commands_to_json(commands: CommandList) -> list[dict]:
    """The commands as JSON-ready dicts (``op`` = "turn" | "go" | "cross" | "wait"), units in the keys."""
    out: list[dict] = []
    for c in commands.commands:
        if isinstance(c, Turn):
            out.append({"op": "turn", "angle_deg": float(c.angle_deg)})
        elif isinstance(c, Go):
            out.append({"op": "go", "distance_mm": float(c.distance_mm)})
        elif isinstance(c, Wait):
            out.append({"op": "wait", "time_s": float(c.seconds)})
        else:
            out.append(
                {
                    "op": "cross",
                    "seam": c.seam,
                    "at_mm": float(c.at_mm),
                    "angle_deg": float(c.angle_deg),
                    "lead": c.lead,
                    "lead_mm": float(c.lead_mm),
                }
            )
    return out
