"""Straight constant-speed moves of disc robots: closest approach, unsafe times, sampling.

A robot's trajectory is a sequence of :class:`Move` s on pattern pieces: from ``p0`` at ``t0`` to
``p1`` at ``t1`` along a straight line at constant speed (a wait has ``p0 == p1``; the last move of
every robot is a wait with ``t1 = inf``, the robot stays at its goal). Two discs on the same piece
frame conflict when their centres come closer than the sum of their radii plus a gap.

Closest approach of two constant-velocity points over a common window ``[lo, hi]`` (the textbook
relative-motion result, e.g. Ericson, *Real-Time Collision Detection*, 2005, §5.9.2): with
``Δp = p_b(lo) − p_a(lo)`` and ``Δv = v_b − v_a``, the distance ``|Δp + τ Δv|`` is smallest at
``τ* = clamp(−Δp·Δv / |Δv|², 0, hi − lo)``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

__all__ = ["Move", "MoveSet", "closest_approach", "edge_min_distance", "unsafe_point_intervals", "merge_intervals", "position_at"]


@dataclass(frozen=True)
class Move:
    """One straight move at constant speed on one piece (piece frame, mm; times in s)."""

    piece: str
    t0: float
    t1: float
    p0: tuple[float, float]
    p1: tuple[float, float]

    @property
    def velocity(self) -> np.ndarray:
        """(2,) mm/s; zero for a wait (and for the endless last wait)."""
        dt = self.t1 - self.t0
        if not math.isfinite(dt) or dt <= 0:
            return np.zeros(2)
        return (np.asarray(self.p1) - np.asarray(self.p0)) / dt


@dataclass(frozen=True, eq=False)
class MoveSet:
    """Moves of other robots as arrays, all in one piece frame (some carried across seams).

    Attributes
    ----------
    t0, t1 : (k,) float
        Start and end times, s (``t1`` may be inf).
    p0 : (k, 2) float
        Position at ``t0``, mm.
    v : (k, 2) float
        Velocity, mm/s.
    reach : (k,) float
        Other robot's radius plus the gap kept, mm (the querying robot adds its own radius).
    owner : (k,) int
        Index of the robot each move belongs to.
    """

    t0: np.ndarray
    t1: np.ndarray
    p0: np.ndarray
    v: np.ndarray
    reach: np.ndarray
    owner: np.ndarray

    @staticmethod
    def empty() -> "MoveSet":
        z = np.zeros(0)
        return MoveSet(z, z, np.zeros((0, 2)), np.zeros((0, 2)), z, np.zeros(0, dtype=int))

    def __len__(self) -> int:
        return len(self.t0)

    @staticmethod
    def concat(parts: list["MoveSet"]) -> "MoveSet":
        parts = [p for p in parts if len(p)]
        if not parts:
            return MoveSet.empty()
        return MoveSet(*(np.concatenate([getattr(p, f) for p in parts]) for f in ("t0", "t1", "p0", "v", "reach", "owner")))

    def subset(self, mask: np.ndarray) -> "MoveSet":
        return MoveSet(self.t0[mask], self.t1[mask], self.p0[mask], self.v[mask], self.reach[mask], self.owner[mask])


def closest_approach(pa: np.ndarray, va: np.ndarray, pb: np.ndarray, vb: np.ndarray, duration: np.ndarray) -> np.ndarray:
    """Smallest distance of two constant-velocity points over ``[0, duration]``.

    Parameters
    ----------
    pa, pb : (k, 2) float
        Positions at time 0, mm.
    va, vb : (k, 2) float
        Velocities, mm/s.
    duration : (k,) float
        Window length, s (>= 0).

    Returns
    -------
    (k,) float
        ``|Δp + τ* Δv|`` with ``τ* = clamp(−Δp·Δv/|Δv|², 0, duration)``, mm.
    """
    dp = np.asarray(pb, float) - np.asarray(pa, float)
    dv = np.asarray(vb, float) - np.asarray(va, float)
    vv = np.einsum("ij,ij->i", dv, dv)
    with np.errstate(divide="ignore", invalid="ignore"):
        tau = np.where(vv > 0, -np.einsum("ij,ij->i", dp, dv) / np.where(vv > 0, vv, 1.0), 0.0)
    tau = np.clip(tau, 0.0, np.asarray(duration, float))
    return np.hypot(dp[:, 0] + tau * dv[:, 0], dp[:, 1] + tau * dv[:, 1])


def edge_min_distance(moves: MoveSet, p: np.ndarray, w: np.ndarray, depart: float, duration: float) -> np.ndarray:
    """Smallest distance from each move to a robot leaving ``p`` (2,) at ``depart`` with velocity
    ``w`` (2,) for ``duration`` s; inf where the time windows do not overlap. (k,) mm."""
    lo = np.maximum(depart, moves.t0)
    hi = np.minimum(depart + duration, moves.t1)
    ok = hi >= lo
    out = np.full(len(moves), np.inf)
    if not ok.any():
        return out
    lo_k, hi_k = lo[ok], hi[ok]
    pb = moves.p0[ok] + (lo_k - moves.t0[ok])[:, None] * moves.v[ok]
    pa = p[None, :] + (lo_k - depart)[:, None] * w[None, :]
    out[ok] = closest_approach(pa, np.broadcast_to(w, pa.shape), pb, moves.v[ok], hi_k - lo_k)
    return out


def unsafe_point_intervals(moves: MoveSet, point: np.ndarray, radius: float) -> list[tuple[float, float]]:
    """Times when a disc of ``radius`` parked at ``point`` (2,) would come closer than
    ``radius + reach`` to a move: sorted, merged ``(start, end)`` pairs, s (open intervals).

    Per move, ``|p0 − x + τ v|² < R²`` is a quadratic inequality in ``τ = t − t0``.
    """
    if not len(moves):
        return []
    R = radius + moves.reach
    d = moves.p0 - point[None, :]
    a = np.einsum("ij,ij->i", moves.v, moves.v)
    b = np.einsum("ij,ij->i", d, moves.v)
    c = np.einsum("ij,ij->i", d, d) - R * R
    span = moves.t1 - moves.t0
    lo = np.full(len(moves), np.inf)
    hi = np.full(len(moves), -np.inf)
    still = a <= 0
    inside = still & (c < 0)
    lo[inside], hi[inside] = moves.t0[inside], moves.t1[inside]
    mv = ~still
    disc = b * b - a * c
    hit = mv & (disc > 0)
    if hit.any():
        sq = np.sqrt(disc[hit])
        r0 = (-b[hit] - sq) / a[hit]
        r1 = (-b[hit] + sq) / a[hit]
        s0 = np.maximum(r0, 0.0)
        s1 = np.minimum(r1, span[hit])
        good = s1 > s0
        idx = np.flatnonzero(hit)[good]
        lo[idx] = moves.t0[idx] + s0[good]
        hi[idx] = moves.t0[idx] + s1[good]
    keep = hi > lo
    return merge_intervals(list(zip(lo[keep].tolist(), hi[keep].tolist(), strict=False)))


def merge_intervals(intervals: list[tuple[float, float]]) -> list[tuple[float, float]]:
    """Union of (start, end) intervals, sorted."""
    out: list[tuple[float, float]] = []
    for s, e in sorted(intervals):
        if out and s <= out[-1][1]:
            if e > out[-1][1]:
                out[-1] = (out[-1][0], e)
        else:
            out.append((s, e))
    return out


def position_at(moves: list[Move], t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Where a robot is at times ``t`` (m,): move index (m,) int and position (m, 2) mm.

    Before the first move the robot is at its first point; moves are in time order. A zero-time
    move (a seam crossing) is never the answer for a time strictly inside another move.
    """
    t = np.asarray(t, float)
    t0 = np.array([m.t0 for m in moves])
    t1 = np.array([m.t1 for m in moves])
    k = np.clip(np.searchsorted(t0, t, side="right") - 1, 0, len(moves) - 1)
    p0 = np.array([m.p0 for m in moves], float)
    p1 = np.array([m.p1 for m in moves], float)
    dur = t1[k] - t0[k]
    with np.errstate(invalid="ignore", divide="ignore"):
        frac = np.where(np.isfinite(dur) & (dur > 0), (t - t0[k]) / np.where(dur > 0, dur, 1.0), 0.0)
    frac = np.clip(frac, 0.0, 1.0)
    return k, p0[k] + frac[:, None] * (p1[k] - p0[k])
