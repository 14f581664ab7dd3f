"""Other robots' moves as obstacle sets per piece, with copies carried over nearby seams.

Robots on two pieces joined by a seam are compared in the pattern through the seam
(:mod:`garnav.fleet.unfold` says why). Before a safe-interval search (:mod:`garnav.fleet.sipp`)
sees another robot's moves, every move within reach of a seam is therefore also carried, rigidly,
into the partner piece's frame with the seam's map at samples ``step_mm`` apart; the copies keep a
margin of half a step, more where the seam turns between samples, so the carried distance never
over-states the distance through the seam.
"""

from __future__ import annotations

import numpy as np

from garnav.fleet.motion import Move, MoveSet
from garnav.fleet.unfold import carry_points, seam_sides, side_maps
from garnav.model import Garment

__all__ = ["MoveCarrier", "CARRY_SEAM_STEP_MM"]

# Moves near a seam are carried across it with the seam's map at samples this far apart (mm).
CARRY_SEAM_STEP_MM = 4.0


class MoveCarrier:
    """Turns timed moves into per-piece :class:`MoveSet` s for SIPP (carried copies included).

    Parameters
    ----------
    garment : Garment
    pieces : sequence of str
        Piece names in the order of the search's piece indices.
    rmax_mm : float
        Largest radius of a robot that will search among these moves, mm (how far from a seam a
        move must be carried).
    step_mm : float
        Seam sample spacing of the carried copies, mm.
    """

    def __init__(self, garment: Garment, pieces, rmax_mm: float, step_mm: float = CARRY_SEAM_STEP_MM):
        self.pieces = tuple(pieces)
        self.rmax = float(rmax_mm)
        self.step = float(step_mm)
        self.sides = seam_sides(garment)
        self._index = {p: i for i, p in enumerate(self.pieces)}
        self._side_maps: dict = {}

    def carry(self, owner: int, moves: list[Move], reach: float) -> dict[int, list[MoveSet]]:
        """Moves of robot ``owner`` as MoveSets by piece index, with copies carried over nearby
        seams (each move at the seam point nearest its middle); ``reach`` is that robot's radius
        plus the gap kept, mm."""
        band = reach + self.rmax
        out: dict[int, list[MoveSet]] = {}
        by_piece: dict[str, list[Move]] = {}
        for m in moves:
            by_piece.setdefault(m.piece, []).append(m)
        for piece, lst in by_piece.items():
            t0 = np.array([m.t0 for m in lst])
            t1 = np.array([m.t1 for m in lst])
            p0 = np.array([m.p0 for m in lst], float)
            p1 = np.array([m.p1 for m in lst], float)
            v = np.array([m.velocity for m in lst])
            own = np.full(len(lst), owner, dtype=int)
            out.setdefault(self._index[piece], []).append(MoveSet(t0, t1, p0, v, np.full(len(lst), reach), own))
            mid, half = 0.5 * (p0 + p1), 0.5 * np.hypot(*(p1 - p0).T)
            for sd in self.sides[piece]:
                _, _, dist = carry_points(sd, mid)
                sel = np.flatnonzero(dist - half <= band)
                if not len(sel):
                    continue
                # one copy per seam sample within reach, each carried rigidly with that sample's
                # map: for a robot at a on the partner piece, the copy made at the seam point
                # nearest the best crossing point s* is within the margin of |a - T_s*(b)|, which
                # is never more than the distance through the seam (triangle inequality)
                seam_pts, lin, off, turn = self._maps(sd)
                reachd = np.linalg.norm(mid[sel][:, None, :] - seam_pts[None], axis=2)
                mi, ki = np.nonzero(reachd <= (band + half[sel])[:, None] + self.step)
                rep = sel[mi]
                q0 = np.einsum("mij,mj->mi", lin[ki], p0[rep]) + off[ki]
                vq = np.einsum("mij,mj->mi", lin[ki], v[rep])
                margin = 0.5 * self.step * (1.0 + turn / self.step * (band + half[rep]))
                out.setdefault(self._index[sd.to_piece], []).append(
                    MoveSet(t0[rep], t1[rep], q0, vq, reach + margin, own[rep]))
        return out

    def _maps(self, sd):
        key = (sd.seam, sd.side)
        got = self._side_maps.get(key)
        if got is None:
            got = side_maps(sd, self.step)
            self._side_maps[key] = got
        return got
