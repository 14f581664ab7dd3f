"""The 2D pattern sheet: SVG structure and scale, PNG pixels, atomic writing."""

from __future__ import annotations

import io
import os

import defusedxml.ElementTree as DET
import matplotlib.image
import numpy as np
import pytest

import export_routes as er
import garments
from garnav.errors import GarnavError
from garnav.preview.sheet import (
    ROUTE_COLOURS,
    sheet_drawing,
    sheet_png,
    sheet_svg,
    write_sheet_png,
    write_sheet_svg,
)

SVG = "{http://www.w3.org/2000/svg}"


def _routes():
    rng = np.random.default_rng(41)
    return er.turned_panels(), [er.turned_route(rng), er.turned_route(rng, 3, 1)]


def _parse(text):
    # reference: defusedxml (the stdlib XML parser without DTD/entity expansion)
    return DET.fromstring(text.encode("utf-8"))


def test_svg_is_to_scale_in_mm_and_has_a_scale_bar():
    g, routes = _routes()
    root = _parse(sheet_svg(sheet_drawing(g, routes)))
    assert root.tag == SVG + "svg"
    assert root.get("width") == "650mm" and root.get("height") == "420mm"
    assert root.get("viewBox") == "0 0 650 420"
    bar = [e for e in root.iter(SVG + "path") if e.get("class") == "scale-bar"]
    assert len(bar) == 1
    (x0, y0), (x1, y1) = [tuple(map(float, p.lstrip("ML").split(","))) for p in bar[0].get("d").split()]
    assert x1 - x0 == pytest.approx(100.0) and y0 == y1
    assert any(t.text == "100 mm" for t in root.iter(SVG + "text"))


def test_svg_has_one_path_per_leg_placed_on_the_sheet():
    g, routes = _routes()
    root = _parse(sheet_svg(sheet_drawing(g, routes)))
    legs = [e for e in root.iter(SVG + "path") if e.get("class") == "route-leg"]
    assert len(legs) == sum(len(r.legs) for r in routes)
    h = g.sheet_size_mm[1]
    for e in legs:
        route = routes[int(e.get("data-route"))]
        leg = route.legs[int(e.get("data-leg"))]
        pts = np.array([tuple(map(float, p.lstrip("ML").split(","))) for p in e.get("d").split()])
        expect = g.piece(leg.piece).placement.to_sheet(leg.points)
        expect[:, 1] = h - expect[:, 1]  # SVG y runs down
        assert np.allclose(pts, expect, atol=1e-3)
        assert e.get("stroke") == ROUTE_COLOURS[int(e.get("data-route"))]
    # crossing marks on both sides of each crossing
    marks = [e for e in root.iter(SVG + "circle") if e.get("class") == "crossing"]
    assert len(marks) == 2 * sum(len(r.crossings) for r in routes)


def test_partner_notches_match_on_both_runs():
    for g in (er.turned_panels(), garments.two_panels(), garments.tube()):
        root = _parse(sheet_svg(sheet_drawing(g)))
        for seam in g.seams:
            notches = [e for e in root.iter(SVG + "path") if e.get("class") == "notch" and e.get("data-seam") == seam.name]
            a = sorted(e.get("data-fraction") for e in notches if e.get("data-side") == "a")
            b = sorted(e.get("data-fraction") for e in notches if e.get("data-side") == "b")
            assert a == b and len(a) >= 1


def test_svg_escapes_names_and_is_deterministic():
    g, routes = _routes()
    from dataclasses import replace

    g2 = replace(g, name='odd <name> & "quotes"')
    text = sheet_svg(sheet_drawing(g2, routes))
    root = _parse(text)
    assert 'odd <name> & "quotes"' in root.find(SVG + "title").text
    assert text == sheet_svg(sheet_drawing(g2, routes))


