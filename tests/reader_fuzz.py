"""Structure-aware fuzzing of garnav's three text readers (hypothesis strategies and the property).

The readers and what each one is here:

* **spec** — :func:`garnav.spec.load_garment`: a garment spec file (TOML) → :class:`~garnav.Garment`.
* **route** — what ``garnav drift`` / ``track`` / ``simulate`` do with a route document
  (:func:`garnav.cli._routes.route_inputs`: :func:`~garnav.export.waypoints.read_route_document`,
  the check against the garment, :func:`~garnav.export.waypoints.document_route` and the command
  list of the route), which includes everything ``garnav show`` and ``garnav page`` read.
* **commands** — :func:`garnav.export.commands.read_commands`, then
  :func:`garnav.export.replay.replay_commands` of the list on its garment when it has a start pose.

The property (:func:`check_input`): every input either reads, or raises a
:class:`~garnav.errors.GarnavError` whose message is not empty and names the file (the replay of a
command list that *was* read is an API on a :class:`CommandList`, not on a file: its error must be
a ``GarnavError`` with a message). Any other exception, and any example that takes longer than
:data:`HANG_S`, is a failure. Input sizes are bounded so that an example is quick unless a reader
does unbounded work.

The strategies start from real files — the demo spec ``meshes/sensing_top.toml`` and a route
document and command list planned with the API on a test garment — and mutate them: keys deleted,
duplicated, renamed or added; values replaced by other types, NaN, infinities, huge, tiny and
negative numbers, control and non-ASCII characters; deep nesting; truncation; random bytes; other
text encodings. ``tests/test_fuzz_readers.py`` runs them with a small example count; the benchmark
``benchmarks/fuzz_case.py`` with 1,000 or more per reader.
"""

from __future__ import annotations

import json
import marshal
import re
import signal
import tomllib
from collections.abc import Callable
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import tomli_w
from hypothesis import strategies as st

import garments
from garnav.errors import GarnavError

ROOT = Path(__file__).resolve().parent.parent
DEMO_SPEC = ROOT / "meshes" / "sensing_top.toml"

#: An example taking longer than this (s) counts as a hang (generous: the test machine is shared).
HANG_S = 30.0
READERS = ("spec", "route", "commands")


# ----------------------------------------------------------------------------- seed files

@dataclass(frozen=True)
class Seeds:
    """The real files the mutations start from, and what the route and commands readers need.

    Attributes
    ----------
    spec_text : str
        The demo spec, ``meshes/sensing_top.toml``.
    route_text : str
        A ``garnav-route`` document (JSON) planned on ``garment``, crossing its seam.
    commands_text : str
        The ``garnav-commands`` list of that route.
    garment_spec : Path
        ``garment`` saved as a spec (the route reader's ``--garment``).
    garment : Garment
    """

    spec_text: str
    route_text: str
    commands_text: str
    garment_spec: Path
    garment: object


def make_seeds(folder: Path) -> Seeds:
    """Plan a route across the seam of ``garments.two_panels()`` and write its spec into ``folder``."""
    from garnav.export.commands import format_commands, route_commands
    from garnav.export.waypoints import document_json, route_document
    from garnav.plan import Planner
    from garnav.spec import save_garment

    g = garments.two_panels()
    spec = Path(folder) / "two_panels.toml"
    save_garment(g, spec)
    route = Planner(g).route(("left", 60.0, 90.0), ("right", 240.0, 330.0))
    assert route.crossings, "the seed route must cross the seam"
    return Seeds(
        spec_text=DEMO_SPEC.read_text(encoding="utf-8"),
        route_text=document_json(route_document(route, g)),
        commands_text=format_commands(route_commands(route, g, g.robot), comment="seed"),
        garment_spec=spec,
        garment=g,
    )


# ----------------------------------------------------------------------------- values

_NASTY_NUMBERS = (
    float("nan"), float("inf"), float("-inf"), 1e308, -1e308, 1.7976931348623157e308, 5e-324, -0.0, 0.0,
    -1.0, -1e9, 1e7, 1e7 + 1.0, 2**53 + 1, 2**63 - 1, 2**63, -(2**63), 2**64, 10**30, 0, -1,
)
_NASTY_TEXT = (
    "", " ", "\x00", "\x1b[2J", "\x7f", "\x85", "\u202e", "\ufeff", "é", "\U0001f9f5", "名前",
    "a" * 300, "front", "back", "middle", "left", "right", "\n", "\r", "\t", "\\", '"', "#", "nan",
)
_NAMES = st.one_of(st.sampled_from(_NASTY_TEXT), st.text(max_size=12))


