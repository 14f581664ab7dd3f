"""How well a drape fits its garment: coverage per piece, stretch, seam closure. Pure computation.

Stretch is measured by the singular values σ₁ ≥ σ₂ of each triangle's pattern → 3D Jacobian
(the principal stretches of the map; Sander, Snyder, Gortler, Hoppe, *Texture mapping
progressive meshes*, SIGGRAPH 2001, §3). An isometry has σ₁ = σ₂ = 1.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from garnav.drape.drape import Drape
from garnav.drape.inverse import DEFAULT_MAX_SNAP_MM, distance_text, surface_to_pattern
from garnav.errors import QueryError
from garnav.model import Garment
from garnav.polyline import cumulative_length, point_at_length

__all__ = [
    "PieceCoverage",
    "StretchStats",
    "SeamClosure",
    "LandmarkSnap",
    "DrapeReport",
    "drape_report",
    "stretch_stats",
]

#: Stretch (|σ - 1|) above which a triangle's area counts as stretched: 2 % (common practice, no source).
STRETCH_LIMIT = 0.02


@dataclass(frozen=True)
class PieceCoverage:
    """Share of a piece covered by its UV island(s): triangle area (pattern mm²) / piece area.

    ``stretch`` holds the piece's own stretch statistics.
    """

    piece: str
    triangles: int
    island_area_mm2: float
    piece_area_mm2: float
    stretch: "StretchStats | None" = None

    @property
    def coverage(self) -> float:
        return self.island_area_mm2 / self.piece_area_mm2 if self.piece_area_mm2 > 0 else float("nan")


@dataclass(frozen=True)
class StretchStats:
    """Principal stretches of the pattern → 3D map over a set of triangles.

    Attributes
    ----------
    sigma_min, sigma_max : float
        Smallest σ₂ and largest σ₁ over all triangles.
    median_min, median_max : float
        Area-weighted medians of σ₂ and σ₁.
    share_stretched : float
        Share of pattern area where σ₁ or σ₂ differs from 1 by more than ``limit``.
    limit : float
    """

    sigma_min: float
    sigma_max: float
    median_min: float
    median_max: float
    share_stretched: float
    limit: float = STRETCH_LIMIT


@dataclass(frozen=True)
class SeamClosure:
    """3D distance between matching points of a seam's two runs, mapped through the drape (mm)."""

    seam: str
    max_gap_mm: float
    mean_gap_mm: float
    samples: int


@dataclass(frozen=True)
class LandmarkSnap:
    """A body landmark (world mm) snapped to the garment: its piece, pattern position and distance."""

    landmark: str
    piece: str
    x: float
    y: float
    distance_mm: float
    max_snap_mm: float

    @property
    def too_far(self) -> bool:
        return self.distance_mm > self.max_snap_mm


@dataclass(frozen=True)
class DrapeReport:
    source: str
    vertices: int
    triangles: int
    pieces: tuple[PieceCoverage, ...]
    stretch: StretchStats
    seams: tuple[SeamClosure, ...]
    notes: tuple[str, ...] = ()
    landmarks: tuple[LandmarkSnap, ...] = ()

    def lines(self) -> list[str]:
        """The report as lines of text (mm, percent)."""
        s = self.stretch
        out = [f"drape {self.source}: {self.vertices} vertices, {self.triangles} triangles"]
        out += [f"  note: {n}" for n in self.notes]
        out.append("  coverage (island area / piece area):")
        for p in self.pieces:
            line = (
                f"    {p.piece:<16} {p.coverage:7.2%}  ({p.triangles} triangles, "
                f"{p.island_area_mm2:.0f} of {p.piece_area_mm2:.0f} mm²)"
            )
            if p.stretch is not None:
                line += f"; σ {p.stretch.sigma_min:.4f}..{p.stretch.sigma_max:.4f}"
            out.append(line)
        out.append(
            f"  stretch σ (pattern → 3D): min {s.sigma_min:.4f}, median {s.median_min:.4f}/"
            f"{s.median_max:.4f}, max {s.sigma_max:.4f}; "
            f"{s.share_stretched:.1%} of the area beyond ±{s.limit:.0%}"
        )
        if self.seams:
            out.append("  seam closure in 3D (gap between the two runs):")
            for c in self.seams:
                out.append(
                    f"    {c.seam:<24} max {c.max_gap_mm:.3f} mm, mean {c.mean_gap_mm:.3f} mm"
                )
        if self.landmarks:
            out.append("  body landmarks snapped to the garment:")
            for b in self.landmarks:
                state = (
                    f"TOO FAR (largest snap distance {b.max_snap_mm:g} mm)" if b.too_far else "ok"
                )
                out.append(
                    f"    {b.landmark:<16} {b.piece} ({b.x:.1f}, {b.y:.1f}) mm, "
                    f"{distance_text(b.distance_mm, b.max_snap_mm)} mm off the surface: {state}"
                )
        return out

    def text(self) -> str:
        return "\n".join(self.lines())


