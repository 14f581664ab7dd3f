"""The ``garnav-drift`` report of one route: end-point spread (linearised and Monte Carlo), the
largest cross-track spread and the contact probabilities (pure: a JSON-ready dict and text lines).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from garnav.export.commands import CommandList
from garnav.model import Garment, Robot
from garnav.uncertainty.model import OdometryModel, odometry_to_dict
from garnav.uncertainty.montecarlo import OPEN_EDGE, RiskMap, monte_carlo
from garnav.uncertainty.plan_ops import compile_commands
from garnav.uncertainty.propagate import ellipse_2sigma, propagate_covariance

__all__ = ["drift_report", "drift_lines", "FORMAT_NAME", "FORMAT_VERSION", "frobenius_gap"]

FORMAT_NAME = "garnav-drift"
FORMAT_VERSION = 1


def _deg_cov(P: np.ndarray) -> list[list[float]]:
    """(3, 3) pose covariance with heading in degrees (mm², mm·deg, deg²)."""
    S = np.diag([1.0, 1.0, math.degrees(1.0)])
    return [[float(v) for v in row] for row in S @ P @ S]


def frobenius_gap(a: np.ndarray, b: np.ndarray) -> float:
    """‖a − b‖_F / ‖b‖_F."""
    return float(np.linalg.norm(a - b) / np.linalg.norm(b))


def drift_report(garment: Garment, robot: Robot, commands: CommandList, model: OdometryModel, *,
                 runs: int = 10_000, seed: int = 0, relocalise: bool | None = None) -> dict[str, Any]:
    """The drift document of ``commands`` (see docs/uncertainty.md for the keys)."""
    plan = compile_commands(garment, commands, robot)
    prop = propagate_covariance(plan, model, relocalise)
    mc = monte_carlo(plan, model, RiskMap(garment, robot), runs=runs, seed=seed, relocalise=relocalise)
    lin, sam = prop.end, mc.end_covariance
    contact = []
    for name in sorted(mc.contact, key=lambda n: (n == OPEN_EDGE, n)):
        lo, hi = mc.interval(name)
        contact.append({"name": name, "hard": bool(mc.hard[name]), "probability": mc.probability(name),
                        "ci95": [lo, hi]})
    lo, hi = mc.interval()
    piece, x, y, h = plan.end
    return {
        "format": FORMAT_NAME,
        "version": FORMAT_VERSION,
        "units": {"length": "mm", "angle": "deg", "covariance": "mm², mm·deg, deg² (x, y, heading)"},
        "garment": garment.name,
        "robot": robot.name,
        "runs": int(runs),
        "seed": int(seed),
        "relocalise": bool(model.seam_relocalise if relocalise is None else relocalise),
        "odometry": odometry_to_dict(model),
        "distance_mm": plan.distance_mm,
        "duration_s": plan.duration_s,
        "end": {
            "piece": piece, "x": x, "y": y, "heading_deg": math.degrees(h),
            "covariance_linear": _deg_cov(lin),
            "covariance_monte_carlo": _deg_cov(sam),
            "mean_offset_monte_carlo_mm": [float(mc.end[:, 0].mean() - x), float(mc.end[:, 1].mean() - y)],
            "ellipse_2sigma_linear": ellipse_2sigma(lin[:2, :2]),
            "ellipse_2sigma_monte_carlo": ellipse_2sigma(sam[:2, :2]),
            "position_frobenius_gap": frobenius_gap(lin[:2, :2], sam[:2, :2]),
        },
        "cross_track_2sigma_mm": {
            "linear": 2.0 * float(prop.cross_track_sigma_mm.max()),
            "monte_carlo": 2.0 * mc.cross_track_sigma_mm,
        },
        "contact": contact,
        "overall": {"probability": mc.probability(), "ci95": [lo, hi]},
    }


def drift_lines(doc: dict[str, Any]) -> list[str]:
    """A short text summary of a drift document."""
    end = doc["end"]
    el, em = end["ellipse_2sigma_linear"], end["ellipse_2sigma_monte_carlo"]
    out = [
        f"route       {doc['distance_mm']:.1f} mm, {doc['duration_s']:.1f} s, end {end['piece']}:"
        f"{end['x']:.1f},{end['y']:.1f}",
        f"end 2σ      linear {el['semi_major_mm']:.2f} x {el['semi_minor_mm']:.2f} mm at {el['angle_deg']:.0f}°, "
        f"Monte Carlo {em['semi_major_mm']:.2f} x {em['semi_minor_mm']:.2f} mm at {em['angle_deg']:.0f}° "
        f"(gap {100 * end['position_frobenius_gap']:.1f} %)",
        f"cross-track largest 2σ {doc['cross_track_2sigma_mm']['monte_carlo']:.2f} mm "
        f"(linear {doc['cross_track_2sigma_mm']['linear']:.2f} mm)",
        f"contact     ({doc['runs']} runs, seed {doc['seed']}"
        f"{', seam re-localisation' if doc['relocalise'] else ''})",
    ]
    for c in doc["contact"]:
        kind = "" if c["hard"] else " (soft)"
        out.append(f"  {c['name'] + kind:<24} {c['probability']:.4f}  [{c['ci95'][0]:.4f}, {c['ci95'][1]:.4f}]")
    o = doc["overall"]
    out.append(f"  {'overall':<24} {o['probability']:.4f}  [{o['ci95'][0]:.4f}, {o['ci95'][1]:.4f}]")
    return out
