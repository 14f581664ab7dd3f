"""The telemetry log (CSV) a robot sends back, and the simulator's ground-truth file (docs/telemetry.md).

Telemetry columns (header required, any column order, extra columns ignored)::

    time_s,left_ticks,right_ticks,gyro_z_deg_s,seam_bump

* ``time_s`` — seconds since the start, strictly increasing;
* ``left_ticks``, ``right_ticks`` — raw encoder counter values, unsigned integers that wrap modulo
  2**bits (``encoder_bits`` of ``[robot.odometry]``, 16 by default);
* ``gyro_z_deg_s`` — rate about the surface normal (counter-clockwise seen from the side the robot
  drives on), deg/s, the mean over the interval that ends at this row (row 0: 0);
* ``seam_bump`` — 1 when the IMU registered a seam ridge during the interval, else 0.

Ground truth (simulator only)::

    time_s,piece,x_mm,y_mm,heading_deg

Every reading error is one :class:`TelemetryError` naming the file, the row (data rows count from 1;
the line number includes the header) and the reason.
"""

from __future__ import annotations

import csv
import io
import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from garnav.atomic import write_text_atomic
from garnav.errors import GarnavError

__all__ = ["TelemetryError", "TelemetryLog", "Truth", "COLUMNS", "TRUTH_COLUMNS", "write_log", "read_log",
           "log_text", "write_truth", "read_truth", "unwrap_ticks", "GAP_FACTOR"]

COLUMNS = ("time_s", "left_ticks", "right_ticks", "gyro_z_deg_s", "seam_bump")
TRUTH_COLUMNS = ("time_s", "piece", "x_mm", "y_mm", "heading_deg")
#: An interval longer than this many times the median interval is a gap (lost samples).
GAP_FACTOR = 2.5


class TelemetryError(GarnavError):
    """A telemetry or truth file is unreadable or inconsistent; names the file, the row and the reason."""


@dataclass(frozen=True)
class TelemetryLog:
    """A telemetry log: arrays of equal length n.

    Attributes
    ----------
    time_s : (n,) float
    left_ticks, right_ticks : (n,) int64
        Raw (wrapped) counter values.
    gyro_z_deg_s : (n,) float
    seam_bump : (n,) bool
    source : str
        File name (for messages).
    """

    time_s: np.ndarray
    left_ticks: np.ndarray
    right_ticks: np.ndarray
    gyro_z_deg_s: np.ndarray
    seam_bump: np.ndarray
    source: str = "<memory>"

    def __len__(self) -> int:
        return len(self.time_s)


@dataclass(frozen=True)
class Truth:
    """Ground-truth poses: time (n,), piece names (n,), x, y (n,) mm, heading (n,) deg."""

    time_s: np.ndarray
    piece: tuple[str, ...]
    x_mm: np.ndarray
    y_mm: np.ndarray
    heading_deg: np.ndarray


def log_text(log: TelemetryLog) -> str:
    """The log as CSV text."""
    out = io.StringIO()
    out.write(",".join(COLUMNS) + "\n")
    for t, a, b, g, s in zip(log.time_s, log.left_ticks, log.right_ticks, log.gyro_z_deg_s, log.seam_bump, strict=True):
        out.write(f"{t:.4f},{int(a)},{int(b)},{g:.9g},{int(bool(s))}\n")
    return out.getvalue()


def write_log(path, log: TelemetryLog):
    """Write the telemetry CSV atomically. Returns the path."""
    return write_text_atomic(path, log_text(log))


def write_truth(path, truth: Truth):
    """Write the ground-truth CSV atomically. Returns the path."""
    out = io.StringIO()
    out.write(",".join(TRUTH_COLUMNS) + "\n")
    for t, p, x, y, h in zip(truth.time_s, truth.piece, truth.x_mm, truth.y_mm, truth.heading_deg, strict=True):
        out.write(f"{t:.4f},{p},{x:.6f},{y:.6f},{h:.6f}\n")
    return write_text_atomic(path, out.getvalue())


def _rows(path, columns: tuple[str, ...]):
    from garnav.textio import read_text

    p = Path(path)
    # through textio: one set of reasons, and a log of an incompletely written set is refused
    text = read_text(p, lambda reason: TelemetryError(f"{p}: {reason}"))
    reader = csv.reader(io.StringIO(text))
    try:
        header = next(reader)
    except StopIteration:
        raise TelemetryError(f"{p}: empty file: expected a header line {','.join(columns)}") from None
    header = [h.strip() for h in header]
    missing = [c for c in columns if c not in header]
    if missing:
        raise TelemetryError(f"{p}: line 1 (header): missing column{'s' if len(missing) > 1 else ''} "
                             f"{', '.join(missing)}; found {', '.join(header) or 'nothing'}")
    idx = [header.index(c) for c in columns]
    rows = []
    for n, row in enumerate(reader, start=1):
        if not row or all(not c.strip() for c in row):
            continue
        if len(row) < len(header):
            raise TelemetryError(f"{p}: row {n} (line {n + 1}): {len(row)} fields, the header has {len(header)}")
        rows.append((n, [row[i].strip() for i in idx]))
    if len(rows) < 2:
        raise TelemetryError(f"{p}: needs at least 2 data rows, found {len(rows)}")
    return p, rows


