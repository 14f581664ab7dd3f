"""The demo keeps its own cautions: its routes stay out of its implant and neck-and-face zones."""

from __future__ import annotations

import numpy as np
import pytest
import shapely

from garnav.demo.run import DEMO_ROUTES, run_demo
from garnav.zones import IMPLANT_DEFAULT_DISTANCE_MM, zone_excess
from garnav.zones.project import zone_anchor_points


@pytest.fixture(scope="module")
def result(tmp_path_factory):
    return run_demo(tmp_path_factory.mktemp("demo_zones"), screenshot=False)


@pytest.mark.slow
def test_demo_routes_stay_out_of_the_demo_zones(result):
    g = result.garment
    implant = g.body_zone("implant")
    assert implant.kind == "implanted_device" and implant.distance_mm == IMPLANT_DEFAULT_DISTANCE_MM
    assert g.body_zone("neck_and_face").kind == "neck_face"
    from garnav.demo.run import demo_scene
    from garnav.zones import with_zone_keepouts

    scene = demo_scene()
    zoned = with_zone_keepouts(scene.garment, scene.drape)
    assert len(result.routes) == len(DEMO_ROUTES)
    for r in result.routes:
        # in 3D: every lifted point of the robot's centre path lies outside every zone
        pts = np.asarray(r.lifted.points)
        for zone in g.body_zones:
            g3 = zone_excess(zone, zone_anchor_points(zone, g, scene.drape), pts)
            assert g3.min() > 0, f"{r.name} enters {zone.name}"
        # on the pattern: the robot's disc keeps out of each projected zone keep-out
        for leg in r.route.legs:
            line = shapely.LineString(leg.points) if len(leg.points) > 1 else shapely.Point(leg.points[0])
            for k in zoned.keepouts:
                if k.kind == "body_zone" and k.piece == leg.piece:
                    assert line.distance(k.shape.exact_geometry()) >= g.robot.radius_mm - 1e-6, (r.name, k.name)
    # the neck landmarks themselves are inside the neck zone: no demo route goes there
    ends = {x for s, e, _ in DEMO_ROUTES for x in (s, e)}
    assert not ends & {"cervicale", "suprasternale"}
