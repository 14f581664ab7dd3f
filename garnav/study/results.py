"""The rows of a study and their Parquet part files (pyarrow).

One row per case; the columns (docs/studies.md) are :data:`COLUMNS` with their Arrow types. A
chunk's rows are written as one part file ``parts/part-CHUNK.parquet`` (one row group) through
:mod:`garnav.atomic`, so a part file is either whole or absent: a killed study resumes by skipping
the chunks whose part file exists. ``study.json`` beside ``parts/`` records the study's fingerprint.

Read all rows with ``pyarrow.parquet.read_table("OUT/parts")`` (or pandas ``read_parquet``).
"""

from __future__ import annotations

import io
import json
import os
from pathlib import Path

from garnav.atomic import write_bytes_atomic, write_text_atomic
from garnav.errors import GarnavError

__all__ = ["COLUMNS", "STATUSES", "empty_row", "part_path", "write_part", "done_chunks", "read_rows",
           "write_manifest", "check_manifest", "MANIFEST", "PARTS"]

MANIFEST = "study.json"
PARTS = "parts"

#: Row status: ``ok`` — a route (drivable, when physics measures are asked); ``bad_point`` — the
#: start or goal is not a place the robot can stand (unknown, off the piece, inside a keep-out);
#: ``no_route`` — no route at all; ``not_drivable`` — routes exist but none keeps the margins;
#: ``failed`` — another garnav error (e.g. a point off the drape); ``error`` — an unexpected error.
STATUSES = ("ok", "bad_point", "no_route", "not_drivable", "failed", "error")

#: (name, arrow type name, meaning); floats are null where a measure was not asked or not defined.
COLUMNS: tuple[tuple[str, str, str], ...] = (
    ("case", "int64", "case index in the study's order"),
    ("chunk", "string", "chunk (part file) id"),
    ("garment", "string", "garment label"),
    ("size", "string", "size name (base for an ungraded garment)"),
    ("scale", "float64", "the size's length factor (largest piece factor)"),
    ("pose", "string", "pose (drape) name"),
    ("posture", "string", "posture (gravity) name"),
    ("robot", "string", "robot name"),
    ("start", "string", "start point text (base size)"),
    ("goal", "string", "goal point text (base size)"),
    ("status", "string", "one of STATUSES"),
    ("reason", "string", "why the case failed ('' when ok)"),
    ("blocker", "string", "what blocks it: keep-out, edge, seam, or piece and margin ('' when none is named)"),
    ("length_mm", "float64", "pattern length of the route, mm"),
    ("cost_mm", "float64", "planner cost of the route, mm"),
    ("seams_crossed", "int64", "seam crossings"),
    ("turns", "int64", "turns of the route"),
    ("time_s", "float64", "driving time at cruise speed, s (3D length with physics, else pattern length)"),
    ("length_3d_mm", "float64", "length on the drape, mm"),
    ("climb_up_mm", "float64", "total rise along world +z on the drape, mm"),
    ("energy_j", "float64", "battery energy, J"),
    ("battery_used_fraction", "float64", "fraction of the battery"),
    ("min_grip_margin", "float64", "smallest grip margin (null: unlimited)"),
    ("min_hold_margin", "float64", "smallest hold margin (null: unlimited)"),
    ("min_drive_margin", "float64", "smallest drive margin (null: unlimited)"),
    ("method", "string", "length-optimal or lattice (physics), else planner"),
    ("detour_blocker", "string", "with physics: what made the shortest route undrivable when a detour was taken"),
    ("contact_probability", "float64", "Monte Carlo probability of touching any keep-out or open edge"),
    ("contact_worst", "string", "the region touched most often"),
    ("bends", "string", "keep-outs and edges the route wraps around, ';'-separated"),
)
_INT = {n for n, t, _ in COLUMNS if t == "int64"}
_FLOAT = {n for n, t, _ in COLUMNS if t == "float64"}


def empty_row() -> dict:
    """A row with every measure null and every text empty."""
    return {n: (None if (n in _INT or n in _FLOAT) else "") for n, _, _ in COLUMNS}


def _schema():
    import pyarrow as pa

    types = {"int64": pa.int64(), "float64": pa.float64(), "string": pa.string()}
    return pa.schema([(n, types[t]) for n, t, _ in COLUMNS])


def part_path(out: str | os.PathLike, chunk: str) -> Path:
    return Path(out) / PARTS / f"part-{chunk}.parquet"


def write_part(out: str | os.PathLike, chunk: str, rows: list[dict]) -> Path:
    """Write one chunk's rows as a Parquet part file (one row group), atomically."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    table = pa.Table.from_pylist(rows, schema=_schema())
    buf = io.BytesIO()
    pq.write_table(table, buf, row_group_size=max(1, len(rows)))
    return write_bytes_atomic(part_path(out, chunk), buf.getvalue())


def done_chunks(out: str | os.PathLike) -> set[str]:
    """Ids of the chunks whose part file exists."""
    folder = Path(out) / PARTS
    if not folder.is_dir():
        return set()
    return {p.stem[len("part-"):] for p in folder.glob("part-*.parquet")}


def read_rows(out: str | os.PathLike):
    """All rows of a study folder as one pyarrow Table, sorted by case."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    files = sorted((Path(out) / PARTS).glob("part-*.parquet"))
    if not files:
        return pa.Table.from_pylist([], schema=_schema())
    table = pa.concat_tables([pq.read_table(f, schema=_schema()) for f in files])
    return table.sort_by("case")


def write_manifest(out: str | os.PathLike, data: dict) -> Path:
    return write_text_atomic(Path(out) / MANIFEST, json.dumps(data, indent=1, sort_keys=True) + "\n")


def check_manifest(out: str | os.PathLike, fingerprint: str, resume: bool) -> None:
    """Refuse to mix results: a folder with part files needs ``resume`` and the same study."""
    folder = Path(out)
    have = done_chunks(folder)
    if not have:
        return
    if not resume:
        raise GarnavError(f"{folder}: holds results of a study already ({len(have)} part files); add --resume to "
                          "go on with it, or choose another output folder")
    try:
        old = json.loads((folder / MANIFEST).read_text(encoding="utf-8")).get("fingerprint")
    except (OSError, ValueError):
        old = None
    if old != fingerprint:
        raise GarnavError(f"{folder}: its results come from a different study (or changed spec, robot or mesh "
                          "files); --resume only continues the same study: choose another output folder")
