"""``garnav show``: look at a garment and its routes in 3D (window or off-screen PNG).

    garnav show GARMENT [ROUTE.json ...] [--screenshot PNG] [--size W H] [--sheet FILE] [--pose NAME|all]

The window shows the mannequin (the spec's ``body`` mesh), the draped garment (the spec's ``drape``
mesh) coloured by piece, seams, open edges, keep-outs, landmarks and each route. ``--screenshot``
renders off-screen to a PNG instead of opening a window. ``--sheet`` also writes the flat pattern
sheet (``.svg`` or ``.png``) with the same routes; it needs no 3D window (``--sheet-only``, or no
display). Nothing drawn is an error (exit 2): no display and neither ``--screenshot`` nor
``--sheet``, a route on pieces the garment lacks, a point off its piece or outside the 3D view,
non-finite coordinates, an image extension that cannot be written (docs/outputs.md). ``--margins`` colours each route by its
tightest margin (routes planned with a robot physics profile), with a colour bar. ``--pose NAME``
shows one pose of the spec's ``[[pose]]`` tables, ``--pose all`` every pose side by side (one
sub-view each, cameras linked): that pose's drape and body, its body zones as keep-outs, and the
routes' pattern legs lifted onto its drape (docs/poses.md).
"""

from __future__ import annotations

import argparse
from pathlib import Path

from garnav.errors import MeshError, QueryError

__all__ = ["register", "run", "display_available"]


def register(subparsers) -> None:
    parser = subparsers.add_parser(
        "show",
        help="show a garment and routes in 3D, or render them to a PNG",
        description="Show the mannequin, the draped garment and routes in a 3D window, "
        "or render them off-screen with --screenshot.",
    )
    parser.add_argument("garment", help="garment spec file (.toml), or a UV-mapped mesh whose UV islands are the pieces")
    parser.add_argument("routes", nargs="*", metavar="ROUTE.json", help="route files written by 'garnav route --json'")
    parser.add_argument("--screenshot", metavar="PNG", help="render off-screen to this PNG file instead of opening a window")
    parser.add_argument("--size", nargs=2, type=int, metavar=("W", "H"), default=(1200, 900),
                        help="window or image size in pixels (default 1200 900)")
    parser.add_argument("--sheet", metavar="FILE", help="also write the flat pattern sheet (.svg or .png)")
    parser.add_argument("--sheet-only", action="store_true",
                        help="write --sheet and open no 3D window (also what happens without a display)")
    parser.add_argument("--margins", action="store_true",
                        help="colour each route by its tightest grip/hold/drive margin over the required one, "
                        "with a colour bar (routes planned with a robot physics profile; docs/physics.md)")
    from garnav.cli._poses import add_pose_options

    add_pose_options(parser, robust=False, pose_help="show the routes on this pose's drape (a [[pose]] of the "
                     "spec, with its body mesh and its body zones as keep-outs); 'all': one view per pose "
                     "side by side, one camera for all (--size is then each view's size; docs/poses.md)")
    parser.set_defaults(func=run)


