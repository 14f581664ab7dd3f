"""Round trips spec → DXF → spec and spec → SVG → spec (docs/pattern-files.md).

Oracles: the garment we started from (outlines in the sheet frame, names, notches and grain
directions must come back) and shapely for keep-out geometry; ezdxf, the DXF library, strips
garnav's extended data to show that the layers alone (turn points and notches) keep the edges.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st


from garnav.patterns import read_pattern, write_dxf, write_svg  # noqa: E402
from garnav.patterns.dxf_write import boundary_kinds  # noqa: E402
from garnav.patterns.seams import apply_seams, seams_file_text  # noqa: E402
from garnav.spec import load_garment  # noqa: E402

import garments  # noqa: E402
from test_spec_generated import garments as generated_garments  # noqa: E402

DEMO = Path(__file__).resolve().parents[1] / "meshes" / "sensing_top.toml"
# Outlines are polylines already, written with Python's shortest round-trip float text (DXF) or
# repr (SVG): they come back to ~1e-12 mm (observed 4.5e-13 mm on the demo); the chord tolerance
# (0.1 mm) is the promise, 1e-6 mm what we check here.
TOL_MM = 1e-6


def _sheet(piece) -> np.ndarray:
    return piece.placement.to_sheet(piece.outline)


def _angle_diff(a: float, b: float) -> float:
    return abs((a - b + 180.0) % 360.0 - 180.0)


def assert_same_pieces(g, h, tol=TOL_MM, names=True):
    assert [p.name for p in h.pieces] == [p.name for p in g.pieces]
    assert h.sheet_size_mm == pytest.approx(g.sheet_size_mm, abs=tol)
    for p, q in zip(g.pieces, h.pieces, strict=True):
        if names:
            assert q.edge_names == p.edge_names
        assert len(q.edges) == len(p.edges)
        # same edges, point by point, in the sheet frame
        for e, f in zip(p.edges, q.edges, strict=True):
            a = p.placement.to_sheet(np.array(e.points))
            b = q.placement.to_sheet(np.array(f.points))
            assert a.shape == b.shape
            assert np.abs(a - b).max() <= tol
        # grain line kept: the piece frame's +y points the same way on the sheet
        assert _angle_diff(p.placement.angle_deg, q.placement.angle_deg) <= 1e-6
        assert [o.name for o in q.openings] == [o.name for o in p.openings]
        for o, r in zip(p.openings, q.openings, strict=True):
            assert np.abs(p.placement.to_sheet(o.array) - q.placement.to_sheet(r.array)).max() <= tol


def assert_same_marks(g, h, tol=TOL_MM):
    # the file lists zones and points piece by piece: compare by name
    assert sorted(k.name for k in h.keepouts) == sorted(k.name for k in g.keepouts)
    by_name = {k.name: k for k in h.keepouts}
    for k in g.keepouts:
        m = by_name[k.name]
        assert (m.kind, m.hard, m.piece) == (k.kind, k.hard, k.piece)
        assert m.clearance_mm == pytest.approx(k.clearance_mm) and \
            m.cost_factor == pytest.approx(k.cost_factor)
        # reference: shapely's symmetric difference of the two zones (sheet frame)
        import shapely
        from shapely import affinity

        def placed(ko, garment):
            pl = garment.piece(ko.piece).placement
            geom = ko.shape.exact_geometry()
            geom = affinity.rotate(geom, pl.angle_deg, origin=(0, 0))
            return affinity.translate(geom, pl.x, pl.y)

        a, b = placed(k, g), placed(m, h)
        assert shapely.symmetric_difference(a, b).area <= 1e-6 * max(a.area, 1.0)
    pattern_marks = [lm for lm in g.landmarks if lm.piece is not None]
    assert sorted(lm.name for lm in h.landmarks) == sorted(lm.name for lm in pattern_marks)
    for lm in pattern_marks:
        ln = h.landmark(lm.name)
        a = g.piece(lm.piece).placement.to_sheet(np.array([lm.x, lm.y]))
        b = h.piece(ln.piece).placement.to_sheet(np.array([ln.x, ln.y]))
        assert np.hypot(*(a - b)) <= tol and ln.description == lm.description


@pytest.mark.parametrize("fmt", ["dxf", "svg"])
def test_demo_round_trip(tmp_path, fmt):
    g = load_garment(DEMO)
    out = tmp_path / f"top.{fmt}"
    (write_dxf if fmt == "dxf" else write_svg)(g, out)
    built = read_pattern(out)
    h = built.garment
    assert h.name == g.name and h.seams == ()  # a pattern file carries no seams
    assert_same_pieces(g, h)
    assert_same_marks(g, h)
    if fmt == "dxf":  # the block keeps the piece frame itself
        assert [p.placement for p in h.pieces] == [p.placement for p in g.pieces]
        assert [p.edges for p in h.pieces] == [p.edges for p in g.pieces]
    # notches: every smooth edge boundary is written as a notch and read back as one
    for p, pp in zip(g.pieces, built.points, strict=True):
        assert list(pp.is_notch) == boundary_kinds(p)
    assert sum(n for pp in built.points for n in pp.is_notch) == 4  # sleeves 1 each, yoke 2
    # the seams come back through a seams file
    seams = tmp_path / "seams.toml"
    seams.write_text(seams_file_text(g))
    import tomllib

    with_seams = apply_seams(built, tomllib.loads(seams.read_text())["seam"], str(seams))
    assert with_seams.seams == g.seams


def test_dxf_without_garnav_data_keeps_edges_by_layers(tmp_path):
    """Other programs drop unknown extended data: turn points (layer 2) and notches (layer 4)
    alone still split the outline where garnav's edges met; edges are then numbered."""
    import ezdxf

    g = load_garment(DEMO)
    out = tmp_path / "top.dxf"
    write_dxf(g, out)
    doc = ezdxf.readfile(out)
    for block in doc.blocks:
        for e in block:
            if e.has_xdata("GARNAV"):
                e.discard_xdata("GARNAV")
    plain = tmp_path / "plain.dxf"
    doc.saveas(plain)
    h = read_pattern(plain).garment
    for p, q in zip(g.pieces, h.pieces, strict=True):
        assert q.name == p.name  # from the "Piece Name:" text
        assert len(q.edges) == len(p.edges)
        starts_g = {tuple(np.round(p.placement.to_sheet(np.array(e.points[0])), 6)) for e in p.edges}
        starts_h = {tuple(np.round(q.placement.to_sheet(np.array(e.points[0])), 6)) for e in q.edges}
        assert starts_g == starts_h
        assert q.edge_names[0] == "e1"


