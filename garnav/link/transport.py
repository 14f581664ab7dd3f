"""Byte transports of the link, chosen by a URL: UDP on loopback and serial ports (docs/link.md).

* ``udp://127.0.0.1:9870`` — one message per datagram (stdlib ``socket``). The station's socket is
  bound to 127.0.0.1 on a free port and sends to the robot's address; a robot (``robot-sim
  --listen``) binds the given address and answers whoever spoke last. Only loopback hosts are
  accepted: the protocol has no authentication or encryption, so a UDP link must never reach
  beyond the local machine (a radio bridge on this machine relays it; docs/link.md, "Security").
* ``serial:///dev/ttyUSB0?baud=115200`` — a stream of lines through pyserial (``garnav[link]``).

Every receive waits at most the given timeout; nothing blocks for ever. :class:`LossyTransport`
drops and swaps outgoing datagrams at seeded random (for tests of the protocol's recovery).
"""

from __future__ import annotations

import ipaddress
import os
import select
import socket
from dataclasses import dataclass
from urllib.parse import parse_qs, urlsplit

import numpy as np

from garnav.link.protocol import MAX_LINE_BYTES, LinkError

__all__ = ["LinkUrl", "parse_url", "Transport", "UdpTransport", "SerialTransport", "FdTransport",
           "LossyTransport", "open_transport", "DEFAULT_BAUD"]

DEFAULT_BAUD = 115200
_MAX_DATAGRAM = 65507


@dataclass(frozen=True)
class LinkUrl:
    """A parsed link URL: ``scheme`` "udp" (host, port) or "serial" (device, baud)."""

    scheme: str
    host: str = ""
    port: int = 0
    device: str = ""
    baud: int = DEFAULT_BAUD
    text: str = ""


def parse_url(text: str) -> LinkUrl:
    """Parse ``udp://HOST:PORT`` or ``serial://DEVICE[?baud=N]``.

    >>> parse_url("udp://127.0.0.1:9870").port
    9870
    >>> parse_url("serial:///dev/ttyUSB0?baud=57600").device, parse_url("serial:///dev/ttyUSB0?baud=57600").baud
    ('/dev/ttyUSB0', 57600)
    """
    parts = urlsplit(text)
    if parts.scheme == "udp":
        try:
            port = parts.port
        except ValueError:
            port = None
        if not parts.hostname or port is None:
            raise LinkError(f"link '{text}': expected udp://HOST:PORT, e.g. udp://127.0.0.1:9870")
        return LinkUrl("udp", host=parts.hostname, port=int(port), text=text)
    if parts.scheme == "serial":
        device = (parts.netloc + parts.path) if parts.netloc else parts.path
        if not device:
            raise LinkError(f"link '{text}': expected serial:///dev/DEVICE[?baud=N]")
        query = parse_qs(parts.query)
        unknown = sorted(set(query) - {"baud"})
        if unknown:
            raise LinkError(f"link '{text}': unknown option '{unknown[0]}' (known: baud)")
        baud = DEFAULT_BAUD
        if "baud" in query:
            try:
                baud = int(query["baud"][-1])
            except ValueError:
                raise LinkError(f"link '{text}': baud must be an integer, found {query['baud'][-1]!r}") from None
            if baud <= 0:
                raise LinkError(f"link '{text}': baud must be positive, found {baud}")
        return LinkUrl("serial", device=device, baud=baud, text=text)
    raise LinkError(f"link '{text}': unknown scheme '{parts.scheme}' (known: udp://HOST:PORT, serial:///DEVICE?baud=N)")


def _loopback(host: str, text: str) -> str:
    """The numeric loopback address of ``host``; a LinkError for any other host."""
    try:
        addr = socket.gethostbyname(host)
    except OSError as exc:
        raise LinkError(f"link '{text}': cannot resolve host '{host}': {exc}") from None
    if not ipaddress.ip_address(addr).is_loopback:
        raise LinkError(f"link '{text}': host {host} ({addr}) is not on this machine; the link has no "
                        "authentication or encryption, so garnav only uses loopback addresses "
                        "(127.0.0.1) — relay a radio through a bridge on this machine (docs/link.md)")
    return addr


