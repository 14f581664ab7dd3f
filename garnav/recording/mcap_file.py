"""Write plans, routes, estimated poses and the garment mesh as an MCAP file of ROS 2 messages.

MCAP (mcap.dev) is the open container format that robotics tools read (Foxglove, ``ros2 bag``
with the MCAP storage plugin). Every message here is a ROS 2 message in CDR with its ``ros2msg``
schema embedded, so no ROS installation is needed to write or read the file:

* the container is written by ``mcap`` (the format's reference Python library);
* the message definitions (ROS 2 Jazzy) and their CDR serialisation come from ``rosbags``'
  type store, so no message definition is written by hand.

Topics, frames and units are listed in docs/mcap.md: positions in metres, orientations as
quaternions (x, y, z, w), world frame :data:`~garnav.recording.frames.WORLD_FRAME` (garnav's
world frame in metres: x the wearer's right, y forward, z up). Lengths arrive in mm, as
everywhere in garnav, and are converted here, at the edge.

The file is built in memory and written once, atomically (:mod:`garnav.atomic`), when the
recorder closes; a recorder left by an exception writes nothing.
"""

from __future__ import annotations

import io
import os
from collections.abc import Sequence
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from garnav import __version__
from garnav.atomic import write_bytes_atomic
from garnav.errors import GarnavError, QueryError
from garnav.recording.extra import require
from garnav.recording.frames import (
    MM_PER_M,
    WEARER_FRAME,
    WEARER_IN_WORLD_XYZW,
    WORLD_FRAME,
    path_times_s,
    piece_frame,
    quaternions_xyzw,
    ros_name,
    stamp,
    surface_frames,
    yaw_quaternion_xyzw,
)

if TYPE_CHECKING:
    from garnav.drape import Drape
    from garnav.drape.lift import LiftedRoute
    from garnav.plan import Route

__all__ = ["McapRecorder", "TOPICS", "robot_topic"]

PATH = "nav_msgs/msg/Path"
POSE = "geometry_msgs/msg/PoseStamped"
MARKER = "visualization_msgs/msg/Marker"
TF = "tf2_msgs/msg/TFMessage"

# Fixed topics (robot topics: robot_topic).
TOPICS = {
    "tf_static": "/tf_static",
    "mesh": "/garnav/garment/mesh",
    "plan": "/garnav/plan",
    "path": "/garnav/route/path",
    "poses": "/garnav/route/poses",
}

DEFAULT_MESH_RGBA = (0.72, 0.74, 0.80, 1.0)


def robot_topic(robot: str, what: str) -> str:
    """Topic of one robot's stream: ``/garnav/robots/<robot>/<what>`` (``what``: ``plan``,
    ``path``, ``poses``, ``pose``, ``track``)."""
    return f"/garnav/robots/{ros_name(robot)}/{what}"


