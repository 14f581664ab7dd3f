"""Robot commands: generation from routes, crossing notices, the text format round trip."""

from __future__ import annotations

import math

import numpy as np
import pytest
import shapely

import export_routes as er
import garments
from garnav import Robot
from garnav.errors import GarnavError, QueryError
from garnav.export.commands import (
    CommandList,
    CommandSyntaxError,
    Cross,
    Go,
    Start,
    Turn,
    format_commands,
    parse_commands,
    read_commands,
    route_commands,
    write_commands,
)


def _single_piece_route(rng, n):
    pts = np.column_stack([rng.uniform(20, 580, n), rng.uniform(20, 780, n)])
    return er.build_route([("panel", pts)], [])


def test_turns_sum_to_net_heading_change_within_one_piece():
    rng = np.random.default_rng(7)
    g = garments.single_panel()
    for _ in range(40):
        route = _single_piece_route(rng, int(rng.integers(2, 9)))
        cl = route_commands(route, g)
        d = np.diff(route.legs[0].points, axis=0)
        # reference: numpy's phase unwrapping of the segment directions (each step < 180°)
        h = np.unwrap(np.arctan2(d[:, 1], d[:, 0]))
        # turns rounded to 0.01° in closed loop: the net heading within half a step plus the
        # last aim correction (observed 0.009°)
        assert cl.turn_total_deg == pytest.approx(math.degrees(h[-1] - h[0]), abs=0.02)
        assert all(-180.0 <= c.angle_deg <= 180.0 for c in cl.commands if isinstance(c, Turn))
        assert cl.distance_mm == pytest.approx(route.length_mm, abs=0.005 * len(cl.commands) + 0.05)  # 0.01 mm steps; observed 0.027
        assert cl.start.heading_deg == pytest.approx(math.degrees(math.atan2(d[0, 1], d[0, 0])), abs=0.005)


def test_square_has_three_left_turns_and_inside_robot_mirrors_them():
    g = garments.single_panel()
    pts = np.array([[100.0, 100.0], [300.0, 100.0], [300.0, 300.0], [100.0, 300.0], [100.0, 100.0]])
    route = er.build_route([("panel", pts)], [])
    out = route_commands(route, g, Robot(side="outside"))
    assert out.commands == (Go(200.0), Turn(90.0), Go(200.0), Turn(90.0), Go(200.0), Turn(90.0), Go(200.0))
    inside = route_commands(route, g, Robot(side="inside"))
    assert [c.angle_deg for c in inside.commands if isinstance(c, Turn)] == [-90.0, -90.0, -90.0]
    assert inside.side == "inside"


def test_collinear_points_make_one_go():
    g = garments.single_panel()
    route = er.build_route([("panel", np.array([[10.0, 10.0], [50.0, 10.0], [50.0, 10.0], [90.0, 10.0]]))], [])
    assert route_commands(route, g).commands == (Go(80.0),)


def _wheel_lead(heading, p, b, seam_line):
    """Which wheel meets a straight seam first, and by how much travel (reference: shapely).

    The two wheel contacts run along lines offset ±b/2 from the centre track; shapely intersects
    each with the seam line.
    """
    u = np.array([math.cos(heading), math.sin(heading)])
    left = np.array([-u[1], u[0]])
    dist = {}
    for name, off in (("left", 0.5 * b), ("right", -0.5 * b)):
        a = p + off * left - 1000 * u
        track = shapely.LineString([a, a + 3000 * u])
        hit = track.intersection(seam_line)
        dist[name] = float(np.dot(np.array(hit.coords[0]) - a, u))
    first = min(dist, key=dist.get)
    return first, abs(dist["left"] - dist["right"])


