"""A catalogue of small standard garments for tests (built in Python, no files).

Each builder returns a fresh :class:`garnav.Garment`. Sizes in mm.
"""

from __future__ import annotations

import math

from garnav import Edge, Garment, Landmark, Piece, Placement, Robot, Seam, SeamRun


def rect_piece(name: str, width: float, height: float, placement: Placement | None = None) -> Piece:
    """A width × height rectangle with edges 'bottom', 'right', 'top', 'left' (CCW)."""
    w, h = float(width), float(height)
    return Piece(
        name,
        (
            Edge("bottom", ((0.0, 0.0), (w, 0.0))),
            Edge("right", ((w, 0.0), (w, h))),
            Edge("top", ((w, h), (0.0, h))),
            Edge("left", ((0.0, h), (0.0, 0.0))),
        ),
        placement=Placement() if placement is None else placement,
    )


def single_panel(width: float = 600.0, height: float = 800.0) -> Garment:
    """One rectangular piece, all edges open (hems)."""
    return Garment(
        "panel",
        (rect_piece("panel", width, height),),
        robot=Robot(radius_mm=8.0, edge_margin_mm=2.0),
        sheet_size_mm=(width + 20.0, height + 20.0),
    )


def two_panels() -> Garment:
    """Two 300 × 400 pieces side by side, joined by one crossable seam (left.right ↔ right.left)."""
    left = rect_piece("left", 300, 400, Placement(10.0, 10.0))
    right = rect_piece("right", 300, 400, Placement(330.0, 10.0))
    seam = Seam(
        "middle",
        SeamRun("left", "right"),
        SeamRun("right", "left", reverse=True),
        crossable=True,
        crossing_cost_mm=0.0,
    )
    return Garment(
        "two_panels",
        (left, right),
        seams=(seam,),
        landmarks=(
            Landmark("left_centre", piece="left", x=150.0, y=200.0),
            Landmark("right_centre", piece="right", x=150.0, y=200.0),
        ),
        robot=Robot(radius_mm=10.0, edge_margin_mm=2.0),
        sheet_size_mm=(650.0, 420.0),
    )


def tube(circumference: float = 2 * math.pi * 50.0, length: float = 400.0) -> Garment:
    """One rectangle closed into a tube by a seam joining its own left and right edges."""
    piece = rect_piece("tube", circumference, length)
    seam = Seam("closing", SeamRun("tube", "right"), SeamRun("tube", "left", reverse=True))
    return Garment(
        "tube",
        (piece,),
        seams=(seam,),
        robot=Robot(radius_mm=10.0, edge_margin_mm=2.0),
        sheet_size_mm=(circumference + 20.0, length + 20.0),
    )


def huge_panels(width: float = 20000.0, height: float = 30000.0) -> Garment:
    """Two ``width`` × ``height`` pieces (default 20 m × 30 m) joined along a ``height`` long seam
    (left.right ↔ right.left), with landmarks 'a' (left, at a third of the height) and 'b' (right,
    at two thirds): a legal garment far larger than any real one, for bounded-work tests."""
    w, h = float(width), float(height)
    left = rect_piece("left", w, h, Placement(10.0, 10.0))
    right = rect_piece("right", w, h, Placement(w + 30.0, 10.0))
    seam = Seam("middle", SeamRun("left", "right"), SeamRun("right", "left", reverse=True), crossable=True)
    return Garment(
        "huge_panels",
        (left, right),
        seams=(seam,),
        landmarks=(Landmark("a", piece="left", x=w / 2, y=h / 3), Landmark("b", piece="right", x=w / 2, y=2 * h / 3)),
        robot=Robot(radius_mm=10.0, edge_margin_mm=2.0),
        sheet_size_mm=(2 * w + 40.0, h + 20.0),
    )
