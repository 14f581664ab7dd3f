"""The ``garnav-link`` line protocol, version 1: JSON lines between a station and its robots.

Every message is one JSON object, UTF-8, on one line ended by ``\\n`` (one message per UDP
datagram; a stream of lines on a serial port), at most :data:`MAX_LINE_BYTES` bytes. Every message
carries ``v`` (the protocol version, 1), ``t`` (its type) and ``seq`` (the sender's sequence number:
1, 2, 3, ... per direction of one link, never reused). The full description — fields, units, the
handshake, reliability, heartbeat and emergency stop, and the lack of security — is docs/link.md;
this module is its single implementation: building, encoding, decoding and checking messages.

Types (``R`` = reliable: the receiver answers with an ``ack`` and the sender resends until it
comes, see :mod:`garnav.link.session`)::

    hello      station -> robot   R  station name, heartbeat timeout
    profile    robot -> station   R  answer to hello: robot name, geometry, encoder settings, placement
    commands   station -> robot   R  a plan: id, side, start pose, ops (the garnav-commands list as JSON)
    stop       station -> robot   R  emergency stop (sent first, repeated until acked)
    ack        both                  the ``seq`` of a reliable message received
    telemetry  robot -> station      a 10 Hz sample: encoder counters, gyro, heading, state, battery
    battery    robot -> station      charge fraction and voltage, 1 Hz
    done       robot -> station   R  a plan finished (or was cut short by a stop)
    error      robot -> station   R  something went wrong on the robot (code and text)
    heartbeat  both                  "I am still here"; a robot that hears nothing stops itself

Pure functions only: no sockets, no clocks.
"""

from __future__ import annotations

import json
import math
from typing import Any

from garnav.errors import GarnavError
from garnav.export.commands import Command, CommandList, Cross, Go, Start, Turn, Wait, commands_to_json

__all__ = [
    "LinkError",
    "PROTOCOL_VERSION",
    "MAX_LINE_BYTES",
    "MESSAGE_TYPES",
    "RELIABLE_TYPES",
    "encode",
    "decode",
    "message",
    "commands_message",
    "message_commands",
    "ops_to_commands",
]

PROTOCOL_VERSION = 1
#: Longest line (bytes, newline included) either side sends or accepts; a UDP datagram on
#: loopback carries up to 65507 bytes, a radio bridge often much less: keep plans short.
MAX_LINE_BYTES = 16384

# type -> required fields (besides v, t, seq) and their JSON kinds
_FIELDS: dict[str, dict[str, tuple[type, ...]]] = {
    "hello": {"station": (str,), "heartbeat_timeout_s": (int, float)},
    "profile": {"robot": (str,), "radius_mm": (int, float), "wheel_base_mm": (int, float),
                "speed_mm_s": (int, float), "side": (str,), "encoder_mm_per_tick": (int, float),
                "encoder_bits": (int,), "wheel_diameter_ratio": (int, float)},
    "commands": {"plan": (int,), "side": (str,), "ops": (list,)},
    "stop": {"reason": (str,)},
    "ack": {"ack": (int,)},
    "telemetry": {"time_s": (int, float), "plan": (int,), "state": (str,), "left_ticks": (int,),
                  "right_ticks": (int,), "gyro_z_deg_s": (int, float), "heading_deg": (int, float),
                  "seam_bump": (bool,), "battery_fraction": (int, float)},
    "battery": {"fraction": (int, float), "voltage_v": (int, float)},
    "done": {"plan": (int,), "completed": (bool,)},
    "error": {"code": (str,), "text": (str,)},
    "heartbeat": {},
}
MESSAGE_TYPES = tuple(_FIELDS)
RELIABLE_TYPES = frozenset({"hello", "profile", "commands", "stop", "done", "error"})
ROBOT_STATES = ("idle", "driving", "waiting", "stopped")


class LinkError(GarnavError):
    """A malformed message, a link that cannot be opened, or a robot that stopped answering."""


