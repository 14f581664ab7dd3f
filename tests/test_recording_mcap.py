"""MCAP recordings of ROS 2 messages: read back with the ``mcap`` reader and decoded by
``mcap-ros2-support`` (an independent CDR decoder: the file is written with rosbags' serialiser)."""

from __future__ import annotations

import json
import math
import sys
from pathlib import Path

import numpy as np
import pytest
import trimesh

import drape_meshes as dm
import garments
from garnav.cli import main
from garnav.drape import link_drape, lift_route
from garnav.errors import GarnavError
from garnav.plan import Crossing, Leg, Route
from garnav.recording import TOPICS, McapRecorder, robot_topic
from garnav.recording.frames import WEARER_FRAME, WORLD_FRAME, piece_frame
from garnav.spec import save_garment

pytest.importorskip("mcap")
pytest.importorskip("rosbags")
mcap_ros2 = pytest.importorskip("mcap_ros2.decoder")
from mcap.reader import make_reader  # noqa: E402

MESHES = Path(__file__).resolve().parents[1] / "meshes"


def read_back(path: Path) -> dict[str, list]:
    """Every decoded message by topic, in log-time order, with (schema name, log_time)."""
    out: dict[str, list] = {}
    with open(path, "rb") as fh:
        reader = make_reader(fh, decoder_factories=[mcap_ros2.DecoderFactory()])
        assert reader.get_header().profile == "ros2"
        for schema, channel, message, decoded in reader.iter_decoded_messages(log_time_order=True):
            assert schema.encoding == "ros2msg" and channel.message_encoding == "cdr"
            out.setdefault(channel.topic, []).append((schema.name, message.log_time, decoded))
    return out


def xyz(point) -> np.ndarray:
    return np.array([point.x, point.y, point.z])


def rotation(q) -> np.ndarray:
    """3x3 matrix of a ROS quaternion (x, y, z, w), through trimesh, which takes (w, x, y, z)."""
    return trimesh.transformations.quaternion_matrix([q.w, q.x, q.y, q.z])[:3, :3]


@pytest.fixture(scope="module")
def folded():
    """The two panels folded by 90° at their seam and a hand-made route over the fold
    (tests/test_drape_lift.py): straight legs on flat faces, so every pose is known by hand."""
    g, m = dm.folded_panels()
    d = link_drape(g, m)
    legs = (
        Leg("left", np.array([[100.0, 50.0], [300.0, 150.0]])),
        Leg("right", np.array([[0.0, 150.0], [200.0, 350.0]])),
    )
    crossing = Crossing("middle", "left", "right", legs[0].points[-1], legs[1].points[0], 0.375, 63.4)
    length = math.hypot(200, 100) + math.hypot(200, 200)
    h1, h2 = math.degrees(math.atan2(100, 200)), 45.0
    route = Route(legs, (crossing,), length, length, np.array([h2 - h1]), np.array([h1, h1, h2, h2]),
                  speed_mm_s=25.0)
    return g, d, route, lift_route(d, g, route)


