"""Every validator fed bad input: garment_problems on garments built in Python, and the reader on
small TOML texts. Expected places and distances are hand-worked from the coordinates given."""

from __future__ import annotations

import dataclasses
import math
import re

import pytest

import garments
from garnav import (
    Circle,
    Edge,
    Garment,
    KeepOut,
    Landmark,
    Opening,
    Piece,
    Placement,
    PolygonShape,
    Rectangle,
    Robot,
    Seam,
    SeamRun,
    SpecError,
)
from garnav.spec import check_garment, dumps_garment, garment_problems, loads_garment
from garnav.spec.fields import range_problem


def texts(problems) -> list[str]:
    return [str(p) for p in problems]


def only(problems, fragment: str):
    """The one problem whose text contains ``fragment``."""
    hits = [p for p in problems if fragment in str(p)]
    assert len(hits) == 1, f"{fragment!r} in {texts(problems)}"
    return hits[0]


def with_piece(g: Garment, piece: Piece) -> Garment:
    return dataclasses.replace(g, pieces=tuple(piece if p.name == piece.name else p
                                               for p in g.pieces))


def poly_piece(name: str, ring, placement: Placement | None = None) -> Piece:
    """A piece with one edge per side of ``ring`` named e0, e1, ..."""
    n = len(ring)
    edges = tuple(Edge(f"e{i}", (tuple(ring[i]), tuple(ring[(i + 1) % n]))) for i in range(n))
    return Piece(name, edges, placement=Placement(10.0, 10.0) if placement is None else placement)


# -- pieces --------------------------------------------------------------------------------------
def test_catalogue_is_clean(single_panel, two_panels, tube):
    for g in (single_panel, two_panels, tube):
        assert garment_problems(g) == []


def test_problem_names_source_and_item(single_panel):
    g = dataclasses.replace(single_panel, robot=Robot(radius_mm=-1.0))
    p = only(garment_problems(g, "shirt.toml"), "radius_mm")
    assert p.file == "shirt.toml" and p.item == "robot"
    assert str(p).startswith("shirt.toml: robot: 'radius_mm' must be > 0")


def test_edges_that_do_not_chain(single_panel):
    piece = single_panel.pieces[0]
    right = piece.edges[1]
    moved = Edge("right", ((600.0, 3.0), (600.0, 800.0)))
    bad = dataclasses.replace(piece, edges=(piece.edges[0], moved) + piece.edges[2:])
    p = only(garment_problems(with_piece(single_panel, bad)), "gap")
    assert p.item == "piece 'panel' edge 'bottom'"
    assert "next edge 'right'" in p.reason and "a gap of 3.000 mm" in p.reason
    assert right.points[0] == (600.0, 0.0)


def test_last_edge_must_close_the_loop(single_panel):
    piece = single_panel.pieces[0]
    bad = dataclasses.replace(piece, edges=piece.edges[:3] + (Edge("left", ((0.0, 800.0), (0.0, 5.0))),))
    p = only(garment_problems(with_piece(single_panel, bad)), "gap")
    assert "the first edge 'bottom'" in p.reason and "5.000 mm" in p.reason


def test_edge_with_one_point_and_nan(single_panel):
    piece = single_panel.pieces[0]
    bad = dataclasses.replace(piece, edges=(Edge("bottom", ((0.0, 0.0),)),) + piece.edges[1:])
    only(garment_problems(with_piece(single_panel, bad)), "has 1 point; an edge needs at least 2")
    bad = dataclasses.replace(piece, edges=(Edge("bottom", ((0.0, 0.0), (math.nan, 0.0))),)
                              + piece.edges[1:])
    only(garment_problems(with_piece(single_panel, bad)), "not a finite number")


def test_piece_without_edges(single_panel):
    bad = dataclasses.replace(single_panel.pieces[0], edges=())
    only(garment_problems(with_piece(single_panel, bad)), "has no edges")


