"""Round trip and robustness on generated garments and texts (hypothesis, derandomized)."""

from __future__ import annotations

import math
import re
import tomllib
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

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
)
from garnav.errors import SpecError
from garnav.model import KEEPOUT_KINDS
from garnav.spec import dumps_garment, garment_problems, garment_to_dict, loads_garment

SETTINGS = settings(derandomize=True, max_examples=60, deadline=None,
                    suppress_health_check=[HealthCheck.too_slow])

# names: any printable text, quotes, backslashes and non-ASCII included (TOML escapes them)
# free text: printable characters plus newline and tab (the reader refuses other control characters)
DESCRIPTIONS = st.text(st.characters(codec="utf-8", exclude_categories=("Cs", "Cc")) | st.sampled_from("\n\t"),
                       max_size=40)
NAMES = st.text(st.characters(codec="utf-8", exclude_categories=("Cs", "Cc")), min_size=1,
                max_size=12)
SPAN = 220.0  # each piece fits a disc of radius 100 mm around its origin; pieces 220 mm apart


@st.composite
def star_piece(draw, name: str, index: int):
    """A star-shaped polygon around the origin (simple and counter-clockwise by construction),
    cut into named edges, placed in its own 220 mm cell of the sheet."""
    # n >= 6 corners with angular jitter < half a step: gaps < 90°, so the polygon contains the
    # disc of radius 50 cos 45° = 35.4 mm around the origin, where openings, keep-outs and
    # landmarks are put.
    n = draw(st.integers(6, 12))
    jitter = draw(st.lists(st.floats(0.0, 0.5), min_size=n, max_size=n))
    radii = draw(st.lists(st.floats(50.0, 100.0), min_size=n, max_size=n))
    angles = [2 * math.pi * (i + j) / n for i, j in enumerate(jitter)]
    ring = [(r * math.cos(a), r * math.sin(a)) for r, a in zip(radii, angles)]
    cuts = sorted(draw(st.sets(st.integers(1, n - 1), max_size=min(4, n - 1))))
    bounds = [0, *cuts, n]
    edge_names = draw(st.lists(NAMES, min_size=len(bounds) - 1, max_size=len(bounds) - 1,
                               unique=True))
    edges = tuple(
        Edge(en, tuple(ring[k % n] for k in range(lo, hi + 1)))
        for en, lo, hi in zip(edge_names, bounds[:-1], bounds[1:])
    )
    openings = ()
    if draw(st.booleans()):
        s = draw(st.floats(3.0, 6.0))
        # edge and opening names share one namespace (a spec rule)
        name_ = draw(NAMES.filter(lambda t: t not in edge_names))
        openings = (Opening(name_, ((-s, -s), (s, -s), (s, s), (-s, s))),)
    angle = draw(st.floats(-180.0, 180.0))
    placement = Placement(110.0 + SPAN * index, 110.0, angle)
    return Piece(name, edges, openings, placement)


@st.composite
def garments(draw):
    piece_names = draw(st.lists(NAMES, min_size=1, max_size=3, unique=True))
    pieces = tuple(draw(star_piece(nm, i)) for i, nm in enumerate(piece_names))
    seams = ()
    if len(pieces) >= 2 and draw(st.booleans()):
        a, b = pieces[0], pieces[1]
        ea, eb = a.edges[0], b.edges[0]
        from_a = draw(st.none() | st.floats(0.0, 0.4).map(lambda f: f * ea.length))
        to_a = draw(st.none() | st.floats(0.5, 1.0).map(lambda f: f * ea.length))
        seams = (Seam(draw(NAMES), SeamRun(a.name, ea.name, from_a, to_a),
                      SeamRun(b.name, eb.name, reverse=draw(st.booleans())),
                      crossable=draw(st.booleans()), crossing_cost_mm=draw(st.floats(0, 50)),
                      min_crossing_angle_deg=draw(st.floats(0, 90))),)
    keepouts = []
    for i, name in enumerate(draw(st.lists(NAMES, max_size=4, unique=True))):
        piece = pieces[i % len(pieces)]
        # within 31.2 mm of the origin, above the opening (|y| <= 6)
        cx, cy = draw(st.floats(-3, 3)), draw(st.floats(-3, 3)) + 20.0
        shape = draw(st.sampled_from([
            Circle(cx, cy, 8.0),
            Rectangle(cx, cy, 10.0, 6.0, 33.0),
            PolygonShape(((cx - 5, cy - 5), (cx + 5, cy - 5), (cx, cy + 5))),
        ]))
        keepouts.append(KeepOut(name, piece.name, draw(st.sampled_from(KEEPOUT_KINDS)), shape,
                                clearance_mm=draw(st.floats(0, 10)), hard=draw(st.booleans()),
                                cost_factor=draw(st.floats(1, 5))))
    landmarks = []
    for i, name in enumerate(draw(st.lists(NAMES, max_size=3, unique=True))):
        if draw(st.booleans()):
            landmarks.append(Landmark(name, piece=pieces[i % len(pieces)].name, x=-15.0, y=-15.0,
                                      description=draw(DESCRIPTIONS.filter(lambda t: len(t) <= 20))))
        else:
            xyz = tuple(draw(st.floats(-2000, 2000)) for _ in range(3))
            landmarks.append(Landmark(name, xyz=xyz))
    robot = draw(st.none() | st.builds(Robot, name=NAMES, radius_mm=st.floats(1, 50),
                                       side=st.sampled_from(["outside", "inside"])))
    return Garment(
        draw(NAMES),
        pieces,
        seams,
        tuple(keepouts),
        tuple(landmarks),
        robot,
        (SPAN * len(pieces) + 10.0, 230.0),
        drape=draw(st.none() | NAMES),
        body=draw(st.none() | NAMES),
        description=draw(DESCRIPTIONS),
    )