def test_route_path_poses_and_mesh_read_back(folded, tmp_path):
    g, d, route, lifted = folded
    out = tmp_path / "fold.mcap"
    with McapRecorder(out) as rec:
        rec.add_mesh(d)
        rec.add_route(route, lifted)
    msgs = read_back(out)
    assert set(msgs) == {TOPICS[k] for k in ("tf_static", "mesh", "plan", "path", "poses")}

    # the Path holds every lifted point, in metres (mm / 1000), in the world frame
    [(name, _, path)] = msgs[TOPICS["path"]]
    assert name == "nav_msgs/Path" and path.header.frame_id == WORLD_FRAME
    pos = np.array([xyz(p.pose.position) for p in path.poses])
    np.testing.assert_allclose(pos * 1000.0, lifted.points, rtol=0, atol=1e-9)  # observed 0 (float64 / 1000 and back)
    # hand-worked: the route starts at pattern (100, 50) on the left panel = world (100, 0, 50) mm
    np.testing.assert_allclose(pos[0], [0.1, 0.0, 0.05], atol=1e-12)
    np.testing.assert_allclose(pos[-1], [0.3, 0.2, 0.35], atol=1e-12)

    # orientations: body frame x along the leg, z the outside normal (left panel faces -y,
    # right panel +x; tests/test_drape_lift.py), y = z × x: REP 103's x forward, y left, z up
    first = rotation(path.poses[0].pose.orientation)
    np.testing.assert_allclose(first[:, 0], np.array([200.0, 0.0, 100.0]) / math.hypot(200, 100), atol=1e-12)
    np.testing.assert_allclose(first[:, 2], [0.0, -1.0, 0.0], atol=1e-12)
    np.testing.assert_allclose(first[:, 1], np.cross(first[:, 2], first[:, 0]), atol=1e-12)
    last = rotation(path.poses[-1].pose.orientation)
    np.testing.assert_allclose(last[:, 0], np.array([0.0, 1.0, 1.0]) / math.sqrt(2), atol=1e-12)
    np.testing.assert_allclose(last[:, 2], [1.0, 0.0, 0.0], atol=1e-12)
    for p in path.poses:
        q = p.pose.orientation
        assert math.isclose(q.x**2 + q.y**2 + q.z**2 + q.w**2, 1.0, abs_tol=1e-12) and q.w >= 0

    # the poses topic: the same poses, timed by 3D arc length / speed (25 mm/s)
    poses = msgs[TOPICS["poses"]]
    assert len(poses) == len(path.poses) and all(n == "geometry_msgs/PoseStamped" for n, _, _ in poses)
    t_end = poses[-1][1] * 1e-9
    assert t_end == pytest.approx(lifted.length_3d_mm / 25.0, abs=1e-8)
    stamp = poses[-1][2].header.stamp
    assert stamp.sec + 1e-9 * stamp.nanosec == pytest.approx(t_end, abs=1e-9)

    # the plan: one Path per leg in its piece frame, metres, yaw = waypoint heading
    plan = msgs[TOPICS["plan"]]
    assert [m.header.frame_id for _, _, m in plan] == [piece_frame("left"), piece_frame("right")]
    leg = plan[0][2].poses
    np.testing.assert_allclose([xyz(p.pose.position) for p in leg], [[0.1, 0.05, 0.0], [0.3, 0.15, 0.0]], atol=1e-12)
    # reference: scipy's scalar-last quaternion of a rotation about z by the heading
    from scipy.spatial.transform import Rotation

    q = leg[0].pose.orientation
    np.testing.assert_allclose([q.x, q.y, q.z, q.w], Rotation.from_euler("z", math.atan2(100, 200)).as_quat(),
                               atol=1e-12)

    # the mesh: a TRIANGLE_LIST marker, three points per triangle, metres
    [(name, _, marker)] = msgs[TOPICS["mesh"]]
    assert name == "visualization_msgs/Marker" and marker.type == 11 and marker.header.frame_id == WORLD_FRAME
    tri = np.array([xyz(p) for p in marker.points])
    assert len(tri) == 3 * len(d.faces)
    np.testing.assert_allclose(tri * 1000.0, d.positions[d.faces].reshape(-1, 3), atol=1e-9)


def test_wearer_frame_follows_rep_103(folded, tmp_path):
    out = tmp_path / "tf.mcap"
    with McapRecorder(out):
        pass
    [(name, _, tf)] = read_back(out)[TOPICS["tf_static"]]
    assert name == "tf2_msgs/TFMessage"
    [t] = tf.transforms
    assert t.header.frame_id == WORLD_FRAME and t.child_frame_id == WEARER_FRAME
    r = rotation(t.transform.rotation)
    # DEVELOPERS.md: world y is where the wearer faces, x the wearer's right; REP 103 body frame:
    # x forward, y left, z up
    np.testing.assert_allclose(r @ [1, 0, 0], [0, 1, 0], atol=1e-12)
    np.testing.assert_allclose(r @ [0, 1, 0], [-1, 0, 0], atol=1e-12)
    np.testing.assert_allclose(r @ [0, 0, 1], [0, 0, 1], atol=1e-12)


def test_estimated_poses_and_track(tmp_path):
    out = tmp_path / "live.mcap"
    t0 = 1_700_000_000 * 10**9
    with McapRecorder(out, start_time_ns=t0) as rec:
        for i in range(5):
            rec.add_estimated_pose("bot 1", 0.1 * i, (10.0 * i, 0.0, 1200.0), forward=(1.0, 0.0, 0.3), up=(0.0, -2.0, 0.0))
    msgs = read_back(out)
    topic = robot_topic("bot 1", "pose")
    assert topic == "/garnav/robots/bot_1/pose"
    times = [t for _, t, _ in msgs[topic]]
    assert times == [t0 + i * 100_000_000 for i in range(5)]
    r = rotation(msgs[topic][0][2].pose.orientation)
    # forward is projected onto the plane normal to up (-y): (1, 0, 0.3) stays, normalised
    np.testing.assert_allclose(r[:, 0], np.array([1.0, 0.0, 0.3]) / math.hypot(1, 0.3), atol=1e-12)
    np.testing.assert_allclose(r[:, 2], [0.0, -1.0, 0.0], atol=1e-12)
    [(_, _, track)] = msgs[robot_topic("bot 1", "track")]
    np.testing.assert_allclose([xyz(p.pose.position)[0] for p in track.poses], [0.0, 0.01, 0.02, 0.03, 0.04])