class McapRecorder:
    """An MCAP file of ROS 2 messages being recorded; a context manager.

    Parameters
    ----------
    path : str or path-like
        The ``.mcap`` file to write (atomically, when the recorder closes).
    start_time_ns : int
        Time of ``t_s = 0`` in nanoseconds since the Unix epoch (0 by default, which keeps a file
        of a plan byte-identical from run to run; a live station passes the wall clock).

    Examples
    --------
    >>> from garnav.recording import McapRecorder                      # doctest: +SKIP
    >>> with McapRecorder("route.mcap") as rec:                         # doctest: +SKIP
    ...     rec.add_mesh(drape)
    ...     rec.add_route(route, lifted)
    ...     rec.add_estimated_pose("r1", 0.1, (10, 20, 1300), forward=(0, 1, 0))

    Every ``add_*`` takes garnav's units (mm, s); times ``t_s`` are seconds after
    ``start_time_ns``. Messages may be added in any time order; readers sort by log time.
    """

    def __init__(self, path: str | os.PathLike, *, start_time_ns: int = 0) -> None:
        mcap_writer = require("mcap.writer")
        typesys = require("rosbags.typesys")
        self.path = Path(path)
        if self.path.exists() and not self.path.is_file():
            raise GarnavError(f"{self.path}: cannot write an MCAP file here: it is not a regular file")
        self.start_time_ns = int(start_time_ns)
        self._store = typesys.get_typestore(typesys.Stores.ROS2_JAZZY)
        self._buffer = io.BytesIO()
        self._writer = mcap_writer.Writer(self._buffer)
        self._writer.start(profile="ros2", library=f"garnav {__version__}")
        self._schemas: dict[str, int] = {}
        self._channels: dict[str, int] = {}
        self._sequence: dict[str, int] = {}
        self._tracks: dict[str, list[tuple[int, np.ndarray, np.ndarray]]] = {}
        self._closed = False
        self._write_static_frames()

    # ------------------------------------------------------------------ context manager

    def __enter__(self) -> McapRecorder:
        return self

    def __exit__(self, exc_type, exc, tb) -> None:
        if exc_type is None:
            self.close()
        else:
            self.discard()

    def close(self) -> Path:
        """Finish the file (with each robot's track as one ``nav_msgs/Path``) and write it
        atomically. Returns its path. Closing twice does nothing more."""
        if self._closed:
            return self.path
        for robot in sorted(self._tracks):
            samples = sorted(self._tracks[robot], key=lambda s: s[0])
            t_ns = samples[-1][0]
            pos = np.array([s[1] for s in samples])
            quat = np.array([s[2] for s in samples])
            self._write(robot_topic(robot, "track"), PATH,
                        self._path_msg(WORLD_FRAME, t_ns, [s[0] for s in samples], pos, quat), t_ns)
        self._writer.finish()
        self._closed = True
        return write_bytes_atomic(self.path, self._buffer.getvalue())

    def discard(self) -> None:
        """Drop what was recorded; write nothing."""
        self._closed = True
        self._buffer = io.BytesIO()

    # ------------------------------------------------------------------ public recording API

    def add_mesh(self, drape: Drape, *, t_s: float = 0.0, rgba: Sequence[float] = DEFAULT_MESH_RGBA,
                 topic: str = TOPICS["mesh"]) -> None:
        """The draped garment as a ``visualization_msgs/Marker`` ``TRIANGLE_LIST`` (three points
        per triangle, metres, world frame), one message at ``t_s``."""
        tris = np.asarray(drape.positions, dtype=float)[np.asarray(drape.faces)].reshape(-1, 3) / MM_PER_M
        t_ns = self._time_ns(t_s)
        T = self._store.types
        color = T["std_msgs/msg/ColorRGBA"](*(float(c) for c in rgba))
        marker = T[MARKER](
            header=self._header(WORLD_FRAME, t_ns),
            ns="garnav_garment",
            id=0,
            type=T[MARKER].TRIANGLE_LIST,
            action=T[MARKER].ADD,
            pose=self._pose((0.0, 0.0, 0.0), (0.0, 0.0, 0.0, 1.0)),
            scale=T["geometry_msgs/msg/Vector3"](1.0, 1.0, 1.0),
            color=color,
            lifetime=T["builtin_interfaces/msg/Duration"](0, 0),
            frame_locked=False,
            points=[T["geometry_msgs/msg/Point"](*p) for p in tris.tolist()],
            colors=[],
            texture_resource="",
            texture=T["sensor_msgs/msg/CompressedImage"](header=self._header("", 0), format="", data=np.zeros(0, np.uint8)),
            uv_coordinates=[],
            text="",
            mesh_resource="",
            mesh_file=T["visualization_msgs/msg/MeshFile"](filename="", data=np.zeros(0, np.uint8)),
            mesh_use_embedded_materials=False,
        )
        self._write(topic, MARKER, marker, t_ns)

    def add_route(self, route: Route, lifted: LiftedRoute | None = None, *, robot: str | None = None,
                  t_s: float = 0.0, speed_mm_s: float | None = None) -> None:
        """A planned route: its plan in pattern space and, when lifted, its path and poses in 3D.

        Parameters
        ----------
        route : Route
            The plan: one ``nav_msgs/Path`` per leg on the plan topic, in the leg's piece frame
            (:func:`~garnav.recording.frames.piece_frame`), yaw = the waypoint heading.
        lifted : LiftedRoute, optional
            The route on the drape: one ``nav_msgs/Path`` of every lifted point (world frame,
            metres, body-frame orientations: x along the route, z the surface normal), and the
            same poses as ``geometry_msgs/PoseStamped`` messages timed along the drive.
        robot : str, optional
            Put the messages on this robot's topics (:func:`robot_topic`) instead of the route's.
        t_s : float
            Time of the route's start, s after ``start_time_ns``.
        speed_mm_s : float, optional
            Driving speed for the pose times (default: the route's own ``speed_mm_s``).
        """
        plan_topic = robot_topic(robot, "plan") if robot else TOPICS["plan"]
        path_topic = robot_topic(robot, "path") if robot else TOPICS["path"]
        poses_topic = robot_topic(robot, "poses") if robot else TOPICS["poses"]
        t0 = self._time_ns(t_s)
        k = 0
        headings = np.radians(np.asarray(route.headings_deg, dtype=float))
        for leg in route.legs:
            pts = np.asarray(leg.points, dtype=float)
            n = len(pts)
            pos = np.column_stack([pts / MM_PER_M, np.zeros(n)])
            quat = yaw_quaternion_xyzw(headings[k:k + n])
            k += n
            self._write(plan_topic, PATH, self._path_msg(piece_frame(leg.piece), t0, [t0] * n, pos, quat), t0)
        if lifted is None:
            return
        speed = float(speed_mm_s if speed_mm_s is not None else route.speed_mm_s)
        if not (np.isfinite(speed) and speed > 0):
            raise QueryError(f"{self.path}: the driving speed must be a positive number of mm/s, got {speed:g}")
        points = np.asarray(lifted.points, dtype=float)
        quat = quaternions_xyzw(surface_frames(points, lifted.normals))
        times = [t0 + int(round(t * 1e9)) for t in path_times_s(points, speed)]
        pos = points / MM_PER_M
        self._write(path_topic, PATH, self._path_msg(WORLD_FRAME, t0, times, pos, quat), t0)
        for t_ns, p, q in zip(times, pos, quat, strict=True):
            self._write(poses_topic, POSE, self._pose_stamped(WORLD_FRAME, t_ns, p, q), t_ns)

    def add_estimated_pose(self, robot: str, t_s: float, position_mm: Sequence[float],
                           forward: Sequence[float], up: Sequence[float] = (0.0, 0.0, 1.0)) -> None:
        """One estimated pose of a robot (e.g. dead-reckoned from telemetry and lifted).

        Written as ``geometry_msgs/PoseStamped`` on ``/garnav/robots/<robot>/pose`` (world frame,
        metres) and gathered into that robot's ``track`` path, written when the recorder closes.

        Parameters
        ----------
        robot : str
        t_s : float
            Seconds after ``start_time_ns``.
        position_mm : (3,) floats
            World position, mm.
        forward : (3,) floats
            The robot's heading in the world frame (any length; projected onto the plane normal
            to ``up``).
        up : (3,) floats
            The outward surface normal under the robot (any length).
        """
        p = np.asarray(position_mm, dtype=float).reshape(3)
        f = np.asarray(forward, dtype=float).reshape(3)
        u = np.asarray(up, dtype=float).reshape(3)
        if not (np.isfinite(p).all() and np.isfinite(f).all() and np.isfinite(u).all()) or not np.any(u):
            raise QueryError(f"{self.path}: robot '{robot}': an estimated pose needs finite position, "
                             "forward and a non-zero up vector")
        frame = surface_frames(np.stack([p, p + f]), np.stack([u, u]))[0]
        q = quaternions_xyzw(frame[None])[0]
        t_ns = self._time_ns(t_s)
        self._write(robot_topic(robot, "pose"), POSE, self._pose_stamped(WORLD_FRAME, t_ns, p / MM_PER_M, q), t_ns)
        self._tracks.setdefault(robot, []).append((t_ns, p / MM_PER_M, q))

    # ------------------------------------------------------------------ messages

    def _time_ns(self, t_s: float) -> int:
        t = float(t_s)
        if not np.isfinite(t) or t < 0:
            raise QueryError(f"{self.path}: times are seconds from the recording's start (zero or more), got {t!r}")
        return self.start_time_ns + int(round(t * 1e9))

    def _header(self, frame: str, t_ns: int) -> Any:
        T = self._store.types
        sec, nsec = stamp(t_ns)
        return T["std_msgs/msg/Header"](stamp=T["builtin_interfaces/msg/Time"](sec=sec, nanosec=nsec), frame_id=frame)

    def _pose(self, p: Sequence[float], q: Sequence[float]) -> Any:
        T = self._store.types
        return T["geometry_msgs/msg/Pose"](
            position=T["geometry_msgs/msg/Point"](*(float(v) for v in p)),
            orientation=T["geometry_msgs/msg/Quaternion"](*(float(v) for v in q)),
        )

    def _pose_stamped(self, frame: str, t_ns: int, p, q) -> Any:
        return self._store.types[POSE](header=self._header(frame, t_ns), pose=self._pose(p, q))

    def _path_msg(self, frame: str, t_ns: int, times_ns, positions: np.ndarray, quats: np.ndarray) -> Any:
        poses = [self._pose_stamped(frame, t, p, q) for t, p, q in zip(times_ns, positions, quats, strict=True)]
        return self._store.types[PATH](header=self._header(frame, t_ns), poses=poses)

    def _write_static_frames(self) -> None:
        """``/tf_static``: the REP 103 wearer frame (x forward, y left, z up) in the world frame."""
        T = self._store.types
        tf = T["geometry_msgs/msg/TransformStamped"](
            header=self._header(WORLD_FRAME, self.start_time_ns),
            child_frame_id=WEARER_FRAME,
            transform=T["geometry_msgs/msg/Transform"](
                translation=T["geometry_msgs/msg/Vector3"](0.0, 0.0, 0.0),
                rotation=T["geometry_msgs/msg/Quaternion"](*WEARER_IN_WORLD_XYZW),
            ),
        )
        self._write(TOPICS["tf_static"], TF, T[TF](transforms=[tf]), self.start_time_ns)

    def _write(self, topic: str, msgtype: str, message: Any, t_ns: int) -> None:
        if self._closed:
            raise GarnavError(f"{self.path}: the MCAP recording is already closed")
        if msgtype not in self._schemas:
            text, _ = self._store.generate_msgdef(msgtype, ros_version=2)
            self._schemas[msgtype] = self._writer.register_schema(
                name=msgtype.replace("/msg/", "/"), encoding="ros2msg", data=text.encode("utf-8"))
        if topic not in self._channels:
            self._channels[topic] = self._writer.register_channel(
                topic=topic, message_encoding="cdr", schema_id=self._schemas[msgtype])
            self._sequence[topic] = 0
        data = bytes(self._store.serialize_cdr(message, msgtype))
        self._writer.add_message(channel_id=self._channels[topic], log_time=t_ns, data=data,
                                 publish_time=t_ns, sequence=self._sequence[topic])
        self._sequence[topic] += 1