@SETTINGS
@given(garments())
@pytest.mark.slow
def test_generated_garments_round_trip(g):
    assert garment_problems(g) == []
    text = dumps_garment(g)
    back = loads_garment(text)
    assert back == g
    assert dumps_garment(back) == text
    assert tomllib.loads(text) == garment_to_dict(g)


DOC = Path(__file__).resolve().parent.parent / "docs" / "spec.md"
EXAMPLE = re.search(r"```toml\n(.*?)```", DOC.read_text(encoding="utf-8"), re.S).group(1)
LINES = EXAMPLE.splitlines()
VALUES = ["0", "-1", '"x"', "true", "nan", "inf", "[]", "[1.0]", "[[1.0, 2.0]]", "{ a = 1 }",
          "1e300", "[1, 2, 3]", '"front"', '"side_left"', "2000-01-01", "1" + "0" * 400,
          "-0.0", "5e-324", '[["a", 1]]', "[[0.0, 0.0], [0.0, 0.0], [0.0, 0.0]]"]


@settings(derandomize=True, max_examples=300, deadline=None)
@given(st.lists(st.tuples(st.integers(0, len(LINES) - 1), st.integers(0, 2),
                          st.sampled_from(VALUES), st.integers(0, len(LINES) - 1)),
                min_size=1, max_size=4))
@pytest.mark.slow
def test_mutated_example_gives_spec_error_or_garment(edits):
    """Deleting, duplicating or re-valuing lines of a valid file yields a garment or a SpecError,
    never any other exception."""
    lines = list(LINES)
    for j, op, value, k in edits:
        j %= len(lines)
        if op == 0:
            del lines[j]
        elif op == 1 and "=" in lines[j]:
            lines[j] = lines[j].split("=")[0] + "= " + value
        else:
            lines.insert(j, lines[k % len(lines)])
        if not lines:
            break
    try:
        g = loads_garment("\n".join(lines))
    except SpecError as exc:
        assert exc.problems and all(p.file == "<string>" for p in exc.problems)
    else:
        assert garment_problems(g) == []


@SETTINGS
@given(star_piece("p", 0), st.booleans())
def test_orientation_check_agrees_with_shapely(piece, flip):
    """The shoelace signed area used for the clockwise check matches shapely (GEOS) in sign and
    size; a reversed outline is reported as clockwise."""
    import shapely

    from garnav.spec.geometry_checks import _signed_area

    ring = piece.outline[::-1] if flip else piece.outline
    area = _signed_area(ring)
    reference = shapely.Polygon(ring)
    assert math.isclose(abs(area), reference.area, rel_tol=1e-12)
    assert (area > 0) == shapely.LinearRing(ring).is_ccw == (not flip)
    if flip:
        edges = tuple(Edge(e.name, e.points[::-1]) for e in reversed(piece.edges))
        g = Garment("g", (Piece("p", edges, placement=piece.placement),),
                    sheet_size_mm=(SPAN + 10.0, 230.0))
        assert any("clockwise" in p.reason for p in garment_problems(g))
