"""DXF patterns written independently with ezdxf (blocks on the pattern-exchange layers, arcs,
bulges and splines, inch units) import to the expected pieces and areas.

References: closed-form areas (rectangle plus half disc: w h + π r² / 2), shapely for polygon
areas, scipy's ``BSpline`` evaluating the spline from its own knots and control points, and the
exact inch (25.4 mm, international yard and pound agreement, 1959).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely

import ezdxf  # a test extra: missing means a broken install

from garnav.patterns import DxfOptions, read_pattern  # noqa: E402
from garnav.patterns.dxf_read import read_dxf  # noqa: E402

IN = 25.4


def _texts(block, *lines):
    for k, line in enumerate(lines):
        block.add_text(line, height=0.2, dxfattribs={"layer": "1"}).set_placement((1, 1 + 0.3 * k))


def make_dxf(path, insunits=1, unit_text=None):
    """Three pieces in inches; FRONT with an arc, SLEEVE (cut 2) with a bulge and a horizontal
    grain line, POCKET with a spline, rotated by its insert."""
    doc = ezdxf.new("R2000")
    doc.header["$INSUNITS"] = insunits
    for name in ("1", "2", "4", "7", "8", "13"):
        doc.layers.add(name)
    front = doc.blocks.new("FRONT_BLK")
    L = {"layer": "1"}
    front.add_line((0, 0), (10, 0), dxfattribs=L)
    front.add_line((10, 0), (10, 6), dxfattribs=L)
    front.add_arc((5, 6), 5, 0, 180, dxfattribs=L)  # (10, 6) → (0, 6) over the top
    front.add_line((0, 0), (0, 6), dxfattribs=L)  # drawn backwards on purpose
    front.add_point((5, 0), dxfattribs={"layer": "4"})  # notch on the hem
    front.add_line((10, 3), (9.75, 3), dxfattribs={"layer": "4"})  # notch as a short line
    front.add_line((5, 1), (5, 5), dxfattribs={"layer": "7"})
    front.add_point((5, 3), dxfattribs={"layer": "13"})
    front.add_lwpolyline([(2, 2), (3, 2), (3, 3), (2, 3)], close=True, dxfattribs={"layer": "8"})
    _texts(front, "Piece Name: FRONT", "Size: M", "Quantity: 1")

    sleeve = doc.blocks.new("SLEEVE_BLK")
    # 8 × 3 with a half circle of radius 4 on top, as one polyline with a bulge of 1
    sleeve.add_lwpolyline([(0, 0, 0), (8, 0, 0), (8, 3, 1), (0, 3, 0)], format="xyb", close=True,
                          dxfattribs=L)
    sleeve.add_line((1, 1.5), (7, 1.5), dxfattribs={"layer": "7"})  # grain across
    _texts(sleeve, "Piece Name: SLEEVE", "Quantity: 2")

    pocket = doc.blocks.new("POCKET_BLK")
    ctrl = [(0, 0), (2, 5), (8, 5), (10, 0)]
    pocket.add_open_spline(ctrl, degree=3, dxfattribs=L)
    pocket.add_line((10, 0), (0, 0), dxfattribs=L)
    pocket.add_line((5, 0.5), (5, 2.5), dxfattribs={"layer": "7"})
    _texts(pocket, "Piece Name: POCKET")

    msp = doc.modelspace()
    msp.add_blockref("FRONT_BLK", (0, 0))
    msp.add_blockref("SLEEVE_BLK", (12, 0))
    msp.add_blockref("POCKET_BLK", (26, 2), dxfattribs={"rotation": 30})
    if unit_text:
        msp.add_text(unit_text, height=0.2).set_placement((0, -1))
    doc.saveas(path)
    return doc


def _spline_reference(path) -> np.ndarray:
    """Dense points of the POCKET spline by scipy, from the entity's own knots and controls."""
    from scipy.interpolate import BSpline

    doc = ezdxf.readfile(path)
    sp = [e for e in doc.blocks["POCKET_BLK"] if e.dxftype() == "SPLINE"][0]
    knots = np.array(sp.knots, float)
    ctrl = np.array([(p[0], p[1]) for p in sp.control_points], float)
    curve = BSpline(knots, ctrl, sp.dxf.degree)
    t = np.linspace(knots[sp.dxf.degree], knots[-sp.dxf.degree - 1], 20001)
    return curve(t) * IN


