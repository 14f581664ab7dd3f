"""Recordings in formats robotics tools read.

* :mod:`~garnav.recording.mcap_file` — :class:`McapRecorder`: plans, lifted routes, poses and
  the garment mesh as an MCAP file of ROS 2 messages (``pip install 'garnav[mcap]'``).
* :mod:`~garnav.recording.frames` — garnav's frames and units as ROS REP 103 expects them.

See docs/mcap.md for topics, message types, frames and units.
"""

from garnav.recording.mcap_file import TOPICS, McapRecorder, robot_topic

__all__ = ["McapRecorder", "TOPICS", "robot_topic"]
