"""Sweep a region of the demo garment with a sensor: coverage figures, route file, shaded sheet.

Plans a sweep of the upper back and the neighbouring part of the front (a polygon on each piece,
joined across the side seam by the route planner), prints the coverage figures, and writes the
sweep's route document (JSON) and the pattern sheet with the covered ground shaded (SVG).

    python examples/sweep_region.py [OUT_DIR] [--swath MM]
"""

from __future__ import annotations

import argparse
import tempfile
from pathlib import Path

from garnav.demo import demo_garment
from garnav.plan import Planner
from garnav.preview.sheet import sheet_drawing, write_sheet_svg
from garnav.export.waypoints import write_route_json
from garnav.sweep import PolygonRegion, UnionRegion, figures_lines, plan_sweep, sweep_document


def main(argv=None) -> dict:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("out", nargs="?", help="output folder (default: a new temporary folder)")
    parser.add_argument("--swath", type=float, default=15.0, help="sensor swath in mm (default 15)")
    args = parser.parse_args(argv)
    out = Path(args.out) if args.out else Path(tempfile.mkdtemp(prefix="garnav-example-"))

    garment = demo_garment()
    planner = Planner(garment)  # built once; reuse it for many sweeps of this garment
    bx0, _, bx1, by1 = garment.piece("back").polygon.bounds
    fx0, fy0, fx1, _ = garment.piece("front").polygon.bounds
    region = UnionRegion((
        # a band across the back, a hand's width below the yoke
        PolygonRegion("back", ((bx0, by1 - 260.0), (bx1, by1 - 260.0), (bx1, by1 - 120.0), (bx0, by1 - 120.0))),
        # and the front's lowest 150 mm
        PolygonRegion("front", ((fx0, fy0), (fx1, fy0), (fx1, fy0 + 150.0), (fx0, fy0 + 150.0))),
    ))
    sweep = plan_sweep(garment, region, swath_mm=args.swath, planner=planner)
    doc = sweep_document(sweep, garment, region_text=["band across the back", "front's lowest 150 mm"])
    print("\n".join(figures_lines(doc["sweep"])))
    json_path = write_route_json(out / "sweep.json", doc)
    drawing = sheet_drawing(garment, [sweep.route], planner.free, route_names=["sweep"], coverage=sweep.covered)
    svg_path = write_sheet_svg(out / "sweep_sheet.svg", drawing)
    for path in (json_path, svg_path):
        print(f"wrote {path}")
    print("caution: keep magnets away from implanted devices, keep out of the neck and face, watch the "
          "battery and keep an emergency stop at hand; garnav plans routes, it certifies nothing.")
    return doc["sweep"]


if __name__ == "__main__":
    main()
