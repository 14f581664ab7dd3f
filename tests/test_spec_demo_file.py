"""The demo garment file checks clean and survives a round trip through the spec writer."""

from __future__ import annotations

from pathlib import Path

from garnav.cli import main
from garnav.spec import dumps_garment, load_garment, loads_garment

DEMO = Path(__file__).resolve().parent.parent / "meshes" / "sensing_top.toml"

PIECES = ("front", "back", "yoke", "sleeve_left", "sleeve_right")


def test_check_demo_garment(capsys):
    assert main(["check", str(DEMO)]) == 0
    out = capsys.readouterr().out
    assert "garment 'sensing_top': 5 pieces, 12 seams" in out
    assert "sensing_top_drape.obj: found" in out
    assert "no problems found" in out
    for name in PIECES:
        assert f"\n  {name} " in out
    assert "side_left_lower" in out and "cervicale" in out


def test_demo_garment_round_trip():
    g = load_garment(DEMO)
    assert {p.name for p in g.pieces} == set(PIECES)
    text = dumps_garment(g)
    assert loads_garment(text) == g
    assert dumps_garment(loads_garment(text)) == text
