"""Errors that explain: a query point the robot cannot stand on, and why no route exists.

``check_free`` names the keep-out or open edge that covers a point and the nearest free point.
``explain_no_route`` finds what cuts the goal off: at piece level the seams that would join the
goal's piece and why none can be crossed; inside a piece the obstacles whose grown shapes touch
both the reachable part of the free space and the goal's part, and, for two of them that overlap,
their raw gap against the width the robot needs.
"""

from __future__ import annotations

import numpy as np
import shapely

from garnav.errors import QueryError
from garnav.plan.freespace import FreeSpace, Obstacle
from garnav.plan.points import PiecePoint

__all__ = ["check_free", "explain_no_route", "components"]


def check_free(free: FreeSpace, pp: PiecePoint, *, snap: bool = False, role: str = "point") -> PiecePoint:
    """Return ``pp`` if the robot centre may stand there; else snap it or raise QueryError."""
    fs = free[pp.piece]
    if fs.covers(pp.xy[None])[0]:
        return pp
    near = fs.nearest_free(pp.xy)
    if snap and near is not None:
        step = near - pp.xy
        unit = step / max(np.linalg.norm(step), 1e-300)
        for k in range(8):  # the boundary point may miss by rounding: nudge inwards, at most 0.01 mm
            q = near + unit * (1e-9 * 10**k if k else 0.0)
            if fs.covers(q[None])[0]:
                return PiecePoint(pp.piece, float(q[0]), float(q[1]), label=f"{pp.label or role} (snapped)")
    blockers = fs.blocking(pp.xy)
    where = f"{role} {pp.describe()}"
    if blockers:
        o = blockers[0]
        d = o.raw.distance(shapely.Point(*pp.xy))
        inside = o.raw.covers(shapely.Point(*pp.xy)) and o.raw.area > 0
        reason = (
            f"is inside {o.label}" if inside else f"is {d:.1f} mm from {o.label}, the robot needs {o.need_mm:.1f} mm"
        )
    else:
        reason = "has no room for the robot"
    hint = (
        f"nearest free point: {pp.piece}:{near[0]:.1f},{near[1]:.1f} (or use snap)"
        if near is not None
        else f"piece '{pp.piece}' has no room for the robot at all"
    )
    raise QueryError(f"{where} {reason}; {hint}")


def components(free: FreeSpace) -> dict[str, list[shapely.Polygon]]:
    """The connected parts of every piece's free space, in shapely order."""
    return {name: [g for g in shapely.get_parts(fs.region) if not g.is_empty] for name, fs in free.pieces.items()}


def _component_of(parts: list[shapely.Polygon], xy: np.ndarray) -> int:
    p = shapely.Point(*xy)
    for k, g in enumerate(parts):
        if g.covers(p):
            return k
    d = [g.distance(p) for g in parts]
    return int(np.argmin(d)) if d else -1


def explain_no_route(planner, start: PiecePoint, goals) -> str:
    """Why no goal can be reached from ``start``: one sentence for the user."""
    ng = planner.nav
    garment = planner.garment
    comps = components(planner.free)
    ids = {(p, k): i for i, (p, k) in enumerate((p, k) for p in ng.pieces for k in range(len(comps[p])))}
    parent = list(range(len(ids)))

    def find(i: int) -> int:
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    # join components through every valid portal pair
    for n in np.nonzero((ng.portal_seam >= 0) & (ng.portal_side == 0))[0]:
        for m in ng.graph.neighbors(int(n)):
            if ng.graph.is_crossing(int(n), m):
                pa, pb = ng.pieces[ng.node_piece[n]], ng.pieces[ng.node_piece[m]]
                ka, kb = _component_of(comps[pa], ng.xy[n]), _component_of(comps[pb], ng.xy[m])
                if ka >= 0 and kb >= 0:
                    parent[find(ids[(pa, ka)])] = find(ids[(pb, kb)])

    s_root = find(ids[(start.piece, _component_of(comps[start.piece], start.xy))])
    goal = goals[0]
    g_comp = _component_of(comps[goal.piece], goal.xy)
    what = goal.label or "the goal"
    if any(find(ids[(g.piece, _component_of(comps[g.piece], g.xy))]) == s_root for g in goals):
        limits = sorted({f"'{s.name}' ({s.min_crossing_angle_deg:g}°)" for s in garment.seams if s.min_crossing_angle_deg > 0})
        return (
            f"no route from {start.describe()} to {goal.describe()}: the free space joins them but no "
            f"path keeps the smallest crossing angles of seams {', '.join(limits) or '(none)'}"
        )
    reachable_pieces = {p for (p, k), i in ids.items() if find(i) == s_root}
    if goal.piece not in reachable_pieces:
        return f"piece '{goal.piece}' is unreachable: " + _seam_reasons(planner, goal.piece, reachable_pieces)
    # the goal's piece is reachable, but not the goal's part of it
    reach = [k for k in range(len(comps[goal.piece])) if find(ids[(goal.piece, k)]) == s_root]
    pgoal = shapely.Point(*goal.xy)
    r = min(reach, key=lambda k: comps[goal.piece][k].distance(pgoal))
    return f"{what} cannot be reached on piece '{goal.piece}': " + _wall_reason(
        planner, goal.piece, comps[goal.piece][r], comps[goal.piece][g_comp]
    )


def _seam_reasons(planner, piece: str, reachable_pieces: set[str]) -> str:
    garment = planner.garment
    ng = planner.nav
    seams = [s for s in sorted(garment.seams, key=lambda s: s.name) if piece in (s.a.piece, s.b.piece) and s.a.piece != s.b.piece]
    if not seams:
        return "no seam joins it to another piece"
    reasons = []
    for s in seams:
        if not s.crossable:
            reasons.append(f"seam '{s.name}' is not crossable")
        elif not ng.intervals.get(s.name):
            r = planner.robot
            reasons.append(f"seam '{s.name}' has no place where the robot (radius {r.radius_mm:g} mm) fits on both sides")
        else:
            other = s.b.piece if s.a.piece == piece else s.a.piece
            if other in reachable_pieces:
                reasons.append(f"seam '{s.name}' is crossable only from a part of piece '{other}' that the start cannot reach")
            else:
                reasons.append(f"seam '{s.name}' leads to piece '{other}', which cannot be reached from the start either")
    if len(reasons) == 1:
        return reasons[0] + " and no other seam joins it"
    return "; ".join(reasons)


def _wall_reason(planner, piece: str, reach: shapely.Polygon, goal_part: shapely.Polygon) -> str:
    fs = planner.free[piece]
    tol = 1e-6
    wall = [o for o in fs.obstacles if o.grown.distance(reach) < tol and o.grown.distance(goal_part) < tol]
    best: tuple[float, Obstacle, Obstacle, float] | None = None
    for i, a in enumerate(wall):
        for b in wall[i + 1 :]:
            if not a.grown.intersects(b.grown):
                continue
            gap = float(a.raw.distance(b.raw))
            need = a.need_mm + b.need_mm
            if best is None or gap - need > best[0] - best[3]:
                best = (gap, a, b, need)
    if best is not None:
        gap, a, b, need = best
        return f"the gap between {a.label} and {b.label} is {gap:.1f} mm, the robot needs {need:.1f} mm"
    if wall:
        names = ", ".join(o.label for o in wall)
        return f"it is walled off by {names}"
    return "its part of the free space touches no other part"