def test_independent_dxf_pieces_and_areas(tmp_path):
    path = tmp_path / "pattern.dxf"
    make_dxf(path)
    # inscribed chords lose about 2/3 · tolerance · curve length of area: at the default 0.1 mm
    # that is 0.04-0.09 % of these small pieces, so the areas are checked at 0.01 mm
    built = read_pattern(path, DxfOptions(tolerance_mm=0.01))
    g = built.garment
    assert [p.name for p in g.pieces] == ["FRONT", "POCKET", "SLEEVE_right", "SLEEVE_left"] or \
        sorted(p.name for p in g.pieces) == ["FRONT", "POCKET", "SLEEVE_left", "SLEEVE_right"]
    front_area = (10 * 6 + math.pi * 5**2 / 2) * IN**2
    sleeve_area = (8 * 3 + math.pi * 4**2 / 2) * IN**2
    ref = _spline_reference(path)
    pocket_area = shapely.Polygon(ref).area  # closed by the straight line back to the start
    # observed relative errors at 0.01 mm: 4e-5 (front), 7e-5 (sleeve), 2e-5 (pocket)
    assert g.piece("FRONT").area == pytest.approx(front_area, rel=1e-3)
    assert g.piece("SLEEVE_right").area == pytest.approx(sleeve_area, rel=1e-3)
    assert g.piece("SLEEVE_left").area == pytest.approx(sleeve_area, rel=1e-3)
    assert g.piece("POCKET").area == pytest.approx(pocket_area, rel=1e-3)
    # inscribed chords: the flattened outline never encloses more than the true curve
    assert g.piece("FRONT").area <= front_area

    # FRONT: the arc meets the sides tangentially, so the corners are the hem's two ends; the
    # two notches split further: 4 edges
    front = g.piece("FRONT")
    pts = dict((pp.piece, pp) for pp in built.points)["FRONT"]
    assert len(front.edges) == 4 and pts.points == ("c1", "n1", "c2", "n2")
    starts = np.array([e.points[0] for e in front.edges])
    assert starts == pytest.approx(np.array([[0, 0], [5, 0], [10, 0], [10, 3]]) * IN, abs=1e-9)
    # the drill hole → a small keep-out; the closed internal line → a 1 in square keep-out
    ks = g.keepouts_on("FRONT")
    assert len(ks) == 2
    assert max(k.shape.exact_geometry().area for k in ks) == pytest.approx(IN**2, rel=1e-9)

    # SLEEVE: grain across → piece frame turned by 90°; left is right's mirror image
    right, left = g.piece("SLEEVE_right"), g.piece("SLEEVE_left")
    w, h = np.ptp(right.outline, axis=0)
    assert (w, h) == pytest.approx((7 * IN, 8 * IN), abs=0.2)  # 3 in + radius 4 in across
    mirrored = shapely.Polygon(right.outline * [-1.0, 1.0])
    assert shapely.symmetric_difference(mirrored, left.polygon).area < 1e-6
    assert shapely.LinearRing(left.outline).is_ccw and shapely.LinearRing(right.outline).is_ccw

    # POCKET: rotated 30° by its insert, grain along the block's +y: the placement keeps 30°
    assert g.piece("POCKET").placement.angle_deg == pytest.approx(30.0, abs=1e-9)


def test_arc_chords_within_tolerance(tmp_path):
    """Every chord of the flattened arc has a sagitta of at most the tolerance (and not far below
    it: the arc is not over-refined). Reference: the circle itself, r = 5 in."""
    path = tmp_path / "pattern.dxf"
    make_dxf(path)
    for tol in (0.1, 0.02):
        g = read_pattern(path, DxfOptions(tolerance_mm=tol)).garment
        ring = g.piece("FRONT").outline
        c, r = np.array([5 * IN, 6 * IN]), 5 * IN
        on = np.abs(np.hypot(*(ring - c).T) - r) < 1e-6
        pairs = on & np.roll(on, -1)
        mids = 0.5 * (ring + np.roll(ring, -1, axis=0))[pairs]
        sag = r - np.hypot(*(mids - c).T)
        assert pairs.sum() > 10
        assert sag.max() <= tol * (1 + 1e-9) and sag.max() >= 0.5 * tol


def test_spline_within_tolerance_of_scipy(tmp_path):
    """The flattened spline stays within the chord tolerance of scipy's evaluation of the same
    B-spline (observed 0.026 mm at a 0.1 mm tolerance)."""
    path = tmp_path / "pattern.dxf"
    make_dxf(path)
    ref = _spline_reference(path)
    g = read_pattern(path).garment
    p = g.piece("POCKET")
    # the block frame is the piece frame here (grain along the block's +y)
    line = shapely.LinearRing(p.outline)
    d = shapely.distance(shapely.points(ref), line)
    assert d.max() <= 0.1


