"""Lift a planned route onto the 3D drape and draw it: an off-screen PNG and the 2D pattern sheet.

The route is planned on the flat pattern (where the robot's encoders and gyro measure), then lifted
through the drape's UV map onto the 3D garment to see it and to measure its climb against gravity.

    python examples/preview_route.py [OUT_DIR] [--from POINT] [--to POINT]

Works headless: the 3D picture is rendered off-screen (no window, no display needed).
"""

from __future__ import annotations

import argparse
import tempfile
from pathlib import Path

from garnav.demo.run import demo_scene
from garnav.drape import lift_route
from garnav.drape.inverse import pattern_locator
from garnav.plan import Planner
from garnav.preview.scene import SceneRoute, build_plotter, off_screen_environment, write_screenshot
from garnav.preview.sheet import sheet_drawing, write_sheet_png, write_sheet_svg


def main(argv=None) -> dict:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("out", nargs="?", help="output folder (default: a new temporary folder)")
    parser.add_argument("--from", dest="start", default="wrist_left", help="start point (default wrist_left)")
    parser.add_argument("--to", dest="goal", default="sternum_left", help="goal point (default sternum_left)")
    parser.add_argument("--size", type=int, nargs=2, default=(800, 600), metavar=("W", "H"), help="picture size, px")
    args = parser.parse_args(argv)
    out = Path(args.out) if args.out else Path(tempfile.mkdtemp(prefix="garnav-example-"))

    scene = demo_scene()  # the demo garment, its drape and mannequin, built in memory
    garment, drape = scene.garment, scene.drape
    # world points (xyz:X,Y,Z, body landmarks) find their place on the pattern through the drape
    planner = Planner(garment, garment.robot, locate_3d=pattern_locator(drape, garment))
    route = planner.route(args.start, args.goal)
    lifted = lift_route(drape, garment, route)
    print(f"{args.start} → {args.goal}: {route.length_mm:.1f} mm on the pattern, "
          f"{lifted.length_3d_mm:.1f} mm on the drape")
    print("\n".join(lifted.lines()))

    off_screen_environment()
    plotter = build_plotter(garment, drape, scene.body, [SceneRoute("route", lifted.points, lifted.normals)],
                            off_screen=True, size=tuple(args.size))
    try:
        png = write_screenshot(out / "route_3d.png", plotter)
    finally:
        plotter.close()
    drawing = sheet_drawing(garment, [route], planner.free, route_names=[f"{args.start} → {args.goal}"])
    svg = write_sheet_svg(out / "route_sheet.svg", drawing)
    sheet_png = write_sheet_png(out / "route_sheet.png", drawing, width_px=1200)
    for path in (png, svg, sheet_png):
        print(f"wrote {path}")
    return {"route": route, "lifted": lifted, "files": [Path(png), Path(svg), Path(sheet_png)]}


if __name__ == "__main__":
    main()
