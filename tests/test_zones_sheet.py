"""The pattern sheet draws projected body zones in their own style, with a legend."""

from __future__ import annotations

import dataclasses

import shapely

import drape_meshes as dm
from garnav.drape import link_drape
from garnav.preview.sheet import sheet_drawing, sheet_svg
from garnav.zones import BodyZone, with_zone_keepouts


def _zoned():
    g, m = dm.flat_sheet(400.0, 300.0, 40, 30)
    d = link_drape(g, m)
    zones = (BodyZone("pump", "implanted_device", "sphere", ((120.0, 150.0, 0.0),)),
             BodyZone("dressing", "wound_or_sensor", "sphere", ((330.0, 80.0, 0.0),), distance_mm=30.0))
    return with_zone_keepouts(dataclasses.replace(g, body_zones=zones), d)


def test_zones_have_their_own_layer_and_legend():
    g = _zoned()
    drawing = sheet_drawing(g, [])
    zones = drawing.items("body-zones")
    areas = [it for it in zones if getattr(it, "kind", "") == "body-zone"]
    assert {dict(a.info)["zone-kind"] for a in areas} == {"implanted_device", "wound_or_sensor"}
    # not drawn a second time as plain keep-outs
    assert not [it for it in drawing.items("keepouts") if "@" in dict(getattr(it, "info", ())).get("keepout", "")]
    # the drawn area is the keep-out clipped to the piece (shapely as the reference)
    pump = next(a for a in areas if dict(a.info)["zone"] == "pump")
    ko = next(k for k in g.keepouts if k.name == "pump@panel")
    expected = ko.shape.exact_geometry().intersection(g.piece("panel").polygon)
    drawn = shapely.Polygon(g.piece("panel").placement.from_sheet(pump.rings[0]))
    assert abs(drawn.area - expected.area) < 1e-6 * expected.area
    legend = [it.text for it in drawing.items("zone-legend") if hasattr(it, "text")]
    assert "pump: implanted device, 152.4 mm" in legend and "dressing: wound or sensor site, 30 mm" in legend
    svg = sheet_svg(drawing)
    assert 'class="body-zone"' in svg and 'class="zone-legend"' in svg and "implanted device, 152.4 mm" in svg


def test_no_legend_without_zones():
    g, _ = dm.flat_sheet()
    drawing = sheet_drawing(g, [])
    assert drawing.items("zone-legend") == [] and drawing.items("body-zones") == []