def test_zero_length_edge(single_panel):
    piece = single_panel.pieces[0]
    bad = dataclasses.replace(piece, edges=piece.edges + (Edge("dot", ((0.0, 0.0), (0.0, 0.0))),))
    only(garment_problems(with_piece(single_panel, bad)), "has zero length")


def test_bow_tie_reports_crossing_point():
    # Diagonals of the square [0,100]² cross at (50, 50) (hand-worked).
    g = Garment("g", (poly_piece("p", [(0, 0), (100, 100), (100, 0), (0, 100)]),),
                sheet_size_mm=(200.0, 200.0))
    p = only(garment_problems(g), "crosses itself")
    assert p.where == pytest.approx((50.0, 50.0))
    assert "edges 'e0' and 'e2' cross" in p.reason


def test_outline_crossing_itself_twice_lists_both():
    # A square with a notch cut from its top down through its hem: the notch sides x = 60 and
    # x = 30 cross the hem (y = 0) at (60, 0) and (30, 0) (hand-worked); nothing else crosses.
    ring = [(0, 0), (100, 0), (100, 100), (60, 100), (60, -20), (30, -20), (30, 100), (0, 100)]
    g = Garment("g", (poly_piece("p", ring),), sheet_size_mm=(200.0, 200.0))
    p = only(garment_problems(g), "crosses itself")
    crossings = {(30.0, 0.0), (60.0, 0.0)}
    assert p.where in crossings
    (other,) = crossings - {p.where}
    assert f"(and at 1 more place: ({other[0]:.1f}, {other[1]:.1f}))" in p.reason
    assert "crosses itself: edges 'e0' and" in p.reason


def test_outline_touching_itself():
    g = Garment("g", (poly_piece("p", [(0, 0), (100, 0), (100, 100), (50, 0), (0, 100)]),),
                sheet_size_mm=(200.0, 200.0))
    p = only(garment_problems(g), "touches itself")
    assert p.where == pytest.approx((50.0, 0.0))


def test_clockwise_outline():
    g = Garment("g", (poly_piece("p", [(0, 0), (0, 100), (100, 100), (100, 0)]),),
                sheet_size_mm=(200.0, 200.0))
    p = only(garment_problems(g), "clockwise")
    assert "counter-clockwise seen from the garment's outside" in p.reason


def test_degenerate_outlines():
    line = Garment("g", (poly_piece("p", [(0, 0), (50, 0), (100, 0)]),), sheet_size_mm=(200, 200))
    only(garment_problems(line), "zero area")
    two = Garment("g", (poly_piece("p", [(0, 0), (50, 0)]),), sheet_size_mm=(200, 200))
    only(garment_problems(two), "fewer than 3 distinct corners")


def test_duplicate_piece_and_edge_names(two_panels):
    left, right = two_panels.pieces
    g = dataclasses.replace(two_panels, pieces=(left, dataclasses.replace(right, name="left")))
    only(garment_problems(g), "name is used by 2 pieces")
    doubled = dataclasses.replace(left, edges=(left.edges[0], dataclasses.replace(left.edges[1], name="bottom"))
                                  + left.edges[2:])
    p = only(garment_problems(with_piece(two_panels, doubled)), "used by 2 edges")
    assert p.item == "piece 'left' edge 'bottom'"