def _weighted_median(values: np.ndarray, weights: np.ndarray) -> float:
    order = np.argsort(values, kind="stable")
    cum = np.cumsum(weights[order])
    return float(values[order][np.searchsorted(cum, 0.5 * cum[-1])])


def stretch_stats(drape: Drape, faces: np.ndarray | None = None, limit: float = STRETCH_LIMIT) -> StretchStats:
    """Stretch statistics over ``faces`` (default: all triangles)."""
    sel = np.arange(len(drape.faces)) if faces is None else np.asarray(faces)
    sv = drape.singular_values[sel]
    w = drape.pattern_area[sel]
    bad = np.abs(sv - 1.0).max(axis=1) > limit
    return StretchStats(
        sigma_min=float(sv[:, 1].min()),
        sigma_max=float(sv[:, 0].max()),
        median_min=_weighted_median(sv[:, 1], w),
        median_max=_weighted_median(sv[:, 0], w),
        share_stretched=float(w[bad].sum() / w.sum()),
        limit=limit,
    )


def seam_closure(drape: Drape, garment: Garment, samples: int = 33, snap_mm: float = 5.0) -> tuple[SeamClosure, ...]:
    """For every seam: map ``samples`` matching points of both runs to 3D and measure the gaps."""
    out = []
    t = np.linspace(0.0, 1.0, samples)
    for seam in garment.seams:
        pa = garment.run_polyline(seam.a)
        a_pts = point_at_length(pa, t * cumulative_length(pa)[-1])
        b_pts = garment.seam_partner(seam, "a", t)
        try:
            qa = drape.pattern_to_3d(seam.a.piece, a_pts, snap_mm)
            qb = drape.pattern_to_3d(seam.b.piece, b_pts, snap_mm)
        except QueryError as exc:
            raise QueryError(f"seam '{seam.name}': {exc}") from None
        gap = np.linalg.norm(qa - qb, axis=1)
        out.append(SeamClosure(seam.name, float(gap.max()), float(gap.mean()), samples))
    return tuple(out)


def landmark_snaps(garment: Garment, drape: Drape, max_snap_mm: float = DEFAULT_MAX_SNAP_MM) -> tuple[LandmarkSnap, ...]:
    """Every body landmark (given by ``xyz``) snapped to its closest garment point."""
    body = [lm for lm in garment.landmarks if lm.xyz is not None and not lm.on_pattern]
    if not body:
        return ()
    hits = surface_to_pattern(drape, np.array([lm.xyz for lm in body], dtype=float))
    return tuple(
        LandmarkSnap(lm.name, hits.piece[i], float(hits.pattern[i, 0]), float(hits.pattern[i, 1]),
                     float(hits.distance[i]), max_snap_mm)
        for i, lm in enumerate(body)
    )


def drape_report(garment: Garment, drape: Drape) -> DrapeReport:
    """Coverage per piece, stretch statistics, seam closure and body-landmark snaps of a drape."""
    pieces = []
    for i, p in enumerate(garment.pieces):
        sel = np.flatnonzero(drape.face_piece == i)
        pieces.append(
            PieceCoverage(
                p.name,
                len(sel),
                float(drape.pattern_area[sel].sum()),
                p.area,
                stretch_stats(drape, sel) if len(sel) else None,
            )
        )
    return DrapeReport(
        source=drape.source,
        vertices=len(drape.positions),
        triangles=len(drape.faces),
        pieces=tuple(pieces),
        stretch=stretch_stats(drape),
        seams=seam_closure(drape, garment),
        notes=drape.notes,
        landmarks=landmark_snaps(garment, drape),
    )