def test_crossing_notice_angle_and_lead_match_wheel_geometry():
    rng = np.random.default_rng(3)
    g = garments.two_panels()
    seam_line = shapely.LineString([(300.0, -1e4), (300.0, 1e4)])  # left piece's right edge, x = 300
    robot = Robot(wheel_base_mm=30.0)
    checked = 0
    for _ in range(40):
        route = er.two_panel_route(rng)
        cl = route_commands(route, g, robot)
        notices = [c for c in cl.commands if isinstance(c, Cross)]
        assert len(notices) == 1 and notices[0].seam == "middle"
        n = notices[0]
        leg = route.legs[0].points
        d = leg[-1] - leg[-2]
        heading = math.atan2(d[1], d[0])
        # hand reference: the seam tangent is +y, so the angle to it is |atan2(dx, dy)| folded to 0..90
        # the notice's heading is the rounded one (0.01° steps, aimed in closed loop at the crossing)
        assert n.angle_deg == pytest.approx(er.angle_to_run(heading, (0.0, 1.0)), abs=0.02)
        first, lead = _wheel_lead(heading, leg[-2], robot.wheel_base_mm, seam_line)
        assert n.lead == first
        # lead = b·cot(angle) moves by b / sin²(angle) per radian of heading, plus 0.005 mm of rounding
        slope = robot.wheel_base_mm / math.sin(math.radians(n.angle_deg)) ** 2
        assert n.lead_mm == pytest.approx(lead, abs=0.005 + slope * math.radians(0.02))
        # the notice sits right before the go that reaches the seam, at the distance driven so far
        k = cl.commands.index(n)
        go = next(c for c in cl.commands[k:] if isinstance(c, Go))
        assert n.at_mm <= go.distance_mm + 1e-9
        checked += 1
        inside = route_commands(route, g, Robot(wheel_base_mm=30.0, side="inside"))
        n_in = next(c for c in inside.commands if isinstance(c, Cross))
        assert n_in.lead == {"left": "right", "right": "left"}[first]
    assert checked == 40


def test_crossing_that_does_not_fit_the_seam_is_refused():
    g = garments.two_panels()
    good = er.two_panel_route(np.random.default_rng(1))
    c = good.crossings[0]
    bad_cross = type(c)(c.seam, c.from_piece, c.to_piece, c.point_from, c.point_to + [0.0, 5.0], c.fraction, c.angle_deg)
    bad = type(good)(good.legs, (bad_cross,), good.length_mm, good.cost, good.turns_deg, good.headings_deg)
    with pytest.raises(QueryError, match="seam 'middle'.*continues on 'right'"):
        route_commands(bad, g)
    unknown = type(c)("nope", c.from_piece, c.to_piece, c.point_from, c.point_to, c.fraction, c.angle_deg)
    bad = type(good)(good.legs, (unknown,), good.length_mm, good.cost, good.turns_deg, good.headings_deg)
    with pytest.raises(QueryError, match="'nope'"):
        route_commands(bad, g)


def test_text_round_trip_is_exact():
    rng = np.random.default_rng(11)
    g2, gt = garments.two_panels(), er.turned_panels()
    for i in range(30):
        if i % 2:
            route, g = er.two_panel_route(rng, back=bool(i % 3)), g2
        else:
            route, g = er.turned_route(rng), gt
        for side in ("outside", "inside"):
            cl = route_commands(route, g, Robot(side=side, wheel_base_mm=float(rng.uniform(10, 40))))
            text = format_commands(cl, comment="route from a to b\nsecond line")
            assert parse_commands(text) == cl
            assert format_commands(parse_commands(text), comment="route from a to b\nsecond line") == text


def test_text_names_with_spaces_are_quoted():
    cl = CommandList(
        (Cross('side "seam" #1', 0.0, 90.0, "both", 0.0), Go(12.5), Turn(-0.1)),
        side="inside",
        start=Start("left front\u2028\x85 two\nthree\r", 1.0, -2.0, 180.0),  # line breaks in a name
    )
    text = format_commands(cl)
    assert '"left front\u2028\x85 two\\nthree\\r"' in text and '"side \\"seam\\" #1"' in text
    assert parse_commands(text) == cl


def test_text_example_parses():
    text = """garnav-commands 1
    # a comment line
    side outside
    start front 120 300 mm heading 45 deg   # trailing comment
    turn +30 deg

    cross side_left_lower at 80 mm angle 72 deg lead left 11.04 mm
    go 200 mm
    """
    cl = parse_commands(text)
    assert cl.start == Start("front", 120.0, 300.0, 45.0)
    assert cl.commands == (Turn(30.0), Cross("side_left_lower", 80.0, 72.0, "left", 11.04), Go(200.0))


