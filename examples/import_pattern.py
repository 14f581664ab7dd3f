"""Import a small pattern file (SVG) with its seams file and plan a route on it.

The pattern is an invented two-piece vest (``examples/data/vest_pattern.svg``): the import turns
its outlines, notches, grain lines, pocket and landmarks into pieces, prints the seams garnav would
propose (for the user to check: it never sews on its own), applies the checked seams file
(``examples/data/vest_seams.toml``), writes the garment spec, plans a route from the front to the
back across the side seam, and writes the pieces back as DXF to show the round trip.

    python examples/import_pattern.py [OUT_DIR]

Needs ``pip install garnav[patterns]``. Routes are plans, not safety certificates: keep robots
off the neck and face and away from implanted devices, and keep an emergency stop at hand.
"""

from __future__ import annotations

import argparse
import tempfile
from pathlib import Path

from garnav import Robot
from garnav.patterns import read_pattern, write_dxf
from garnav.patterns.seams import apply_seams, load_seams, propose_seams
from garnav.plan import Planner
from garnav.spec import load_garment, save_garment

DATA = Path(__file__).resolve().parent / "data"


def main(argv=None) -> dict:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("out", nargs="?", help="output folder (default: a new temporary folder)")
    parser.add_argument("--pattern", default=str(DATA / "vest_pattern.svg"))
    parser.add_argument("--seams", default=str(DATA / "vest_seams.toml"))
    args = parser.parse_args(argv)
    out = Path(args.out) if args.out else Path(tempfile.mkdtemp(prefix="garnav-example-"))

    built = read_pattern(args.pattern)
    for pp in built.points:
        piece = built.garment.piece(pp.piece)
        print(f"{pp.piece}: " + ", ".join(f"{pt}→{e.name} {e.length:.0f} mm"
                                          for pt, e in zip(pp.points, piece.edges, strict=True)))
    proposals = propose_seams(built)
    print(f"{len(proposals)} proposed seams (not applied):")
    for p in proposals:
        a, b = p.table["a"], p.table["b"]
        print(f"  {a['piece']} {a['from']}-{a['to']} ↔ {b['piece']} {b['from']}-{b['to']} "
              f"({p.length_a:.0f} / {p.length_b:.0f} mm, {p.notches} notch(es))")

    garment = apply_seams(built, load_seams(args.seams), args.seams)
    spec = save_garment(garment, out / "vest.toml")
    print(f"{spec}: {len(garment.pieces)} pieces, seams {[s.name for s in garment.seams]}")

    robot = Robot(name="example_crawler", radius_mm=15.0, wheel_base_mm=24.0, edge_margin_mm=3.0)
    route = Planner(load_garment(spec), robot).route("navel", "spine")
    print(f"navel → spine: {route.length_mm:.1f} mm, seams crossed {route.seams_crossed}")

    dxf = write_dxf(garment, out / "vest.dxf")
    again = read_pattern(dxf).garment
    print(f"{dxf}: read back {len(again.pieces)} pieces with edges "
          f"{[p.edge_names for p in again.pieces] == [p.edge_names for p in garment.pieces]}")
    return {"garment": garment, "route": route, "proposals": proposals, "spec": spec, "dxf": dxf}


if __name__ == "__main__":
    main()
