"""The safety cautions are one text: README, docs/commands.md, the demo, `garnav route` and the page
all show garnav/cautions.py word for word."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from garnav.cautions import CAUTIONS, CAUTIONS_BEGIN, CAUTIONS_END, caution_lines, cautions_markdown

ROOT = Path(__file__).resolve().parents[1]

# The topics issue-level guidance asks the cautions to cover (each must be named in a heading or text).
TOPICS = ("device maker", "clinician", "15 cm", "MRI", "children", "swallowed", "pinch", "let go",
          "seam ridges", "thick", "crushed", "charge", "temperature", "reduced sensation", "stop every robot",
          "neck", "face", "certifies nothing", "drift")


def _block(path: Path) -> str:
    text = path.read_text(encoding="utf-8")
    m = re.search(re.escape(CAUTIONS_BEGIN) + r"\n(.*?)\n" + re.escape(CAUTIONS_END), text, re.S)
    assert m, f"{path.name} has no generated cautions block"
    return m.group(1)


@pytest.mark.parametrize("doc", ["README.md", "docs/commands.md"])
def test_docs_carry_the_cautions_word_for_word(doc):
    assert _block(ROOT / doc) == cautions_markdown()


def test_cautions_cover_every_topic():
    text = " ".join(f"{h} {t}" for h, t in CAUTIONS)
    missing = [t for t in TOPICS if t.lower() not in text.lower()]
    assert not missing


def test_implant_caution_defers_to_maker_and_clinician_not_the_wearer():
    implant = dict(CAUTIONS)["Magnets and implanted devices"]
    assert "device maker and the wearer's clinician" in implant


def test_terminal_lines_hold_every_caution():
    lines = caution_lines(width=80)
    assert all(len(line) <= 80 for line in lines)
    flat = " ".join(line.strip(" -") for line in lines)
    for heading, text in CAUTIONS:
        assert " ".join(f"{heading}: {text}".split()) in " ".join(flat.split())


def test_demo_and_page_use_the_same_text():
    from garnav.cli.demo import CAUTIONS as DEMO
    from garnav.page.html import CAUTIONS as PAGE

    assert list(DEMO) == caution_lines()
    assert PAGE is CAUTIONS


@pytest.mark.slow  # about 2-3 s (the quick run stays near a minute)
def test_route_prints_the_cautions_once_unless_quiet(capsys, tmp_path):
    from garnav.cli import main

    spec = str(ROOT / "meshes" / "sensing_top.toml")
    assert main(["route", spec, "--from", "wrist_left", "--to", "sternum_left", "--no-drape",
                 "--ignore-body-zones"]) == 0
    err = capsys.readouterr().err
    assert err.count("Safety cautions:") == 1
    assert "MRI rooms" in err
    assert main(["route", spec, "--from", "wrist_left", "--to", "sternum_left", "--no-drape", "--ignore-body-zones",
                 "--quiet"]) == 0
    assert "Safety cautions" not in capsys.readouterr().err
