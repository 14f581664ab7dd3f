"""Seeded obstacle courses on a single open-edged panel (shared by the planning tests)."""

from __future__ import annotations

import dataclasses
import math

import numpy as np

import garments
from garnav import Circle, KeepOut, PolygonShape, Rectangle


def random_keepouts(rng: np.random.Generator, n: int, box=(100.0, 100.0, 500.0, 700.0), gap: float = 4.0,
                    size=(12.0, 40.0), clearance=(0.0, 6.0)) -> list[KeepOut]:
    """``n`` non-overlapping squares, octagons and circles inside ``box``, at least ``gap`` apart."""
    placed: list[tuple[np.ndarray, float]] = []
    out: list[KeepOut] = []
    tries = 0
    while len(out) < n and tries < 20000:
        tries += 1
        half = rng.uniform(*size) / 2
        c = rng.uniform([box[0] + half, box[1] + half], [box[2] - half, box[3] - half])
        reach = half * math.sqrt(2)
        if any(np.linalg.norm(c - pc) < reach + pr + gap for pc, pr in placed):
            continue
        placed.append((c, reach))
        kind = len(out) % 3
        name = f"k{len(out):03d}"
        if kind == 0:
            shape = Rectangle(float(c[0]), float(c[1]), 2 * half, 2 * half, float(rng.uniform(0, 90)))
        elif kind == 1:
            a = np.arange(8) * math.pi / 4 + rng.uniform(0, math.pi / 4)
            pts = c + half * np.stack([np.cos(a), np.sin(a)], axis=1)
            shape = PolygonShape(tuple(map(tuple, pts.tolist())))
        else:
            shape = Circle(float(c[0]), float(c[1]), half)
        out.append(KeepOut(name, "panel", "custom", shape, clearance_mm=float(rng.uniform(*clearance))))
    return out


def course(seed: int, n: int = 6, **kw):
    """The single 600 x 800 panel with ``n`` random hard keep-outs."""
    rng = np.random.default_rng(seed)
    g = garments.single_panel()
    return dataclasses.replace(g, keepouts=tuple(random_keepouts(rng, n, **kw))), rng


def random_free_points(planner, rng: np.random.Generator, count: int):
    """``count`` random points (PiecePoint) where the planner's robot may stand, on random pieces."""
    from garnav.plan import PiecePoint

    out = []
    names = [p.name for p in planner.garment.pieces]
    while len(out) < count:
        name = names[rng.integers(len(names))]
        minx, miny, maxx, maxy = planner.garment.piece(name).polygon.bounds
        xy = rng.uniform([minx, miny], [maxx, maxy])
        if planner.free[name].covers(xy[None])[0]:
            out.append(PiecePoint(name, *xy))
    return out


class LazyCases:
    """The cases a generator yields, made on first use and kept (for a module-scoped fixture:
    parametrised tests then index into it instead of building every planner at collection)."""

    def __init__(self, generator):
        self._gen = generator
        self._made: list = []

    def __getitem__(self, k: int):
        while len(self._made) <= k:
            self._made.append(next(self._gen))
        return self._made[k]


def fast_then_slow(count: int, fast: int) -> list:
    """Case indices 0..count-1 as pytest params, all but the first ``fast`` marked slow."""
    import pytest

    return [pytest.param(k, id=str(k), marks=() if k < fast else pytest.mark.slow) for k in range(count)]
