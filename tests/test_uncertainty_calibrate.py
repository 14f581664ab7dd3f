"""UMBmark (Borenstein & Feng 1996): the paper's formulas, a simulated robot, the frame, the file."""

from __future__ import annotations

import math
import tomllib

import numpy as np
import pytest

from garnav.cli import main
from garnav.model import Robot
from garnav.uncertainty.calibrate import CalibrationError, calibrated_robot, read_runs, square_run, umbmark
from garnav.uncertainty.model import parse_odometry


def test_the_papers_formulas_by_hand():
    # Borenstein & Feng 1996, eqs. 5.1, 6.1, 8, 9, 11 (as given in the module notes), worked by hand:
    # x_cw = −60, x_ccw = +20 mm on L = 4000 mm, b = 340 mm:
    #   α = (−60 + 20)/(−16000) = 0.0025 rad, β = (−60 − 20)/(−16000) = 0.005 rad,
    #   R = 2000 / sin(0.0025) = 800 000.8 mm, E_d = (R + 170)/(R − 170) = 1.000425,
    #   E_b = (π/2)/(π/2 − 0.0025) = 1.5707963/1.5682963 = 1.0015941
    r = umbmark(np.array([[-60.0, 5.0]]), np.array([[20.0, -3.0]]), 4000.0, 340.0)
    assert r.alpha_rad == pytest.approx(0.0025)
    assert r.beta_rad == pytest.approx(0.005)
    assert r.radius_mm == pytest.approx(2000.0 / math.sin(0.0025))
    assert r.diameter_ratio == pytest.approx((r.radius_mm + 170.0) / (r.radius_mm - 170.0))
    assert r.diameter_ratio == pytest.approx(1.000425, abs=1e-6)
    assert r.wheel_base_ratio == pytest.approx(1.0015941, abs=1e-7)
    assert r.left_scale == pytest.approx(2 / (r.diameter_ratio + 1))
    assert r.right_scale == pytest.approx(2 / (1 / r.diameter_ratio + 1))


@pytest.mark.parametrize("ed, eb", [(1.001, 1.0), (1.0, 1.01), (1.001, 1.01), (0.999, 0.99), (1.0005, 0.995)])
def test_a_simulated_robot_with_known_errors_is_recovered(ed, eb):
    # The paper's formulas are first order: recover each error (E − 1) within 10 %
    # (observed: at most 5.1 % on these cases; a 30 mm wheel base on a 500 mm square).
    L, b = 500.0, 30.0
    cw = np.array([square_run(L, b, ed, eb, "cw")] * 5)
    ccw = np.array([square_run(L, b, ed, eb, "ccw")] * 5)
    r = umbmark(cw, ccw, L, b)
    if ed == 1.0:
        assert r.diameter_ratio == pytest.approx(1.0, abs=1e-9)
    else:
        assert (r.diameter_ratio - 1) == pytest.approx(ed - 1, rel=0.10)
    if eb == 1.0:
        assert abs(r.wheel_base_ratio - 1) < 1e-3  # observed 2.7e-4: cross-talk of E_d = 1.001
    else:
        assert (r.wheel_base_ratio - 1) == pytest.approx(eb - 1, rel=0.10)


def test_the_frame_of_the_first_leg_matters():
    # Pinned frame: first leg along +x. Reading the same runs in a frame turned by 90° (first leg
    # along +y: x ↦ y, y ↦ −x) with the x-equations gives a different, wrong answer.
    L, b, ed, eb = 500.0, 30.0, 1.001, 1.01
    cw, ccw = np.array([square_run(L, b, ed, eb, "cw")]), np.array([square_run(L, b, ed, eb, "ccw")])
    right = umbmark(cw, ccw, L, b)
    turned = umbmark(cw[:, ::-1] * [-1, 1], ccw[:, ::-1] * [-1, 1], L, b)
    assert (right.diameter_ratio - 1) == pytest.approx(ed - 1, rel=0.1)
    assert abs((turned.diameter_ratio - 1) / (ed - 1) - 1) > 0.5


def test_calibrated_profile(tmp_path):
    L, b, ed, eb = 500.0, 30.0, 1.001, 1.01
    runs = tmp_path / "runs.toml"
    cw, ccw = square_run(L, b, ed, eb, "cw"), square_run(L, b, ed, eb, "ccw")
    runs.write_text(
        'format = "garnav-umbmark"\nversion = 1\nside_mm = 500\nwheel_base_mm = 30\n'
        f"[[cw]]\nx_mm = {cw[0]!r}\ny_mm = {cw[1]!r}\n[[ccw]]\nx_mm = {ccw[0]!r}\ny_mm = {ccw[1]!r}\n"
    )
    out = tmp_path / "robot.toml"
    assert main(["calibrate", str(runs), "--out", str(out)]) == 0
    data = tomllib.loads(out.read_text())
    assert data["robot"]["wheel_base_mm"] == pytest.approx(30.0 * eb, rel=1e-3)
    odo, problems = parse_odometry(data["robot"]["odometry"], str(out))
    assert not problems and odo.wheel_diameter_ratio == pytest.approx(ed, rel=1e-4)
    r = calibrated_robot(Robot(), umbmark(np.array([cw]), np.array([ccw]), L, b))
    assert r.odometry.wheel_diameter_ratio == pytest.approx(odo.wheel_diameter_ratio)


@pytest.mark.parametrize(
    "text, expect",
    [
        ('format = "x"\n', 'not a UMBmark runs file'),
        ('format = "garnav-umbmark"\nside_mm = 0\n[[cw]]\nx_mm=1\ny_mm=1\n[[ccw]]\nx_mm=1\ny_mm=1\n', "'side_mm'"),
        ('format = "garnav-umbmark"\nside_mm = 500\n[[ccw]]\nx_mm=1\ny_mm=1\n', "at least one [[cw]] run"),
        ('format = "garnav-umbmark"\nside_mm = 500\n[[cw]]\nx_mm=1\n[[ccw]]\nx_mm=1\ny_mm=1\n', "cw run 1: 'y_mm'"),
        ('format = "garnav-umbmark"\nside_mm = 500\n[[cw]]\nx_mm=1\ny_mm=1\nz=2\n[[ccw]]\nx_mm=1\ny_mm=1\n', "unknown key 'z'"),
        ('format = "garnav-umbmark"\nside_mm = 500\n[[cw]]\nx_mm=300\ny_mm=1\n[[ccw]]\nx_mm=1\ny_mm=1\n', "more than half"),
        ("format = = 1", "not valid TOML"),
    ],
)
def test_bad_runs_files(tmp_path, text, expect):
    p = tmp_path / "runs.toml"
    p.write_text(text)
    with pytest.raises(CalibrationError) as exc:
        read_runs(p)
    assert str(exc.value).startswith(str(p)) and expect in str(exc.value)