def test_openings(single_panel):
    piece = single_panel.pieces[0]
    inside = Opening("ok", ((100.0, 100.0), (200.0, 100.0), (150.0, 200.0)))
    assert garment_problems(with_piece(single_panel, dataclasses.replace(piece, openings=(inside,)))) == []
    cases = {
        "lies outside the piece": Opening("out", ((700.0, 10.0), (720.0, 10.0), (710.0, 30.0))),
        "crosses the piece outline": Opening("x", ((-10.0, 10.0), (20.0, 10.0), (5.0, 30.0))),
        "touches the piece outline": Opening("t", ((0.0, 10.0), (20.0, 10.0), (5.0, 30.0))),
        "needs at least 3": Opening("few", ((1.0, 1.0), (2.0, 2.0))),
        "not a simple loop": Opening("bow", ((10.0, 10.0), (50.0, 50.0), (50.0, 10.0), (10.0, 50.0))),
    }
    for fragment, opening in cases.items():
        bad = dataclasses.replace(piece, openings=(opening,))
        p = only(garment_problems(with_piece(single_panel, bad)), fragment)
        assert p.item == f"piece 'panel' opening '{opening.name}'"
    clash = dataclasses.replace(piece, openings=(dataclasses.replace(inside, name="top"),))
    only(garment_problems(with_piece(single_panel, clash)), "has the name of an edge")
    twin = dataclasses.replace(piece, openings=(inside, dataclasses.replace(inside, name="ok2")))
    probs = garment_problems(with_piece(single_panel, twin))
    only(probs, "overlaps or touches opening 'ok2'")


def test_sheet_layout(two_panels):
    left, right = two_panels.pieces
    # right moved to x = 200: overlaps left (x 10..310) over x 200..310, y 10..410 → 110 × 400 mm².
    g = with_piece(two_panels, dataclasses.replace(right, placement=Placement(200.0, 10.0)))
    p = only(garment_problems(g), "overlaps piece 'right'")
    assert "44000.0 mm²" in p.reason
    # rotated by 90° about its origin, left spans x in [10 - 400, 10]: 390 mm past x = 0.
    g = with_piece(two_panels, dataclasses.replace(left, placement=Placement(10.0, 10.0, 90.0)))
    p = only(garment_problems(g), "off the sheet")
    assert "390.0 mm past x = 0" in p.reason
    g = dataclasses.replace(two_panels, sheet_size_mm=(0.0, 420.0))
    only(garment_problems(g), "'sheet_size_mm' must be > 0")
    g = dataclasses.replace(two_panels, sheet_size_mm=(650.0,))
    only(garment_problems(g), "'sheet_size_mm' must be 2 numbers")
    g = with_piece(two_panels, dataclasses.replace(left, placement=Placement(math.inf, 10.0)))
    only(garment_problems(g), "'x' must be a finite number")


# -- seams ---------------------------------------------------------------------------------------
def _seam(g, **changes):
    return dataclasses.replace(g, seams=(dataclasses.replace(g.seams[0], **changes),))


def test_seam_references(two_panels):
    p = only(garment_problems(_seam(two_panels, a=SeamRun("lft", "right"))), "does not exist")
    assert p.item == "seam 'middle' run a" and p.hint == "did you mean 'left'?"
    p = only(garment_problems(_seam(two_panels, b=SeamRun("right", "lef"))), "has no edge 'lef'")
    assert p.item == "seam 'middle' run b" and p.hint == "did you mean 'left'?"
    p = only(garment_problems(_seam(two_panels, b=SeamRun("right", "zzz"))), "has no edge 'zzz'")
    assert p.hint == "its edges: bottom, right, top, left"


def test_seam_run_ranges(two_panels):
    only(garment_problems(_seam(two_panels, a=SeamRun("left", "right", to_mm=401.0))),
         "to_mm 401 is past the end of edge 'right' (length 400.0 mm)")
    only(garment_problems(_seam(two_panels, a=SeamRun("left", "right", from_mm=500.0))),
         "from_mm 500 is past the end")
    only(garment_problems(_seam(two_panels, a=SeamRun("left", "right", from_mm=200.0, to_mm=200.0))),
         "must be less than to_mm")
    only(garment_problems(_seam(two_panels, a=SeamRun("left", "right", from_mm=-1.0))),
         "'from_mm' must be >= 0")
    ok = _seam(two_panels, a=SeamRun("left", "right", from_mm=100.0, to_mm=400.0))
    assert garment_problems(ok) == []


def test_seam_numbers(two_panels):
    only(garment_problems(_seam(two_panels, crossing_cost_mm=-2.0)), "'crossing_cost_mm' must be >= 0")
    only(garment_problems(_seam(two_panels, min_crossing_angle_deg=91.0)), "between 0 and 90")
    only(garment_problems(_seam(two_panels, min_crossing_angle_deg=math.nan)), "finite")


