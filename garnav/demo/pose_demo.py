"""The demo's poses in action: one route that is fine standing but not with the arm raised, and
the robust route that is fine in both (docs/poses.md, docs/demo.md).

The route runs from the right shoulder tip (``acromion_right``) down the right sleeve to the wrist.
Standing, the A-pose sleeve is a steady descent. With the right arm raised (:mod:`garnav.demo.raise_arm`)
the same pattern line climbs the bent band of the sleeve too steeply for the demo robot's drive.
The robust route keeps every pose's body zones and is drivable in both poses.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from garnav.demo.poses import ARM_RAISED_BODY_NAME, ARM_RAISED_DRAPE_NAME

__all__ = ["POSE_ROUTE", "PoseDemo", "run_pose_demo", "pose_summary_lines"]

#: (start, goal, what it shows).
POSE_ROUTE = ("acromion_right", "wrist_right",
              "shoulder to wrist: fine standing, too steep for the drive with the right arm raised")


@dataclass(frozen=True, eq=False)
class PoseDemo:
    """The pose part of the demo.

    Attributes
    ----------
    start, goal, about : str
    route : garnav.plan.Route
        Planned on the standing pose (its body zones, its drive).
    reports : tuple of garnav.poses.robust.PoseReport
        That route in each pose.
    robust : garnav.poses.robust.RobustResult
        The route that is fine in every pose, with its reports.
    files : dict
        Name → Path of what was written.
    """

    start: str
    goal: str
    about: str
    route: object
    reports: tuple
    robust: object
    files: dict


def run_pose_demo(scene, out: Path, tolerance: float | None = None) -> PoseDemo:
    """Plan :data:`POSE_ROUTE` on the standing pose, report it in every pose, find the robust route,
    and write both route documents (with their ``poses`` lists), the robust route's commands and the
    raised pose's meshes into ``out``.

    ``scene`` is :func:`garnav.demo.run.demo_scene`'s (garment, standing drape and meshes).
    """
    from garnav.atomic import write_text_atomic
    from garnav.demo.mesh import body_obj_text, drape_obj_text
    from garnav.demo.pattern import build_design
    from garnav.demo.raise_arm import raise_arm_body, raise_arm_drape
    from garnav.drape import link_drape
    from garnav.drape.inverse import pattern_locator
    from garnav.drape.meshio import uv_mesh_from_arrays
    from garnav.export.commands import route_commands, write_commands
    from garnav.export.waypoints import route_document, write_route_json
    from garnav.mechanics.planning import PhysicsPlanner
    from garnav.plan import Planner
    from garnav.poses.load import PoseDrape
    from garnav.poses.robust import fine_in_every_pose, pose_report, robust_garment
    from garnav.zones import with_zone_keepouts

    garment, robot = scene.garment, scene.garment.robot
    design = build_design()
    raised = raise_arm_drape(design, scene.drape_mesh)
    raised_body = raise_arm_body(design, scene.drape_mesh, raised)
    m = raised.drape
    raised_drape = link_drape(garment, uv_mesh_from_arrays(m.vertices, m.faces, m.uv[m.face_uv],
                                                           source="<demo drape, arm raised>"))
    standing, arm_raised = garment.poses[0], garment.poses[1]
    pds = (PoseDrape(standing, scene.drape), PoseDrape(arm_raised, raised_drape))
    start, goal, about = POSE_ROUTE

    zoned = with_zone_keepouts(garment, scene.drape)
    planner = Planner(zoned, robot, locate_3d=pattern_locator(scene.drape, zoned))
    planned = PhysicsPlanner(planner, scene.drape, posture=standing.posture).route(start, goal)
    reports = tuple(pose_report(planned.route, garment, pd, robot) for pd in pds)

    union = robust_garment(garment, pds)
    robust_planner = Planner(union, robot, locate_3d=pattern_locator(scene.drape, union))
    stops = [robust_planner.point(start, role="start"), robust_planner.point(goal, role="goal")]
    first = PhysicsPlanner(robust_planner, scene.drape, posture=standing.posture).route(stops[0], stops[1])
    robust = fine_in_every_pose(robust_planner, garment, pds, stops, first.route, first)

    files: dict[str, Path] = {}
    for label, route, result, reps in (("", planned.route, planned, reports),
                                       ("_robust", robust.route, robust.planned, robust.reports)):
        doc = route_document(route, garment, robot, result.lifted if result else None,
                             result.mechanics if result else None, command_tolerance_mm=tolerance)
        doc["poses"] = [r.to_dict() for r in reps]
        name = f"{start}_to_{goal}{label}"
        files[f"{name}.json"] = Path(write_route_json(out / f"{name}.json", doc))
    name = f"{start}_to_{goal}_robust.cmd"
    files[name] = Path(write_commands(out / name, route_commands(robust.route, garment, robot, tolerance_mm=tolerance),
                                      comment=f"{start} to {goal}, fine in every pose, on garment '{garment.name}'"))
    files["raised_drape"] = Path(write_text_atomic(out / ARM_RAISED_DRAPE_NAME,
                                                   drape_obj_text(m, f"{garment.name}, pose {arm_raised.name}")))
    files["raised_body"] = Path(write_text_atomic(out / ARM_RAISED_BODY_NAME,
                                                  body_obj_text(raised_body, f"mannequin_{arm_raised.name}")))
    return PoseDemo(start, goal, about, planned.route, reports, robust, files)


def pose_summary_lines(demo: PoseDemo) -> list[str]:
    """The demo summary's pose section: the standing route in each pose, then the robust route."""
    out = [f"poses: {demo.start} → {demo.goal} ({demo.about})",
           f"  planned standing: {demo.route.length_mm:.1f} mm"]
    out += ["    " + r.line() for r in demo.reports]
    out.append(f"  robust (fine in every pose): {demo.robust.route.length_mm:.1f} mm")
    out += ["    " + r.line() for r in demo.robust.reports]
    return out
