"""Class 8 of the hardening work: terminal safety. A name with a control character (an escape
sequence that clears the screen or retitles the terminal) is refused by the spec reader, and any
text garnav prints — messages, file names, errors — has its control characters escaped."""

from __future__ import annotations

import pytest

import garments
from garnav.cli import main
from garnav.cli.outputs import terminal_safe
from garnav.errors import SpecError
from garnav.spec import dumps_garment, loads_garment, save_garment

ESC = "\x1b"


def _spec_text() -> str:
    return dumps_garment(garments.two_panels())


@pytest.mark.parametrize("bad", [f"{ESC}[2J", "\x07", "\x9b31m", "tab\there"])
def test_class8_spec_reader_refuses_control_characters_in_names(bad):
    escaped = "".join(c if c.isprintable() else f"\\u{ord(c):04x}" for c in bad)  # TOML's escapes
    text = _spec_text().replace('name = "left"', f'name = "le{escaped}ft"', 1)
    with pytest.raises(SpecError, match="control character U\\+"):
        loads_garment(text, "bad.toml")


def test_class8_description_may_hold_newlines_but_no_escapes():
    text = _spec_text()
    ok = text.replace('format = ', 'description = "line one\\nline two"\nformat = ', 1)
    assert loads_garment(ok, "ok.toml").name
    bad = text.replace('format = ', 'description = "\\u001b]0;owned\\u0007"\nformat = ', 1)
    with pytest.raises(SpecError, match="control character U\\+001B"):
        loads_garment(bad, "bad.toml")


def test_class8_printed_text_is_escaped():
    assert terminal_safe(f"piece {ESC}[2Jx\n\tok") == "piece \\x1b[2Jx\n\tok"
    assert terminal_safe("\x9b\u2028") == "\\x9b\\u2028"
    assert terminal_safe("ünïcode → fine") == "ünïcode → fine"


def test_class8_error_messages_and_file_names_are_escaped(tmp_path, capsys):
    name = f"evil{ESC}]0;title{chr(7)}.toml"
    assert main(["check", str(tmp_path / name)]) == 2
    err = capsys.readouterr().err
    assert ESC not in err and "\\x1b]0;title\\x07" in err
    spec = tmp_path / "two.toml"
    save_garment(garments.two_panels(), spec)
    out = tmp_path / f"r{ESC}[2J.json"
    assert main(["route", str(spec), "--from", "left_centre", "--to", "right:250,300", "--no-cache",
                 "--json", str(out)]) == 0
    printed = capsys.readouterr().out
    assert out.exists() and ESC not in printed and "r\\x1b[2J.json" in printed