def run(args: argparse.Namespace) -> int:
    import numpy as np

    from garnav.export.route_checks import check_route_on_garment, view_bounds
    from garnav.export.waypoints import read_route_document
    from garnav.preview.scene import SceneRoute, build_plotter, off_screen_environment, route_polyline
    from garnav.drape.drape import load_drape
    from garnav.drape.meshio import load_body_mesh
    from garnav.drape.sources import garment_and_drape

    w, h = args.size
    if w < 16 or h < 16 or w > 8192 or h > 8192:
        raise QueryError(f"--size {w} {h}: width and height must be 16..8192 pixels")
    if args.sheet and Path(args.sheet).suffix.lower() not in (".svg", ".png"):
        raise QueryError(f"--sheet {args.sheet}: use a .svg or .png file name")
    if args.sheet_only and not args.sheet:
        raise QueryError("--sheet-only: give the sheet to write with --sheet FILE")
    window = args.screenshot is None and not args.sheet_only
    if window and not display_available():
        if not args.sheet:  # nothing could be drawn: say so, never exit 0 with nothing shown
            raise QueryError("no display to open a 3D window on (no DISPLAY or WAYLAND_DISPLAY, or "
                             "PYVISTA_OFF_SCREEN is set): give --screenshot PNG for a 3D picture or "
                             "--sheet FILE for the flat sheet")
        window = False
    spec_path = Path(args.garment)
    garment, drape = garment_and_drape(spec_path)  # a mesh file brings its drape along
    docs = []
    for name in args.routes:
        doc = read_route_document(name)
        planned_on = doc["garment"]["name"]
        if planned_on != garment.name:
            raise QueryError(f"{name}: the route was planned on garment '{planned_on}', not '{garment.name}'")
        check_route_on_garment(doc, garment, name)  # unknown pieces, off-piece or non-finite points
        docs.append((name, doc))

    pose_drapes = None
    if args.pose is not None:  # one sub-view per pose (docs/poses.md)
        pose_drapes = _pose_drapes(args, garment, drape, spec_path)
        drape = _default_drape(garment, pose_drapes, args.pose)

    if args.sheet:
        sheet_garment = garment
        if garment.body_zones:  # drawn through the drape when it can be read (docs/zones.md)
            from garnav.zones.sources import apply_zones

            if drape is None and garment.drape:
                try:
                    drape = load_drape(garment, None, str(spec_path.parent))
                except MeshError as exc:
                    print(f"note: body zones not drawn: {exc}")
            sheet_garment = apply_zones(garment, drape, str(spec_path), allow_without_zones=True)
        _write_sheet(sheet_garment, docs, Path(args.sheet))
        if not window and args.screenshot is None:
            if not args.sheet_only:
                print("note: no display: the 3D window was not opened (--screenshot PNG renders it off-screen)")
            return 0

    if pose_drapes is not None:
        return _show_poses(args, garment, docs, pose_drapes, spec_path, window=args.screenshot is None)
    if not garment.drape and not garment.body and drape is None:
        if args.sheet:
            return 0
        raise MeshError(f"{spec_path}: the spec names no drape and no body mesh: nothing to show in 3D (try --sheet)")
    base = spec_path.parent
    if drape is None and garment.drape:
        drape = load_drape(garment, None, str(base))
    body = load_body_mesh(base / garment.body) if garment.body else None
    view = view_bounds([drape.positions if drape is not None else None, body[0] if body is not None else None])
    routes = []
    for name, doc in docs:
        check_route_on_garment(doc, garment, name, view)  # a route outside the view is refused, not lost
        pts, nrm = route_polyline(doc, drape, garment, source=name)
        if not np.all(np.isfinite(pts)):
            raise QueryError(f"{name}: the route's 3D points are not finite numbers: nothing to draw")
        margin = None
        if getattr(args, "margins", False):
            from garnav.preview.scene import document_margins

            margin = document_margins(doc)
            if margin is None:
                raise QueryError(f"{name}: --margins: the route has no physics object (plan it with a robot "
                                 "physics profile and a drape)")
        routes.append(SceneRoute(Path(name).stem, pts, nrm, margin))

    off = args.screenshot is not None
    if off:
        off_screen_environment()
    plotter = build_plotter(garment, drape, body, routes, off_screen=off, size=(w, h))
    return _render(plotter, args.screenshot if off else None, f"garnav — {garment.name}")


def _render(plotter, screenshot: str | None, title: str) -> int:
    """Write ``plotter`` to the PNG ``screenshot``, or open it in a window titled ``title``."""
    from garnav.preview.scene import write_screenshot

    try:
        if screenshot is not None:
            write_screenshot(screenshot, plotter)  # `wrote FILE` comes from the output plan
        else:
            from garnav.atomic import active_set

            if active_set() is not None:  # the --sheet file is in place while the window is open
                active_set().commit()
            plotter.show(title=title)
    finally:
        plotter.close()
    return 0


def _pose_drapes(args, garment, drape, spec_path: Path):
    """The poses ``--pose`` names, their drapes read and linked; refusals before any drawing."""
    from garnav.poses.load import load_pose_drapes, select_poses

    if drape is not None:  # the garment came from a mesh file: one drape, no [[pose]] tables
        raise QueryError(f"--pose: {args.garment} is a mesh, one drape; poses are [[pose]] tables of a "
                         "garment spec (docs/poses.md)")
    if args.margins:
        raise QueryError("--margins colours a route by the margins of the pose it was planned in; leave out "
                         f"--pose {args.pose} (for every pose's margins: garnav route ... --pose all)")
    return load_pose_drapes(garment, select_poses(garment, args.pose), spec_path.parent)