class Transport:
    """Send lines, receive lines. Subclasses implement :meth:`send`, :meth:`recv`, :meth:`close`."""

    description = "link"

    def send(self, data: bytes) -> None:  # pragma: no cover - interface
        raise NotImplementedError

    def recv(self, timeout_s: float) -> list[bytes]:  # pragma: no cover - interface
        """Lines received within ``timeout_s`` (s; returns as soon as one arrives), newline stripped."""
        raise NotImplementedError

    def close(self) -> None:  # pragma: no cover - interface
        raise NotImplementedError

    def __enter__(self):
        return self

    def __exit__(self, *exc) -> None:
        self.close()


class UdpTransport(Transport):
    """One message per datagram on loopback. Use :meth:`connect` (station) or :meth:`listen` (robot)."""

    def __init__(self, sock: socket.socket, peer: tuple[str, int] | None, description: str):
        self.sock = sock
        self.peer = peer
        self.fixed_peer = peer is not None
        self.description = description

    @classmethod
    def connect(cls, host: str, port: int, text: str = "") -> "UdpTransport":
        text = text or f"udp://{host}:{port}"
        addr = _loopback(host, text)
        sock = socket.socket(socket.AF_INET, socket.SOCK_DGRAM)
        sock.bind(("127.0.0.1", 0))  # the station side binds to loopback only
        return cls(sock, (addr, int(port)), text)

    @classmethod
    def listen(cls, host: str, port: int, text: str = "") -> "UdpTransport":
        text = text or f"udp://{host}:{port}"
        addr = _loopback(host, text)
        sock = socket.socket(socket.AF_INET, socket.SOCK_DGRAM)
        try:
            sock.bind((addr, int(port)))
        except OSError as exc:
            sock.close()
            raise LinkError(f"link '{text}': cannot listen there: {exc}") from None
        return cls(sock, None, text)

    @property
    def address(self) -> tuple[str, int]:
        """The local (host, port) the socket is bound to."""
        return self.sock.getsockname()

    def send(self, data: bytes) -> None:
        if self.peer is None:
            return  # nobody has spoken to this robot yet
        try:
            self.sock.sendto(data, self.peer)
        except OSError:
            pass  # a datagram that cannot go is a lost datagram: the protocol resends

    def recv(self, timeout_s: float) -> list[bytes]:
        self.sock.settimeout(max(float(timeout_s), 0.0) or 1e-6)
        out: list[bytes] = []
        while True:
            try:
                data, addr = self.sock.recvfrom(_MAX_DATAGRAM)
            except (socket.timeout, BlockingIOError):
                break
            except OSError:  # e.g. ICMP port unreachable reported on a later call
                break
            if self.fixed_peer and addr != self.peer:
                continue  # not the robot this link talks to
            if not self.fixed_peer:
                self.peer = addr
            out.extend(line for line in data.split(b"\n") if line.strip())
            self.sock.settimeout(1e-6)  # collect what is already queued, then return
        return out

    def close(self) -> None:
        self.sock.close()


class _StreamLines(Transport):
    """Line framing over a byte stream (serial port, pseudo-terminal)."""

    def __init__(self, description: str):
        self.description = description
        self.buffer = b""

    def _read_some(self, timeout_s: float) -> bytes:  # pragma: no cover - interface
        raise NotImplementedError

    def recv(self, timeout_s: float) -> list[bytes]:
        chunk = self._read_some(timeout_s)
        if not chunk:
            return []
        self.buffer += chunk
        *lines, self.buffer = self.buffer.split(b"\n")
        if len(self.buffer) > MAX_LINE_BYTES:
            self.buffer = b""  # a line too long to be a message: drop it, the protocol resends
        return [line.rstrip(b"\r") for line in lines if line.strip()]