def _num(p, n: int, col: str, text: str) -> float:
    try:
        v = float(text)
    except ValueError:
        raise TelemetryError(f"{p}: row {n} (line {n + 1}): '{col}' is not a number: {text!r}") from None
    if not math.isfinite(v):
        raise TelemetryError(f"{p}: row {n} (line {n + 1}): '{col}' is {text} (not a finite number)")
    return v


def read_log(path, encoder_bits: int = 16) -> TelemetryLog:
    """Read and check a telemetry CSV.

    Checks: the columns are there; every value is a finite number; ticks are integers within
    0..2**bits − 1; ``seam_bump`` is 0 or 1; time strictly increases and has no gap longer than
    :data:`GAP_FACTOR` × the median interval.

    Raises
    ------
    TelemetryError
    """
    p, rows = _rows(path, COLUMNS)
    full = 1 << int(encoder_bits)
    line_of = np.array([n for n, _ in rows], dtype=int)
    cols = []
    for j, col in enumerate(COLUMNS):
        texts = [v[j] for _, v in rows]
        try:
            arr = np.array(texts, dtype=float)  # fast path; the loop below finds the bad row
        except ValueError:
            arr = np.array([_num(p, n, col, v[j]) for n, v in rows])
        bad = np.flatnonzero(~np.isfinite(arr))
        if len(bad):
            n = int(line_of[bad[0]])
            raise TelemetryError(f"{p}: row {n} (line {n + 1}): '{col}' is {texts[bad[0]]} (not a finite number)")
        cols.append(arr)
    t, gyro, bump_v = cols[0], cols[3], cols[4]
    ticks = np.zeros((len(rows), 2), dtype=np.int64)
    for j, col in ((0, "left_ticks"), (1, "right_ticks")):
        arr = cols[1 + j]
        bad = np.flatnonzero((arr != np.floor(arr)) | (arr < 0) | (arr >= full))
        if len(bad):
            n = int(line_of[bad[0]])
            raise TelemetryError(f"{p}: row {n} (line {n + 1}): '{col}' = {rows[bad[0]][1][1 + j]} is not a counter "
                                 f"value 0..{full - 1} of a {encoder_bits}-bit encoder")
        ticks[:, j] = arr.astype(np.int64)
    bad = np.flatnonzero((bump_v != 0.0) & (bump_v != 1.0))
    if len(bad):
        n = int(line_of[bad[0]])
        raise TelemetryError(f"{p}: row {n} (line {n + 1}): 'seam_bump' must be 0 or 1, found {rows[bad[0]][1][4]}")
    bump = bump_v == 1.0
    dt = np.diff(t)
    bad = np.flatnonzero(dt <= 0)
    if len(bad):
        k = int(bad[0]) + 1
        n = int(line_of[k])
        raise TelemetryError(f"{p}: row {n} (line {n + 1}): time {t[k]:g} s does not increase "
                             f"(previous row {t[k - 1]:g} s)")
    med = float(np.median(dt))
    gaps = np.flatnonzero(dt > GAP_FACTOR * med)
    if len(gaps):
        k = int(gaps[0]) + 1
        n = int(line_of[k])
        raise TelemetryError(f"{p}: row {n} (line {n + 1}): gap of {dt[k - 1]:.3f} s before this row "
                             f"(the log runs every {med:.3f} s): samples are missing")
    return TelemetryLog(t, ticks[:, 0], ticks[:, 1], gyro, bump, str(p))


def unwrap_ticks(raw: np.ndarray, bits: int, source: str, column: str, max_step: float) -> np.ndarray:
    """Per-interval tick differences (n − 1,) of a wrapping counter.

    A difference is taken modulo 2**bits into −2**(bits−1) .. 2**(bits−1) − 1, which is right as long
    as a wheel turns less than half the counter range between two rows. A difference larger than
    ``max_step`` (ticks) cannot come from driving: a missed wrap, a reset or a corrupted row.

    Raises
    ------
    TelemetryError
    """
    full = 1 << int(bits)
    half = full >> 1
    d = np.mod(np.diff(np.asarray(raw, dtype=np.int64)) + half, full) - half
    bad = np.flatnonzero(np.abs(d) > max_step)
    if len(bad):
        n = int(bad[0]) + 2
        raise TelemetryError(
            f"{source}: row {n} (line {n + 1}): '{column}' jumps by {int(d[bad[0]])} ticks in one interval "
            f"(at most {max_step:.0f} possible): a reset, a corrupted value or a wrap-around the "
            f"{bits}-bit counter cannot tell apart"
        )
    return d


def read_truth(path) -> Truth:
    """Read a ground-truth CSV written by :func:`write_truth`."""
    p, rows = _rows(path, TRUTH_COLUMNS)
    t = np.array([_num(p, n, "time_s", v[0]) for n, v in rows])
    x = np.array([_num(p, n, "x_mm", v[2]) for n, v in rows])
    y = np.array([_num(p, n, "y_mm", v[3]) for n, v in rows])
    h = np.array([_num(p, n, "heading_deg", v[4]) for n, v in rows])
    return Truth(t, tuple(v[1] for _, v in rows), x, y, h)