@pytest.mark.parametrize(
    "body, message",
    [
        ("go 10 mm\n", "first statement must be 'garnav-commands 1'"),
        ("garnav-commands 2\n", "version 2 is not supported"),
        ("garnav-commands 1\ngo 10\n", ":2: 'go': missing unit 'mm'"),
        ("garnav-commands 1\ngo 10 cm\n", "expected unit 'mm', got 'cm'"),
        ("garnav-commands 1\ngo -1 mm\n", "distance must be >= 0 mm"),
        ("garnav-commands 1\ngo ten mm\n", "distance must be a number, got 'ten'"),
        ("garnav-commands 1\ngo nan mm\n", "must be a number"),
        ("garnav-commands 1\nturn 10 rad\n", "expected unit 'deg', got 'rad'"),
        ("garnav-commands 1\ntrun 10 deg\n", "unknown command 'trun'; did you mean 'turn'?"),
        ("garnav-commands 1\ngo 1 mm extra\n", "unexpected 'extra'"),
        ("garnav-commands 1\ncross s at 5 mm angle 80 deg lead left 1 mm\nturn 1 deg\n", "must be followed by the 'go'"),
        ("garnav-commands 1\ncross s at 5 mm angle 80 deg lead left 1 mm\ngo 4 mm\n", "beyond this go's 4 mm"),
        ("garnav-commands 1\ncross s at 5 mm angle 95 deg lead left 1 mm\ngo 9 mm\n", "angle must be within 0..90"),
        ("garnav-commands 1\ncross s at 5 mm angle 45 deg lead up 1 mm\ngo 9 mm\n", "expected 'left' or 'right' or 'both'"),
        ("garnav-commands 1\ncross s at 5 mm angle 45 deg lead left 1 mm\n", "no 'go' follows"),
        ("garnav-commands 1\ngo 1 mm\nside inside\n", "must come before the first motion"),
        ("garnav-commands 1\nside inside\nside outside\n", "given twice"),
        ("garnav-commands 1\nstart \"open mm heading 0 deg\n", "unbalanced quote"),
        ("# only a comment\n", "empty"),
    ],
)
def test_text_errors_name_source_line_and_reason(body, message):
    with pytest.raises(CommandSyntaxError, match=None) as info:
        parse_commands(body, source="robot.cmd")
    assert "robot.cmd" in str(info.value)
    assert message in str(info.value)
    assert isinstance(info.value, GarnavError)


def test_write_and_read_file(tmp_path):
    route = er.turned_route(np.random.default_rng(5))
    cl = route_commands(route, er.turned_panels())
    path = write_commands(tmp_path / "out" / "r.cmd", cl)
    assert read_commands(path) == cl
    with pytest.raises(CommandSyntaxError, match=r"missing\.cmd: does not exist"):
        read_commands(tmp_path / "missing.cmd")


# property test: any command list (names with any characters, any finite numbers) survives the
# text round trip to the written precision, and exactly once on it (hypothesis, derandomized by
# the suite's profile)
from hypothesis import given  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

_names = st.text(st.characters(blacklist_categories=("Cs",)), min_size=1, max_size=12)
_finite = st.floats(allow_nan=False, allow_infinity=False, min_value=-1e6, max_value=1e6)
_dist = st.floats(min_value=0.0, max_value=1e6, allow_nan=False)


@st.composite
def _command_lists(draw):
    cmds = []
    for _ in range(draw(st.integers(0, 6))):
        kind = draw(st.sampled_from(["turn", "go", "cross"]))
        if kind == "turn":
            cmds.append(Turn(draw(_finite)))
        elif kind == "go":
            cmds.append(Go(draw(_dist)))
        else:
            go = draw(_dist)
            cmds.append(Cross(draw(_names), draw(st.floats(0.0, go)) if go > 0 else 0.0,
                              draw(st.floats(0.0, 90.0)), draw(st.sampled_from(["left", "right", "both"])),
                              draw(_dist)))
            cmds.append(Go(go))
    start = draw(st.none() | st.builds(Start, _names, _finite, _finite, _finite))
    return CommandList(tuple(cmds), side=draw(st.sampled_from(["outside", "inside"])), start=start)


def _as_written(cl: CommandList) -> CommandList:
    """``cl`` with every number rounded as the text writes it (reference: Python's round)."""
    out = []
    for c in cl.commands:
        if isinstance(c, Turn):
            out.append(Turn(round(c.angle_deg, 2) + 0.0))
        elif isinstance(c, Go):
            out.append(Go(round(c.distance_mm, 2) + 0.0))
        elif isinstance(c, Cross):
            out.append(Cross(c.seam, round(c.at_mm, 2) + 0.0, round(c.angle_deg, 2) + 0.0, c.lead, round(c.lead_mm, 2) + 0.0))
    s = cl.start
    start = None if s is None else Start(s.piece, round(s.x_mm, 3) + 0.0, round(s.y_mm, 3) + 0.0, round(s.heading_deg, 2) + 0.0)
    return CommandList(tuple(out), side=cl.side, start=start)


@given(_command_lists())
def test_any_command_list_round_trips_to_the_written_precision(cl):
    back = parse_commands(format_commands(cl))
    assert back == _as_written(cl)
    assert parse_commands(format_commands(back)) == back