def _scalars():
    return st.one_of(
        st.sampled_from(_NASTY_NUMBERS),
        st.floats(allow_nan=True, allow_infinity=True),
        st.integers(min_value=-(2**70), max_value=2**70),
        st.booleans(),
        _NAMES,
    )


def _values(max_leaves: int = 12):
    """Any value a TOML or JSON document may hold, nested a little (deep nesting is made as text)."""
    return st.recursive(
        _scalars(),
        lambda inner: st.one_of(st.lists(inner, max_size=4), st.dictionaries(_NAMES, inner, max_size=3)),
        max_leaves=max_leaves,
    )


# ----------------------------------------------------------------------------- tree mutations

def _pick(draw, n: int) -> int:
    """An index in range(n), near uniform: hypothesis favours small integers, so the drawn one is
    scrambled by Knuth's multiplicative hash (TAOCP vol. 3, §6.4) before it is reduced."""
    return (draw(st.integers(0, 2**32 - 1)) * 2654435761 % 2**32) % n


def _walk(draw, tree):
    """(container, key) of a node chosen by walking down from the root (the root's key is None)."""
    parent, key = None, None
    node = tree
    while isinstance(node, (dict, list)) and node and (parent is None or draw(st.integers(0, 7)) > 0):
        keys = list(node) if isinstance(node, dict) else list(range(len(node)))
        k = keys[_pick(draw, len(keys))]
        parent, key, node = node, k, node[k]
    return parent, key


def _schema_paths(tree) -> dict[tuple, list[tuple]]:
    """Every node's path, grouped by its schema (the path with list indices as ``*``), so that a
    rare field (a crossing's ``fraction``) is chosen as often as a common one (a waypoint's ``x``)."""
    out: dict[tuple, list[tuple]] = {}

    def visit(node, path, schema):
        out.setdefault(schema, []).append(path)
        items = node.items() if isinstance(node, dict) else enumerate(node) if isinstance(node, list) else ()
        for k, v in items:
            visit(v, path + (k,), schema + ((k,) if isinstance(node, dict) else ("*",)))

    visit(tree, (), ())
    out.pop((), None)
    return out


def _at_schema(draw, tree):
    """(container, key) of a node of a schema drawn uniformly, or None for an empty tree."""
    groups = _schema_paths(tree)
    if not groups:
        return None
    schemas = sorted(groups, key=repr)
    paths = groups[schemas[_pick(draw, len(schemas))]]
    path = paths[_pick(draw, len(paths))]
    parent = tree
    for k in path[:-1]:
        parent = parent[k]
    return parent, path[-1]


def _mutate_tree(draw, tree, toml: bool):
    """Apply one structural change to ``tree`` (in place) at a drawn node."""
    parent, key = _walk(draw, tree)
    if draw(st.booleans()):
        found = _at_schema(draw, tree)
        if found is not None:
            parent, key = found
    if parent is None:
        parent, key = tree, draw(st.sampled_from(list(tree))) if tree else None
        if key is None:
            return
    op = draw(st.sampled_from(("delete", "replace", "retype", "add", "rename", "copy", "grow", "empty")))
    value = parent[key]
    if op == "delete":
        del parent[key]
    elif op == "replace":
        parent[key] = draw(_scalars())
    elif op == "retype":  # the same information in another type
        options = [str(value), [value], {"value": value}]
        if isinstance(value, (int, float)) and not isinstance(value, bool) and np.isfinite(value):
            options += [-value, value * 1e300, int(value), value + 1e-9]
        parent[key] = draw(st.sampled_from(options))
    elif op == "add":
        if isinstance(parent, dict):
            parent[draw(_NAMES)] = draw(_values())
        else:
            parent.insert(_pick(draw, len(parent) + 1), draw(_values()))
    elif op == "rename" and isinstance(parent, dict):
        new = draw(st.one_of(_NAMES, st.just(str(key) + "s"), st.just(str(key)[:-1]), st.just(str(key).upper())))
        parent[new] = parent.pop(key)
    elif op == "copy":  # a value of another place, e.g. a piece's edges in a seam
        other_parent, other_key = _walk(draw, tree)
        if other_parent is not None:
            parent[key] = _copy(other_parent[other_key])
    elif op == "grow" and isinstance(value, list):
        n = draw(st.integers(0, 200))
        parent[key] = value + [(_copy(value[-1]) if value else 0) for _ in range(n)]
    elif op == "empty":
        parent[key] = type(value)() if isinstance(value, (list, dict, str)) else None
        if parent[key] is None:
            del parent[key]


