"""The study file (TOML, ``format = "garnav-study"``, ``version = 1``; docs/studies.md).

A study names the garments (spec files, optionally graded into sizes), the poses (drapes), the
postures, the robots, the queries and the measures of a batch of route cases, and the folder the
results go to. :func:`load_study` reads and checks one, reporting every problem at once
(:class:`~garnav.errors.SpecError`); nothing is loaded beyond the study file itself (the specs and
robot files are read by :func:`garnav.study.cases.prepare_study`).
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from garnav.errors import Problem, SpecError, did_you_mean
from garnav.study.grading import GradingRule

__all__ = ["STUDY_FORMAT", "STUDY_VERSION", "MEASURES", "GarmentEntry", "QuerySpec", "Study", "load_study", "loads_study"]

STUDY_FORMAT = "garnav-study"
STUDY_VERSION = 1
#: Measures a study can ask for (docs/studies.md says which robot data and drape each needs).
MEASURES = ("length", "length_3d", "time", "energy", "margins", "contact")
#: Measures that need the robot's physics profile and a drape (they plan drivable routes).
PHYSICS_MEASURES = ("energy", "margins")
_TOP = ("format", "version", "name", "description", "output", "seed", "chunk_size", "garment", "robots",
        "postures", "queries", "measures", "contact_runs")
_GARMENT = ("spec", "label", "poses", "grading")
_GRADING = ("sizes", "base", "step_percent", "piece_step_percent")
_QUERIES = ("landmarks", "pairs", "random", "ordered")
_RANDOM = ("per_piece", "seed", "max_pairs", "pieces")


@dataclass(frozen=True)
class GarmentEntry:
    """One ``[[garment]]``: a spec file (absolute path), its label, poses and grading."""

    spec: str
    label: str
    poses: tuple[str, ...] = ("default",)
    grading: GradingRule | None = None


@dataclass(frozen=True)
class QuerySpec:
    """The ``[queries]`` table.

    ``landmarks``: None, ``"all"`` or landmark names (all pairs among them); ``pairs``: explicit
    (start, goal) point texts; ``random``: (points per piece, seed, max pairs or 0, pieces or ()).
    ``ordered``: both directions of every pair (routes differ uphill and downhill).
    """

    landmarks: str | tuple[str, ...] | None = "all"
    pairs: tuple[tuple[str, str], ...] = ()
    random: tuple[int, int, int, tuple[str, ...]] | None = None
    ordered: bool = True


@dataclass(frozen=True)
class Study:
    """A parsed study file. Paths are absolute (resolved against the study file's folder)."""

    name: str
    source: str
    output: str
    garments: tuple[GarmentEntry, ...]
    robots: tuple[str, ...] = ("spec",)
    postures: tuple[str, ...] = ("upright",)
    queries: QuerySpec = QuerySpec()
    measures: tuple[str, ...] = ("length", "time")
    contact_runs: int = 200
    seed: int = 0
    chunk_size: int = 25
    description: str = ""

    @property
    def physics(self) -> bool:
        """True when the measures need drivable routes (energy or margins)."""
        return any(m in PHYSICS_MEASURES for m in self.measures)


class _Checker:
    def __init__(self, source: str):
        self.source = source
        self.problems: list[Problem] = []

    def add(self, item: str, reason: str, hint: str | None = None) -> None:
        self.problems.append(Problem(self.source, item, reason, hint=hint))

    def keys(self, table: dict, known: tuple[str, ...], item: str) -> None:
        for k in table:
            if k not in known:
                self.add(item, f"unknown key '{k}'", did_you_mean(k, known))

    def text(self, value: Any, item: str) -> str | None:
        if isinstance(value, str) and value.strip():
            return value
        self.add(item, f"must be a non-empty string, found {value!r}")
        return None

    def texts(self, value: Any, item: str) -> tuple[str, ...] | None:
        if isinstance(value, list) and value and all(isinstance(v, str) and v.strip() for v in value):
            if len(set(value)) != len(value):
                self.add(item, f"lists a name twice: {value}")
                return None
            return tuple(value)
        self.add(item, f"must be a non-empty list of strings, found {value!r}")
        return None

    def integer(self, value: Any, item: str, lo: int) -> int | None:
        if isinstance(value, int) and not isinstance(value, bool) and value >= lo:
            return int(value)
        self.add(item, f"must be a whole number >= {lo}, found {value!r}")
        return None

    def number(self, value: Any, item: str, lo: float, hi: float) -> float | None:
        if isinstance(value, (int, float)) and not isinstance(value, bool) and lo < value < hi:
            return float(value)
        self.add(item, f"must be a number between {lo:g} and {hi:g} (exclusive), found {value!r}")
        return None


def _path(folder: Path, text: str) -> str:
    return str((folder / text).resolve()) if not os.path.isabs(text) else text


def _grading(ck: _Checker, table: Any, item: str) -> GradingRule | None:
    if not isinstance(table, dict):
        ck.add(item, f"must be a table, found {table!r}")
        return None
    ck.keys(table, _GRADING, item)
    sizes = ck.texts(table.get("sizes"), f"{item} sizes")
    base = table.get("base")
    if sizes is not None and base not in sizes:
        ck.add(f"{item} base", f"{base!r} is not one of the sizes {list(sizes)}")
        sizes = None
    # a step of ±50 % per size is far beyond any grade rule; it guards against typos (percent, not fraction)
    step = ck.number(table.get("step_percent"), f"{item} step_percent", -50.0, 50.0)
    per = table.get("piece_step_percent", {})
    pieces: list[tuple[str, float]] = []
    if not isinstance(per, dict):
        ck.add(f"{item} piece_step_percent", f"must be a table of piece = percent, found {per!r}")
    else:
        for name, v in sorted(per.items()):
            got = ck.number(v, f"{item} piece_step_percent.{name}", -50.0, 50.0)
            if got is not None:
                pieces.append((name, got))
    if sizes is None or step is None:
        return None
    return GradingRule(sizes, str(base), step, tuple(pieces))


def _queries(ck: _Checker, table: Any) -> QuerySpec:
    if not isinstance(table, dict):
        ck.add("queries", f"must be a table, found {table!r}")
        return QuerySpec()
    ck.keys(table, _QUERIES, "queries")
    if not any(k in table for k in ("landmarks", "pairs", "random")):
        ck.add("queries", "names no queries", hint='give landmarks = "all", pairs = [[A, B], ...] or random = {...}')
    marks: str | tuple[str, ...] | None = None
    if "landmarks" in table:
        v = table["landmarks"]
        marks = "all" if v == "all" else ck.texts(v, "queries landmarks")
        if isinstance(marks, tuple) and len(marks) < 2:
            ck.add("queries landmarks", "needs at least two landmarks to pair")
    pairs: list[tuple[str, str]] = []
    for k, p in enumerate(table.get("pairs", [])):
        if isinstance(p, list) and len(p) == 2 and all(isinstance(s, str) and s.strip() for s in p):
            pairs.append((p[0], p[1]))
        else:
            ck.add(f"queries pairs[{k}]", f"must be [START, GOAL] (two point texts), found {p!r}")
    rnd = None
    if "random" in table:
        r = table["random"]
        if not isinstance(r, dict):
            ck.add("queries random", f"must be a table, found {r!r}")
        else:
            ck.keys(r, _RANDOM, "queries random")
            per = ck.integer(r.get("per_piece"), "queries random per_piece", 1)
            seed = ck.integer(r.get("seed", 0), "queries random seed", 0)
            cap = ck.integer(r.get("max_pairs", 0), "queries random max_pairs", 0)
            pieces = ck.texts(r["pieces"], "queries random pieces") if "pieces" in r else ()
            if per is not None and seed is not None and cap is not None and pieces is not None:
                rnd = (per, seed, cap, pieces)
    ordered = table.get("ordered", True)
    if not isinstance(ordered, bool):
        ck.add("queries ordered", f"must be true or false, found {ordered!r}")
        ordered = True
    return QuerySpec(marks, tuple(pairs), rnd, ordered)


def loads_study(text: str, source: str = "<string>", folder: str | os.PathLike = ".") -> Study:
    """Read a study from study-file text; paths are relative to ``folder``.

    Raises
    ------
    SpecError
        With every problem found, each naming ``source``, the item and the reason.
    """
    from garnav.mechanics.gravity import POSTURES
    from garnav.spec.reader import parse_toml

    if not text.strip():
        raise SpecError([Problem(source, "file", f'is empty; a study starts with format = "{STUDY_FORMAT}"')])
    data = parse_toml(text, source)
    base = Path(folder)
    ck = _Checker(source)
    ck.keys(data, _TOP, "top level")
    if data.get("format") != STUDY_FORMAT:
        ck.add("top level", f"format is {data.get('format')!r}, not a study file", hint=f'write format = "{STUDY_FORMAT}"')
    if data.get("version", STUDY_VERSION) != STUDY_VERSION:
        ck.add("top level", f"version {data.get('version')!r} is not supported; this garnav reads version {STUDY_VERSION}")
    name = ck.text(data.get("name", Path(source).stem), "name") or "study"
    output = ck.text(data.get("output", f"{name}-results"), "output") or "study-results"
    garments: list[GarmentEntry] = []
    raw = data.get("garment")
    if not isinstance(raw, list) or not raw:
        ck.add("garment", "a study needs at least one [[garment]] with spec = \"FILE.toml\"")
        raw = []
    labels: set[str] = set()
    for k, g in enumerate(raw):
        item = f"garment[{k}]"
        if not isinstance(g, dict):
            ck.add(item, f"must be a table, found {g!r}")
            continue
        ck.keys(g, _GARMENT, item)
        spec = ck.text(g.get("spec"), f"{item} spec")
        label = g.get("label", Path(spec).stem if spec else "")
        label = ck.text(label, f"{item} label") or f"garment{k}"
        if label in labels:
            ck.add(f"{item} label", f"'{label}' is used twice; give each garment its own label")
        labels.add(label)
        poses = ck.texts(g.get("poses", ["default"]), f"{item} poses") or ("default",)
        grading = _grading(ck, g["grading"], f"{item} grading") if "grading" in g else None
        if spec:
            garments.append(GarmentEntry(_path(base, spec), label, poses, grading))
    robots_raw = ck.texts(data.get("robots", ["spec"]), "robots") or ("spec",)
    robots = tuple(r if r == "spec" else _path(base, r) for r in robots_raw)
    postures = ck.texts(data.get("postures", ["upright"]), "postures") or ("upright",)
    for p in postures:
        if p not in POSTURES:
            ck.add("postures", f"unknown posture '{p}'; postures: {', '.join(POSTURES)}", did_you_mean(p, POSTURES))
    measures = ck.texts(data.get("measures", ["length", "time"]), "measures") or ("length",)
    for m in measures:
        if m not in MEASURES:
            ck.add("measures", f"unknown measure '{m}'; measures: {', '.join(MEASURES)}", did_you_mean(m, MEASURES))
    physics = any(m in PHYSICS_MEASURES for m in measures)
    if len(postures) > 1 and not physics:
        ck.add("postures", "several postures change only energy and margins; add \"energy\" or \"margins\" to measures, "
               "or list one posture")
    runs = ck.integer(data.get("contact_runs", 200), "contact_runs", 2) or 200
    seed = ck.integer(data.get("seed", 0), "seed", 0) or 0
    chunk = ck.integer(data.get("chunk_size", 25), "chunk_size", 1) or 25
    queries = _queries(ck, data.get("queries", {}))
    desc = data.get("description", "")
    if not isinstance(desc, str):
        ck.add("description", f"must be a string, found {desc!r}")
        desc = ""
    if ck.problems:
        raise SpecError(ck.problems)
    return Study(name, source, _path(base, output), tuple(garments), robots, postures, queries, measures, runs,
                 seed, chunk, desc)


def load_study(path: str | os.PathLike) -> Study:
    """Read and check the study file at ``path`` (UTF-8 TOML)."""
    from garnav.spec.reader import read_toml_text

    text, source = read_toml_text(path)
    return loads_study(text, source, Path(path).resolve().parent)
