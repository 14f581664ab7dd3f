"""docs/spec.md stays true: its example loads, and it documents every known key."""

from __future__ import annotations

import re
from pathlib import Path

from garnav.cli import main
from garnav.spec import dumps_garment, loads_garment
from garnav.spec.fields import SECTIONS

DOC = Path(__file__).resolve().parent.parent / "docs" / "spec.md"


def _example() -> str:
    blocks = re.findall(r"```toml\n(.*?)```", DOC.read_text(encoding="utf-8"), re.S)
    assert len(blocks) == 1
    return blocks[0]


def test_doc_error_example_is_real(tmp_path, monkeypatch, capsys):
    doc = DOC.read_text(encoding="utf-8")
    shown = re.search(r"```text\n(garnav check: error.*?)```", doc, re.S).group(1)
    text = _example()
    text = text.replace("clearance_mm = 5.0", "clerance_mm = 5.0", 1)
    text = text.replace("[[400.0, 0.0], [400.0, 500.0]]", "[[400.0, 2.0], [400.0, 500.0]]", 1)
    (tmp_path / "vest.toml").write_text(text, encoding="utf-8")
    monkeypatch.chdir(tmp_path)
    assert main(["check", "vest.toml"]) == 2
    assert capsys.readouterr().err == shown


def test_doc_example_loads_and_round_trips():
    g = loads_garment(_example(), "docs/spec.md")
    assert [p.name for p in g.pieces] == ["front", "back"]
    assert g.seam("side_left").b.reverse
    assert {k.kind for k in g.keepouts} == {"pocket", "button", "print"}
    assert g.landmark("cervicale").xyz == (0.0, -95.0, 1455.0)
    assert loads_garment(dumps_garment(g)) == g


def test_doc_example_check_summary(tmp_path, capsys):
    path = tmp_path / "vest.toml"
    path.write_text(_example(), encoding="utf-8")
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    assert "no problems found" in out
    # run a (front.side_left) is 500 mm, run b (back.side_right) 510 mm: +10 mm ease
    assert "+10.0 (2.0%)" in out


def test_doc_example_mesh_note(tmp_path, capsys):
    path = tmp_path / "vest.toml"
    path.write_text(_example(), encoding="utf-8")
    main(["check", str(path)])
    assert "two_panel_vest_drape.obj: NOT FOUND" in capsys.readouterr().out
    (tmp_path / "two_panel_vest_drape.obj").write_text("v 0 0 0\n")
    main(["check", str(path)])
    assert "two_panel_vest_drape.obj: found" in capsys.readouterr().out


def test_doc_lists_every_key():
    text = DOC.read_text(encoding="utf-8")
    for section, fields in SECTIONS.items():
        for key in fields:
            assert f"| `{key}` |" in text, f"docs/spec.md does not document {section}.{key}"
