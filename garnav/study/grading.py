"""Graded sizes: one garment spec scaled into a run of sizes by a stated grading rule.

The rule (docs/studies.md): sizes are listed smallest first around a base size; the size ``k``
steps above the base (``k`` negative below it) scales every length of a piece by

    s(piece, k) = (1 + g_piece / 100) ** k

where ``g_piece`` is the piece's grade step in percent (``piece_step_percent``, else the
garment's ``step_percent``). This is geometric grading by a similarity transform about each
piece's own frame origin. Real grade rules move individual points by tabulated increments (common
practice, no source); a similarity keeps every angle and every ratio, which is what makes the
scaled drape below still a valid drape.

What is scaled, consistently, by the piece's factor ``s``:

* piece outlines and openings (every point), seam runs' ``from_mm`` / ``to_mm``;
* keep-out shapes (circle centre and radius, polygon points, rectangle centre and sides),
  pattern landmarks (``x``, ``y``);
* placements on the sheet and the sheet size by the largest factor of the size, so UVs of a
  uniformly scaled garment are unchanged.

What is *not* scaled: the robot (the same robot drives every size), keep-out clearances, edge
margins and seam crossing costs (they belong to the robot and the route, not to the fabric), and
smallest crossing angles.

The drape: with one factor for every piece (``uniform``) the drape mesh's positions are scaled by
``s`` and its UVs kept — a similarity maps an isometric drape onto an isometric drape, so it stays a
valid drape of the scaled pattern (3D lengths scale by ``s``, slopes and normals are unchanged).
Body landmarks (``xyz``) scale with it. With per-piece steps no similarity of the mesh fits every
piece at once, so a per-piece graded size has no drape (3D measures are refused for it).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from garnav.model import Circle, Edge, Garment, Opening, Piece, Placement, PolygonShape, Rectangle, SeamRun

__all__ = ["GradingRule", "grade_garment", "scale_positions"]


@dataclass(frozen=True)
class GradingRule:
    """A run of sizes around a base size.

    Parameters
    ----------
    sizes : tuple of str
        Size names, smallest first, e.g. ``("S", "M", "L", "XL")``.
    base : str
        The size the spec describes (factor 1).
    step_percent : float
        Grade step of every piece, percent of length per size.
    piece_step_percent : tuple of (str, float)
        Per-piece steps overriding ``step_percent`` (sorted by piece name).
    """

    sizes: tuple[str, ...]
    base: str
    step_percent: float
    piece_step_percent: tuple[tuple[str, float], ...] = ()

    @property
    def uniform(self) -> bool:
        """True when every piece has the same step (the drape can be scaled)."""
        return all(v == self.step_percent for _, v in self.piece_step_percent)

    def steps(self, size: str) -> int:
        """Signed number of size steps from the base to ``size``."""
        return self.sizes.index(size) - self.sizes.index(self.base)

    def factor(self, size: str, piece: str | None = None) -> float:
        """Length factor of ``piece`` (default: the garment's step) in ``size``.

        >>> GradingRule(("S", "M", "L"), "M", 5.0).factor("L")
        1.05
        >>> round(GradingRule(("S", "M", "L"), "M", 5.0).factor("S"), 6)
        0.952381
        """
        step = dict(self.piece_step_percent).get(piece, self.step_percent) if piece else self.step_percent
        return float((1.0 + step / 100.0) ** self.steps(size))

    def factors(self, garment: Garment, size: str) -> dict[str, float]:
        """Factor of every piece of ``garment`` in ``size``."""
        return {p.name: self.factor(size, p.name) for p in garment.pieces}


def _pts(points, s: float) -> tuple[tuple[float, float], ...]:
    return tuple((float(x) * s, float(y) * s) for x, y in points)


def _opt(v: float | None, s: float) -> float | None:
    return None if v is None else float(v) * s


def _shape(shape, s: float):
    if isinstance(shape, Circle):
        return Circle(shape.cx * s, shape.cy * s, shape.radius * s)
    if isinstance(shape, Rectangle):
        return Rectangle(shape.cx * s, shape.cy * s, shape.width * s, shape.height * s, shape.angle_deg)
    if isinstance(shape, PolygonShape):
        return PolygonShape(_pts(shape.points, s))
    raise TypeError(f"unknown keep-out shape {type(shape).__name__}")


def grade_garment(garment: Garment, factors: dict[str, float], *, name: str | None = None) -> Garment:
    """The garment with every piece scaled by its factor (see the module notes for what scales).

    Parameters
    ----------
    garment : Garment
    factors : dict
        Piece name → length factor (> 0); pieces not named keep factor 1.
    name : str, optional
        Name of the graded garment (default: the garment's).

    Returns
    -------
    Garment
        Body landmarks (``xyz``) are scaled by the common factor when all factors are equal, and
        kept as they are otherwise (they then need a drape of that size to be used).
    """
    f = {p.name: float(factors.get(p.name, 1.0)) for p in garment.pieces}
    top = max(f.values()) if f else 1.0
    common = top if len(set(f.values())) <= 1 else None
    pieces = []
    for p in garment.pieces:
        s = f[p.name]
        edges = tuple(Edge(e.name, _pts(e.points, s)) for e in p.edges)
        openings = tuple(Opening(o.name, _pts(o.points, s)) for o in p.openings)
        pl = Placement(p.placement.x * top, p.placement.y * top, p.placement.angle_deg)
        pieces.append(Piece(p.name, edges, openings, pl))

    def run(r: SeamRun) -> SeamRun:
        s = f[r.piece]
        return replace(r, from_mm=_opt(r.from_mm, s), to_mm=_opt(r.to_mm, s))

    seams = tuple(replace(sm, a=run(sm.a), b=run(sm.b)) for sm in garment.seams)
    keepouts = tuple(replace(k, shape=_shape(k.shape, f[k.piece])) for k in garment.keepouts)
    marks = []
    for m in garment.landmarks:
        if m.on_pattern:
            s = f[m.piece] if m.piece in f else 1.0
            marks.append(replace(m, x=_opt(m.x, s), y=_opt(m.y, s)))
        elif m.xyz is not None and common is not None:
            x, y, z = (float(v) * common for v in m.xyz)
            marks.append(replace(m, xyz=(x, y, z)))
        else:
            marks.append(m)
    sheet = (garment.sheet_size_mm[0] * top, garment.sheet_size_mm[1] * top)
    return replace(garment, name=name or garment.name, pieces=tuple(pieces), seams=seams,
                   keepouts=keepouts, landmarks=tuple(marks), sheet_size_mm=sheet)


def scale_positions(positions: np.ndarray, factor: float) -> np.ndarray:
    """(V, 3) drape vertex positions scaled about the body frame's origin, mm (a copy)."""
    return np.asarray(positions, dtype=float) * float(factor)

