"""The check summary (pure function) against hand-worked values."""

from __future__ import annotations

import dataclasses

from garnav import Circle, KeepOut, Landmark, Opening, Rectangle, SeamRun
from garnav.cli import main
from garnav.spec import save_garment
from garnav.spec.summary import format_summary, garment_summary, seam_ease


def _section(sections, title):
    return next(s for s in sections if s.title.startswith(title))


def test_pieces_rows(two_panels):
    rows = _section(garment_summary(two_panels), "pieces").rows
    # 300 mm × 400 mm = 120000 mm² = 1200 cm²; perimeter 2 (300 + 400) = 1400 mm (hand-worked)
    assert rows[0][:5] == ("left", "1200.0", "1400.0", "4", "-")
    assert rows[1][5] == "(330, 10) 0°"


def test_seam_ease(two_panels):
    seam = dataclasses.replace(two_panels.seams[0], a=SeamRun("left", "right", 100.0, 300.0))
    g = dataclasses.replace(two_panels, seams=(seam,))
    (ease,) = seam_ease(g)
    assert (ease.length_a, ease.length_b, ease.ease_mm) == (200.0, 400.0, 200.0)
    assert ease.ease_percent == 100.0  # 200 mm over the shorter 200 mm run
    row = _section(garment_summary(g), "seams").rows[0]
    assert row[1] == "left.right [100–300]"
    assert row[2] == "right.left (reversed)"
    assert row[5] == "+200.0 (100.0%)"


def test_open_edges_and_openings(two_panels):
    left = dataclasses.replace(
        two_panels.pieces[0],
        openings=(Opening("hole", ((100.0, 100.0), (110.0, 100.0), (110.0, 110.0), (100.0, 110.0))),),
    )
    g = dataclasses.replace(two_panels, pieces=(left, two_panels.pieces[1]))
    rows = _section(garment_summary(g), "open edges").rows
    assert ("left", "bottom", "0.0–300.0", "300.0") in rows
    assert ("left", "opening hole", "whole loop", "40.0") in rows  # 4 × 10 mm
    assert not any(r[:2] == ("left", "right") for r in rows)  # seamed
    assert len(rows) == 7


def test_keepouts_landmarks_robot(two_panels):
    g = dataclasses.replace(
        two_panels,
        keepouts=(KeepOut("p", "left", "pocket", Rectangle(100, 100, 40, 30, 10.0), 5.0),
                  KeepOut("b", "left", "button", Circle(50, 50, 6), hard=False, cost_factor=3.0)),
        landmarks=(Landmark("neck", xyz=(0.0, -95.0, 1455.0), description="base of neck"),),
    )
    sections = garment_summary(g)
    assert _section(sections, "keep-outs").rows == (
        ("p", "left", "pocket", "rectangle", "40 × 30 turned 10° at (100, 100)", "5", "hard"),
        ("b", "left", "button", "circle", "r 6 at (50, 50)", "0", "soft ×3"),
    )
    assert _section(sections, "landmarks").rows == (("neck", "body", "(0, -95, 1455)",
                                                     "base of neck"),)
    assert _section(sections, "robot").rows[0] == ("robot", "10", "30", "20", "outside", "2")


def test_format_summary_text(single_panel):
    text = format_summary(single_panel)
    assert text.startswith("garment 'panel': 1 piece, 0 seams, 0 keep-outs, 0 landmarks")
    assert "seams: none" in text and "keep-outs: none" in text
    assert "panel  4800.0" in text  # 600 × 800 mm = 4800 cm²


def test_check_command_prints_summary(tmp_path, two_panels, capsys):
    path = save_garment(two_panels, tmp_path / "two.toml")
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    assert "no problems found" in out
    assert "left   1200.0" in out and "middle" in out
