"""Shared by the commands that lift a route: ``--pose NAME|all`` and ``--robust`` (docs/poses.md)."""

from __future__ import annotations

import argparse
from pathlib import Path

from garnav.errors import QueryError

__all__ = ["add_pose_options", "wants_poses", "PoseChoice", "choose_poses"]


def add_pose_options(parser, robust: bool = True) -> None:
    parser.add_argument("--pose", metavar="NAME", help="lift onto this pose's drape (a [[pose]] of the spec; "
                        "its body zones and posture apply); 'all': plan on the default pose and report "
                        "the route in every pose (3D length, climbs, body zones, margins)")
    if robust:
        parser.add_argument("--robust", action="store_true", help="plan one pattern route that keeps every "
                            "pose's body zones (their union) and, with a physics profile, is safe in "
                            "every pose; reports every pose")


def wants_poses(args: argparse.Namespace) -> bool:
    return getattr(args, "pose", None) is not None or bool(getattr(args, "robust", False))


class PoseChoice:
    """What ``--pose``/``--robust`` chose: the drape to plan and lift on, the garment with the body
    zones it must keep out of, and the poses to report (empty: report none)."""

    def __init__(self, garment, drape, pose_drapes, report, posture):
        self.garment = garment
        self.drape = drape
        self.pose_drapes = pose_drapes
        self.report = report
        self.posture = posture


def choose_poses(args: argparse.Namespace, garment, given_drape: str | None) -> PoseChoice:
    """Read the poses ``args`` ask for and apply their body zones.

    ``given_drape`` is ``--drape`` (None when not given); a pose option excludes ``--drape MESH``
    and ``--no-drape``.
    """
    from garnav.poses.load import ALL_POSES, load_pose_drapes, select_poses
    from garnav.poses.robust import robust_garment
    from garnav.zones.sources import apply_zones

    robust = bool(getattr(args, "robust", False))
    option = "--robust" if robust and getattr(args, "pose", None) is None else "--pose"
    if given_drape:
        raise QueryError(f"{option}: the poses' drapes come from the spec's [[pose]] tables; leave out "
                         f"--drape {given_drape}")
    if getattr(args, "no_drape", False):
        raise QueryError(f"{option}: poses are drapes; leave out --no-drape")
    which = args.pose
    if robust:
        if which not in (None, ALL_POSES):
            raise QueryError(f"--robust plans for every pose; leave out --pose {which} (or give --pose all)")
        which = ALL_POSES
    poses = select_poses(garment, which)
    folder = Path(args.garment).parent
    pose_drapes = load_pose_drapes(garment, poses, folder)
    if which == ALL_POSES:
        from garnav.poses.load import default_pose

        base_pose = default_pose(garment)
        base = next(pd for pd in pose_drapes if pd.pose == base_pose)
    else:
        base = pose_drapes[0]
    if robust:
        planned_on = robust_garment(garment, pose_drapes)
    else:
        planned_on = apply_zones(garment, base.drape, args.garment)
    report = pose_drapes if which == ALL_POSES else ()
    return PoseChoice(planned_on, base.drape, pose_drapes, report, base.pose.posture)


def report_poses(args, choice: PoseChoice, as_read, planner, physics, stops, route, planned):
    """Measure ``route`` in every reported pose; with ``--robust``, a route fine in every pose
    (:func:`garnav.poses.robust.fine_in_every_pose`). Returns ``(route, planned, reports)``."""
    from garnav.errors import NoRouteError
    from garnav.poses.robust import fine_in_every_pose, pose_report

    if not getattr(args, "robust", False):
        return route, planned, tuple(pose_report(route, as_read, pd, planner.robot) for pd in choice.report)
    # the default pose first: its drape is the one the route was planned and lifted on
    ordered = tuple(sorted(choice.report, key=lambda pd: pd.drape is not choice.drape))
    try:
        found = fine_in_every_pose(planner, as_read, ordered, stops, route, planned,
                                   cost=physics.cost if physics is not None else "length")
    except NoRouteError as exc:
        raise NoRouteError(f"--robust: {exc}") from None
    by_name = {r.pose: r for r in found.reports}
    return found.route, found.planned, tuple(by_name[pd.name] for pd in choice.report)
