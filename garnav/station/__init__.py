"""The base station: robots on the link, their estimated poses, click-to-go and the emergency stop.

* :mod:`~garnav.station.estimate` — dead reckoning from telemetry samples, the 2σ ellipse.
* :mod:`~garnav.station.controller` — :class:`Station`: connect, plan, send, track, stop, log.
* :mod:`~garnav.station.safety` — the cautions; routes across hard keep-outs are refused.
* :mod:`~garnav.station.headless` — scripted runs without a window (exit status).
* :mod:`~garnav.station.window` — the pyvista window with point picking.
"""

from garnav.station.controller import Station
from garnav.station.safety import CAUTIONS, UnsafeRouteError, check_route

__all__ = ["CAUTIONS", "Station", "UnsafeRouteError", "check_route"]
