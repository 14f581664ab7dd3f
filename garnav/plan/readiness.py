"""Is a garment ready to plan on for its own robot? What ``garnav check`` reports beyond the spec.

The spec reader checks that a spec is well formed (:mod:`garnav.spec`). A well-formed spec can still
be one that ``garnav route`` refuses later for the spec's own robot; this module finds those cases
up front, as :class:`Finding` s with a level (``"error"``: route refuses it; ``"warning"``: route
runs but the result is probably not what was meant) and a stable code (documented in
docs/commands.md, "Checking a garment"):

``landmark_blocked`` (error)
    A pattern landmark the robot's centre cannot stand on (inside a grown keep-out, too close to an
    open edge, or outside its piece): a route to it is refused unless ``--snap`` moves it.
``piece_no_free_space`` (warning)
    The robot (radius + edge margin + clearances) is wider than the piece: no route enters it.
``seam_ease_large`` (warning) / ``seam_runs_mismatched`` (error)
    A seam's two runs differ in length by more than :data:`EASE_WARN` (10 %) / :data:`EASE_ERROR`
    (one run more than twice the other, so the runs almost certainly do not belong together).
    Seam ease of a few percent is normal (sleeve caps); the 10 % line is common practice, no source.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Literal

import numpy as np

from garnav.model import Garment, Robot
from garnav.plan.freespace import FreeSpace, build_free_space

__all__ = ["Finding", "route_readiness", "EASE_WARN", "EASE_ERROR", "FindingLevel"]

FindingLevel = Literal["error", "warning"]

#: Relative length difference of a seam's runs above which check warns (10 %; common practice, no source).
EASE_WARN = 0.10
#: Length ratio (longer / shorter) above which a seam's runs are taken as mismatched (an error).
EASE_ERROR = 2.0


@dataclass(frozen=True)
class Finding:
    """One thing ``garnav check`` reports beyond the spec's own problems.

    Attributes
    ----------
    level : {"error", "warning"}
    code : str
        Stable identifier (module docstring).
    item : str
        What it is about, e.g. ``"landmark 'wrist_left'"``.
    reason : str
        Plain words, with the measure that triggered it.
    where : tuple of float, optional
        A place in the item's piece frame (mm).
    """

    level: FindingLevel
    code: str
    item: str
    reason: str
    where: tuple[float, float] | None = None

    def __str__(self) -> str:
        text = f"{self.level}: {self.item}: {self.reason}"
        if self.where is not None:
            text += f" at ({self.where[0]:.1f}, {self.where[1]:.1f}) mm"
        return f"{text} [{self.code}]"

    def as_dict(self) -> dict:
        return {"level": self.level, "code": self.code, "item": self.item, "reason": self.reason,
                "where_mm": None if self.where is None else [float(v) for v in self.where]}


def route_readiness(garment: Garment, robot: Robot | None = None, free: FreeSpace | None = None) -> tuple[Finding, ...]:
    """Everything ``garnav route`` would refuse (errors) or do oddly (warnings) for ``robot``.

    Parameters
    ----------
    garment : Garment
    robot : Robot, optional
        Defaults to the garment's robot (or a default robot).
    free : FreeSpace, optional
        The robot's free space when already built (else built here).

    Returns
    -------
    tuple of Finding
        Errors first, then warnings, each in spec order.
    """
    robot = robot or garment.robot or Robot()
    free = free or build_free_space(garment, robot)
    found: list[Finding] = []
    for piece in garment.pieces:
        if free[piece.name].region.is_empty:
            found.append(Finding("warning", "piece_no_free_space", f"piece '{piece.name}'",
                                 f"the robot (radius {robot.radius_mm:g} mm, edge margin {robot.edge_margin_mm:g} mm) "
                                 "does not fit anywhere on this piece; no route can enter it"))
    for lm in garment.landmarks:
        if not lm.on_pattern or lm.piece not in free.pieces:
            continue
        xy = np.array([float(lm.x), float(lm.y)])  # type: ignore[arg-type]
        pfs = free[lm.piece]  # type: ignore[index]
        if bool(pfs.covers(xy[None])[0]):
            continue
        blockers = [o.label for o in pfs.blocking(xy)]
        why = ("too close to " + ", ".join(blockers)) if blockers else \
            "not where the robot's centre can stand (outside the piece or its free space)"
        found.append(Finding("error", "landmark_blocked", f"landmark '{lm.name}'",
                             f"{why} for robot '{robot.name}' (radius {robot.radius_mm:g} mm); route refuses it "
                             "unless --snap", (float(xy[0]), float(xy[1]))))
    for seam in garment.seams:
        la, lb = (garment.run_length(seam.a), garment.run_length(seam.b))
        short, long_ = min(la, lb), max(la, lb)
        if short <= 0:
            continue
        ratio = long_ / short
        if ratio > EASE_ERROR:
            found.append(Finding("error", "seam_runs_mismatched", f"seam '{seam.name}'",
                                 f"run a is {la:.1f} mm and run b {lb:.1f} mm long (ratio {ratio:.2f} > {EASE_ERROR:g}): "
                                 "the runs do not look like two sides of one seam"))
        elif ratio - 1.0 > EASE_WARN:
            found.append(Finding("warning", "seam_ease_large", f"seam '{seam.name}'",
                                 f"runs differ by {100 * (ratio - 1):.1f} % ({la:.1f} vs {lb:.1f} mm; more than "
                                 f"{100 * EASE_WARN:g} %); crossings map by arc length and may land far off"))
    return tuple(sorted(found, key=lambda f: f.level != "error"))
