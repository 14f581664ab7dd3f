"""docs/pattern-files.md stays true: its seams-file example loads, its layer table and size caps
match the code, and its example messages are the ones the code gives."""

from __future__ import annotations

import re
import tomllib
from pathlib import Path

import pytest

from garnav.patterns import conventions as cv
from garnav.patterns.seams import SEAMS_FORMAT, load_seams

DOC = Path(__file__).resolve().parent.parent / "docs" / "pattern-files.md"
TEXT = DOC.read_text(encoding="utf-8")


def test_seams_example_loads(tmp_path):
    block = re.search(r"```toml\n(.*?)```", TEXT, re.S).group(1)
    path = tmp_path / "seams.toml"
    path.write_text(block)
    tables = load_seams(path)
    assert tomllib.loads(block)["format"] == SEAMS_FORMAT
    assert [t["name"] for t in tables] == ["shoulder", "side"]


def test_layer_table_matches_code():
    rows = dict(re.findall(r"^\| (\S+) \| ([^|]+) \|", TEXT, re.M))
    for layer in (cv.LAYER_BOUNDARY, cv.LAYER_TURN_POINTS, cv.LAYER_CURVE_POINTS,
                  cv.LAYER_NOTCHES, cv.LAYER_MIRROR, cv.LAYER_GRAIN, cv.LAYER_INTERNAL,
                  cv.LAYER_CUTOUTS, cv.LAYER_DRILL):
        assert layer in rows, f"layer {layer} is not in the table"
    assert f"| `{cv.LAYER_LANDMARKS}` |" in TEXT
    assert rows["4"].startswith("notches") and rows["7"].startswith("grain line")
    assert rows["13"].startswith("drill holes") and rows["8"].startswith("internal lines")
    assert "from memory" in TEXT


def test_caps_and_tolerance_match_code():
    assert cv.MAX_SVG_BYTES == 16 * 2**20 and "16 MiB for SVG" in TEXT
    assert cv.MAX_DXF_BYTES == 64 * 2**20 and "64 MiB for DXF" in TEXT
    assert cv.DEFAULT_TOLERANCE_MM == 0.1 and "0.1 mm\nby default" in TEXT


def test_example_messages(tmp_path):
    """Each example message in the table is produced (file names and handles aside)."""
    from garnav.errors import SpecError
    from garnav.patterns import read_pattern

    svg = tmp_path / "bad.svg"
    svg.write_text('<svg xmlns="http://www.w3.org/2000/svg" width="100mm" height="100mm" '
                   'viewBox="0 0 100 100"><path id="bow" d="M 10 10 L 60 60 L 60 10 L 10 60 Z"/>'
                   "</svg>")
    with pytest.raises(SpecError) as info:
        read_pattern(svg)
    message = str(info.value.problems[0]).replace(str(tmp_path) + "/", "")
    assert f"`{message}`" in TEXT
