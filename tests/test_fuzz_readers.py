"""Fuzzing the garment spec, route document and command list readers (strategies and property in
``reader_fuzz.py``), and one named regression test for every bug the fuzz found.

The property: every input reads, or is refused with a ``GarnavError`` whose message names the file;
never another exception, never a hang. Here each reader gets a small derandomized example count;
``python -m benchmarks.fuzz_case --examples 1000`` runs the same strategies at length.
"""

from __future__ import annotations

import json

import pytest
from hypothesis import given, settings

import garments
import reader_fuzz as rf
from garnav.errors import QueryError
from garnav.export.commands import CommandSyntaxError, parse_commands, read_commands
from garnav.export.replay import MAX_CROSSINGS_PER_GO, ReplayError, replay_commands
from garnav.export.waypoints import document_route, read_route_document

# examples per reader in the quick suite (a spec example reads the 1,400-line demo spec: 0.05 s)
EXAMPLES = {"spec": 30, "route": 60, "commands": 60}


@pytest.fixture(scope="module")
def seeds(tmp_path_factory):
    return rf.make_seeds(tmp_path_factory.mktemp("fuzz_seeds"))


@pytest.fixture(scope="module")
def folder(tmp_path_factory):
    return tmp_path_factory.mktemp("fuzzed")


def test_the_seeds_read(seeds, folder):
    """The unmutated files read: the fuzz starts from valid inputs."""
    for kind, text in (("spec", seeds.spec_text), ("route", seeds.route_text), ("commands", seeds.commands_text)):
        assert rf.run_input(kind, text.encode("utf-8"), folder, seeds) == ("read", None), kind


@pytest.mark.parametrize("kind", rf.READERS)
def test_fuzzed_files_read_or_are_refused_with_the_file_named(kind, seeds, folder):
    @settings(max_examples=EXAMPLES[kind], derandomize=True, deadline=None, database=None)
    @given(data=rf.reader_inputs(kind, seeds))
    def check(data):
        assert rf.check_input(kind, data, folder, seeds) is None

    check()


# ----------------------------------------------------------------------------- found by the fuzz

def _route_file(seeds, tmp_path, edit):
    doc = json.loads(seeds.route_text)
    edit(doc)
    path = tmp_path / "edited.json"
    path.write_text(json.dumps(doc), encoding="utf-8")
    return path


def _route_refused(seeds, tmp_path, edit, match):
    path = _route_file(seeds, tmp_path, edit)
    with pytest.raises(QueryError, match=match) as info:
        read_route_document(path)
    assert str(path) in str(info.value)
    assert rf.check_input("route", path.read_bytes(), tmp_path, seeds) is None


def test_route_crossing_point_that_is_not_numbers_is_refused(seeds, tmp_path):
    # was: ValueError "could not convert string to float: 'back'" from document_route
    _route_refused(seeds, tmp_path, lambda d: d["crossings"][0].__setitem__("from_mm", "back"),
                   r"crossing 0: 'from_mm' is not two finite numbers \[x, y\] \('back'\)")


def test_route_crossing_point_of_one_number_is_refused(seeds, tmp_path):
    # was: IndexError "index 1 is out of bounds for axis 0 with size 1" in route_commands
    _route_refused(seeds, tmp_path, lambda d: d["crossings"][0].__setitem__("to_mm", [1.0]),
                   r"crossing 0: 'to_mm' is not two finite numbers")


def test_route_crossing_fraction_too_large_for_a_float_is_refused(seeds, tmp_path):
    # was: OverflowError "int too large to convert to float"
    _route_refused(seeds, tmp_path, lambda d: d["crossings"][0].__setitem__("fraction", 10**400),
                   r"crossing 0: 'fraction' is not a finite number")


def test_route_crossing_seam_that_is_not_a_string_is_refused(seeds, tmp_path):
    # was: TypeError "unhashable type: 'list'" in the garment check
    _route_refused(seeds, tmp_path, lambda d: d["crossings"][0].__setitem__("seam", ["middle"]),
                   r"crossing 0: 'seam' is not a string \(\['middle'\]\)")


def test_route_heading_that_is_not_a_number_is_refused(seeds, tmp_path):
    # was: ValueError from document_route's float(heading_deg)
    _route_refused(seeds, tmp_path, lambda d: d["waypoints"][1].__setitem__("heading_deg", "north"),
                   r"waypoint 1: 'heading_deg' is not a finite number \('north'\)")