def test_overlapping_runs(two_panels):
    extra = Seam("patch", SeamRun("left", "right", from_mm=350.0), SeamRun("left", "top"))
    g = dataclasses.replace(two_panels, seams=two_panels.seams + (extra,))
    p = only(garment_problems(g), "in two seams")
    assert p.item == "piece 'left' edge 'right'"
    assert "overlap 50.0 mm" in p.reason
    assert p.where == pytest.approx((300.0, 350.0))  # 350 mm up the edge from (300, 0)
    # a seam sewing an edge to itself is an overlap too
    same = Seam("self", SeamRun("left", "top"), SeamRun("left", "top", reverse=True))
    g = dataclasses.replace(two_panels, seams=two_panels.seams + (same,))
    only(garment_problems(g), "seam 'self' run a covers 0.0–300.0 mm and seam 'self' run b")
    # touching runs are fine
    half = (Seam("lo", SeamRun("left", "top", to_mm=150.0), SeamRun("right", "top", to_mm=150.0)),
            Seam("hi", SeamRun("left", "top", from_mm=150.0), SeamRun("right", "top", from_mm=150.0)))
    assert garment_problems(dataclasses.replace(two_panels, seams=two_panels.seams + half)) == []


def test_duplicate_seam_names(two_panels):
    g = dataclasses.replace(two_panels, seams=two_panels.seams * 2)
    probs = garment_problems(g)
    only(probs, "name is used by 2 seams")
    assert sum("in two seams" in t for t in texts(probs)) == 2  # both edges of the seam


# -- keep-outs -----------------------------------------------------------------------------------
def _with_keepouts(g, *keepouts):
    return dataclasses.replace(g, keepouts=tuple(keepouts))


def test_keepout_inside_is_fine(single_panel):
    g = _with_keepouts(single_panel,
                       KeepOut("a", "panel", "pocket", Rectangle(300, 400, 100, 50, 30.0)),
                       KeepOut("b", "panel", "button", Circle(50, 50, 10), clearance_mm=2.0),
                       KeepOut("c", "panel", "print", PolygonShape(((10, 10), (90, 10), (50, 60))),
                               hard=False, cost_factor=3.0))
    assert garment_problems(g) == []


def test_keepout_partly_outside_says_how_far(single_panel):
    # A 10 mm circle centred 4 mm left of the panel's left edge sticks out by 10 + 4 = 14 mm.
    g = _with_keepouts(single_panel, KeepOut("b", "panel", "button", Circle(-4.0, 400.0, 10.0)))
    p = only(garment_problems(g), "sticks out of piece 'panel'")
    assert "by 14.0 mm" in p.reason
    assert p.where == pytest.approx((-14.0, 400.0), abs=1e-6)


def test_keepout_entirely_outside_or_missing_piece(single_panel):
    g = _with_keepouts(single_panel, KeepOut("b", "panel", "button", Circle(-40.0, 400.0, 10.0)))
    only(garment_problems(g), "lies entirely outside piece 'panel'")
    g = _with_keepouts(single_panel, KeepOut("b", "pannel", "button", Circle(40.0, 400.0, 10.0)))
    p = only(garment_problems(g), "piece 'pannel' does not exist")
    assert p.hint == "did you mean 'panel'?"


def test_keepout_kind_and_numbers(single_panel):
    g = _with_keepouts(single_panel, KeepOut("b", "panel", "buton", Circle(40, 40, 10)))
    p = only(garment_problems(g), "unknown kind 'buton'")
    assert "valid kinds: pocket, button" in p.reason and p.hint == "did you mean 'button'?"
    for field, value, fragment in [("clearance_mm", -0.5, "'clearance_mm' must be >= 0"),
                                   ("cost_factor", 0.9, "'cost_factor' must be >= 1")]:
        k = dataclasses.replace(KeepOut("b", "panel", "button", Circle(40, 40, 10)), **{field: value})
        only(garment_problems(_with_keepouts(single_panel, k)), fragment)