def message(kind: str, seq: int, **fields: Any) -> dict:
    """A message dict ``{"v": 1, "t": kind, "seq": seq, **fields}`` (checked).

    >>> message("ack", 7, ack=3)
    {'v': 1, 't': 'ack', 'seq': 7, 'ack': 3}
    """
    msg = {"v": PROTOCOL_VERSION, "t": kind, "seq": int(seq), **fields}
    check(msg, "message")
    return msg


def encode(msg: dict) -> bytes:
    """One line: compact JSON, sorted keys after ``v``, ``t``, ``seq``, ended by ``\\n``.

    >>> encode(message("heartbeat", 1))
    b'{"v":1,"t":"heartbeat","seq":1}\\n'
    """
    head = {k: msg[k] for k in ("v", "t", "seq") if k in msg}
    rest = {k: msg[k] for k in sorted(msg) if k not in head}
    data = (json.dumps({**head, **rest}, separators=(",", ":"), ensure_ascii=False, allow_nan=False) + "\n").encode()
    if len(data) > MAX_LINE_BYTES:
        raise LinkError(f"{msg.get('t')} message #{msg.get('seq')}: {len(data)} bytes, more than the "
                        f"protocol's {MAX_LINE_BYTES} (split the route into shorter plans)")
    return data


def decode(line: bytes | str, source: str = "link") -> dict:
    """Parse and check one line.

    Raises
    ------
    LinkError
        Naming ``source`` and the reason: not JSON, not an object, a wrong version, an unknown
        type, a missing or mistyped field.

    >>> decode(b'{"v":1,"t":"ack","seq":2,"ack":1}')["ack"]
    1
    >>> decode(b'{"v":2,"t":"ack","seq":2,"ack":1}')
    Traceback (most recent call last):
    ...
    garnav.link.protocol.LinkError: link: message #2: protocol version 2 is not supported (this garnav speaks 1)
    """
    raw = line.encode() if isinstance(line, str) else bytes(line)
    if len(raw) > MAX_LINE_BYTES:
        raise LinkError(f"{source}: a line of {len(raw)} bytes, more than {MAX_LINE_BYTES}")
    try:
        msg = json.loads(raw.decode("utf-8"))
    except (UnicodeDecodeError, json.JSONDecodeError) as exc:
        raise LinkError(f"{source}: not a JSON line ({exc.__class__.__name__}: {exc})") from None
    check(msg, source)
    return msg


def check(msg: Any, source: str) -> None:
    """Raise :class:`LinkError` unless ``msg`` is a well-formed version-1 message."""
    if not isinstance(msg, dict):
        raise LinkError(f"{source}: a message must be a JSON object, found {type(msg).__name__}")
    seq = msg.get("seq")
    if isinstance(seq, bool) or not isinstance(seq, int) or seq < 1:
        raise LinkError(f"{source}: 'seq' must be a positive integer, found {seq!r}")
    where = f"{source}: message #{seq}"
    if msg.get("v") != PROTOCOL_VERSION:
        raise LinkError(f"{where}: protocol version {msg.get('v')!r} is not supported (this garnav speaks {PROTOCOL_VERSION})")
    kind = msg.get("t")
    if kind not in _FIELDS:
        raise LinkError(f"{where}: unknown type {kind!r} (known: {', '.join(MESSAGE_TYPES)})")
    for key, kinds in _FIELDS[kind].items():
        value = msg.get(key)
        ok = isinstance(value, kinds) and not (isinstance(value, bool) and bool not in kinds)
        if not ok:
            raise LinkError(f"{where}: {kind}: '{key}' must be {_kind_words(kinds)}, found {value!r}")
        if isinstance(value, float) and not math.isfinite(value):
            raise LinkError(f"{where}: {kind}: '{key}' must be finite, found {value!r}")
    if kind == "telemetry" and msg["state"] not in ROBOT_STATES:
        raise LinkError(f"{where}: telemetry: unknown state {msg['state']!r} (known: {', '.join(ROBOT_STATES)})")
    if kind in ("commands", "profile") and msg["side"] not in ("outside", "inside"):
        raise LinkError(f"{where}: {kind}: 'side' must be 'outside' or 'inside', found {msg['side']!r}")


