"""Seams for imported patterns: a seams file by edge or by notch pairs, and the proposals.

Oracle: two pieces drawn side by side, so that the points to be sewn together lie at the same
place on the sheet; a correct seam maps each point of one run onto the same sheet point of the
other.
"""

from __future__ import annotations

import numpy as np
import pytest


from garnav.cli import main  # noqa: E402
from garnav.errors import SpecError  # noqa: E402
from garnav.patterns import read_pattern  # noqa: E402
from garnav.patterns.seams import (  # noqa: E402
    apply_seams,
    dumps_seams,
    load_seams,
    propose_seams,
)
from garnav.spec import load_garment  # noqa: E402

# front 0..100 × 0..200 mm and back 100..200 × 0..200 mm (sheet frame, y up); two notches on the
# shared side at y = 60 and 140; SVG's y points down (y_svg = 200 − y)
PATTERN = """<svg xmlns="http://www.w3.org/2000/svg" width="220mm" height="220mm" viewBox="0 0 220 220">
<rect data-name="front" x="0" y="20" width="100" height="200"/>
<rect data-name="back" x="100" y="20" width="100" height="200"/>
<line class="notch" x1="100" y1="160" x2="97" y2="160"/>
<line class="notch" x1="100" y1="80" x2="97" y2="80"/>
<line class="notch" x1="100" y1="160" x2="103" y2="160"/>
<line class="notch" x1="100" y1="80" x2="103" y2="80"/>
<line class="grain" x1="50" y1="200" x2="50" y2="40"/>
<line class="grain" x1="150" y1="200" x2="150" y2="40"/>
<circle class="landmark" id="chest" cx="50" cy="100" r="1"/>
<circle class="landmark" id="blade" cx="150" cy="100" r="1"/>
</svg>
"""

BY_NOTCHES = """format = "garnav-seams"
[[seam]]
name = "side"
a = { piece = "front", from = "c2", to = "c3" }
b = { piece = "back", from = "c4", to = "c1", reverse = true }
crossing_cost_mm = 5.0
"""


@pytest.fixture
def pattern(tmp_path):
    path = tmp_path / "vest.svg"
    path.write_text(PATTERN)
    return path


def _sewn_points_coincide(garment, seam) -> float:
    """Largest sheet distance between points sewn together (mm), at 11 fractions."""
    t = np.linspace(0.0, 1.0, 11)
    from garnav.polyline import cumulative_length, point_at_length

    pa = garment.run_polyline(seam.a)
    pts_a = point_at_length(pa, t * cumulative_length(pa)[-1])
    pts_b = garment.seam_partner(seam, "a", t)
    sa = garment.piece(seam.a.piece).placement.to_sheet(pts_a)
    sb = garment.piece(seam.b.piece).placement.to_sheet(pts_b)
    return float(np.hypot(*(sa - sb).T).max())


def test_point_names(pattern):
    built = read_pattern(pattern)
    pts = {pp.piece: pp.points for pp in built.points}
    assert pts == {"front": ("c1", "c2", "n1", "n2", "c3", "c4"),
                   "back": ("c1", "c2", "c3", "c4", "n1", "n2")}


def test_seams_by_notch_pairs(tmp_path, pattern):
    seams = tmp_path / "seams.toml"
    seams.write_text(BY_NOTCHES)
    built = read_pattern(pattern)
    g = apply_seams(built, load_seams(seams), str(seams))
    assert [s.name for s in g.seams] == ["side_1", "side_2", "side_3"]
    for s in g.seams:
        assert s.crossing_cost_mm == 5.0
        assert _sewn_points_coincide(g, s) < 1e-9
    # the notches pair up: seam 1 runs from the hem to the first notch on both pieces
    first = g.seams[0]
    assert g.run_length(first.a) == pytest.approx(60.0) and g.run_length(first.b) == pytest.approx(60.0)


@pytest.mark.parametrize("text, expected", [
    (BY_NOTCHES.replace('to = "c1"', 'to = "n1"'),
     "seam 'side': run 'a' covers 3 edges and run 'b' 1"),
    (BY_NOTCHES.replace('from = "c4"', 'from = "n7"'),
     "seam 'side' run 'b': 'from': piece 'back' has no boundary point 'n7'"),
    (BY_NOTCHES.replace('to = "c3"', 'to = "c2"'), "seam 'side' run 'a': 'from' and 'to' are the same point"),
    (BY_NOTCHES.replace('piece = "back"', 'piece = "bak"'), "unknown piece 'bak'; did you mean 'back'?"),
    (BY_NOTCHES.replace("crossing_cost_mm", "crossing_cost"), "unknown key 'crossing_cost'; did you mean 'crossing_cost_mm'?"),
    ('format = "garnav-seams"\n[[seam]]\nname = "x"\na = { piece = "front", edge = "e9" }\n'
     'b = { piece = "back", edge = "e1" }\n', "edge 'e9'"),
    ('format = "garnav-seams"\nseems = 1\n', "unknown key 'seems'; did you mean 'seam'?"),
])
def test_bad_seams_files(tmp_path, pattern, text, expected):
    seams = tmp_path / "seams.toml"
    seams.write_text(text)
    with pytest.raises(SpecError) as info:
        apply_seams(read_pattern(pattern), load_seams(seams), str(seams))
    assert expected in str(info.value) and str(seams) in str(info.value)