class SerialTransport(_StreamLines):
    """A serial port through pyserial (``pip install garnav[link]``)."""

    def __init__(self, device: str, baud: int = DEFAULT_BAUD, text: str = ""):
        super().__init__(text or f"serial://{device}?baud={baud}")
        try:
            import serial
        except ImportError:
            raise LinkError(f"link '{self.description}': serial links need pyserial: "
                            "pip install 'garnav[link]' (or pip install pyserial)") from None
        try:
            self.port = serial.Serial(device, baudrate=int(baud), timeout=0, write_timeout=1.0)
        except (serial.SerialException, OSError, ValueError) as exc:
            raise LinkError(f"link '{self.description}': cannot open the serial port: {exc}") from None
        self._serial_error = serial.SerialException

    def send(self, data: bytes) -> None:
        try:
            self.port.write(data)
        except (self._serial_error, OSError) as exc:
            raise LinkError(f"link '{self.description}': write failed: {exc}") from None

    def _read_some(self, timeout_s: float) -> bytes:
        self.port.timeout = max(float(timeout_s), 0.0)
        first = self.port.read(1)
        if not first:
            return b""
        return first + self.port.read(self.port.in_waiting)

    def close(self) -> None:
        self.port.close()


class FdTransport(_StreamLines):
    """Lines over a file descriptor (the robot's end of a pseudo-terminal in tests)."""

    def __init__(self, fd: int, description: str = "fd"):
        super().__init__(description)
        self.fd = fd

    def send(self, data: bytes) -> None:
        _, ready, _ = select.select([], [self.fd], [], 0.0)
        if not ready:
            return  # nobody reads the other end: a lost line, never a blocked robot
        try:
            os.write(self.fd, data)
        except OSError:
            pass

    def _read_some(self, timeout_s: float) -> bytes:
        ready, _, _ = select.select([self.fd], [], [], max(float(timeout_s), 0.0))
        if not ready:
            return b""
        try:
            return os.read(self.fd, 65536)
        except OSError:
            return b""

    def close(self) -> None:
        pass  # the fd belongs to whoever opened it


class LossyTransport(Transport):
    """Drops each outgoing datagram with probability ``loss`` and holds one back, to be sent after
    the next, with probability ``reorder`` (seeded: the same seed drops the same datagrams)."""

    def __init__(self, inner: Transport, loss: float = 0.0, reorder: float = 0.0, seed: int = 0):
        if not (0.0 <= loss < 1.0 and 0.0 <= reorder < 1.0):
            raise LinkError(f"loss and reorder must be within 0..1, found {loss:g} and {reorder:g}")
        self.inner, self.loss, self.reorder = inner, float(loss), float(reorder)
        self.rng = np.random.default_rng(seed)
        self.held: bytes | None = None
        self.description = f"{inner.description} (loss {loss:.0%}, reorder {reorder:.0%})"
        self.dropped = 0
        self.sent = 0

    def send(self, data: bytes) -> None:
        self.sent += 1
        if self.rng.random() < self.loss:
            self.dropped += 1
            return
        if self.held is None and self.rng.random() < self.reorder:
            self.held = data
            return
        self.inner.send(data)
        if self.held is not None:
            self.inner.send(self.held)
            self.held = None

    def recv(self, timeout_s: float) -> list[bytes]:
        return self.inner.recv(timeout_s)

    def close(self) -> None:
        self.inner.close()


def open_transport(text: str, *, listen: bool = False) -> Transport:
    """Open the transport of a link URL: the station's end (``listen=False``) or a robot's."""
    url = parse_url(text)
    if url.scheme == "udp":
        return (UdpTransport.listen if listen else UdpTransport.connect)(url.host, url.port, text)
    return SerialTransport(url.device, url.baud, text)