def _kind_words(kinds: tuple[type, ...]) -> str:
    names = {int: "an integer", float: "a number", str: "a string", bool: "true or false", list: "a list"}
    return " or ".join(dict.fromkeys(names[k] for k in kinds if not (k is int and float in kinds)))


def commands_message(seq: int, plan: int, commands: CommandList) -> dict:
    """The ``commands`` message of a plan: ops as in the route document (docs/route-format.md)."""
    fields: dict[str, Any] = {"plan": int(plan), "side": commands.side, "ops": commands_to_json(commands)}
    s = commands.start
    if s is not None:
        fields["start"] = {"piece": s.piece, "x_mm": float(s.x_mm), "y_mm": float(s.y_mm),
                           "heading_deg": float(s.heading_deg)}
    return message("commands", seq, **fields)


def message_commands(msg: dict, source: str = "link") -> CommandList:
    """The :class:`CommandList` of a ``commands`` message (raises :class:`LinkError` on bad ops)."""
    where = f"{source}: message #{msg.get('seq')}: commands"
    start = None
    if msg.get("start") is not None:
        s = msg["start"]
        try:
            start = Start(str(s["piece"]), float(s["x_mm"]), float(s["y_mm"]), float(s["heading_deg"]))
        except (KeyError, TypeError, ValueError):
            raise LinkError(f"{where}: 'start' needs piece, x_mm, y_mm and heading_deg, found {s!r}") from None
    return CommandList(ops_to_commands(msg["ops"], where), side=msg["side"], start=start)


def ops_to_commands(ops: list, where: str = "ops") -> tuple[Command, ...]:
    """Commands from their JSON form (the inverse of :func:`garnav.export.commands.commands_to_json`).

    >>> ops_to_commands([{"op": "turn", "angle_deg": 90}, {"op": "go", "distance_mm": 5}])
    (Turn(angle_deg=90.0), Go(distance_mm=5.0))
    """
    out: list[Command] = []
    for i, op in enumerate(ops):
        item = f"{where}: op {i + 1}"
        if not isinstance(op, dict):
            raise LinkError(f"{item}: must be an object, found {op!r}")
        kind = op.get("op")
        try:
            if kind == "turn":
                out.append(Turn(_finite(op["angle_deg"], item, "angle_deg")))
            elif kind == "go":
                out.append(Go(_finite(op["distance_mm"], item, "distance_mm", low=0.0)))
            elif kind == "wait":
                out.append(Wait(_finite(op["time_s"], item, "time_s", low=0.0)))
            elif kind == "cross":
                lead = op.get("lead", "both")
                if lead not in ("left", "right", "both"):
                    raise LinkError(f"{item}: 'lead' must be left, right or both, found {lead!r}")
                out.append(Cross(str(op["seam"]), _finite(op["at_mm"], item, "at_mm", low=0.0),
                                 _finite(op["angle_deg"], item, "angle_deg", low=0.0), lead,
                                 _finite(op.get("lead_mm", 0.0), item, "lead_mm", low=0.0)))
            else:
                raise LinkError(f"{item}: unknown op {kind!r} (known: turn, go, wait, cross)")
        except KeyError as exc:
            raise LinkError(f"{item}: {kind}: missing '{exc.args[0]}'") from None
    return tuple(out)


def _finite(value: Any, item: str, key: str, low: float | None = None) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
        raise LinkError(f"{item}: '{key}' must be a finite number, found {value!r}")
    if low is not None and value < low:
        raise LinkError(f"{item}: '{key}' must be >= {low:g}, found {value!r}")
    return float(value)