def _copy(value):
    return json.loads(json.dumps(value)) if not isinstance(value, float) else value


def _toml_text(tree) -> str | None:
    try:
        return tomli_w.dumps(tree)
    except (TypeError, ValueError, RecursionError):  # no TOML for it (e.g. a null): skip
        return None


def _json_text(tree, draw) -> str:
    return json.dumps(tree, indent=draw(st.sampled_from((None, 1))), ensure_ascii=draw(st.booleans()))


# ----------------------------------------------------------------------------- text mutations

def _mutate_text(draw, text: str) -> str:
    lines = text.split("\n")
    op = draw(st.sampled_from(("truncate", "drop_line", "dup_line", "swap_lines", "insert", "splice", "nest", "token")))
    if op == "truncate":
        return text[: _pick(draw, len(text) + 1)]
    i = _pick(draw, max(len(lines), 1))
    if op == "drop_line":
        return "\n".join(lines[:i] + lines[i + 1:])
    if op == "dup_line":  # a duplicated key or table header, a command given twice
        return "\n".join(lines[: i + 1] + [lines[i]] + lines[i + 1:])
    if op == "swap_lines":
        j = _pick(draw, max(len(lines), 1))
        lines[i], lines[j] = lines[j], lines[i]
        return "\n".join(lines)
    if op == "insert":
        pos = _pick(draw, len(text) + 1)
        return text[:pos] + draw(st.one_of(st.sampled_from(_NASTY_TEXT), st.text(max_size=20))) + text[pos:]
    if op == "splice":  # a piece of the file elsewhere in it
        a = _pick(draw, len(text) + 1)
        b = min(len(text), a + _pick(draw, 400))
        pos = _pick(draw, len(text) + 1)
        return text[:pos] + text[a:b] + text[pos:]
    if op == "nest":  # deep nesting: arrays (TOML, JSON) or inline tables / objects
        depth = draw(st.sampled_from((50, 500, 1000, 5000, 20000)))
        opener, closer = draw(st.sampled_from((("[", "]"), ("{", "}"), ('{"a": ', "}"), ("{a = ", "}"))))
        pos = _pick(draw, len(text) + 1)
        return text[:pos] + opener * depth + "1" + closer * draw(st.sampled_from((0, depth))) + text[pos:]
    # token: one number or word of the text replaced
    words = [(m.start(), m.end()) for m in _WORD.finditer(text)]
    if not words:
        return text
    a, b = words[_pick(draw, len(words))]
    new = draw(st.one_of(st.sampled_from(_NASTY_TOKENS), st.sampled_from(_NASTY_TEXT), st.text(max_size=8)))
    return text[:a] + new + text[b:]


_WORD = re.compile(r"[-+]?[\w.]+")
_NASTY_TOKENS = (
    "nan", "inf", "-inf", "+inf", "NaN", "Infinity", "1e999", "-1e999", "1e308", "1e-400", "-0", "0",
    "-1", "99999999999999999999999", "9" * 5000, "1_000", "0x10", "1.", ".5", "+", "-", ".", "e5",
    "true", "null", "1979-05-27T07:32:00Z", "\u0661\u0662", "１２", "10000000.5", "1e7",
)


def _encode(draw, text: str) -> bytes:
    how = draw(st.sampled_from(("utf-8",) * 15 + ("utf-8-sig", "utf-16", "latin-1", "cp1252", "bytes")))
    if how == "bytes":
        data = text.encode("utf-8", errors="surrogatepass")
        pos = _pick(draw, len(data) + 1)
        return data[:pos] + draw(st.binary(min_size=1, max_size=16)) + data[pos:]
    return text.encode(how, errors="surrogatepass" if how.startswith("utf-8") else "replace")


# ----------------------------------------------------------------------------- the strategies