@pytest.mark.parametrize("shape, fragment", [
    (Circle(40, 40, 0.0), "'radius' must be > 0"),
    (Rectangle(40, 40, 10.0, 0.0), "'size' must be > 0"),
    (PolygonShape(((0, 0), (1, 1))), "polygon has 2 points"),
    (PolygonShape(((10, 10), (50, 50), (50, 10), (10, 50))), "polygon is not a simple loop"),
    (PolygonShape(((10, 10), (20, 10), (30, 10))), "polygon is not a simple loop"),
    ("square", "shape must be a Circle, Rectangle or PolygonShape"),
])
def test_keepout_bad_shapes(single_panel, shape, fragment):
    g = _with_keepouts(single_panel, KeepOut("k", "panel", "custom", shape))
    only(garment_problems(g), fragment)


@pytest.mark.parametrize("build, fragment", [
    (lambda: Circle(math.nan, 40, 5.0), "circle: 'cx' must be a finite number"),
    (lambda: Rectangle(40, 40, 10.0, 10.0, math.inf), "rectangle: 'angle_deg' must be a finite number"),
    (lambda: PolygonShape(((10, 10), (math.nan, 10), (30, 20))), "'points[1][0]' must be a finite number"),
    (lambda: Landmark("m", piece="left", x=math.nan, y=10.0), "landmark 'm': 'x' must be a finite number"),
    (lambda: Landmark("m", xyz=(0.0, math.inf, 0.0)), "landmark 'm': 'xyz[1]' must be a finite number"),
    (lambda: Robot(radius_mm=math.nan), "robot 'robot': 'radius_mm' must be a finite number"),
    (lambda: KeepOut("k", "panel", "custom", Circle(1, 1, 1), clearance_mm=math.inf),
     "keepout 'k': 'clearance_mm' must be a finite number"),
])
def test_class5_constructors_refuse_non_finite_numbers(build, fragment):
    """Model objects built in Python refuse NaN and infinities at once, as the reader does."""
    with pytest.raises(SpecError, match=re.escape(fragment)):
        build()


def test_class5_planner_refuses_a_robot_out_of_range(single_panel):
    from garnav.plan import Planner

    with pytest.raises(SpecError, match="'radius_mm' must be > 0"):
        Planner(single_panel, Robot(radius_mm=0.0))


def test_duplicate_keepout_names(single_panel):
    k = KeepOut("k", "panel", "custom", Circle(40, 40, 5))
    only(garment_problems(_with_keepouts(single_panel, k, k)), "name is used by 2 keepouts")


# -- landmarks -----------------------------------------------------------------------------------
@pytest.mark.parametrize("landmark, fragment", [
    (Landmark("m", piece="left", x=10.0, y=10.0, xyz=(0.0, 0.0, 0.0)), "has both"),
    (Landmark("m"), "has neither"),
    (Landmark("m", piece="left"), "needs piece, x and y"),
    (Landmark("m", piece="lef", x=1.0, y=1.0), "piece 'lef' does not exist"),
    (Landmark("m", piece="left", x=320.0, y=10.0), "lies outside piece 'left', 20.0 mm from it"),
])
def test_landmark_problems(two_panels, landmark, fragment):
    g = dataclasses.replace(two_panels, landmarks=(landmark,))
    only(garment_problems(g), fragment)


def test_landmark_on_outline_is_fine_and_duplicates(two_panels):
    m = Landmark("edge", piece="left", x=300.0, y=100.0)
    assert garment_problems(dataclasses.replace(two_panels, landmarks=(m,))) == []
    only(garment_problems(dataclasses.replace(two_panels, landmarks=(m, m))), "used by 2 landmarks")


