"""The sweep's route document: the ``garnav-route`` document plus its ``sweep`` figures (pure).

The route part is exactly :func:`garnav.export.waypoints.route_document` (docs/route-format.md), so
every reader of route files reads a sweep; the ``sweep`` key adds the region and the coverage
figures of :meth:`garnav.sweep.Sweep.figures`.

Energy: when the robot profile carries a physics model and the route is lifted onto a drape,
:func:`garnav.sweep.energy.sweep_energy_J` computes it and the caller passes it as ``energy_J``;
otherwise ``energy_J`` is null.
"""

from __future__ import annotations

from typing import Sequence

from garnav.export.waypoints import route_document
from garnav.model import Garment, Robot

__all__ = ["sweep_document", "figures_lines"]


def sweep_document(
    sweep,
    garment: Garment,
    robot: Robot | None = None,
    lifted=None,
    region_text: Sequence[str] = (),
    energy_J: float | None = None,
    battery_j: float | None = None,
    command_tolerance_mm: float | None = None,
) -> dict:
    """Route document of a sweep with its ``sweep`` figures (JSON-ready dict).

    Parameters
    ----------
    sweep : garnav.sweep.Sweep
    garment : Garment
    robot : Robot, optional
    lifted : LiftedRoute, optional
        The sweep's route lifted onto the drape (adds the 3D parts).
    region_text : sequence of str
        The region as given (e.g. ``["pieces:back"]``), recorded in the document.
    energy_J : float, optional
        Energy of the route from a physics profile, J (None: not known).
    battery_j : float, optional
        The battery's capacity, J, for the share of it the sweep uses.
    command_tolerance_mm : float, optional
        Merge tolerance of the commands, mm (default: that of ``route_document``).
    """
    extra = {} if command_tolerance_mm is None else {"command_tolerance_mm": command_tolerance_mm}
    doc = route_document(sweep.route, garment, robot, lifted, **extra)
    figures = sweep.figures(doc["summary"], energy_J=energy_J, battery_j=battery_j)
    doc["sweep"] = {"region": [str(t) for t in region_text], **figures}
    return doc


def figures_lines(figures: dict) -> list[str]:
    """A short table of the coverage figures, for the command line."""
    ratio = figures["length_ratio"]
    rows = [
        ("region", ", ".join(figures.get("region", [])) or "-"),
        ("pieces", ", ".join(figures["pieces"])),
        ("swath", f"{figures['swath_mm']:g} mm"),
        ("covered", f"{100 * figures['covered_fraction']:.2f} % of the reachable region "
                    f"({figures['reachable_area_mm2'] / 100:.0f} of {figures['region_area_mm2'] / 100:.0f} cm² reachable)"),
        ("cells / lanes / laps / spurs",
         f"{figures['cells']} / {figures['lanes']} / {figures['headland_laps']} / {figures['corner_spurs']}"),
        ("length", f"{figures['length_mm']:.0f} mm ({ratio:.2f} × area / swath)" if ratio else f"{figures['length_mm']:.0f} mm"),
        ("turns", f"{figures['turn_count']}, {figures['sharp_turn_count']} of them over 45° (total {figures['turn_total_deg']:.0f}°)"),
        ("time", f"{figures['time_s']:.0f} s (turning in place included)"),
        ("energy", "not known (needs a [robot.physics] profile and a drape)" if figures["energy_J"] is None
         else f"{figures['energy_J']:.1f} J" + (f" ({100 * figures['battery_used_fraction']:.0f} % of the battery)"
                                                  if figures.get("battery_used_fraction") is not None else "")),
    ]
    width = max(len(k) for k, _ in rows)
    return [f"{k:<{width}}  {v}" for k, v in rows]
