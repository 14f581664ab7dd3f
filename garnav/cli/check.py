"""``garnav check GARMENT``: validate a garment spec, report what ``route`` would refuse, summarise it.

Exit status (also in ``--help``): 0 when nothing was found, 1 when there are warnings only, 2 when
there are errors (a spec problem, a mesh that cannot be read or does not fit, or anything
``garnav route`` would refuse for the spec's own robot: :mod:`garnav.plan.readiness`).
``--json`` writes the same report as one JSON document (keys in docs/commands.md, "Checking a
garment").
"""

from __future__ import annotations

import argparse
import dataclasses
import json
import sys
from pathlib import Path

from garnav.errors import GarnavError, SpecError

__all__ = ["register", "run", "SEAM_GAP_ERROR_MM", "EXIT_CODES"]

#: A seam whose two runs lie farther apart than this in 3D (through the drape) is an error, mm:
#: the drape and the pattern disagree there and a lifted route would jump. The same limit makes
#: every command that lifts a route refuse the drape (:mod:`garnav.drape.verify`).
SEAM_GAP_ERROR_MM = 1.0  # = garnav.drape.verify.SEAM_GAP_MAX_MM (not imported here: --help stays light)

EXIT_CODES = "exit status: 0 nothing found, 1 warnings only, 2 errors (or bad input)"


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "check",
        help="validate a garment spec (TOML) and summarise its pieces, seams and keep-outs",
        description="Read a garment spec, report every problem in it and everything `garnav route` "
        "would refuse for the spec's own robot (landmarks the robot cannot stand on, pieces too "
        "narrow for it, mismatched seam runs, a drape that is not a readable mesh or does not fit), "
        "then print a summary: pieces, seams with their ease, open edges, keep-outs, landmarks and "
        "the robot.",
        epilog=EXIT_CODES,
    )
    parser.add_argument("garment", metavar="GARMENT", help="garment spec file (.toml)")
    parser.add_argument(
        "--drape",
        metavar="MESH",
        nargs="?",
        const="",
        help="also link a UV-mapped drape mesh (default: the spec's drape) and report coverage, "
        "stretch and seam closure",
    )
    parser.add_argument("--json", metavar="FILE", nargs="?", const="-",
                        help="write the report as JSON to FILE (without FILE: to standard output, "
                        "and nothing else is printed there)")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from garnav.plan.readiness import route_readiness
    from garnav.spec import load_garment
    from garnav.spec.summary import format_summary

    as_json = getattr(args, "json", None)
    report: dict = {"format": "garnav-check", "version": 1, "file": str(args.garment),
                    "errors": [], "warnings": [], "meshes": [], "drape": None}
    try:
        garment = load_garment(args.garment)
    except SpecError as exc:
        if as_json is None:
            raise
        report["errors"] = [{"level": "error", "code": "spec", "item": p.item, "reason": p.reason,
                             "where_mm": None if p.where is None else list(p.where)} for p in exc.problems]
        return _finish(report, as_json)
    folder = Path(args.garment).parent
    findings = list(route_readiness(garment))
    mesh_lines, drape_text = _meshes(garment, folder, getattr(args, "drape", None), report, findings,
                                     as_json is not None)
    report["errors"] = [f.as_dict() for f in findings if f.level == "error"]
    report["warnings"] = [f.as_dict() for f in findings if f.level == "warning"]
    report["summary"] = {"pieces": len(garment.pieces), "seams": len(garment.seams),
                         "keepouts": len(garment.keepouts), "landmarks": len(garment.landmarks),
                         "robot": (garment.robot.name if garment.robot else None)}
    if as_json is None:
        if not findings:
            print(f"{args.garment}: no problems found")
        else:
            print(f"{args.garment}: {len(report['errors'])} error(s), {len(report['warnings'])} warning(s)")
            for f in findings:
                print(f"  {f}")
        print(format_summary(garment), end="")
        if mesh_lines:
            print()
            print("\n".join(mesh_lines))
        if drape_text:
            print()
            print(drape_text)
    return _finish(report, as_json)


