"""The quick OBJ path (garnav.drape.objplain) gives the line reader's arrays bit for bit, and
hands every text it does not fully understand to the line reader (same arrays or same error).

The line reader itself is checked against libigl's OBJ reader in tests/test_drape_meshio.py."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

import drape_meshes as dm
from garnav.drape.meshio import dumps_obj, parse_obj, parse_obj_lines
from garnav.drape.objplain import parse_plain_obj
from garnav.errors import MeshError

ROOT = Path(__file__).resolve().parents[1]
SMALL = "# a square\nv 0 0 0\nv 1.5 0 0\nv 1.5 1 0\nv 0 1 -2e-3\nvt 0 0\nvt 1 0\nvt 1 1\nvt 0 1\no sq\nf 1/1 2/2 3/3\nf 1/1 3/3 4/4\n"


def _identical(a, b):
    assert len(a) == len(b) == 3
    for x, y in zip(a, b):
        assert x.dtype == y.dtype and x.shape == y.shape and x.tobytes() == y.tobytes()


def _same_outcome(text):
    """parse_obj(text) and parse_obj_lines(text): equal arrays, or the same MeshError."""
    try:
        want = parse_obj_lines(text, "m.obj")
    except MeshError as exc:
        with pytest.raises(MeshError) as got:
            parse_obj(text, "m.obj")
        assert str(got.value) == str(exc)
        return
    _identical(parse_obj(text, "m.obj"), want)


def test_the_demo_drape_takes_the_quick_path_and_reads_alike():
    text = (ROOT / "meshes" / "sensing_top_drape.obj").read_text(encoding="utf-8")
    quick = parse_plain_obj(text)
    assert quick is not None
    _identical(quick, parse_obj_lines(text))


def test_written_meshes_take_the_quick_path_and_read_alike():
    mesh = dm.cylinder(radius=40.0, length=100.0, n_around=24, n_along=5)[1]
    for precision in (3, 9, 17):  # 3: exponents and short numbers; 17: round-trip floats
        text = dumps_obj(mesh, precision=precision)
        assert parse_plain_obj(text) is not None
        _identical(parse_obj(text), parse_obj_lines(text))


@pytest.mark.parametrize("change", [
    lambda t: t.replace("\n", "\r\n"),  # other line breaks
    lambda t: t.replace("v 1.5 0 0", " v 1.5 0 0"),  # leading blank
    lambda t: t.replace("v 1.5 0 0", "\u3000v 1.5 0 0"),  # a Unicode blank (str.strip removes it)
    lambda t: t.replace("v 1.5 0 0", "v 1.5 0 0 # note"),  # comment at the end of a line
    lambda t: t.replace("v 1.5 0 0", "v 1.5 0 0 1"),  # a w coordinate
    lambda t: t.replace("v 1.5 0 0", "v 1.5 0"),  # a missing coordinate: an error
    lambda t: t.replace("v 1.5 0 0", "v 1.5 x 0"),  # not a number: an error
    lambda t: t.replace("v 1.5 0 0", "v 1_5 0 0"),  # what float() accepts, read alike
    lambda t: t.replace("v 1.5 0 0", "v 1.5 0 0\nv"),  # a bare v: an error
    lambda t: t.replace("v 1.5 0 0", "v\t1.5 0 0"),  # a tab after the head: not a v line
    lambda t: t.replace("vt 1 0", "vt 1"),  # one texture coordinate
    lambda t: t.replace("vt 1 0", "vt 1 0 0"),  # three texture coordinates
    lambda t: t.replace("f 1/1 3/3 4/4", "f 1/1 3/3 4/4 2/2"),  # a polygon
    lambda t: t.replace("f 1/1 3/3 4/4", "f -4/-4 -2/-2 -1/-1"),  # relative indices
    lambda t: t.replace("f 1/1 3/3 4/4", "f 1 3 4"),  # no texture indices
    lambda t: t.replace("f 1/1 3/3 4/4", "f 1/1/1 3/3/3 4/4/4"),  # normals too
    lambda t: t.replace("f 1/1 3/3 4/4", "f 1//1 3/3 4/4"),  # an empty texture index
    lambda t: t.replace("f 1/1 3/3 4/4", "f 1/ 3/3 4/4"),  # an empty index
    lambda t: t.replace("f 1/1 3/3 4/4", "f 1/1 3/3 4/\u0664"),  # an Arabic-Indic digit
    lambda t: t.replace("f 1/1 3/3 4/4", "f 1/1 3/3  4/4"),  # two blanks
    lambda t: t.replace("f 1/1 3/3 4/4", "f 1/1 3/3 9/4"),  # vertex out of range: an error
    lambda t: t.replace("f 1/1 3/3 4/4", "f 1/1 3/3 4/9"),  # texture index out of range: an error
    lambda t: t.replace("f 1/1 3/3 4/4", "f 0/1 3/3 4/4"),  # index 0: an error
    lambda t: t.replace("f 1/1 3/3 4/4", "f 1/1 3/3 4/4\nf"),  # a bare f: an error
    lambda t: t.replace("f 1/1 3/3 4/4", "f 1/1 3/3 99999999999999999999/4"),  # beyond int64: an error
    lambda t: t.replace("f 1/1 3/3 4/4\n", ""),  # one face
    lambda t: t.replace("vt", "vn"),  # no texture coordinates at all
    lambda t: t + "vn 0 0 1\nusemtl cloth\ns off\n",  # lines that are skipped
    lambda t: t,
])
def test_every_other_text_is_read_by_the_line_reader(change):
    _same_outcome(change(SMALL))


def test_random_plain_texts_read_alike():
    rng = np.random.default_rng(7)
    for _ in range(20):
        n_v, n_t, n_f = rng.integers(3, 40, size=3)
        lines = [f"v {' '.join(repr(float(x)) for x in rng.normal(0, 100, 3))}" for _ in range(n_v)]
        lines += [f"vt {rng.random():.6f} {rng.random():.6e}" for _ in range(n_t)]
        lines += ["f " + " ".join(f"{a}/{b}" for a, b in zip(rng.integers(1, n_v + 1, 3), rng.integers(1, n_t + 1, 3)))
                  for _ in range(n_f)]
        order = rng.permutation(len(lines))  # blocks in any order and interleaved
        text = "\n".join(lines[i] for i in order) + "\n"
        assert parse_plain_obj(text) is not None
        _same_outcome(text)
