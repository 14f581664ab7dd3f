"""SVG patterns: units, viewBox scaling and nested transforms give the right sizes.

Reference: the unit definitions of CSS Values and Units Level 3, §6.2 (1in = 2.54cm = 25.4mm =
72pt = 6pc = 96px, 1Q = 0.25mm), which SVG 1.1 §7.10 uses for lengths, and SVG 1.1 §7.7 for the
viewBox (a uniform scale for the default preserveAspectRatio when the aspect ratios agree).
Curve checks against svgelements' own evaluation of the same segment.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely


from garnav.patterns import SvgOptions, read_pattern  # noqa: E402

MM_PER = {"mm": 1.0, "cm": 10.0, "in": 25.4, "pt": 25.4 / 72, "pc": 25.4 / 6, "px": 25.4 / 96,
          "Q": 0.25}


def _svg(tmp_path, body: str, root: str, name="p.svg"):
    path = tmp_path / name
    path.write_text(f'<svg xmlns="http://www.w3.org/2000/svg" '
                    f'xmlns:inkscape="http://www.inkscape.org/namespaces/inkscape" {root}>'
                    f"{body}</svg>")
    return path


@pytest.mark.parametrize("unit", ["mm", "cm", "in", "pt", "pc", "px", "Q"])
def test_root_units(tmp_path, unit):
    """A 30 × 20 rectangle on a canvas 300 units wide with a 300-unit viewBox: 1 user unit is
    one root unit."""
    path = _svg(tmp_path, '<rect id="panel" x="10" y="10" width="30" height="20"/>',
                f'width="300{unit}" height="200{unit}" viewBox="0 0 300 200"')
    g = read_pattern(path).garment
    (p,) = g.pieces
    mm = MM_PER[unit]
    w, h = np.ptp(p.outline, axis=0)
    # observed: exact to 1e-13 relative (the root size calibrates svgelements' factor)
    assert (w, h) == pytest.approx((30 * mm, 20 * mm), rel=1e-9)
    assert p.area == pytest.approx(600 * mm * mm, rel=1e-9)
    assert g.sheet_size_mm == pytest.approx((300 * mm, 200 * mm), rel=1e-12)


def test_viewbox_scaling_and_nested_transforms(tmp_path):
    """Canvas 8.5 in × 11 in with a viewBox of 85 × 110: 1 unit = 0.1 in = 2.54 mm. The piece,
    a 20 × 10 rectangle, sits in a group translated, rotated by 30° and scaled by 2, inside a
    group scaled by 1.5: 60 × 30 units = 152.4 × 76.2 mm, turned by 30°."""
    body = ('<g transform="translate(5 5) scale(1.5)">'
            '<g transform="translate(10,20) rotate(30) scale(2)">'
            '<rect id="front" x="0" y="0" width="20" height="10"/>'
            '<line class="grain" x1="10" y1="9" x2="10" y2="1"/>'
            '<circle class="landmark" id="centre" cx="10" cy="5" r="0.5"/>'
            "</g></g>")
    path = _svg(tmp_path, body, 'width="8.5in" height="11in" viewBox="0 0 85 110"')
    g = read_pattern(path).garment
    p = g.piece("front")
    u = 2.54 * 1.5 * 2  # mm per rectangle unit
    assert p.area == pytest.approx(20 * 10 * u * u, rel=1e-9)
    # the grain line runs along the rectangle's short side (up on the page): the piece frame is
    # the rectangle's own frame, 20 units across and 10 along the grain
    assert np.ptp(p.outline, axis=0) == pytest.approx((20 * u, 10 * u), rel=1e-9)
    # on the sheet (y up) the rectangle is turned by −30° (SVG's y points down)
    assert p.placement.angle_deg == pytest.approx(-30.0, abs=1e-9)
    lm = g.landmark("centre")
    assert (lm.x, lm.y) == pytest.approx((10 * u, 5 * u), abs=1e-6)


def test_unitless_root_is_px(tmp_path):
    path = _svg(tmp_path, '<rect id="a" x="0" y="0" width="96" height="48"/>',
                'width="200" height="100"')
    (p,) = read_pattern(path).garment.pieces
    assert np.ptp(p.outline, axis=0) == pytest.approx((25.4, 12.7), rel=1e-9)


def test_classes_marks_and_pair(tmp_path):
    """Keep-outs by class (kind, soft, clearance), landmarks, a notch, a cut-out, names from
    inkscape:label, and a mirrored pair."""
    body = (
        '<path class="pair" inkscape:label="sleeve" d="M 10 110 L 90 110 L 90 10 L 10 10 Z"/>'
        '<line class="notch" x1="90" y1="60" x2="85" y2="60"/>'
        '<rect class="keepout pocket soft" id="pk" data-clearance-mm="3" x="20" y="70" '
        'width="20" height="20"/>'
        '<circle class="keepout button" id="btn" cx="60" cy="40" r="4"/>'
        '<circle class="cutout" id="vent" cx="60" cy="80" r="5"/>'
        '<circle class="landmark" data-name="elbow" data-description="bend" cx="50" cy="50" r="1"/>'
        '<g class="ignore"><path d="M 0 0 L 5 5"/></g>'
    )
    path = _svg(tmp_path, body, 'width="200mm" height="120mm" viewBox="0 0 200 120"')
    built = read_pattern(path)
    g = built.garment
    assert [p.name for p in g.pieces] == ["sleeve_right", "sleeve_left"]
    right, left = g.pieces
    from shapely import affinity

    mirrored = affinity.scale(right.polygon, -1.0, 1.0, origin=(0, 0))
    assert shapely.symmetric_difference(mirrored, left.polygon).area < 1e-6
    # a notch on the right side splits it: 5 edges (4 corners + 1 notch)
    assert len(right.edges) == 5 and sum(built.points[0].is_notch) == 1
    pk = [k for k in g.keepouts if k.name == "pk_right"][0]
    assert (pk.kind, pk.hard, pk.clearance_mm) == ("pocket", False, 3.0)
    assert pk.shape.exact_geometry().area == pytest.approx(400.0)
    btn = [k for k in g.keepouts if k.name == "btn_right"][0]
    assert btn.shape.kind == "circle" and btn.shape.radius == pytest.approx(4.0, abs=1e-9)
    assert [o.name for o in right.openings] == ["vent"]
    # the inscribed 0.1 mm polygon of the r = 5 cut-out: area within 2/3 tol · 2πr of πr²
    hole = shapely.Polygon(right.openings[0].array).area
    assert math.pi * 25 - 2 / 3 * 0.1 * 2 * math.pi * 5 <= hole <= math.pi * 25
    elbow = g.landmark("elbow_right")
    assert elbow.description == "bend"
    assert {m.name for m in g.landmarks} == {"elbow_right", "elbow_left"}


def test_bezier_and_arc_flattening_within_tolerance(tmp_path):
    """A piece bounded by a cubic, a quadratic and an elliptical arc: every point of the true
    curves (svgelements' own ``point``) lies within the chord tolerance of the outline."""
    import svgelements as se

    d = "M 0 0 C 30 -40 70 40 100 0 Q 120 50 100 100 A 50 30 0 0 1 0 100 Z"
    path = _svg(tmp_path, f'<path id="p" d="{d}"/>', 'width="200mm" height="200mm" '
                'viewBox="0 0 200 200"')
    for tol in (0.1, 0.01):
        (p,) = read_pattern(path, SvgOptions(tolerance_mm=tol)).garment.pieces
        ring = shapely.LinearRing(p.placement.to_sheet(p.outline))
        samples = []
        for seg in se.Path(d).segments():
            if isinstance(seg, (se.CubicBezier, se.QuadraticBezier, se.Arc)):
                for t in np.linspace(0, 1, 2001):
                    q = seg.point(float(t))
                    samples.append((q.x, 200.0 - q.y))  # y up on the sheet
        dist = shapely.distance(shapely.points(np.array(samples)), ring)
        assert dist.max() <= tol * (1 + 1e-6)
