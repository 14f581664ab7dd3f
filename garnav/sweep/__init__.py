"""Sweeps: routes whose sensor footprint covers a region of the garment (scan, map, treat).

Public API: :func:`plan_sweep` → :class:`Sweep`; regions (:mod:`garnav.sweep.region`):
:class:`PolygonRegion`, :class:`PiecesRegion`, :class:`NearPointRegion`, :class:`ZoneRegion`,
:class:`UnionRegion`, :func:`parse_region`; the sweep document (:func:`sweep_document`) and its energy (:func:`sweep_energy_J`).
See docs/sweeps.md.
"""

from garnav.sweep.coverage import coverage_face_mask, covered_area, footprint
from garnav.sweep.document import figures_lines, sweep_document
from garnav.sweep.energy import sweep_energy_J
from garnav.sweep.plan import DEFAULT_COVERAGE_TARGET, Sweep, plan_sweep
from garnav.sweep.split import SweepSplit, split_sweep
from garnav.sweep.region import (
    NearPointRegion,
    PiecesRegion,
    PolygonRegion,
    Region,
    UnionRegion,
    ZoneRegion,
    parse_region,
    resolve_region,
)

__all__ = [
    "DEFAULT_COVERAGE_TARGET",
    "NearPointRegion",
    "PiecesRegion",
    "PolygonRegion",
    "Region",
    "Sweep",
    "SweepSplit",
    "UnionRegion",
    "ZoneRegion",
    "coverage_face_mask",
    "covered_area",
    "figures_lines",
    "sweep_document",
    "sweep_energy_J",
    "footprint",
    "parse_region",
    "plan_sweep",
    "resolve_region",
    "split_sweep",
]
