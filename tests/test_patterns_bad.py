"""Hostile and bad pattern files: one clear message each, naming the file, the element or entity
and the reason; the CLI prints it and exits 2 without a traceback.

The XML attacks are the classic ones defusedxml's documentation lists (billion laughs, external
entity, external parameter entity).
"""

from __future__ import annotations

import os

import pytest

import ezdxf  # noqa: E402

from garnav.cli import main  # noqa: E402
from garnav.errors import GarnavError, SpecError  # noqa: E402
from garnav.patterns import SvgOptions, read_pattern  # noqa: E402
from garnav.patterns.conventions import MAX_DXF_BYTES, MAX_SVG_BYTES  # noqa: E402

SVG_NS = 'xmlns="http://www.w3.org/2000/svg"'
ROOT = f'<svg {SVG_NS} width="100mm" height="100mm" viewBox="0 0 100 100">'

LAUGHS = ('<?xml version="1.0"?>\n<!DOCTYPE lolz [\n<!ENTITY lol "lol">\n'
          + "".join(f'<!ENTITY lol{i} "{("&lol" + str(i - 1) + ";") * 10 if i > 1 else "&lol;" * 10}">\n'
                    for i in range(1, 10))
          + f"]>\n<svg {SVG_NS}><text>&lol9;</text></svg>\n")
XXE = ('<?xml version="1.0"?>\n<!DOCTYPE svg [<!ENTITY xxe SYSTEM "file:///etc/passwd">]>\n'
       f"<svg {SVG_NS}><text>&xxe;</text></svg>\n")
PARAM = ('<?xml version="1.0"?>\n<!DOCTYPE svg [<!ENTITY % ext SYSTEM "http://127.0.0.1:9/x.dtd">'
         f" %ext;]>\n<svg {SVG_NS}/>\n")


def _svg(tmp_path, text, name="bad.svg"):
    p = tmp_path / name
    p.write_text(text)
    return p


def _message(path, options=None) -> str:
    with pytest.raises(SpecError) as info:
        read_pattern(path, options)
    assert len(info.value.problems) == 1
    text = str(info.value.problems[0])
    assert text.startswith(str(path) + ": ")
    return text


@pytest.mark.parametrize("text, expected", [
    (LAUGHS, "XML entity 'lol': refused: entity declarations are not read"),
    (XXE, "XML external entity 'xxe' (SYSTEM 'file:///etc/passwd'): refused"),
    (PARAM, "XML external entity 'ext' (SYSTEM 'http://127.0.0.1:9/x.dtd'): refused"),
    ("<svg><path", "XML: not well-formed XML"),
    (f"<html {SVG_NS}/>", "the root element is not <svg>"),
])
def test_xml_attacks_refused(tmp_path, text, expected):
    path = _svg(tmp_path, text)
    assert expected in _message(path)


def test_plain_doctype_is_read(tmp_path):
    """SVG 1.1's document type declaration (no entities) is fine: it is never fetched."""
    text = ('<?xml version="1.0"?>\n<!DOCTYPE svg PUBLIC "-//W3C//DTD SVG 1.1//EN" '
            '"http://www.w3.org/Graphics/SVG/1.1/DTD/svg11.dtd">\n'
            f'{ROOT}<rect id="a" x="10" y="10" width="20" height="20"/></svg>')
    assert read_pattern(_svg(tmp_path, text)).garment.pieces[0].name == "a"


def test_size_caps(tmp_path):
    svg = _svg(tmp_path, f'{ROOT}<rect id="a" x="10" y="10" width="20" height="20"/></svg>')
    msg = _message(svg, SvgOptions(max_bytes=100))
    assert "file: is" in msg and "more than the 100 bytes" in msg
    # the stated default caps: 16 MiB for SVG, 64 MiB for DXF (a sparse file, nothing read)
    assert (MAX_SVG_BYTES, MAX_DXF_BYTES) == (16 * 2**20, 64 * 2**20)
    for name, cap in (("big.svg", MAX_SVG_BYTES), ("big.dxf", MAX_DXF_BYTES)):
        big = tmp_path / name
        with open(big, "wb") as fh:
            fh.truncate(cap + 1)
        assert f"more than the {cap} bytes" in _message(big)


