"""A refined seam sequence refined once more, from the windows of its bound path.

Refinement (:func:`garnav.plan.refine.refine`) is local: started from a sequence's portal route
it keeps that route's way round the keep-outs between the seams, and one sequence (the same free
interval at every crossing) can have several — above or below a button halfway along a chain of
strips — with different local optima. The bound path of a sequence in the window graph
(:mod:`garnav.plan.sequence_bound`) is its least bound over all crossing places, so legs planned
through the middles of its windows start refinement where the sequence's least cost may lie
(docs/planning.md §4c). This is a heuristic improvement: it does not make refinement globally
optimal.
"""

from __future__ import annotations

import numpy as np

from garnav.plan.points import PiecePoint
from garnav.plan.refine import plan_legs, refine
from garnav.plan.unfold import unfoldable

__all__ = ["refine_from_windows", "RESTART_ALLOWANCE"]

#: Legs through the bound path's windows are refined when they cost at most the best route's cost
#: plus this fraction of the portal spacing per crossing (1 mm at 20 mm portals). Measured, no
#: source: on a chain of ten strips such legs came within 0.3–0.6 mm per crossing of the route's
#: cost and refined to the reference's optimum; on the 20 demo_buttons queries they were 2–17 mm
#: per crossing dearer (one within 0.5 mm) and never refined below the route.
RESTART_ALLOWANCE = 0.05


def refine_from_windows(planner, start: PiecePoint, goal: PiecePoint, known: list, path: list[int], bound, upper: float):
    """Refine the sequence whose refined crossings are ``known`` [(seam, t, from side)] again, from
    the middles of the windows of its bound path ``path`` (window sides of ``bound``, a
    :class:`~garnav.plan.sequence_bound.SequenceBound`, in crossing order).

    Returns None when nothing is tried — every known crossing already lies in the window the path
    crosses there, or the path is not of the same length; (False, None) when it is tried and
    stopped before refinement — the straight lines between the window middles (a lower bound of
    the legs: a cost is at least a length) or the planned legs cost more than ``upper`` (the best
    route's cost, mm) plus :data:`RESTART_ALLOWANCE` × the portal spacing per crossing; and
    (True, (legs, crossings, cost)) after a refinement.
    """
    if len(known) != len(path):
        return None
    if all(unfoldable(planner, c[0]) for c in known):
        return None  # placed exactly already (garnav.plan.unfold)
    spans = [bound.span(i) for i in path]
    if all(t0 <= t <= t1 for (_, t, _), (t0, t1) in zip(known, spans, strict=True)):
        return None  # every crossing already inside the bound path's window
    ng = planner.nav
    crossings = [(int(bound.seam[i]), 0.5 * (t0 + t1), int(bound.side[i])) for i, (t0, t1) in zip(path, spans, strict=True)]
    reach = upper + RESTART_ALLOWANCE * ng.spacing_mm * len(path)
    ends, cost = [start.xy], 0.0
    for s, t, side in crossings:
        sides = ng.seam_sides(s, np.array([t]))
        ends += [sides.side(side)[0][0], sides.side(1 - side)[0][0]]
        cost += float(ng.seams[s].crossing_cost_mm)
    ends.append(goal.xy)
    cost += sum(float(np.linalg.norm(b - a)) for a, b in zip(ends[::2], ends[1::2], strict=True))
    if cost > reach:
        return False, None
    legs, cost = plan_legs(planner, start, goal, crossings)
    if not cost <= reach:
        return False, None
    return True, refine(planner, legs, crossings)
