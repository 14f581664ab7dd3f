"""Planning in the flat pattern: free space, visibility graph, seam portals, A*, routes.

Public API: :class:`Planner` (built once per garment and robot, answers many queries),
:func:`plan_route` (one call), :class:`Route` / :class:`Leg` / :class:`Crossing`,
:func:`build_free_space`, :class:`PiecePoint`.
"""

from garnav.plan.freespace import FreeSpace, build_free_space, grow, grow_factor, join_grow_factor
from garnav.plan.planner import PLANNER_VERSION, Planner, plan_route
from garnav.plan.points import PiecePoint, parse_point, resolve_point
from garnav.plan.route import Crossing, Leg, Route

__all__ = [
    "Crossing",
    "FreeSpace",
    "Leg",
    "PLANNER_VERSION",
    "PiecePoint",
    "Planner",
    "Route",
    "build_free_space",
    "grow",
    "grow_factor",
    "join_grow_factor",
    "parse_point",
    "plan_route",
    "resolve_point",
]