def test_proposals(pattern):
    built = read_pattern(pattern)
    proposals = propose_seams(built)
    # the best match: front's right side with back's left side, notch for notch
    best = proposals[0]
    assert best.table["a"] == {"piece": "front", "from": "c2", "to": "c3"}
    assert best.table["b"] == {"piece": "back", "from": "c4", "to": "c1", "reverse": True}
    assert best.notches == 2 and best.mismatch == 0.0
    g = apply_seams(built, [p.table for p in proposals[:1]], "<proposals>")
    assert all(_sewn_points_coincide(g, s) < 1e-9 for s in g.seams)
    # a proposal is only text until the user applies it
    assert built.garment.seams == ()
    text = dumps_seams(proposals, "check these")
    import tomllib

    assert tomllib.loads(text)["seam"][0] == best.table
    assert "# proposed: 200.0 mm and 200.0 mm (0.0 % apart), 2 notches between the ends" in text


def test_cli_never_invents_seams(tmp_path, pattern, capsys):
    out = tmp_path / "vest.toml"
    assert main(["import", str(pattern), "--out", str(out)]) == 0
    text = capsys.readouterr().out
    assert load_garment(out).seams == ()
    assert "No seams were added" in text and "--propose-seams" in text
    proposals = tmp_path / "proposed.toml"
    assert main(["import", str(pattern), "--out", str(out), "--propose-seams", str(proposals)]) == 0
    assert load_garment(out).seams == ()
    assert "not applied" in capsys.readouterr().out
    # the user keeps the first proposal and imports again with it
    keep = proposals.read_text().split("\n\n")[:2]
    (tmp_path / "keep.toml").write_text("\n\n".join(keep) + "\n")
    assert main(["import", str(pattern), "--out", str(out), "--seams", str(tmp_path / "keep.toml")]) == 0
    g = load_garment(out)
    assert len(g.seams) == 3 and g.landmark("chest").piece == "front"


def test_route_across_imported_seam(tmp_path, pattern):
    from garnav import Robot
    from garnav.plan import Planner

    seams = tmp_path / "seams.toml"
    seams.write_text(BY_NOTCHES)
    g = apply_seams(read_pattern(pattern), load_seams(seams), str(seams))
    route = Planner(g, Robot(radius_mm=10.0, edge_margin_mm=2.0)).route("chest", "blade")
    # straight across the side seam: 100 mm (landmarks at the same height), + 5 mm crossing cost
    assert route.length_mm == pytest.approx(100.0, abs=1e-6)
    assert [c.seam for c in route.crossings] == ["side_2"]


# a front and a back with concave armholes (45° arcs of radius 60 mm) and a sleeve whose convex
# cap (a 90° arc of radius 60 mm) a notch splits into halves as long as each armhole
ARMHOLES = """<svg xmlns="http://www.w3.org/2000/svg" width="700mm" height="300mm" viewBox="0 0 700 300">
<path data-name="front" d="M 0 300 L 200 300 L 200 60 A 60 60 0 0 1 157.574 42.426 L 157.574 0 L 0 0 Z"/>
<path data-name="back" d="M 250 300 L 450 300 L 450 0 L 292.426 0 L 292.426 42.426 A 60 60 0 0 1 250 60 Z"/>
<path data-name="sleeve" d="M 517.574 300 L 602.426 300 L 602.426 150 A 60 60 0 0 0 517.574 150 Z"/>
<line class="notch" x1="560" y1="132.426" x2="560" y2="137"/>
</svg>
"""


def test_proposals_split_a_sleeve_cap_at_its_notch(tmp_path):
    """Each armhole is proposed with one half of the cap (corner to notch), not with the other
    armhole of the same length: the armhole turns by −45°, the cap half by +45°, and curvatures
    that cancel rank first (a smooth seam; geodesic curvature is intrinsic, do Carmo §4-4)."""
    path = tmp_path / "arm.svg"
    path.write_text(ARMHOLES)
    built = read_pattern(path)
    sleeve = {pp.piece: pp for pp in built.points}["sleeve"]
    notch = sleeve.points[sleeve.is_notch.index(True)]
    arm = [p for p in propose_seams(built)
           if {p.table["a"]["piece"], p.table["b"]["piece"]} & {"sleeve"}
           and p.length_a == pytest.approx(60 * np.pi / 4, rel=1e-3)]
    assert {p.table["a"]["piece"] for p in arm} | {p.table["b"]["piece"] for p in arm} == \
        {"front", "back", "sleeve"}
    assert len(arm) == 2
    for p in arm:
        run = p.table["a"] if p.table["a"]["piece"] == "sleeve" else p.table["b"]
        assert notch in (run["from"], run["to"])  # a half cap, corner to notch
