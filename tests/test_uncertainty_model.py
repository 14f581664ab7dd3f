"""The odometry error model and its [robot.odometry] table in the spec."""

from __future__ import annotations

import dataclasses
import math

import pytest

import garments
from garnav.errors import SpecError
from garnav.spec.reader import loads_garment
from garnav.spec.writer import dumps_garment
from garnav.uncertainty import OdometryModel, odometry_to_dict, parse_odometry


def test_units_follow_the_data_sheet_conventions():
    # 3600 deg/h = 1 deg/s; 60 deg/√h = 1 deg/√s (IEEE Std 952 units: deg/h bias, deg/√h ARW)
    m = OdometryModel(gyro_bias_deg_h=3600.0, gyro_arw_deg_sqrt_h=60.0, distance_random_mm_per_sqrt_m=2.0)
    assert m.gyro_bias_rad_s == pytest.approx(math.pi / 180.0)
    assert m.gyro_arw_rad_sqrt_s == pytest.approx(math.pi / 180.0)
    assert m.distance_random_var_per_mm == pytest.approx(4.0 / 1000.0)


def test_spec_round_trip_keeps_the_odometry_table():
    g = garments.two_panels()
    odo = OdometryModel(gyro_bias_deg_h=12.5, seam_relocalise=True, encoder_bits=12)
    g = dataclasses.replace(g, robot=dataclasses.replace(g.robot, odometry=odo))
    text = dumps_garment(g)
    assert "[robot.odometry]" in text
    back = loads_garment(text, "<t>")
    assert back.robot.odometry == odo
    assert back == g


def test_robot_without_odometry_still_reads():
    g = garments.two_panels()
    assert loads_garment(dumps_garment(g), "<t>").robot.odometry is None


@pytest.mark.parametrize(
    "table, expect",
    [
        ({"gyro_bias": 1.0}, "unknown key 'gyro_bias'; did you mean 'gyro_bias_deg_h'?"),
        ({"gyro_bias_deg_h": -1.0}, "'gyro_bias_deg_h' must be >= 0 and <= 100000, found -1"),
        ({"encoder_bits": 16.5}, "'encoder_bits' must be an integer"),
        ({"seam_relocalise": 1}, "'seam_relocalise' must be true or false"),
        ({"turn_scale_error": "big"}, "'turn_scale_error' must be a number"),
        ({"encoder_mm_per_tick": 0.0}, "'encoder_mm_per_tick' must be > 0"),
    ],
)
def test_bad_odometry_tables_name_the_key(table, expect):
    model, problems = parse_odometry(table, "r.toml")
    assert model is None
    assert expect in str(problems[0])
    assert str(problems[0]).startswith("r.toml: robot.odometry: ")


def test_bad_odometry_in_a_spec_is_a_spec_error():
    text = dumps_garment(garments.two_panels()).replace("[robot]", "[robot.odometry]\ngyro_arw = 2\n\n[robot]")
    with pytest.raises(SpecError, match="robot.odometry: unknown key 'gyro_arw'"):
        loads_garment(text, "x.toml")


def test_to_dict_has_every_field():
    d = odometry_to_dict(OdometryModel())
    assert list(d) == [f.name for f in dataclasses.fields(OdometryModel)]
    assert parse_odometry(d, "<t>")[0] == OdometryModel()