# -- robot ---------------------------------------------------------------------------------------
@pytest.mark.parametrize("changes, fragment", [
    ({"radius_mm": 0.0}, "'radius_mm' must be > 0"),
    ({"wheel_base_mm": -1.0}, "'wheel_base_mm' must be > 0"),
    ({"speed_mm_s": 0.0}, "'speed_mm_s' must be > 0"),
    ({"edge_margin_mm": -1.0}, "'edge_margin_mm' must be >= 0"),
    ({"side": "under"}, "side 'under' is not one of outside, inside"),
])
def test_robot_problems(single_panel, changes, fragment):
    g = dataclasses.replace(single_panel, robot=Robot(**changes))
    only(garment_problems(g), fragment)


def test_huge_numbers_are_refused(single_panel):
    piece = single_panel.pieces[0]
    bad = dataclasses.replace(piece, edges=(Edge("bottom", ((0.0, 0.0), (1e300, 0.0))),)
                              + piece.edges[1:])
    only(garment_problems(with_piece(single_panel, bad)), "within ±1e7 mm")
    g = dataclasses.replace(single_panel, robot=Robot(radius_mm=2e7))
    only(garment_problems(g), "'radius_mm' is too large (2e+07)")


def test_range_problem_table():
    assert range_problem("keepout", "cost_factor", 1.0) is None
    assert range_problem("seam", "min_crossing_angle_deg", 90.0) is None
    assert "between 0 and 90" in range_problem("seam", "min_crossing_angle_deg", -0.1)


# -- reader --------------------------------------------------------------------------------------
GOOD = dumps_garment(garments.two_panels())


def reader_problems(text: str) -> list[str]:
    with pytest.raises(SpecError) as info:
        loads_garment(text, "t.toml")
    return texts(info.value.problems)


def test_reader_good_text_loads():
    assert loads_garment(GOOD) == garments.two_panels()


def test_reader_integers_are_numbers():
    text = GOOD.replace("radius_mm = 10.0", "radius_mm = 10")
    assert loads_garment(text).robot.radius_mm == 10.0


@pytest.mark.parametrize("old, new, fragment", [
    ("version = 1", "version = 1.0", "'version' must be an integer, found a number (1.0)"),
    ("version = 1", "version = true", "'version' must be an integer, found a boolean"),
    ('name = "two_panels"', "name = 3", "'name' must be a string, found an integer (3)"),
    ("sheet_size_mm = [650.0, 420.0]", "sheet_size_mm = [650.0]", "'sheet_size_mm' must be an array of 2"),
    ("sheet_size_mm = [650.0, 420.0]", "sheet_size_mm = 1979-05-27", "found a date/time"),
    ('[robot]\nname = "robot"', '[[robot]]\nname = "robot"', "'robot' must be a table, found an array of 1 item"),
    ("placement = { x = 10.0, y = 10.0, angle_deg = 0.0 }",
     "placement = { x = 10.0, y = 10.0, angle = 0.0 }", "unknown key 'angle'; did you mean 'angle_deg'?"),
    ("placement = { x = 10.0, y = 10.0, angle_deg = 0.0 }", "placement = 4",
     "'placement' must be a table, found an integer (4)"),
    ("at = [150.0, 200.0]", "at = [150.0, 200.0, 0.0]", "'at' must be an array of 2 numbers"),
    ("reverse = true", 'reverse = "yes"', "'reverse' must be a boolean"),
    ("radius_mm = 10.0", "radius_mm = 1" + "0" * 400, "found an integer too large for TOML"),
    ("version = 1", "version = 1" + "0" * 30, "is not supported"),
    ('edge = "right", reverse = false', 'edge = "right", from_mm = "0", reverse = false',
     "run a: 'from_mm' must be a number"),
])
def test_reader_type_problems(old, new, fragment):
    assert old in GOOD
    probs = reader_problems(GOOD.replace(old, new, 1))
    assert any(fragment in p for p in probs), probs
    assert all(p.startswith("t.toml: ") for p in probs)


