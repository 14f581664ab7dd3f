"""Hand-made routes for the export and preview tests.

Routes are the planner's Route objects assembled by hand: crossing points are computed here from
the garments' seam layout (no garnav seam code is used), so they are an independent reference for
the seam transfer. Only legs, crossings and length matter to the export; turns and headings are
filled in plainly.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
import shapely

from garments import rect_piece
from garnav import Garment, KeepOut, Landmark, Placement, Rectangle, Robot, Seam, SeamRun
from garnav.model import Circle
from garnav.plan.route import Crossing, Leg, Route, route_headings_deg


def turned_panels() -> Garment:
    """Piece 'a' (300 × 400) whose right edge is sewn to piece 'b' (300 × 250)'s bottom edge.

    Run a = a.right, (300, 0) → (300, 400); run b = b.bottom reversed, (300, 0) → (0, 0).
    Fraction f meets a(300, 400 f) and b(300 − 300 f, 0): the runs differ in length (ease), and
    the piece frames differ by +90° there (a's tangent +y, b's tangent −x).
    """
    a = rect_piece("a", 300.0, 400.0, Placement(10.0, 10.0))
    b = rect_piece("b", 300.0, 250.0, Placement(330.0, 10.0))
    seam = Seam("join", SeamRun("a", "right"), SeamRun("b", "bottom", reverse=True), crossing_cost_mm=5.0)
    return Garment(
        "turned_panels",
        (a, b),
        seams=(seam,),
        keepouts=(
            KeepOut("patch", "a", "pocket", Rectangle(120.0, 250.0, 60.0, 40.0, 15.0), clearance_mm=3.0),
            KeepOut("stud", "b", "button", Circle(200.0, 150.0, 8.0), clearance_mm=2.0, hard=False, cost_factor=3.0),
        ),
        landmarks=(Landmark("mark_a", "a", 50.0, 50.0), Landmark("mark_b", "b", 250.0, 200.0)),
        robot=Robot(name="rover", radius_mm=10.0, wheel_base_mm=16.0, speed_mm_s=20.0, edge_margin_mm=2.0),
        sheet_size_mm=(650.0, 420.0),
    )


def partner_two_panels(y: float) -> tuple[np.ndarray, np.ndarray]:
    """Crossing left → right in tests.garments.two_panels at height y: (300, y) ↔ (0, y)."""
    return np.array([300.0, y]), np.array([0.0, y])


def partner_turned(f: float) -> tuple[np.ndarray, np.ndarray]:
    """Crossing a → b in :func:`turned_panels` at seam fraction f (see its docstring)."""
    return np.array([300.0, 400.0 * f]), np.array([300.0 - 300.0 * f, 0.0])


def build_route(legs: list[tuple[str, np.ndarray]], crossings: list[tuple[str, float, float]]) -> "Route":
    """A Route from legs [(piece, points)] and crossings [(seam, fraction, angle_deg)].

    Length and turns are computed plainly here, headings by the route module; crossing points are
    the legs' ends.
    """
    leg_objs = tuple(Leg(piece, np.asarray(pts, dtype=float)) for piece, pts in legs)
    cross_objs = tuple(
        Crossing(seam, leg_objs[i].piece, leg_objs[i + 1].piece, leg_objs[i].points[-1].copy(),
                 leg_objs[i + 1].points[0].copy(), frac, angle)
        for i, (seam, frac, angle) in enumerate(crossings)
    )
    length = float(sum(np.sum(np.hypot(*np.diff(l.points, axis=0).T)) for l in leg_objs))
    headings = route_headings_deg(leg_objs)  # the one heading convention (garnav.plan.route)
    turns = np.zeros(max(len(headings) - 2, 0))
    kwargs = dict(legs=leg_objs, crossings=cross_objs, length_mm=length, cost=length,
                  turns_deg=turns, headings_deg=headings)
    return Route(**kwargs)


def two_panel_route(rng: np.random.Generator, n_before: int = 2, n_after: int = 2, back: bool = False):
    """A random route in two_panels: points in 'left', cross at a random height, points in 'right'.

    With ``back`` it crosses back into 'left' again.
    """
    def pts(n, xlo, xhi):
        return np.column_stack([rng.uniform(xlo, xhi, n), rng.uniform(20.0, 380.0, n)])

    y1 = rng.uniform(30.0, 370.0)
    pf, pt = partner_two_panels(y1)
    legs = [("left", np.vstack([pts(n_before, 20.0, 280.0), pf[None]]))]
    second = np.vstack([pt[None], pts(n_after, 20.0, 280.0)])
    crossings = [("middle", y1 / 400.0, 0.0)]
    if back:
        y2 = rng.uniform(30.0, 370.0)
        pf2, pt2 = partner_two_panels(y2)
        # the right piece's left edge (x=0) back to the left piece's right edge (x=300)
        legs.append(("right", np.vstack([second, pt2[None]])))
        legs.append(("left", np.vstack([pf2[None], pts(n_after, 20.0, 280.0)])))
        crossings.append(("middle", y2 / 400.0, 0.0))
    else:
        legs.append(("right", second))
    return build_route(legs, crossings)


def turned_route(rng: np.random.Generator, n_before: int = 2, n_after: int = 2):
    """A random route in :func:`turned_panels` crossing a → b once."""
    f = rng.uniform(0.1, 0.9)
    pf, pt = partner_turned(f)
    a_pts = np.column_stack([rng.uniform(20.0, 280.0, n_before), rng.uniform(20.0, 380.0, n_before)])
    b_pts = np.column_stack([rng.uniform(20.0, 280.0, n_after), rng.uniform(20.0, 230.0, n_after)])
    return build_route([("a", np.vstack([a_pts, pf[None]])), ("b", np.vstack([pt[None], b_pts]))],
                       [("join", f, 0.0)])


def angle_to_run(heading_rad: float, tangent: tuple[float, float]) -> float:
    """Angle (deg, 0..90) between a heading and a seam tangent."""
    c = abs(math.cos(heading_rad) * tangent[0] + math.sin(heading_rad) * tangent[1])
    return math.degrees(math.acos(min(1.0, c)))


# --------------------------------------------------------------------------- a lifted stand-in

CYL_RADIUS = 600.0 / (2.0 * math.pi)  # two_panels' 600 mm of width wrap once around


@dataclass(frozen=True)
class CylinderLift:
    """two_panels wrapped round a vertical cylinder: the route lifted analytically.

    Piece 'left' covers angles x / R, piece 'right' (x + 300) / R; pattern y is world z. The
    mapping is an exact isometry, so the 3D path is known in closed form: position
    (R cos θ, R sin θ, y), outward normal (cos θ, sin θ, 0), and a pattern direction (dx, dy)
    maps to dx (−sin θ, cos θ, 0) + dy (0, 0, 1).
    """

    points: np.ndarray
    normals: np.ndarray
    pieces: tuple
    pattern: np.ndarray
    waypoint_index: np.ndarray
    length_3d_mm: float
    climb_up_mm: float
    climb_down_mm: float


def cylinder_theta(piece: str, x: float) -> float:
    return (x + (300.0 if piece == "right" else 0.0)) / CYL_RADIUS


def cylinder_point(piece: str, x: float, y: float) -> np.ndarray:
    th = cylinder_theta(piece, x)
    return np.array([CYL_RADIUS * math.cos(th), CYL_RADIUS * math.sin(th), y])


def cylinder_normal(piece: str, x: float) -> np.ndarray:
    th = cylinder_theta(piece, x)
    return np.array([math.cos(th), math.sin(th), 0.0])


def cylinder_direction(piece: str, x: float, heading_deg: float) -> np.ndarray:
    th = cylinder_theta(piece, x)
    h = math.radians(heading_deg)
    return math.cos(h) * np.array([-math.sin(th), math.cos(th), 0.0]) + math.sin(h) * np.array([0.0, 0.0, 1.0])


def cylinder_lift(route, step_mm: float = 5.0) -> CylinderLift:
    """Lift a two_panels route onto the cylinder, sampling every leg segment every ``step_mm``."""
    pts, nrm, pcs, pat, wpi = [], [], [], [], []
    for leg in route.legs:
        p = np.asarray(leg.points, dtype=float)
        for k in range(len(p)):
            wpi.append(len(pts))
            pts.append(cylinder_point(leg.piece, *p[k]))
            nrm.append(cylinder_normal(leg.piece, p[k][0]))
            pcs.append(leg.piece)
            pat.append(p[k])
            if k + 1 < len(p):
                n = max(1, int(math.ceil(np.hypot(*(p[k + 1] - p[k])) / step_mm)))
                for t in np.arange(1, n) / n:
                    q = p[k] + t * (p[k + 1] - p[k])
                    pts.append(cylinder_point(leg.piece, *q))
                    nrm.append(cylinder_normal(leg.piece, q[0]))
                    pcs.append(leg.piece)
                    pat.append(q)
    pts = np.array(pts)
    dz = np.diff(pts[:, 2])
    return CylinderLift(
        points=pts,
        normals=np.array(nrm),
        pieces=tuple(pcs),
        pattern=np.array(pat),
        waypoint_index=np.array(wpi),
        length_3d_mm=float(np.sum(np.linalg.norm(np.diff(pts, axis=0), axis=1))),
        climb_up_mm=float(dz[dz > 0].sum()),
        climb_down_mm=float(-dz[dz < 0].sum()),
    )


def replay_paths(route, replay):
    """Planned and replayed paths per piece as shapely MultiLineStrings {piece: (planned, replayed)}."""
    plan: dict[str, list] = {}
    run: dict[str, list] = {}
    for leg in route.legs:
        pts = np.asarray(leg.points, dtype=float)
        plan.setdefault(leg.piece, []).append(pts if len(pts) > 1 else np.vstack([pts, pts]))
    jumps = {((c.from_piece, *c.point_from), (c.to_piece, *c.point_to)) for c in replay.crossings}
    for a, b in zip(replay.poses[:-1], replay.poses[1:]):
        if a.piece == b.piece and ((a.piece, a.x_mm, a.y_mm), (b.piece, b.x_mm, b.y_mm)) not in jumps:
            run.setdefault(a.piece, []).append([(a.x_mm, a.y_mm), (b.x_mm, b.y_mm)])
    return {p: (shapely.MultiLineString(plan[p]), shapely.MultiLineString(run[p])) for p in plan if p in run}


def deviation(route, replay) -> tuple[float, float]:
    """(largest Hausdorff distance over the pieces, end-point error), mm. Reference: GEOS's
    discrete Hausdorff distance (shapely.hausdorff_distance) on segments densified to 1 %."""
    worst = max(shapely.hausdorff_distance(a, b, densify=0.01) for a, b in replay_paths(route, replay).values())
    goal = np.asarray(route.legs[-1].points, dtype=float)[-1]
    return float(worst), math.hypot(replay.end.x_mm - goal[0], replay.end.y_mm - goal[1])