@pytest.mark.parametrize("body, expected", [
    ('<path id="p" d="M 0 0 L 50 0 L 50 50"/>', "<path id='p'>: open boundary: the outline is not closed"),
    ('<path id="bow" d="M 10 10 L 60 60 L 60 10 L 10 60 Z"/>', "piece 'bow' (<path id='bow'>): outline crosses or touches itself at (35.0, 65.0) mm"),
    ('<path id="z" d="M 10 10 C 10 10 10 10 10 10 L 50 10 L 50 50 Z"/>', "<path id='z'>: zero-length curve segment"),
    ('<path id="n" d="M 10 10 L nan 10 L 50 50 Z"/>', "<path id='n'>: attribute 'd' holds a number that is not finite"),
    ('<rect id="r" x="inf" y="0" width="5" height="5"/>', "<rect id='r'>: attribute 'x' holds a number that is not finite"),
    ('<rect data-name="front" x="0" y="0" width="20" height="20"/>'
     '<rect data-name="front" x="40" y="0" width="20" height="20"/>',
     "piece 'front': the name is used by 2 pieces (<rect name='front'>, <rect name='front'>)"),
    ('<rect id="a" x="0" y="0" width="20" height="20"/><circle class="landmark" id="far" cx="90" cy="90" r="1"/>',
     "<circle id='far'>: lies on no piece at (90.0, 10.0) mm"),
])
def test_bad_svg_geometry(tmp_path, body, expected):
    path = _svg(tmp_path, f"{ROOT}{body}</svg>")
    assert expected in _message(path)


def test_svg_unknown_units_in_an_element(tmp_path):
    path = _svg(tmp_path, f'{ROOT}<rect id="a" x="0" y="0" width="3furlong" height="10"/></svg>')
    assert "<rect id='a' width=\"3furlong\">: unknown units" in _message(path)


@pytest.mark.parametrize("root", ['width="10furlong" height="10mm"', 'width="50%" height="10mm"',
                                  'width="10em" height="10mm"'])
def test_svg_unknown_units(tmp_path, root):
    path = _svg(tmp_path, f'<svg {SVG_NS} {root}><rect id="a" width="1" height="1"/></svg>')
    msg = _message(path)
    assert "<svg width=" in msg and "unknown units" in msg


# -- DXF ----------------------------------------------------------------------------------------
def _dxf(tmp_path, fill, insunits=4, name="bad.dxf"):
    doc = ezdxf.new("R2000")
    doc.header["$INSUNITS"] = insunits
    blk = doc.blocks.new("B1")
    fill(blk)
    doc.modelspace().add_blockref("B1", (0, 0))
    path = tmp_path / name
    doc.saveas(path)
    return path


def _square(blk, layer="1"):
    blk.add_lwpolyline([(0, 0), (100, 0), (100, 100), (0, 100)], close=True,
                       dxfattribs={"layer": layer})


def test_dxf_open_boundary(tmp_path):
    def fill(b):
        for p, q in [((0, 0), (100, 0)), ((100, 0), (100, 100)), ((100, 100), (0, 100)),
                     ((0, 100), (0, 3))]:
            b.add_line(p, q, dxfattribs={"layer": "1"})
    msg = _message(_dxf(tmp_path, fill))
    assert "block 'B1' LINE #" in msg and "on layer 1: open boundary" in msg and "3.000 mm" in msg


def test_dxf_self_crossing(tmp_path):
    def fill(b):
        b.add_lwpolyline([(0, 0), (100, 100), (100, 0), (0, 100)], close=True,
                         dxfattribs={"layer": "1"})
    msg = _message(_dxf(tmp_path, fill))
    assert "piece 'B1' (block 'B1'): outline crosses or touches itself at (50.0, 50.0) mm" in msg


def test_dxf_zero_length_curves(tmp_path):
    def line(b):
        _square(b)
        b.add_line((5, 5), (5, 5), dxfattribs={"layer": "1"})
    assert "LINE #" in _message(_dxf(tmp_path, line)) and "zero-length line" in \
        _message(_dxf(tmp_path, line))

    def arc(b):
        b.add_arc((50, 50), 10, 30, 30, dxfattribs={"layer": "1"})
    assert "ARC #" in _message(_dxf(tmp_path, arc, name="a.dxf")) and \
        "zero-length curve (start angle = end angle)" in _message(tmp_path / "a.dxf")


def test_dxf_nan_coordinate(tmp_path):
    path = _dxf(tmp_path, _square)
    text = path.read_text()
    # the first vertex x of the polyline (group code 10 inside the LWPOLYLINE) → nan
    head, tail = text.split("LWPOLYLINE", 1)
    tail = tail.replace("\n 10\n0.0\n", "\n 10\nnan\n", 1)
    path.write_text(head + "LWPOLYLINE" + tail)
    msg = _message(path)
    assert "block 'B1' LWPOLYLINE #" in msg and "not a finite number" in msg