def test_nothing_is_written_when_recording_fails(tmp_path):
    out = tmp_path / "keep.mcap"
    out.write_bytes(b"old")
    with pytest.raises(RuntimeError), McapRecorder(out) as rec:
        rec.add_estimated_pose("a", 0.0, (0, 0, 0), forward=(1, 0, 0))
        raise RuntimeError("stop")
    assert out.read_bytes() == b"old" and sorted(p.name for p in tmp_path.iterdir()) == ["keep.mcap"]
    with McapRecorder(out) as rec, pytest.raises(GarnavError, match="finite"):
        rec.add_estimated_pose("a", 0.0, (0, math.nan, 0), forward=(1, 0, 0))
    with McapRecorder(out) as rec, pytest.raises(GarnavError, match="zero or more"):
        rec.add_estimated_pose("a", -1.0, (0, 0, 0), forward=(1, 0, 0))
    with pytest.raises(GarnavError, match="not a regular file"):
        McapRecorder(tmp_path)


def test_same_input_same_bytes(folded, tmp_path):
    g, d, route, lifted = folded
    for name in ("a.mcap", "b.mcap"):
        with McapRecorder(tmp_path / name) as rec:
            rec.add_route(route, lifted)
    assert (tmp_path / "a.mcap").read_bytes() == (tmp_path / "b.mcap").read_bytes()


def test_missing_extra_says_how_to_install(monkeypatch, tmp_path):
    # a None entry in sys.modules makes the import fail, as for a package that is not installed
    monkeypatch.setitem(sys.modules, "rosbags", None)
    monkeypatch.setitem(sys.modules, "rosbags.typesys", None)
    with pytest.raises(GarnavError, match=r"pip install 'garnav\[mcap\]'"):
        McapRecorder(tmp_path / "x.mcap")
    assert not (tmp_path / "x.mcap").exists()


def test_route_cli_writes_the_plan_without_a_drape(tmp_path, capsys):
    spec = tmp_path / "two.toml"
    save_garment(garments.two_panels(), spec)
    out = tmp_path / "r.mcap"
    assert main(["route", str(spec), "--from", "left_centre", "--to", "right:250,300", "--mcap", str(out)]) == 0
    msgs = read_back(out)
    assert set(msgs) == {TOPICS["tf_static"], TOPICS["plan"]}  # no drape: no mesh, no 3D path
    frames = [m.header.frame_id for _, _, m in msgs[TOPICS["plan"]]]
    assert frames == [piece_frame("left"), piece_frame("right")]


@pytest.mark.slow
def test_route_cli_on_the_demo(tmp_path, capsys):
    out, js = tmp_path / "demo.mcap", tmp_path / "demo.json"
    spec = str(MESHES / "sensing_top.toml")
    assert main(["route", spec, "--from", "wrist_left", "--to", "sternum_left", "--json", str(js), "--mcap", str(out)]) == 0
    doc = json.loads(js.read_text())
    msgs = read_back(out)
    [(_, _, path)] = msgs[TOPICS["path"]]
    pos = np.array([xyz(p.pose.position) for p in path.poses])
    # the route document's path3d (mm, 6 decimals as written) is the same lifted route
    np.testing.assert_allclose(pos * 1000.0, np.array(doc["path3d"]), atol=1e-5)  # observed < 5e-7 mm
    assert len(msgs[TOPICS["poses"]]) == len(pos)
    [(_, _, marker)] = msgs[TOPICS["mesh"]]
    assert len(marker.points) % 3 == 0 and len(marker.points) > 3000


def test_docs_list_every_topic_and_frame():
    text = (Path(__file__).resolve().parents[1] / "docs" / "mcap.md").read_text()
    for topic in TOPICS.values():
        assert f"`{topic}`" in text, topic
    for frame in (WORLD_FRAME, WEARER_FRAME, "garnav_piece_<piece>"):
        assert f"`{frame}`" in text, frame
    assert "(x, y, z, w)" in text
