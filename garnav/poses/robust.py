"""A route in every pose: the robust garment (every pose's body zones kept out of) and the
per-pose report of one pattern route.

The pattern route is the same in every pose — it is what the robot drives, counted by its
encoders and gyro on the fabric. What changes with the pose is the drape: where the route runs in
3D, which way is down, and where the body zones fall on the pattern.

**Robust planning** (``garnav route --robust``) plans one pattern route on the garment whose
keep-outs are the union of every pose's body-zone keep-outs (:func:`robust_garment`): each zone is
projected conservatively on each pose's drape (:func:`garnav.zones.zone_keepouts`), so the route
keeps the zone's distance in every pose. With a robot physics profile the route is then checked
in every pose (its posture's gravity on its drape, :func:`pose_report`); the command refuses a
route that is unsafe in any pose — the guarantee is "safe in every listed pose or refused", not
the cheapest route over all poses' mechanics at once.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np
import shapely

from garnav.drape.lift import LiftedRoute, lift_route
from garnav.mechanics.evaluate import RouteMechanics, margin_text, route_mechanics
from garnav.mechanics.gravity import gravity_vector
from garnav.model import Garment, KeepOut, Robot
from garnav.poses.load import PoseDrape
from garnav.zones.project import zone_keepouts

__all__ = ["robust_garment", "pose_zone_keepouts", "pose_report", "PoseReport", "ZoneNearness",
           "POSE_MARK", "fine_in_every_pose", "RobustResult"]

#: Separates a keep-out's zone name from the pose it was projected in: ``ZONE@PIECE~POSE``.
POSE_MARK = "~"

#: A route counts as entering a zone keep-out when its centre line comes closer than the robot
#: radius by more than this, mm (the planner's own boundary tolerance is far smaller).
ZONE_TOLERANCE_MM = 1e-3


def pose_zone_keepouts(garment: Garment, pose_drape: PoseDrape) -> tuple[KeepOut, ...]:
    """The garment's body zones as keep-outs on this pose's drape, named ``ZONE@PIECE~POSE``."""
    if not garment.body_zones:
        return ()
    return tuple(replace(k, name=f"{k.name}{POSE_MARK}{pose_drape.name}")
                 for k in zone_keepouts(garment, pose_drape.drape))


def robust_garment(garment: Garment, pose_drapes: tuple[PoseDrape, ...]) -> Garment:
    """``garment`` with the body-zone keep-outs of every pose added (their union).

    Poses that share one drape add its keep-outs once. Without body zones the garment is returned
    unchanged.
    """
    extra: list[KeepOut] = []
    seen: set[int] = set()
    for pd in pose_drapes:
        if id(pd.drape) in seen:
            continue
        seen.add(id(pd.drape))
        extra.extend(pose_zone_keepouts(garment, pd))
    return garment.with_keepouts(tuple(extra)) if extra else garment


@dataclass(frozen=True)
class ZoneNearness:
    """How close a route comes to one body zone in one pose.

    ``clearance_mm`` is the smallest distance between the robot's disc (radius ``robot.radius_mm``
    round the route's centre line) and the zone's keep-out on the pattern; negative when the disc
    enters the zone (the zone's distance is already part of the keep-out).
    """

    zone: str
    kind: str
    clearance_mm: float

    @property
    def entered(self) -> bool:
        return self.clearance_mm < -ZONE_TOLERANCE_MM


@dataclass(frozen=True)
class PoseReport:
    """One pattern route in one pose.

    Attributes
    ----------
    pose : str
    posture : str
    lifted : LiftedRoute
        The route on this pose's drape (M points).
    climb_up_mm, climb_down_mm : float
        Rise and fall against this pose's gravity (the posture's), mm.
    zones : tuple of ZoneNearness
        Every body zone that has fabric in this pose, nearest first.
    mechanics : RouteMechanics or None
        Margins, energy and time with the robot's physics profile in this posture.
    """

    pose: str
    posture: str
    lifted: LiftedRoute
    climb_up_mm: float
    climb_down_mm: float
    zones: tuple[ZoneNearness, ...]
    mechanics: RouteMechanics | None

    @property
    def length_3d_mm(self) -> float:
        return self.lifted.length_3d_mm

    @property
    def zones_entered(self) -> tuple[ZoneNearness, ...]:
        return tuple(z for z in self.zones if z.entered)

    @property
    def ok(self) -> bool:
        """No body zone entered and (with a physics profile) every margin kept."""
        return not self.zones_entered and (self.mechanics is None or self.mechanics.safe)

    def problems(self) -> list[str]:
        """Why the route is not fine in this pose (empty when it is)."""
        out = [f"enters body zone '{z.zone}' ({z.kind}) by {-z.clearance_mm:.1f} mm" for z in self.zones_entered]
        if self.mechanics is not None and not self.mechanics.safe:
            out.append(f"{len(self.mechanics.unsafe)} unsafe segment(s): {self.mechanics.unsafe[0][1]}")
        return out

    def line(self) -> str:
        """One summary line."""
        text = (f"pose {self.pose} ({self.posture}): 3D {self.length_3d_mm:.1f} mm, climb up "
                f"{self.climb_up_mm:.1f} / down {self.climb_down_mm:.1f} mm")
        if self.zones:
            z = self.zones[0]
            text += f", nearest zone '{z.zone}' {z.clearance_mm:+.1f} mm"
        if self.mechanics is not None:
            key, value = self.mechanics.worst()
            text += f", worst margin {key} {margin_text(value)}"
        return text + (": ok" if self.ok else ": NOT OK — " + "; ".join(self.problems()))

    def to_dict(self) -> dict:
        """The pose's entry of the route document's ``poses`` list (docs/route-format.md)."""
        return {
            "pose": self.pose,
            "posture": self.posture,
            "ok": self.ok,
            "length_3d_mm": round(self.length_3d_mm, 4),
            "climb_up_mm": round(self.climb_up_mm, 4),
            "climb_down_mm": round(self.climb_down_mm, 4),
            "zones": [{"zone": z.zone, "kind": z.kind, "clearance_mm": round(z.clearance_mm, 4),
                       "entered": z.entered} for z in self.zones],
            "safe": None if self.mechanics is None else bool(self.mechanics.safe),
            "problems": self.problems(),
        }


def _route_lines(route) -> dict[str, shapely.Geometry]:
    """Piece → the route's centre line on that piece (a multi-line when it visits it twice)."""
    parts: dict[str, list] = {}
    for leg in route.legs:
        pts = np.asarray(leg.points, dtype=float)
        geom = shapely.LineString(pts) if len(pts) > 1 and np.ptp(pts, axis=0).any() else shapely.Point(pts[0])
        parts.setdefault(leg.piece, []).append(geom)
    return {piece: shapely.union_all(geoms) for piece, geoms in parts.items()}