def test_reader_piece_without_edges_and_missing_seam_piece_not_double_reported():
    text = GOOD.replace('name = "bottom"', 'nme = "bottom"', 1)
    probs = reader_problems(text)
    # the broken piece is reported once; the seam and landmark on it are not reported again
    assert len(probs) == 2, probs
    assert any("piece 'left' edge #1: unknown key 'nme'; did you mean 'name'?" in p for p in probs)
    assert any("piece 'left' edge #1: missing required key 'name'" in p for p in probs)


def test_reader_empty_piece_list_and_empty_edge_list():
    base = 'format = "garnav-garment"\nversion = 1\nname = "g"\n'
    assert any("has no pieces" in p for p in reader_problems(base + "piece = []\n"))
    probs = reader_problems(base + '[[piece]]\nname = "p"\nedge = []\n')
    assert any("piece 'p': has no edges" in p for p in probs)


def test_reader_comment_only_and_toml_error_position():
    assert any("has no keys" in p for p in reader_problems("# nothing\n\n"))
    probs = reader_problems('format = "garnav-garment"\nversion = = 1\n')
    assert "line 2, column 11" in probs[0]


def test_reader_keepout_shape_keys():
    text = GOOD + ('\n[[keepout]]\nname = "k"\npiece = "left"\nkind = "pocket"\nshape = "polygon"\n'
                   'points = [[1.0, 1.0], [9.0, 1.0], [5.0, 5.0]]\nradius = 3.0\n')
    probs = reader_problems(text)
    assert any("'radius' does not apply to a polygon keep-out; a polygon takes points" in p
               for p in probs)
    text = GOOD + '\n[[keepout]]\nname = "k"\npiece = "left"\nkind = "pocket"\nshape = "circle"\n'
    probs = reader_problems(text)
    assert any("a circle keep-out needs 'center'" in p for p in probs)
    assert any("a circle keep-out needs 'radius'" in p for p in probs)


def test_reader_body_landmark_with_piece():
    text = GOOD + '\n[[landmark]]\nname = "neck"\npiece = "left"\nxyz = [0.0, 0.0, 1.0]\n'
    assert any("has 'piece' and 'xyz'" in p for p in reader_problems(text))
    text = GOOD + '\n[[landmark]]\nname = "neck"\nat = [1.0, 1.0]\n'
    assert any("has 'at' but no 'piece'" in p for p in reader_problems(text))


def test_unnamed_items_are_numbered():
    text = GOOD + '\n[[seam]]\na = { piece = "left", edge = "top" }\nb = { piece = "right", edge = "top" }\n'
    assert any("seam #2: missing required key 'name'" in p for p in reader_problems(text))


def test_check_garment_raises_with_all_problems(single_panel):
    assert check_garment(single_panel) is single_panel
    g = dataclasses.replace(single_panel, robot=Robot(radius_mm=0.0, speed_mm_s=-1.0))
    with pytest.raises(SpecError) as info:
        check_garment(g, "built.toml")
    assert len(info.value.problems) == 2
    assert str(info.value).startswith("2 problems found:")


def test_field_defaults_match_the_model():
    """fields.py and the model agree on every default (the reader fills absent keys from
    fields.py; Python users get the model's)."""
    from garnav.spec.fields import SECTIONS

    pairs = {
        "robot": (Robot, {}),
        "placement": (Placement, {}),
        "seam": (Seam, {"name": "s", "a": None, "b": None}),
        "run": (SeamRun, {"piece": "p", "edge": "e"}),
        "keepout": (KeepOut, {"name": "k", "piece": "p", "kind": "custom", "shape": None}),
        "landmark": (Landmark, {"name": "m"}),
    }
    for section, (cls, required) in pairs.items():
        obj = cls(**required)
        for key, field in SECTIONS[section].items():
            if hasattr(obj, key) and key not in required:
                assert getattr(obj, key) == field.default, (section, key)
    assert Garment("g", ()).sheet_size_mm == SECTIONS["top"]["sheet_size_mm"].default
    assert Rectangle(0, 0, 1, 1).angle_deg == SECTIONS["keepout"]["angle_deg"].default