def _default_drape(garment, pose_drapes, which: str):
    """The drape the sheet's body zones are drawn through: the one pose shown, else the default pose's."""
    from garnav.poses.load import ALL_POSES, default_pose

    if which != ALL_POSES:
        return pose_drapes[0].drape
    base = default_pose(garment)
    return next(pd.drape for pd in pose_drapes if pd.pose == base)


def _show_poses(args, garment, docs, pose_drapes, spec_path: Path, window: bool) -> int:
    """Draw every chosen pose in its own sub-view: that pose's drape, body and body zones, and the
    routes lifted onto its drape."""
    from garnav.drape.meshio import load_body_mesh
    from garnav.export.waypoints import document_route
    from garnav.poses.load import default_pose
    from garnav.polyline import polyline_length
    from garnav.preview.pose_views import build_pose_plotter, pose_grid, pose_views
    from garnav.preview.scene import off_screen_environment

    w, h = args.size
    rows, cols = pose_grid(len(pose_drapes))
    if w * cols > 8192 or h * rows > 8192:
        raise QueryError(f"--size {w} {h}: {len(pose_drapes)} poses in {rows} × {cols} views make "
                         f"{w * cols} × {h * rows} pixels; at most 8192 each way (--size is each view's size)")
    base = default_pose(garment)
    bodies, body_files = [], []
    for pd in pose_drapes:
        body_file = pd.pose.body or (garment.body if pd.pose == base else None)
        body = None
        if body_file:
            try:
                body = load_body_mesh(spec_path.parent / body_file)
            except MeshError as exc:
                raise MeshError(f"pose '{pd.name}': {exc}") from None
        bodies.append(body)
        body_files.append(body_file)
    routes = [(Path(name).stem, document_route(doc)) for name, doc in docs]
    views = pose_views(garment, pose_drapes, routes, bodies)
    for pd, view, body_file in zip(pose_drapes, views, body_files):
        zones = sum(1 for k in view.garment.keepouts if k not in garment.keepouts)
        lengths = ", ".join(f"{r.name} {polyline_length(r.points):.1f} mm" for r in view.routes)
        print(f"pose {pd.name} ({pd.pose.posture}): drape {pd.pose.drape}, body {body_file or 'none'}, "
              f"{zones} body-zone keep-out(s)" + (f"; 3D {lengths}" if lengths else ""))
    off = not window
    if off:
        off_screen_environment()
    plotter = build_pose_plotter(views, off_screen=off, size=(w, h))
    return _render(plotter, args.screenshot if off else None,
                   f"garnav — {garment.name} — {', '.join(v.name for v in views)}")


def display_available() -> bool:
    """Whether a 3D window can open: not forced off-screen (``PYVISTA_OFF_SCREEN``), and on
    Linux and other X11/Wayland systems a ``DISPLAY`` or ``WAYLAND_DISPLAY`` is set."""
    import os
    import sys

    if os.environ.get("PYVISTA_OFF_SCREEN", "").strip().lower() in ("1", "true", "yes"):
        return False
    if sys.platform.startswith(("win", "darwin")):
        return True
    return bool(os.environ.get("DISPLAY") or os.environ.get("WAYLAND_DISPLAY"))


def _write_sheet(garment, docs, path: Path) -> None:
    from garnav.export.waypoints import document_route
    from garnav.plan import build_free_space
    from garnav.preview.sheet import sheet_drawing, write_sheet_png, write_sheet_svg

    routes = [document_route(doc) for _, doc in docs]
    # free space only for the spec's own robot: another robot would need other margins
    free = build_free_space(garment, garment.robot) if garment.robot is not None else None
    drawing = sheet_drawing(garment, routes, free, route_names=[Path(n).stem for n, _ in docs])
    if path.suffix.lower() == ".svg":
        write_sheet_svg(path, drawing)
    else:
        write_sheet_png(path, drawing)
