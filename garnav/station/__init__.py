"""The base station: robots on the link, their estimated poses, click-to-go and the emergency stop.

* :mod:`~garnav.station.estimate` — dead reckoning from telemetry samples, the 2σ ellipse.
* :mod:`~garnav.station.controller` — :class:`Station`: connect, plan, send, track, stop, log.
* :mod:`~garnav.station.safety` — the cautions; routes across hard keep-outs are refused.
* :mod:`~garnav.station.headless` — scripted runs without a window (exit status).
* :mod:`~garnav.station.window` — the pyvista window with point picking.
"""

from garnav.station.controller import Station
from garnav.station.safety import LINK_CAUTIONS, UnsafeRouteError, check_route, station_caution_lines

__all__ = ["LINK_CAUTIONS", "Station", "UnsafeRouteError", "check_route", "station_caution_lines"]