@st.composite
def _document_bytes(draw, seed_text: str, kind: str, seed_tree: bytes | None) -> bytes:
    choice = draw(st.integers(0, 99))  # (hypothesis favours the ends of a range: 0 and 99 are rare cases)
    if choice in (0, 99):  # random bytes, or random text
        return draw(st.one_of(st.binary(max_size=400), st.text(max_size=200).map(lambda s: s.encode("utf-8", "surrogatepass"))))
    text = seed_text
    text_edits = draw(st.integers(1, 3))
    if kind in ("spec", "route") and choice <= 84:  # mutate the parsed tree, write it again
        tree = marshal.loads(seed_tree)  # a fresh copy of the parsed seed
        for _ in range(draw(st.integers(1, 4))):
            _mutate_tree(draw, tree, toml=kind == "spec")
        new = _toml_text(tree) if kind == "spec" else _json_text(tree, draw)
        if new is not None:
            text = new
            text_edits = 1 if draw(st.integers(0, 9)) == 5 else 0
    for _ in range(text_edits):
        text = _mutate_text(draw, text)
    return _encode(draw, text)


def reader_inputs(kind: str, seeds: Seeds):
    """The strategy of fuzzed file contents (bytes) for reader ``kind`` ("spec", "route", "commands")."""
    seed = {"spec": seeds.spec_text, "route": seeds.route_text, "commands": seeds.commands_text}[kind]
    tree = tomllib.loads(seed) if kind == "spec" else json.loads(seed) if kind == "route" else None
    return _document_bytes(seed, kind, None if tree is None else marshal.dumps(tree))


# ----------------------------------------------------------------------------- the property

class _Hang(BaseException):
    """Raised by the alarm inside a reader that ran longer than :data:`HANG_S`."""


@contextmanager
def _time_limit(seconds: float):
    def ring(signum, frame):
        raise _Hang(f"still running after {seconds:g} s")

    old = signal.signal(signal.SIGALRM, ring)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, old)


def _read_spec(path: Path, seeds: Seeds):
    from garnav.spec import load_garment

    load_garment(path)
    return ()


def _read_route(path: Path, seeds: Seeds):
    from garnav.cli._routes import route_inputs
    from garnav.export.waypoints import document_route

    _, _, _, doc = route_inputs(str(path), str(seeds.garment_spec))
    document_route(doc)
    return ()


def _read_commands(path: Path, seeds: Seeds):
    from garnav.export.commands import read_commands
    from garnav.export.replay import replay_commands

    commands = read_commands(path)
    if commands.start is None:
        return ()
    return (lambda: replay_commands(seeds.garment, commands),)  # the replay: an API, no file


_READ: dict[str, Callable] = {"spec": _read_spec, "route": _read_route, "commands": _read_commands}


def run_input(kind: str, data: bytes, folder: Path, seeds: Seeds, hang_s: float = HANG_S) -> tuple[str, str | None]:
    """Read ``data`` as a file of kind ``kind``: ("read" | "refused", None) when the reader behaved,
    ("failure", what went wrong) otherwise.

    Behaving is returning, or raising a ``GarnavError`` with a non-empty message naming the file
    (a later stage on the read object, e.g. the replay: a ``GarnavError`` with a message).
    """
    suffix = {"spec": ".toml", "route": ".json", "commands": ".cmd"}[kind]
    path = Path(folder) / f"fuzzed_{kind}{suffix}"
    path.write_bytes(data)
    stage = "read"
    try:
        with _time_limit(hang_s):
            later = _READ[kind](path, seeds)
            stage = "replay"
            for step in later:
                step()
    except GarnavError as exc:
        message = str(exc)
        if not message.strip():
            return "failure", f"{kind} {stage}: {type(exc).__name__} with an empty message"
        if stage == "read" and str(path) not in message:
            return "failure", f"{kind} {stage}: message does not name the file: {message[:300]!r}"
        return "refused", None
    except _Hang as exc:
        return "failure", f"{kind} {stage}: hang ({exc})"
    except Exception as exc:  # noqa: BLE001 - the point: any other exception is a finding
        return "failure", f"{kind} {stage}: {type(exc).__name__}: {str(exc)[:300]}"
    return "read", None


def check_input(kind: str, data: bytes, folder: Path, seeds: Seeds) -> str | None:
    """None when reader ``kind`` behaved on ``data`` (:func:`run_input`), else what went wrong."""
    return run_input(kind, data, folder, seeds)[1]