def test_svg_without_garnav_data_keeps_edges_by_corners_and_notches(tmp_path):
    import re

    g = load_garment(DEMO)
    out = tmp_path / "top.svg"
    write_svg(g, out)
    plain = tmp_path / "plain.svg"
    plain.write_text(re.sub(r" data-edges='[^']*'", "", out.read_text()))
    h = read_pattern(plain).garment
    for p, q in zip(g.pieces, h.pieces, strict=True):
        starts_g = {tuple(np.round(p.placement.to_sheet(np.array(e.points[0])), 6)) for e in p.edges}
        starts_h = {tuple(np.round(q.placement.to_sheet(np.array(e.points[0])), 6)) for e in q.edges}
        assert starts_g == starts_h


@pytest.mark.parametrize("fmt", ["dxf", "svg"])
@pytest.mark.parametrize("make", [garments.two_panels, garments.tube, garments.single_panel])
def test_catalogue_round_trip(tmp_path, fmt, make):
    g = make()
    out = tmp_path / f"g.{fmt}"
    (write_dxf if fmt == "dxf" else write_svg)(g, out)
    h = read_pattern(out).garment
    assert_same_pieces(g, h)
    assert_same_marks(g, h)


def _xml_safe(g) -> bool:
    import re

    bad = re.compile("[^\t\n\r\x20-\ud7ff\ue000-\ufffd\U00010000-\U0010ffff]")
    names = [g.name] + [p.name for p in g.pieces] + [e.name for p in g.pieces for e in p.edges]
    names += [o.name for p in g.pieces for o in p.openings] + [k.name for k in g.keepouts]
    names += [lm.name for lm in g.landmarks] + [lm.description for lm in g.landmarks]
    return not any(bad.search(n) for n in names)


@settings(max_examples=12)  # ~2 s; the spec round trip runs 60
@given(generated_garments(), st.sampled_from(["dxf", "svg"]))
def test_generated_garments_round_trip(tmp_path_factory, g, fmt):
    if fmt == "svg" and not _xml_safe(g):
        return  # XML cannot hold U+FFFE and friends; test_patterns_bad checks the message
    out = tmp_path_factory.mktemp("gen") / f"g.{fmt}"
    (write_dxf if fmt == "dxf" else write_svg)(g, out)
    h = read_pattern(out).garment
    assert_same_pieces(g, h)
    assert_same_marks(g, h)
    assert math.isclose(sum(p.area for p in h.pieces), sum(p.area for p in g.pieces), rel_tol=1e-9)
