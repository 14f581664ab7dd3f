"""Telemetry: a simulated robot, the telemetry log format, and replaying a log into a track.

* :mod:`~garnav.telemetry.drive` — integrate distance and heading increments on the pattern,
  crossing seams through the garment's map.
* :mod:`~garnav.telemetry.logfile` — the telemetry CSV and the ground-truth CSV (docs/telemetry.md).
* :mod:`~garnav.telemetry.simulate` — drive a command list with sampled errors, log what the
  sensors report.
* :mod:`~garnav.telemetry.track` — a log back into a track; along/cross-track error against a plan.
"""

from garnav.telemetry.logfile import TelemetryError, TelemetryLog, read_log, read_truth, write_log, write_truth

__all__ = ["TelemetryError", "TelemetryLog", "read_log", "read_truth", "write_log", "write_truth"]