def _meshes(garment, folder: Path, drape_opt, report: dict, findings: list,
            as_json: bool = False) -> tuple[list[str], str]:
    """Mesh notes and the drape report; unreadable or ill-fitting meshes become findings (a drape
    given with ``--drape`` that cannot be linked at all stops the check, except with ``--json``,
    which carries it as a finding); every fault of :func:`garnav.drape.verify.drape_faults` is an
    error finding."""
    from garnav.plan.readiness import Finding

    lines = []
    listed = [("drape", garment.drape), ("body", garment.body)]
    for pose in garment.poses:  # [[pose]]: each pose's own meshes (docs/poses.md)
        listed += [(f"pose {pose.name} drape", pose.drape), (f"pose {pose.name} body", pose.body)]
    seen = set()
    for label, rel in listed:
        if rel is None or rel in seen:
            continue
        seen.add(rel)
        path = folder / rel
        state = "found" if path.is_file() else "NOT FOUND (needed only for 3D)"
        report["meshes"].append({"role": label, "path": str(path), "found": path.is_file()})
        lines.append(f"{label} mesh: {path}: {state}")
    if garment.poses and not drape_opt:
        return lines, _pose_drapes(garment, folder, drape_opt is not None, report, findings)
    want = drape_opt if drape_opt is not None else (garment.drape if garment.drape and (folder / garment.drape).is_file() else None)
    if want is None:
        return lines, ""
    try:
        drape, rep = _checked_drape(garment, drape_opt or "", folder, findings)
    except GarnavError as exc:
        if drape_opt is not None and not as_json:
            raise
        findings.insert(0, Finding("error", "drape_unreadable", f"drape '{drape_opt or garment.drape}'", str(exc)))
        return lines, ""
    if rep is None:
        return lines, ""
    report["drape"] = dataclasses.asdict(rep)
    if drape_opt is None:
        return lines, ""
    return lines, _drape_text(garment, drape, rep)


def _checked_drape(garment, mesh: str, folder: Path, findings: list, where: str = ""):
    """Link a drape without refusing it, put every fault of :mod:`garnav.drape.verify` at the head
    of ``findings`` (items start with ``where``), and report it: ``(drape, report or None)``
    (None when a seam is off the drape: already a finding). Raises what linking raises."""
    from garnav.drape import drape_report, load_drape
    from garnav.drape.verify import drape_faults
    from garnav.plan.readiness import Finding

    drape = load_drape(garment, mesh, str(folder), verify=False)
    faults = drape_faults(garment, drape, seam_gap_mm=SEAM_GAP_ERROR_MM)
    findings[:0] = [Finding("error", f.code, f"{where}drape {drape.source}: {f.item}", f.reason, f.where)
                    for f in faults]
    try:
        return drape, drape_report(garment, drape)
    except GarnavError:
        return drape, None


def _drape_text(garment, drape, rep) -> str:
    text = rep.text()
    if garment.body_zones:  # each zone's fabric and the landmarks in it (docs/zones.md)
        from garnav.zones.project import zone_report_lines

        text = text.rstrip("\n") + "\n\n" + "\n".join(zone_report_lines(garment, drape))
    return text


def _pose_drapes(garment, folder: Path, show: bool, report: dict, findings: list) -> str:
    """Link and report every pose's drape (``show``: the text too); each pose's problems are
    findings naming the pose. ``report["drape"]`` is the default pose's, ``report["poses"]`` all."""
    from garnav.plan.readiness import Finding
    from garnav.poses.load import default_pose

    base = default_pose(garment)
    report["poses"] = []
    texts = []
    for pose in garment.poses:
        path = folder / pose.drape
        if not show and not path.is_file():
            continue
        try:
            drape, rep = _checked_drape(garment, str(path), Path("."), findings, f"pose '{pose.name}' ")
        except GarnavError as exc:
            findings.insert(0, Finding("error", "drape_unreadable", f"pose '{pose.name}' drape '{pose.drape}'",
                                       str(exc)))
            continue
        if rep is None:
            continue
        entry = {"pose": pose.name, "posture": pose.posture, "drape": dataclasses.asdict(rep)}
        report["poses"].append(entry)
        if pose == base:
            report["drape"] = entry["drape"]
        texts.append(f"pose '{pose.name}' ({pose.posture}{', default' if pose == base else ''}): "
                     f"{pose.drape}\n" + _drape_text(garment, drape, rep))
    return "\n\n".join(texts) if show else ""


def _finish(report: dict, as_json: str | None) -> int:
    status = 2 if report["errors"] else (1 if report["warnings"] else 0)
    report["status"] = status
    if as_json is not None:
        text = json.dumps(_finite(report), indent=2, allow_nan=False) + "\n"
        from garnav.atomic import active_set, write_text_atomic

        if as_json == "-" and active_set() is None:
            sys.stdout.write(text)
        else:  # under the output plan '-' is standard output too, and it prints `wrote FILE`
            write_text_atomic(as_json, text)
    return status


def _finite(value):
    """``value`` with non-finite floats as None (JSON has no NaN) and tuples as lists."""
    if isinstance(value, dict):
        return {k: _finite(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_finite(v) for v in value]
    if isinstance(value, float):
        return value if value == value and abs(value) != float("inf") else None
    return value
