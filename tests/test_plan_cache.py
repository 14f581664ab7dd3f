"""The on-disk graph cache: a reload gives the same graph and the same routes; a changed garment
misses; a damaged file is rebuilt. (npz read with allow_pickle=False.)"""

import dataclasses

import numpy as np
import pytest

import garments
from garnav import Circle, KeepOut
from garnav.plan import Planner


def _garment():
    g = garments.two_panels()
    ko = KeepOut("disc", "left", "button", Circle(200.0, 220.0, 30.0), clearance_mm=3.0)
    seam = dataclasses.replace(g.seams[0], min_crossing_angle_deg=40.0)
    return dataclasses.replace(g, keepouts=(ko,), seams=(seam,))


@pytest.mark.slow  # about 2-3 s (the quick run stays near a minute)
def test_cache_round_trip(tmp_path):
    g = _garment()
    first = Planner(g, cache_dir=tmp_path)
    assert first.cache_file.is_file()
    assert "cached" not in first.nav.stats
    second = Planner(g, cache_dir=tmp_path)
    assert second.nav.stats.get("cached")
    assert sorted(second.nav.graph.edges(data=True)) == sorted(first.nav.graph.edges(data=True))
    np.testing.assert_array_equal(second.nav.xy, first.nav.xy)
    a = first.route("left:50,60", "right:250,350")
    b = second.route("left:50,60", "right:250,350")
    assert a.cost == b.cost
    np.testing.assert_array_equal(np.vstack([l.points for l in a.legs]), np.vstack([l.points for l in b.legs]))


def test_cache_misses_on_change_and_survives_damage(tmp_path):
    g = _garment()
    p1 = Planner(g, cache_dir=tmp_path)
    other = dataclasses.replace(g, keepouts=(dataclasses.replace(g.keepouts[0], clearance_mm=4.0),))
    p2 = Planner(other, cache_dir=tmp_path)
    assert p2.cache_file != p1.cache_file
    assert "cached" not in Planner(g, extra_clearance_mm=1.0, cache_dir=tmp_path).nav.stats
    whole = p1.cache_file.read_bytes()
    p1.cache_file.write_bytes(b"not an npz file")
    p3 = Planner(g, cache_dir=tmp_path)
    assert "cached" not in p3.nav.stats
    assert Planner(g, cache_dir=tmp_path).nav.stats.get("cached")
    p1.cache_file.write_bytes(whole[: len(whole) // 2])  # a truncated archive (zipfile.BadZipFile)
    assert "cached" not in Planner(g, cache_dir=tmp_path).nav.stats
    assert Planner(g, cache_dir=tmp_path).nav.stats.get("cached")
