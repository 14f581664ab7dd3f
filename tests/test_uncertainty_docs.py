"""docs/uncertainty.md and docs/telemetry.md stay true: their TOML blocks read, their tables list every key."""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

from garnav.telemetry.logfile import COLUMNS, TRUTH_COLUMNS
from garnav.uncertainty.calibrate import read_runs
from garnav.uncertainty.model import ODOMETRY_FIELDS, OdometryModel, parse_odometry

DOCS = Path(__file__).resolve().parent.parent / "docs"


def _toml_blocks(name: str) -> list[str]:
    return re.findall(r"```toml\n(.*?)```", (DOCS / name).read_text(encoding="utf-8"), re.S)


def test_odometry_example_and_table():
    text = (DOCS / "uncertainty.md").read_text(encoding="utf-8")
    odo, runs = _toml_blocks("uncertainty.md")
    model, problems = parse_odometry(tomllib.loads(odo)["robot"]["odometry"], "docs/uncertainty.md")
    assert not problems and isinstance(model, OdometryModel)
    documented = re.findall(r"^\| `(\w+)` \|", text, re.M)
    assert [k for k in documented if k in ODOMETRY_FIELDS] == list(ODOMETRY_FIELDS)
    for key, default in vars(OdometryModel()).items():  # the documented defaults are the code's
        shown = re.search(rf"^\| `{key}` \|[^|]*\| `([^`]+)` \|", text, re.M).group(1)
        assert shown == str(default).lower() or float(shown) == float(default), key


def test_umbmark_example_reads(tmp_path):
    _, runs = _toml_blocks("uncertainty.md")
    p = tmp_path / "runs.toml"
    p.write_text(runs)
    cw, ccw, side, base = read_runs(p)
    assert side == 500.0 and base == 30.0 and cw.shape == (1, 2)


def test_telemetry_columns_documented():
    text = (DOCS / "telemetry.md").read_text(encoding="utf-8")
    assert ",".join(COLUMNS) in text and ",".join(TRUTH_COLUMNS) in text
    for c in COLUMNS:
        assert f"| `{c}` |" in text