@pytest.mark.parametrize("code, unit_text, expected", [
    (3, None, "header $INSUNITS: unknown or unsuitable units code 3"),
    (0, None, "units: unknown units: $INSUNITS is unset (0)"),
    (0, "UNITS: IMPERIAL", "text 'UNITS: IMPERIAL': unknown units 'IMPERIAL'"),
])
def test_dxf_unknown_units(tmp_path, code, unit_text, expected):
    path = _dxf(tmp_path, _square, insunits=code)
    if unit_text:
        doc = ezdxf.readfile(path)
        doc.modelspace().add_text(unit_text)
        doc.saveas(path)
    assert expected in _message(path)


def test_dxf_duplicate_piece_names(tmp_path):
    doc = ezdxf.new("R2000")
    doc.header["$INSUNITS"] = 4
    for i in (1, 2):
        b = doc.blocks.new(f"B{i}")
        _square(b)
        b.add_text("Piece Name: FRONT", dxfattribs={"layer": "1"})
        doc.modelspace().add_blockref(f"B{i}", (200 * i, 0))
    path = tmp_path / "dup.dxf"
    doc.saveas(path)
    assert "piece 'FRONT': the name is used by 2 pieces (block 'B1', block 'B2')" in _message(path)


def test_dxf_not_a_dxf_and_no_pieces(tmp_path):
    junk = tmp_path / "junk.dxf"
    junk.write_text("hello\n")
    assert "not a readable DXF file" in _message(junk)
    empty = tmp_path / "empty.dxf"
    doc = ezdxf.new()
    doc.header["$INSUNITS"] = 4
    doc.saveas(empty)
    assert "pattern: no pieces found; no pieces: a pattern DXF has one block per piece" in \
        _message(empty)
    boundaryless = _dxf(tmp_path, lambda b: _square(b, layer="8"), name="nob.dxf")
    assert "block 'B1': no boundary: nothing on layer 1" in _message(boundaryless)


def test_notch_off_the_outline(tmp_path):
    def fill(b):
        _square(b)
        b.add_point((50, 10), dxfattribs={"layer": "4"})
    msg = _message(_dxf(tmp_path, fill))
    assert "notch 1 lies 10.00 mm from the outline (at most 1 mm allowed)" in msg


def test_cli_prints_one_message(tmp_path, capsys):
    path = _svg(tmp_path, XXE)
    assert main(["import", str(path), "--out", str(tmp_path / "x.toml")]) == 2
    err = capsys.readouterr().err
    assert "garnav import: error:" in err and "XML external entity 'xxe'" in err
    assert "Traceback" not in err and not (tmp_path / "x.toml").exists()
    assert main(["import", str(tmp_path / "missing.dxf"), "--out", str(tmp_path / "x.toml")]) == 2
    # a missing input is refused by the output plan before any reader runs (garnav.textio's words)
    assert "missing.dxf: does not exist" in capsys.readouterr().err


def test_missing_extra_says_how_to_install(monkeypatch):
    import sys

    from garnav.patterns.extra import require

    monkeypatch.setitem(sys.modules, "ezdxf", None)  # makes `import ezdxf` fail
    with pytest.raises(GarnavError, match=r"pip install 'garnav\[patterns\]'"):
        require("ezdxf")


def test_svg_names_xml_cannot_hold(tmp_path):
    from garnav import Edge, Garment, Piece
    from garnav.patterns import write_svg

    tri = Piece("bad\ufffe", (Edge("a", ((0, 0), (10, 0))), Edge("b", ((10, 0), (0, 10))),
                             Edge("c", ((0, 10), (0, 0)))))
    with pytest.raises(GarnavError, match="characters XML cannot hold"):
        write_svg(Garment("g", (tri,), sheet_size_mm=(20, 20)), tmp_path / "x.svg")
    assert not os.path.exists(tmp_path / "x.svg")


def test_dxf_graded_sizes_hint(tmp_path):
    doc = ezdxf.new("R2000")
    doc.header["$INSUNITS"] = 4
    for i, size in ((1, "M"), (2, "L")):
        b = doc.blocks.new(f"B{i}")
        _square(b)
        b.add_text("Piece Name: FRONT", dxfattribs={"layer": "1"})
        b.add_text(f"Size: {size}", dxfattribs={"layer": "1"})
        doc.modelspace().add_blockref(f"B{i}", (200 * i, 0))
    path = tmp_path / "graded.dxf"
    doc.saveas(path)
    assert "the file holds several sizes (L, M): export one size" in _message(path)