def _zone_nearness(garment: Garment, keepouts: tuple[KeepOut, ...], route, robot: Robot) -> tuple[ZoneNearness, ...]:
    lines = _route_lines(route)
    kinds = {z.name: z.kind for z in garment.body_zones}
    best: dict[str, float] = {}
    for k in keepouts:
        zone = k.name.split("@", 1)[0]
        line = lines.get(k.piece)
        if line is None:
            continue
        d = float(shapely.distance(line, k.shape.exact_geometry())) - robot.radius_mm
        best[zone] = min(best.get(zone, np.inf), d)
    return tuple(sorted((ZoneNearness(z, kinds.get(z, "custom"), d) for z, d in best.items()),
                        key=lambda n: (n.clearance_mm, n.zone)))


def pose_report(route, garment: Garment, pose_drape: PoseDrape, robot: Robot,
                snap_mm: float = 1.0) -> PoseReport:
    """Lift the pattern ``route`` onto one pose's drape and measure it there.

    Parameters
    ----------
    route : garnav.plan.Route
        Planned on ``garment`` (its own keep-outs; body zones are measured here per pose).
    garment : Garment
        The garment as read (its ``body_zones`` are projected on this pose's drape).
    pose_drape : PoseDrape
    robot : Robot
        Its radius for the zone clearances; its ``physics`` (if any) for the margins.
    snap_mm : float
        Lift tolerance (:func:`garnav.drape.lift_route`).
    """
    pose = pose_drape.pose
    lifted = lift_route(pose_drape.drape, garment, route, snap_mm=snap_mm)
    g = gravity_vector(pose.posture)
    rise = -(np.diff(lifted.points, axis=0) @ g)  # (M-1,) mm against gravity
    zones = _zone_nearness(garment, pose_zone_keepouts(garment, pose_drape), route, robot)
    mechanics = None
    if robot.physics is not None:
        mechanics = route_mechanics(lifted, pose_drape.drape, robot.physics, g, speed_mm_s=robot.speed_mm_s,
                                    side=robot.side, posture=pose.posture)
    return PoseReport(pose.name, pose.posture, lifted, float(np.clip(rise, 0, None).sum()),
                      float(np.clip(-rise, 0, None).sum()), zones, mechanics)


@dataclass(frozen=True)
class RobustResult:
    """What :func:`fine_in_every_pose` found: the route, its reports per pose, and (with physics)
    the :class:`garnav.mechanics.planning.PlannedRoute` on the first pose's drape, else None."""

    route: object
    reports: tuple[PoseReport, ...]
    planned: object = None


def fine_in_every_pose(planner, garment: Garment, pose_drapes: tuple[PoseDrape, ...], stops, first,
                       first_planned=None, cost: str = "length") -> RobustResult:
    """A route that is fine in every pose, starting from ``first`` (the route planned on the first
    pose's drape, by ``planner`` built on :func:`robust_garment`).

    When ``first`` is not fine in some pose and the robot has a physics profile, each pose's
    drivable route (:class:`garnav.mechanics.planning.PhysicsPlanner` on that pose's drape and
    posture, the same planner and so the same union of zones) is tried in turn; the first that is
    fine in every pose is taken.

    Raises
    ------
    NoRouteError
        No route found that is fine in every pose; the message names each pose and why.
    """
    from garnav.errors import NoRouteError

    robot = planner.robot

    def measure(r):
        return tuple(pose_report(r, garment, pd, robot) for pd in pose_drapes)

    reports = measure(first)
    if all(r.ok for r in reports):
        return RobustResult(first, reports, first_planned)
    if robot.physics is not None:  # the zones are already kept out of: only mechanics can fail here
        from garnav.mechanics.planning import PhysicsPlanner

        base = PhysicsPlanner(planner, pose_drapes[0].drape, posture=pose_drapes[0].pose.posture, cost=cost)
        for pd in pose_drapes:
            other = PhysicsPlanner(planner, pd.drape, posture=pd.pose.posture, cost=cost)
            try:
                found = other.route(stops[0], stops[-1], via=stops[1:-1])
            except NoRouteError:
                continue
            again = measure(found.route)
            if all(r.ok for r in again):
                from garnav.mechanics.planning import PlannedRoute

                lifted, mech = base.check(found.route)
                return RobustResult(found.route, again, PlannedRoute(found.route, lifted, mech, found.method))
    bad = "; ".join(f"pose {r.pose}: {', '.join(r.problems())}" for r in reports if not r.ok)
    raise NoRouteError(f"no route found that is fine in every pose ({bad}); docs/poses.md")