@pytest.mark.parametrize("insunits, text, factor", [
    (1, None, 25.4), (4, None, 1.0), (5, None, 10.0), (0, "UNITS: ENGLISH", 25.4),
    (0, "UNITS: METRIC", 1.0), (1, "UNITS: ENGLISH", 25.4)])
def test_units(tmp_path, insunits, text, factor):
    path = tmp_path / "p.dxf"
    make_dxf(path, insunits, text)
    raw = read_dxf(path)
    front = [p for p in raw.pieces if p.name == "FRONT"][0]
    assert np.ptp(front.outline[:, 0]) == pytest.approx(10 * factor, rel=1e-12)


def test_units_override_and_conflict(tmp_path):
    from garnav.errors import SpecError

    path = tmp_path / "p.dxf"
    make_dxf(path, 4, "UNITS: ENGLISH")
    with pytest.raises(SpecError, match=r"p\.dxf: header \$INSUNITS: says millimetres but the "
                       "text says UNITS: ENGLISH"):
        read_dxf(path)
    raw = read_dxf(path, DxfOptions(units="in"))
    assert np.ptp(raw.pieces[0].outline[:, 0]) == pytest.approx(254.0)


def test_drill_holes_as_landmarks_and_internal_lines_ignored(tmp_path):
    path = tmp_path / "p.dxf"
    make_dxf(path)
    g = read_pattern(path, DxfOptions(drill="landmark", internal="ignore")).garment
    assert g.keepouts_on("FRONT") == ()
    (lm,) = [m for m in g.landmarks if m.piece == "FRONT"]
    assert (lm.x, lm.y) == pytest.approx((5 * IN, 3 * IN)) and lm.description == "drill hole"


def test_ellipse_negative_bulge_and_old_polyline(tmp_path):
    """A full ELLIPSE (area π a b), an LWPOLYLINE whose top edge bulges inwards (bulge −1: a half
    disc cut out, area w h − π r² / 2) and an old-style 2D POLYLINE with a bulge."""
    doc = ezdxf.new("R2000")
    doc.header["$INSUNITS"] = 4  # mm
    e = doc.blocks.new("ELL")
    e.add_ellipse((0, 0), major_axis=(100, 0), ratio=0.5, dxfattribs={"layer": "1"})
    b = doc.blocks.new("BITE")
    b.add_lwpolyline([(0, 0, 0), (80, 0, 0), (80, 60, -1), (0, 60, 0)], format="xyb",
                     close=True, dxfattribs={"layer": "1"})
    p = doc.blocks.new("OLD")
    p.add_polyline2d([(0, 0), (80, 0), (80, 30), (0, 30)], close=True,
                     dxfattribs={"layer": "1"})
    p.query("POLYLINE")[0].vertices[2].dxf.bulge = 1.0  # (80, 30) → (0, 30) over the top
    msp = doc.modelspace()
    for name, x in (("ELL", 150), ("BITE", 300), ("OLD", 450)):
        msp.add_blockref(name, (x, 150))
    path = tmp_path / "p.dxf"
    doc.saveas(path)
    g = read_pattern(path, DxfOptions(tolerance_mm=0.01)).garment
    # each chord's sliver between chord and curve has an area of at most tolerance × chord, so
    # the area is off by at most tolerance × curved length (Ramanujan's approximation for the
    # ellipse's perimeter, far closer than needed here)
    tol = 0.01
    ell_perimeter = math.pi * (3 * 150 - math.sqrt((3 * 100 + 50) * (100 + 3 * 50)))
    assert abs(g.piece("ELL").area - math.pi * 100 * 50) <= tol * ell_perimeter
    assert abs(g.piece("BITE").area - (80 * 60 - math.pi * 40**2 / 2)) <= tol * math.pi * 40
    assert abs(g.piece("OLD").area - (80 * 30 + math.pi * 40**2 / 2)) <= tol * math.pi * 40
    # the concave cut-out's chords cut off less: the piece comes out larger (observed +0.82 mm²)
    assert g.piece("BITE").area > 80 * 60 - math.pi * 40**2 / 2
    # a smooth ellipse has no corner: one closed edge
    assert len(g.piece("ELL").edges) == 1
