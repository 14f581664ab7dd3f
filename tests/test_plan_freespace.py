"""Free space: grown shapes never undercut the true round offset; soft zones cost what they cover.

References: the circumradius/inradius relation of a regular polygon (r_in = R cos(π/n), Euclid
IV / any geometry handbook) for the growth factor; shapely's exact intersection length for the
soft-zone surcharge.
"""

import dataclasses
import math

import numpy as np
import pytest
import shapely

import garments
from garnav import Circle, KeepOut, Rectangle
from garnav.plan import Planner, build_free_space, grow, grow_factor, join_grow_factor


@pytest.mark.parametrize("q", [1, 2, 4, 8, 16])
def test_grown_circle_contains_true_offset(q):
    # a regular 4q-gon of circumradius R has inradius R cos(pi / 4q): grown by the factor, the
    # inradius is exactly the requested distance
    poly = grow(Circle(0.0, 0.0, 5.0), 10.0, q)
    inradius = poly.exterior.distance(shapely.Point(0, 0))
    assert inradius == pytest.approx(15.0, rel=1e-14)  # observed 3.6e-16 relative
    assert grow_factor(q) == pytest.approx(1.0 / math.cos(math.pi / (4 * q)))


@pytest.mark.parametrize("q", [2, 8])
def test_grown_rectangle_keeps_distance_everywhere(q):
    rect = Rectangle(0.0, 0.0, 40.0, 10.0, 30.0)
    grown = grow(rect, 7.0, q)
    # every boundary point of the grown shape is >= 7 mm from the exact rectangle, and at most
    # the stated over-approximation d (1/cos(3 pi/8q) - 1) beyond it
    pts = shapely.get_coordinates(grown.exterior.segmentize(0.05))
    d = shapely.distance(shapely.points(pts), rect.exact_geometry())
    assert d.min() >= 7.0 - 1e-9
    assert d.max() <= 7.0 * join_grow_factor(q) + 1e-9


@pytest.mark.parametrize("q", [1, 2, 4, 8, 16])
@pytest.mark.parametrize("corner_deg", [5.0, 17.0, 33.0, 61.0, 89.0, 121.0, 150.0, 175.0])
def test_grown_polygon_never_undercuts_its_corners(q, corner_deg):
    """Every edge of the grown shape stays >= d from the exact shape (shapely distance to the
    exact polygon), for triangles with corners whose fillet angle is not a multiple of the step.
    Regression: with the circle factor alone, GEOS's rounded fillet steps undercut by ~0.007 mm."""
    a = math.radians(corner_deg)
    tri = shapely.Polygon([(0.0, 0.0), (40.0, 0.0), (40.0 * math.cos(a), 40.0 * math.sin(a))])
    grown = grow(tri, 15.0, q)
    c = shapely.get_coordinates(grown.exterior)
    edges = shapely.linestrings(np.stack([c[:-1], c[1:]], axis=1))
    assert shapely.distance(edges, tri).min() >= 15.0 - 1e-9


@pytest.mark.parametrize("factor", [1.2, 3.0])
def test_soft_zone_surcharge(factor):
    g = garments.single_panel()
    zone = KeepOut("print", "panel", "print", Rectangle(300.0, 400.0, 200.0, 100.0), clearance_mm=0.0, hard=False, cost_factor=factor)
    g = dataclasses.replace(g, keepouts=(zone,))
    route = Planner(g).route("panel:300,200", "panel:300,600")
    line = shapely.LineString(np.vstack([leg.points for leg in route.legs]))
    grown = grow(zone.shape, g.robot.radius_mm, 8)
    inside = line.intersection(grown).length - line.intersection(grown.boundary).length  # interior only
    assert route.cost == pytest.approx(route.length_mm + (factor - 1.0) * inside, rel=1e-9)
    # straight through costs 400 + (factor - 1) x 116 mm (zone height 100 + 2 x radius 8, grown
    # by 1/cos(3 pi/64)); round the zone is the route around the same zone made hard
    through = 400.0 + (factor - 1.0) * (100.0 + 16.0 / math.cos(3 * math.pi / 64))
    hard = dataclasses.replace(g, keepouts=(dataclasses.replace(zone, hard=True),))
    around = Planner(hard).route("panel:300,200", "panel:300,600").length_mm
    assert route.cost == pytest.approx(min(through, around), rel=1e-9)
    assert (route.length_mm > 400.0 + 1e-6) == (around < through)


def test_seam_edges_are_not_shrunk(two_panels):
    free = build_free_space(two_panels)
    # the left piece's right edge is a seam: free space reaches it; its top edge is a hem
    region = free["left"].region
    assert region.covers(shapely.Point(300.0 - 1e-9, 200.0))
    assert not region.covers(shapely.Point(150.0, 400.0 - 11.0))


def test_soft_zone_is_carried_across_a_seam():
    """A costly soft disc on the right piece touching the seam: the route from the left goes round
    it on both sides of the seam (in the unfolded frame it keeps out of the grown disc)."""
    g = garments.two_panels()
    zone = KeepOut("print", "right", "print", Circle(5.0, 200.0, 30.0), hard=False, cost_factor=5.0)
    planner = Planner(dataclasses.replace(g, keepouts=(zone,)))
    assert any(z.carried for z in planner.free["left"].soft)
    route = planner.route("left:150,200", "right:150,200")
    assert route.cost == pytest.approx(route.length_mm, abs=1e-6)  # nothing inside the zone
    unfolded = shapely.LineString(np.vstack([route.legs[0].points, route.legs[1].points + [300.0, 0.0]]))
    assert unfolded.distance(shapely.Point(305.0, 200.0)) >= 30.0 + g.robot.radius_mm - 1e-6
