"""One end of a link: sequence numbers, acknowledgements, resends, duplicates and stale samples.

The rules (docs/link.md, "Reliability"):

* every message the end sends gets the next sequence number (1, 2, ...);
* a reliable message (:data:`~garnav.link.protocol.RELIABLE_TYPES`) is resent every ``resend_s``
  until its ``ack`` arrives, at most ``max_tries`` times; then it is *given up* and reported in
  :attr:`LinkSession.given_up` (the station stops that robot and says so);
* a received reliable message is acknowledged every time it arrives (the ack may have been lost)
  and delivered once (duplicates are dropped by sequence number);
* an unreliable sample (telemetry, battery, heartbeat) older than the newest of its type already
  delivered is stale and dropped: a late datagram never moves a robot's estimate backwards;
* a ``stop`` goes out before anything else and cancels every queued ``commands`` resend, so a
  plan never reaches a robot after its stop.

The same positive-acknowledgement-with-retransmission scheme as in TCP (RFC 793, §1.5 "Reliability"
and §3.7), reduced to one message at a time per sequence number and no flow control. The clock is
injectable (``clock()`` → seconds) so the rules are tested without waiting.
"""

from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Callable

from garnav.link.protocol import RELIABLE_TYPES, LinkError, decode, encode, message
from garnav.link.transport import Transport

__all__ = ["LinkSession", "Pending", "RESEND_S", "MAX_TRIES"]

#: Resend interval of an unacknowledged reliable message, s (common practice, no source: a few
#: round trips of a slow radio link).
RESEND_S = 0.1
#: Sends of one reliable message before it is given up (20 × 0.1 s = 2 s).
MAX_TRIES = 20
#: Sequence numbers remembered for duplicate detection.
SEEN_WINDOW = 4096


@dataclass
class Pending:
    """A reliable message waiting for its ack."""

    msg: dict
    data: bytes
    due: float
    tries: int


class LinkSession:
    """The reliable-message layer over one :class:`~garnav.link.transport.Transport`.

    Parameters
    ----------
    transport : Transport
    name : str
        For messages and the log (e.g. the robot's name).
    resend_s : float
        Resend interval, s.
    max_tries : int
        Sends before a reliable message is given up.
    clock : callable
        Monotonic seconds (default :func:`time.monotonic`).
    log : callable, optional
        ``log(direction, msg)`` with direction "tx" or "rx", called for every message sent (resends
        included, with ``"resend": n`` added in the logged copy), every message delivered and every
        ack received.
    """

    def __init__(self, transport: Transport, name: str = "link", *, resend_s: float = RESEND_S,
                 max_tries: int = MAX_TRIES, clock: Callable[[], float] = time.monotonic,
                 log: Callable[[str, dict], None] | None = None):
        self.transport = transport
        self.name = name
        self.resend_s = float(resend_s)
        self.max_tries = int(max_tries)
        self.clock = clock
        self.log = log
        self.next_seq = 1
        self.pending: dict[int, Pending] = {}
        self.given_up: list[dict] = []
        self.seen: set[int] = set()
        self.newest: dict[str, int] = {}
        self.last_heard: float | None = None
        self.bad_lines = 0
        self.last_error: str | None = None

    # ------------------------------------------------------------------ sending

    def send(self, kind: str, **fields) -> dict:
        """Build, send and (for reliable types) queue for resending one message. Returns it."""
        msg = message(kind, self.next_seq, **fields)
        self.send_message(msg)
        return msg

    def send_message(self, msg: dict) -> None:
        """Send a built message (its ``seq`` must come from :meth:`take_seq` or :meth:`send`)."""
        self.next_seq = max(self.next_seq, int(msg["seq"]) + 1)
        data = encode(msg)
        if msg["t"] == "stop":  # first: nothing queued may reach the robot after its stop
            for seq in [s for s, p in self.pending.items() if p.msg["t"] == "commands"]:
                del self.pending[seq]
        if msg["t"] in RELIABLE_TYPES:
            self.pending[int(msg["seq"])] = Pending(msg, data, self.clock() + self.resend_s, 1)
        self._tx(msg, data)

    def take_seq(self) -> int:
        """Reserve the next sequence number (for a message built outside, e.g. a commands message)."""
        seq = self.next_seq
        self.next_seq += 1
        return seq

    def _tx(self, msg: dict, data: bytes, resend: int = 0) -> None:
        self.transport.send(data)
        if self.log is not None:
            self.log("tx", {**msg, "resend": resend} if resend else msg)

    # ------------------------------------------------------------------ receiving

    def poll(self, timeout_s: float = 0.0) -> list[dict]:
        """Receive for up to ``timeout_s``, acknowledge, drop duplicates and stale samples, resend
        what is due. Returns the messages delivered, in arrival order."""
        out: list[dict] = []
        for line in self.transport.recv(timeout_s):
            try:
                msg = decode(line, self.transport.description)
            except LinkError as exc:
                self.bad_lines += 1
                self.last_error = str(exc)
                continue
            self.last_heard = self.clock()
            kind, seq = msg["t"], int(msg["seq"])
            if kind == "ack":
                self.pending.pop(int(msg["ack"]), None)
                if self.log is not None:
                    self.log("rx", msg)
                continue
            if kind in RELIABLE_TYPES:
                self._tx(*self._ack(seq))
                if seq in self.seen:
                    continue  # a resend of what was delivered: the ack above was lost
                self.seen.add(seq)
                if len(self.seen) > SEEN_WINDOW:
                    self.seen = {s for s in self.seen if s > seq - SEEN_WINDOW // 2}
            else:
                if seq <= self.newest.get(kind, 0):
                    continue  # stale: a newer sample of this type is already delivered
                self.newest[kind] = seq
            if self.log is not None:
                self.log("rx", msg)
            out.append(msg)
        self.resend_due()
        return out

    def _ack(self, seq: int) -> tuple[dict, bytes]:
        msg = message("ack", self.take_seq(), ack=seq)
        return msg, encode(msg)

    def resend_due(self) -> None:
        """Resend every reliable message whose ack is late; give up those out of tries."""
        now = self.clock()
        order = sorted(self.pending.items(), key=lambda kv: (kv[1].msg["t"] != "stop", kv[0]))
        for seq, p in order:
            if p.due > now:
                continue
            if p.tries >= self.max_tries:
                del self.pending[seq]
                self.given_up.append(p.msg)
                continue
            p.tries += 1
            p.due = now + self.resend_s
            self._tx(p.msg, p.data, resend=p.tries - 1)

    def acked(self, seq: int) -> bool:
        """True when the reliable message ``seq`` is no longer waiting (acked or given up)."""
        return seq not in self.pending

    def silent_for(self) -> float:
        """Seconds since the last valid message arrived (infinite before the first)."""
        return float("inf") if self.last_heard is None else self.clock() - self.last_heard

    def close(self) -> None:
        self.transport.close()
