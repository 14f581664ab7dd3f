"""The robot link: the ``garnav-link`` line protocol, its transports and a simulated robot (docs/link.md).

* :mod:`~garnav.link.protocol` — messages: build, encode, decode, check (JSON lines, version 1).
* :mod:`~garnav.link.transport` — UDP on loopback and serial ports, chosen by URL; loss injection.
* :mod:`~garnav.link.session` — sequence numbers, acks, resends, duplicates, stale samples.
* :mod:`~garnav.link.robot` — the simulated robot (odometry errors, 10 Hz telemetry, battery).
* :mod:`~garnav.link.simserver` — its loop on a transport (``garnav robot-sim``).
"""

from garnav.link.protocol import PROTOCOL_VERSION, LinkError, decode, encode, message
from garnav.link.session import LinkSession
from garnav.link.transport import open_transport, parse_url

__all__ = ["PROTOCOL_VERSION", "LinkError", "LinkSession", "decode", "encode", "message", "open_transport", "parse_url"]
