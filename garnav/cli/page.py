"""``garnav page``: share a plan as one self-contained web page.

    garnav page SPEC [ROUTE.json ...] --out PLAN.html [--fleet SCHEDULE.json ...] [--drift DRIFT.json ...]
                [--title TEXT] [--no-body] [--max-body-triangles N]

Writes one HTML file that opens offline in any current browser: the draped garment, the mannequin
and the routes in 3D (turn, zoom, show and hide routes, keep-outs, seams, landmarks), the pattern
sheet, a table of each route's figures, a legend and the safety cautions (docs/page.md).
"""

from __future__ import annotations

import argparse
from pathlib import Path

from garnav.errors import QueryError

__all__ = ["register", "run"]


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "page",
        help="write a plan as one self-contained web page (3D view, sheet, figures, cautions)",
        description="Write one HTML file that works offline: the draped garment and routes in 3D, "
        "the pattern sheet, the route figures, a legend and the safety cautions.",
        epilog="The page shows a plan; it certifies nothing. It repeats the cautions: magnets can disturb "
        "implanted devices (the device maker and the wearer's clinician decide), keep robots off the neck "
        "and face, use batteries as their maker says, keep an emergency stop within reach. See docs/page.md.",
    )
    parser.add_argument("garment", help="garment spec file (.toml), or a UV-mapped mesh whose UV islands are the pieces")
    parser.add_argument("routes", nargs="*", metavar="ROUTE.json",
                        help="route files written by 'garnav route --json' (or 'garnav sweep --json')")
    parser.add_argument("--fleet", nargs="+", default=[], metavar="SCHEDULE.json",
                        help="fleet schedules written by 'garnav fleet --json': every robot's route is shown")
    parser.add_argument("--out", required=True, metavar="PLAN.html", help="the page to write (.html)")
    parser.add_argument("--drift", nargs="+", default=[], metavar="DRIFT.json",
                        help="contact-risk files written by 'garnav drift --json', each shown with the route it was "
                        "computed for")
    parser.add_argument("--title", help="the page's title (default: 'Robot routes on GARMENT')")
    parser.add_argument("--no-body", action="store_true", help="leave the mannequin out of the 3D view")
    parser.add_argument("--max-body-triangles", type=int, default=200_000, metavar="N",
                        help="simplify a finer mannequin to about N triangles for the page (default 200000)")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    from garnav.drape.drape import load_drape
    from garnav.drape.meshio import load_body_mesh
    from garnav.drape.sources import garment_and_drape
    from garnav.page import plan_page, read_routes, write_plan_page
    from garnav.plan import build_free_space

    if args.max_body_triangles < 100:
        raise QueryError(f"--max-body-triangles {args.max_body_triangles}: give at least 100")
    out = Path(args.out)
    if args.out != "-" and out.suffix.lower() not in (".html", ".htm"):
        raise QueryError(f"--out {args.out}: use a .html file name")
    spec_path = Path(args.garment)
    garment, drape = garment_and_drape(spec_path)
    if not args.routes and not args.fleet:
        raise QueryError("give at least one ROUTE.json or --fleet SCHEDULE.json")
    docs = read_routes(args.routes, garment)
    sources = [str(r) for r in args.routes]
    if args.fleet:
        from garnav.page.fleet import fleet_routes, read_fleet_document

        for path in args.fleet:
            schedule = read_fleet_document(path)
            if schedule["garment"] != garment.name:
                raise QueryError(f"{path}: the schedule was planned on garment '{schedule['garment']}', "
                                 f"not '{garment.name}'")
            robots = fleet_routes(schedule, str(path))
            docs += robots
            sources += [str(path)] * len(robots)
    if args.drift:
        from garnav.page.risk import attach_drift, read_drift_document

        docs = attach_drift(docs, [(str(p), read_drift_document(p)) for p in args.drift])
    base = spec_path.parent
    if drape is None and garment.drape:
        drape = load_drape(garment, None, str(base))
    from garnav.zones.sources import apply_zones

    garment = apply_zones(garment, drape, str(spec_path), allow_without_zones=True)  # drawn, not planned
    body = load_body_mesh(base / garment.body) if garment.body and not args.no_body else None
    # free space only for the spec's own robot: another robot would need other margins
    free = build_free_space(garment, garment.robot) if garment.robot is not None else None
    page = plan_page(garment, docs, drape, body, free_space=free, title=args.title,
                     sources=sources, max_body_triangles=args.max_body_triangles)
    write_plan_page(out, page)
    print(f"page {out.name}: {page.size_bytes / 1e6:.1f} MB; {len(docs)} route{'s' if len(docs) != 1 else ''}, "
          f"{page.triangles:,} triangles in 3D")
    return 0