@pytest.mark.parametrize("robot", ["robot", [1, 2], True])
def test_route_robot_that_is_not_an_object_is_refused(seeds, tmp_path, robot):
    # was: AttributeError "'str' object has no attribute 'get'" in the drift/track/simulate reader
    _route_refused(seeds, tmp_path, lambda d: d.__setitem__("robot", robot), r"'robot' must be an object")


@pytest.mark.parametrize("radius, shown", [(10**400, "10000000"), (-5, "-5"), (0, "0"), (True, "True"), ("10", "'10'")])
def test_route_robot_radius_must_be_finite_and_positive(seeds, tmp_path, radius, shown):
    # was: OverflowError for a huge integer; a negative radius was taken as the robot's
    _route_refused(seeds, tmp_path, lambda d: d["robot"].__setitem__("radius_mm", radius),
                   rf"'robot': 'radius_mm' must be a finite number > 0, found {shown}")


def test_route_document_that_reads_gives_a_route(seeds, tmp_path):
    path = _route_file(seeds, tmp_path, lambda d: None)
    route = document_route(read_route_document(path))
    assert [leg.piece for leg in route.legs] == ["left", "right"]


def _commands_file(seeds, tmp_path, line, replace=None):
    lines = seeds.commands_text.rstrip("\n").split("\n")
    if replace is None:
        lines.append(line)
    else:
        lines = [line if ln.startswith(replace) else ln for ln in lines]
    path = tmp_path / "edited.cmd"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


@pytest.mark.parametrize("line, replace, what", [
    ("go 1e999 mm", None, "distance 1e999"),  # was: read as an infinite go
    ("wait 1e999 s", None, "time 1e999"),  # was: an infinite wait
    ("turn -1e999 deg", None, "angle -1e999"),  # was: ValueError "math domain error" in the replay
    ("go 1e300 mm", None, "distance 1e300"),  # finite, but laps a tube for hours
    ("start left 1e999 5 mm heading 0 deg", "start", "x 1e999"),  # was: NaN warnings in the replay
    ("go " + "9" * 400 + " mm", None, "distance 999999999999999999999..."),
])
def test_commands_number_beyond_the_limit_is_refused(seeds, tmp_path, line, replace, what):
    path = _commands_file(seeds, tmp_path, line, replace)
    with pytest.raises(CommandSyntaxError, match=r"too large: numbers in a command list are at most 1e\+07") as info:
        read_commands(path)
    assert f"{path}:" in str(info.value) and what in str(info.value)


def test_commands_number_at_the_limit_reads(seeds, tmp_path):
    commands = read_commands(_commands_file(seeds, tmp_path, "wait 1e7 s"))
    assert commands.commands[-1].seconds == 1e7


def test_replay_of_a_go_lapping_a_tube_stops_at_the_crossing_limit(monkeypatch):
    # a go of 1e6 mm round a 314 mm tube crosses its seam 3183 times, about 3 s of work (1e7 mm:
    # 30 s, and a thinner tube more); the limit is lowered here to keep the test fast
    import garnav.export.replay as replay

    assert MAX_CROSSINGS_PER_GO == 1000
    monkeypatch.setattr(replay, "MAX_CROSSINGS_PER_GO", 20)
    g = garments.tube()
    laps = parse_commands("garnav-commands 1\nstart tube 100 200 mm heading 0 deg\ngo 1000000 mm\n")
    with pytest.raises(ReplayError, match=r"crossed seams 20 times in one go \(last 'closing', now on piece 'tube'\)"):
        replay_commands(g, laps)
    # under the limit the go is driven: from x = 100 mm, 3000 mm round a 100π mm tube crosses the
    # seam floor((100 + 3000) / 100π) = 9 times and ends at 3100 − 9 · 100π = 272.57 mm
    few = replay_commands(g, parse_commands("garnav-commands 1\nstart tube 100 200 mm heading 0 deg\ngo 3000 mm\n"))
    assert len(few.crossings) == 9
    assert few.poses[-1].x_mm == pytest.approx(3100.0 - 900.0 * 3.141592653589793, abs=1e-6)