def test_png_has_the_size_and_route_colour_where_the_route_runs():
    g, routes = _routes()
    data = sheet_png(sheet_drawing(g, routes[:1]), width_px=1300)
    img = matplotlib.image.imread(io.BytesIO(data), format="png")
    assert img.shape[1] == 1300 and img.shape[0] == 840  # 650 x 420 mm to scale
    w, h = g.sheet_size_mm
    colour = np.array([int(ROUTE_COLOURS[0][i : i + 2], 16) for i in (1, 3, 5)]) / 255.0
    hits = total = 0
    for leg in routes[0].legs:
        pts = g.piece(leg.piece).placement.to_sheet(leg.points)
        for a, b in zip(pts[:-1], pts[1:]):
            for t in np.linspace(0.2, 0.8, 7):  # away from ends and marks
                x, y = a + t * (b - a)
                col, row = int(x / w * img.shape[1]), int((h - y) / h * img.shape[0])
                patch = img[max(row - 2, 0) : row + 3, max(col - 2, 0) : col + 3, :3].reshape(-1, 3)
                total += 1
                hits += bool(np.any(np.all(np.abs(patch - colour) < 0.08, axis=1)))
    assert hits >= 0.9 * total


@pytest.mark.parametrize("kind", ["svg", "png"])
def test_a_failed_sheet_write_leaves_no_partial_file(tmp_path, monkeypatch, kind):
    g, routes = _routes()
    drawing = sheet_drawing(g, routes)
    write = (lambda p: write_sheet_svg(p, drawing)) if kind == "svg" else (lambda p: write_sheet_png(p, drawing, 300))
    target = tmp_path / f"sheet.{kind}"
    target.write_bytes(b"old")

    def broken_fsync(fd):
        raise OSError(28, "simulated full disk")

    with monkeypatch.context() as m:
        m.setattr(os, "fsync", broken_fsync)
        with pytest.raises(GarnavError, match="simulated full disk"):
            write(target)
    assert target.read_bytes() == b"old" and os.listdir(tmp_path) == [target.name]
    write(target)
    assert target.read_bytes() != b"old"


def test_demo_sheet_marks_every_seam_and_open_edge():
    from garnav.demo import demo_garment

    g = demo_garment()
    root = _parse(sheet_svg(sheet_drawing(g)))
    paths = list(root.iter(SVG + "path"))
    for seam in g.seams:
        runs = [e for e in paths if e.get("class") == "seam" and e.get("data-seam") == seam.name]
        assert sorted(e.get("data-side") for e in runs) == ["a", "b"]
        notches = [e for e in paths if e.get("class") == "notch" and e.get("data-seam") == seam.name]
        a = sorted(e.get("data-fraction") for e in notches if e.get("data-side") == "a")
        assert a == sorted(e.get("data-fraction") for e in notches if e.get("data-side") == "b") and a
    opens = {(e.get("data-piece"), e.get("data-edge") or e.get("data-opening"))
             for e in paths if e.get("class") == "open-edge"}
    expect = {(r.piece, r.edge) for r in g.open_runs()}
    expect |= {(p.name, o.name) for p in g.pieces for o in p.openings}
    assert opens == expect
    pieces = [e.get("data-piece") for e in paths if e.get("class") == "piece"]
    assert sorted(pieces) == sorted(p.name for p in g.pieces)
    landmarks = {e.get("data-landmark") for e in paths if e.get("class") == "landmark"}
    assert landmarks == {lm.name for lm in g.landmarks if lm.on_pattern}


def _ring_area(d):
    """Area enclosed by an SVG path of 'M x,y L x,y ... Z' rings, holes subtracted (even-odd)."""
    total = 0.0
    for ring in d.split("Z"):
        pts = [tuple(map(float, p.lstrip("ML").split(","))) for p in ring.split() if p not in ("",)]
        if len(pts) < 3:
            continue
        x, y = np.array(pts).T
        total += 0.5 * (x @ np.roll(y, -1) - np.roll(x, -1) @ y)
    return total


def test_sheet_shades_the_planners_free_space():
    from garnav.plan.freespace import build_free_space

    g = er.turned_panels()
    fs = build_free_space(g)
    root = _parse(sheet_svg(sheet_drawing(g, free_space=fs)))
    for piece in ("a", "b"):
        free = [e for e in root.iter(SVG + "path") if e.get("class") == "free" and e.get("data-piece") == piece]
        # reference: shapely's area of the planner's free region (rings written to 0.001 mm)
        area = sum(abs(_ring_area(e.get("d"))) for e in free)
        assert area == pytest.approx(fs.pieces[piece].region.area, rel=1e-4)
    grown = {e.get("data-obstacle") for e in root.iter(SVG + "path") if e.get("class") == "grown"}
    assert {"patch"} <= grown
