"""The [[body_zone]] table: read, written back, and every bad value refused with a clear message."""

from __future__ import annotations

import dataclasses

import pytest

import garments
from garnav import Landmark
from garnav.errors import SpecError
from garnav.spec import dumps_garment, loads_garment
from garnav.zones import IMPLANT_DEFAULT_DISTANCE_MM, BodyZone

ZONES = """
[[body_zone]]
name = "device"
kind = "implanted_device"
shape = "sphere"
anchors = [[-80.0, 110.0, 1300.0]]

[[body_zone]]
name = "neck"
kind = "neck_face"
shape = "capsule"
anchors = ["nape", [0.0, 5.0, 1700.0]]
radius_mm = 50.0
distance_mm = 20.0
"""


def _spec(extra: str) -> str:
    panel = garments.single_panel()
    g = dataclasses.replace(panel, landmarks=(*panel.landmarks, Landmark("nape", xyz=(0.0, -80.0, 1400.0))))
    return dumps_garment(g) + extra


def test_zones_are_read_and_round_trip():
    g = loads_garment(_spec(ZONES), "z.toml")
    device, neck = g.body_zones
    # implant default: at least 6 in / 15 cm (US FDA consumer guidance, May 2021)
    assert device.distance_mm == IMPLANT_DEFAULT_DISTANCE_MM == 152.4  # 6 in
    assert neck.anchors == ("nape", (0.0, 5.0, 1700.0)) and neck.reach_mm == 70.0
    assert loads_garment(dumps_garment(g), "again.toml") == g
    assert dumps_garment(loads_garment(dumps_garment(g))) == dumps_garment(g)
    assert g.body_zone("neck") is neck


@pytest.mark.parametrize(
    ("change", "message"),
    [
        (('kind = "neck_face"', 'kind = "neck"'), "body_zone 'neck': unknown kind 'neck'"),
        (('shape = "capsule"', 'shape = "cylinder"'), "body_zone 'neck': unknown shape 'cylinder'"),
        (('anchors = ["nape", ', 'anchors = ["nap", '), "body_zone 'neck': anchor 'nap' is not a landmark"),
        (('anchors = ["nape", [0.0, 5.0, 1700.0]]', 'anchors = ["nape"]'), "a capsule takes 2 anchors"),
        (("distance_mm = 20.0", "distance_mm = -1.0"), "'distance_mm' must be a finite number >= 0"),
        (("distance_mm = 20.0", "distance_mm = nan"), "'distance_mm' must be a finite number"),
        (("distance_mm = 20.0\n", ""), "needs 'distance_mm'"),
        (("radius_mm = 50.0", "radius = 50.0"), "unknown key 'radius'; did you mean 'radius_mm'?"),
        (("[[-80.0, 110.0, 1300.0]]", "[[-80.0, 110.0]]"), "anchor 1 must be a landmark name or 3 finite numbers"),
        (('name = "neck"', 'name = "device"'), "the name is used by another body zone"),
    ],
)
def test_bad_zones_are_refused(change, message):
    text = _spec(ZONES.replace(*change, 1))
    with pytest.raises(SpecError) as err:
        loads_garment(text, "z.toml")
    assert message in str(err.value)
    assert "z.toml" in str(err.value)


def test_zone_model_validation():
    from garnav.zones import body_zone_problems

    assert body_zone_problems(BodyZone("p", "custom", "above_plane", ((0, 0, 0), (1, 0, 0), (0, 1, 0)),
                                       distance_mm=5.0)) == []
    # built in Python, a zone is held to the reader's rules
    with pytest.raises(SpecError, match="'radius_mm' does not apply"):
        BodyZone("p", "custom", "above_plane", ((0, 0, 0), (1, 0, 0), (0, 1, 0)), radius_mm=3.0, distance_mm=5.0)
    with pytest.raises(SpecError, match="body_zone 'n': 'distance_mm' must be a finite number"):
        BodyZone("n", "neck_face", "sphere", ((0.0, 0.0, 0.0),), distance_mm=float("nan"))
