"""The export docs stay true: their example parses, their tables name the schema's keys."""

from __future__ import annotations

import re
from pathlib import Path

from garnav.export.commands import Cross, Go, Start, Turn, format_commands, parse_commands
from garnav.export.waypoints import CSV_COLUMNS, route_schema

DOCS = Path(__file__).resolve().parents[1] / "docs"


def test_commands_doc_example_parses_and_round_trips():
    text = (DOCS / "commands.md").read_text(encoding="utf-8")
    block = re.search(r"## Example.*?```text\n(.*?)```", text, re.S).group(1)
    cl = parse_commands(block, source="docs/commands.md")
    assert cl.start == Start("sleeve_left", 150.0, 40.0, 90.0)
    assert cl.commands[:3] == (Go(310.5), Turn(-12.25), Cross("armhole_left_front", 42.0, 78.5, "right", 6.92))
    assert parse_commands(format_commands(cl)) == cl


def test_route_format_doc_lists_every_top_level_and_summary_key():
    text = (DOCS / "route-format.md").read_text(encoding="utf-8")
    schema = route_schema()
    for key in schema["properties"]:
        assert f"`{key}`" in text, key
    for key in schema["properties"]["summary"]["properties"]:
        assert f"`{key}`" in text, key
    assert ",".join(CSV_COLUMNS) in text
