"""``garnav station --record FILE.mcap``: the station's run as MCAP (garnav/station/record.py).

Read back with the ``mcap`` reader and ``mcap-ros2-support`` (independent of the writer, which
uses rosbags' serialiser): the mesh, the robot's plan and its estimated track, lifted, in metres.
"""

from __future__ import annotations

from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pytest

pytest.importorskip("mcap_ros2.decoder")

from garnav.drape import load_drape  # noqa: E402
from garnav.plan import Planner  # noqa: E402
from garnav.recording import robot_topic  # noqa: E402
from garnav.spec import load_garment  # noqa: E402
from garnav.station.record import record_station  # noqa: E402

from tests.test_recording_mcap import read_back, xyz  # noqa: E402

SPEC = Path(__file__).resolve().parents[1] / "meshes" / "sensing_top.toml"


@pytest.mark.slow  # about 2-3 s (the quick run stays near a minute)
def test_station_run_records_mesh_plan_and_estimated_track(tmp_path):
    garment = load_garment(SPEC)
    drape = load_drape(garment, "", str(SPEC.parent))
    route = Planner(garment, garment.robot).route("wrist_left", "sternum_left")
    # an estimated track along the plan's first leg, with the robot's clock (placement: no time)
    leg = np.asarray(route.legs[0].points)
    pts = np.linspace(leg[0], leg[1], 6)
    track = [(route.legs[0].piece, float(x), float(y)) for x, y in pts]
    times = [float("nan")] + [0.5 * k for k in range(1, 6)]
    robot = SimpleNamespace(route=route, estimate=SimpleNamespace(track=track, track_time_s=times))
    station = SimpleNamespace(garment=garment, robots={"ada": robot})
    out = tmp_path / "run.mcap"
    assert record_station(out, station, drape) == 5
    msgs = read_back(out)
    poses = msgs[robot_topic("ada", "pose")]
    assert [t for _, t, _ in poses] == [int(0.5e9 * k) for k in range(1, 6)]
    want = drape.pattern_to_3d(track[1][0], pts[1:], snap_mm=1.0) / 1000.0
    got = np.array([xyz(m.pose.position) for _, _, m in poses])
    np.testing.assert_allclose(got, want, atol=1e-12)  # metres; observed 0
    plan = msgs[robot_topic("ada", "plan")]
    assert len(plan) == len(route.legs)
    assert any("mesh" in topic or "garment" in topic for topic in msgs)


def test_station_cli_offers_record_as_a_declared_output():
    from garnav.cli.outputs import ROLES

    assert any(o.option == "--record" for o in ROLES["station"].outputs)


@pytest.mark.slow  # about 2-3 s (the quick run stays near a minute)
def test_station_refuses_a_route_through_a_body_zone():
    """A route planned without the demo's body zones crosses the implant zone; the station's
    safety check on the garment with the zones' keep-outs (as `garnav station` loads it) refuses it."""
    from garnav.station.safety import UnsafeRouteError, check_route
    from garnav.zones.sources import apply_zones

    garment = load_garment(SPEC)
    drape = load_drape(garment, "", str(SPEC.parent))
    careless = Planner(garment, garment.robot).route("wrist_left", "sternum_left")
    zoned = apply_zones(garment, drape, str(SPEC))
    with pytest.raises(UnsafeRouteError, match="implant"):
        check_route(zoned, careless, "ada")
    check_route(zoned, Planner(zoned, garment.robot).route("wrist_left", "sternum_left"), "ada")
