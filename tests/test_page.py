"""The plan page (garnav.page): well-formed HTML, the inline SVG, the scene data, figures, bad input.

The browser test is in tests/test_page_browser.py. Here the page of a small garment (two panels on
a 3/4 cylinder, tests/cylinder_drape.py) is checked with parsers the project did not write:
html5lib (the WHATWG HTML parsing algorithm) in strict mode, which raises on any parse error;
defusedxml for the inline SVG; the standard library's base64 (RFC 4648) and json for the data.
"""

from __future__ import annotations

import os

os.environ.setdefault("PYVISTA_OFF_SCREEN", "true")
os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")

import base64  # noqa: E402
import json  # noqa: E402
import re  # noqa: E402

import defusedxml.ElementTree as DET  # noqa: E402
import numpy as np  # noqa: E402
import pytest  # noqa: E402

import export_routes as er  # noqa: E402
import garments  # noqa: E402
from cylinder_drape import cylinder_drape  # noqa: E402
from garnav.cli import main  # noqa: E402
from garnav.errors import QueryError  # noqa: E402
from garnav.export.waypoints import route_document, write_route_json  # noqa: E402
from garnav.page import plan_page, route_figures  # noqa: E402
from garnav.page.encode import dequantise, quantisation, quantise  # noqa: E402
from garnav.page.figures import cell_text, table_columns  # noqa: E402
from garnav.page.geometry import BodyZone, ScenePart  # noqa: E402
from garnav.spec import save_garment  # noqa: E402

import html5lib  # a test extra: missing means a broken install

SVG = "{http://www.w3.org/2000/svg}"
XHTML = "{http://www.w3.org/1999/xhtml}"


@pytest.fixture(scope="module")
def cylinder_page():
    g = garments.two_panels()
    drape = cylinder_drape(g)
    rng = np.random.default_rng(12)
    docs = []
    for i in range(2):
        route = er.two_panel_route(rng, back=bool(i))
        docs.append((f"r{i}", route_document(route, g, lifted=er.cylinder_lift(route))))
    zone = BodyZone("device", "implanted device", (0.0, 120.0, 200.0), 40.0)
    page = plan_page(g, docs, drape, None, zones=[zone])
    return g, docs, page


def _scene(html: str) -> dict:
    m = re.search(r'<script type="application/json" id="garnav-scene">(.*?)</script>', html, re.S)
    assert m
    return json.loads(m.group(1))


def test_page_is_well_formed_html_and_fetches_nothing(cylinder_page):
    _, _, page = cylinder_page
    # reference: html5lib's strict parser raises on every parse error of the WHATWG algorithm
    doc = html5lib.HTMLParser(strict=True, namespaceHTMLElements=True).parse(page.html)
    assert doc.find(f".//{XHTML}title").text.startswith("Robot routes on")
    # nothing that a browser would load: no src/href attributes, a CSP that forbids fetching
    loaders = [e.tag for e in doc.iter() if e.get("src") is not None or e.get("href") is not None]
    assert loaders == []
    csp = [e.get("content") for e in doc.iter(f"{XHTML}meta") if e.get("http-equiv") == "Content-Security-Policy"]
    assert csp and csp[0].startswith("default-src 'none'")
    # the page is the same every time it is built (deterministic output)
    g, docs, _ = cylinder_page
    assert plan_page(g, docs, cylinder_drape(g), None, zones=[
        BodyZone("device", "implanted device", (0.0, 120.0, 200.0), 40.0)]).html == page.html


def test_inline_svg_parses_and_holds_every_route_leg(cylinder_page):
    _, docs, page = cylinder_page
    m = re.search(r"<svg .*?</svg>", page.html, re.S)
    assert m
    root = DET.fromstring(m.group(0).encode("utf-8"))  # reference: an XML parser (no DTDs)
    legs = [e for e in root.iter(SVG + "path") if e.get("class") == "route-leg"]
    assert len(legs) == sum(len({w["leg"] for w in d["waypoints"]}) for _, d in docs)
    # each route's toggle names its sheet layer, and that layer exists
    ids = {e.get("id") for e in root.iter(SVG + "g")}
    for i in range(len(docs)):
        assert f'data-toggle="route-{i}" data-svg="layer-route-{i}"' in page.html
        assert f"layer-route-{i}" in ids


def test_scene_data_decodes_to_the_meshes(cylinder_page):
    g, _, page = cylinder_page
    scene = _scene(page.html)
    groups = {p["group"] for p in scene["parts"]}
    assert {"garment", "edges", "route-0", "route-1", "landmarks", "zones"} <= groups
    q = scene["quantisation"]
    drape = cylinder_drape(g)
    piece = next(p for p in scene["parts"] if p["name"] == "piece left")
    # reference: the standard library's base64 (RFC 4648)
    grid = np.frombuffer(base64.b64decode(piece["positions"]), dtype="<u2").reshape(-1, 3)
    tri = np.frombuffer(base64.b64decode(piece["indices"]), dtype="<u2" if piece["index_bytes"] == 2 else "<u4")
    tri = tri.reshape(-1, 3)
    assert len(grid) == piece["vertex_count"] and len(tri) == piece["triangle_count"]
    assert tri.max() < len(grid)
    pts = np.asarray(q["origin"]) + grid * np.asarray(q["step"])
    # every decoded vertex is a drape vertex, within half a grid step per axis
    d = np.abs(pts[:, None, :] - np.asarray(drape.positions)[None, :, :]).max(axis=2).min(axis=1)
    assert d.max() <= 0.5 * max(q["step"]) + 1e-9
    assert [lm["name"] for lm in scene["landmarks"]] == ["left_centre", "right_centre"]


def test_quantisation_error_is_at_most_half_a_step():
    rng = np.random.default_rng(3)
    pts = rng.uniform([-700, -100, 0], [700, 150, 1800], size=(5000, 3))
    part = ScenePart("p", "garment", "#000000", pts, np.zeros((1, 3), dtype=int))
    q = quantisation([part])
    back = dequantise(quantise(pts, q), q)
    err = np.abs(back - pts)
    # bound: rounding to a grid of step s moves a coordinate by at most s / 2
    assert np.all(err <= 0.5 * np.asarray(q.step) + 1e-9)
    assert q.max_error_mm == pytest.approx(0.5 * np.linalg.norm(q.step))
    assert q.max_error_mm < 0.02  # 1.4 m x 0.25 m x 1.8 m on 16 bits: 0.018 mm


def test_table_has_the_route_figures(cylinder_page):
    _, docs, page = cylinder_page
    for _, doc in docs:
        assert f"{doc['length_mm']:.1f} mm" in page.html
        assert f"{doc['summary']['estimated_time_s']:.1f} s" in page.html
    for text in ("implanted", "clinician", "Neck and face", "Batteries", "Emergency stop", "certifies nothing"):
        assert text in page.html
    assert "Energy" not in page.html.split("Route figures")[1].split("</table>")[0]


def test_physics_and_drift_figures_are_shown_when_present(cylinder_page):
    _, docs, _ = cylinder_page
    doc = dict(docs[0][1])
    doc["physics"] = {"posture": "upright", "energy_j": 12.5, "energy_mah": 0.94, "battery_used_fraction": 0.0094,
                      "charge_left_fraction": 0.99, "battery_ok": True, "time_s": 20.0,
                      "min_grip_margin": 2.4, "min_hold_margin": 1.7, "min_drive_margin": 1.2,
                      "safety_factor": 1.5, "drive_safety_factor": 1.1, "unsafe_segments": []}
    doc["drift"] = {"overall_contact_probability": 0.012, "runs": 10000}
    row = route_figures("r0", doc)
    assert (row.energy_j, row.energy_mah, row.battery_used_fraction) == (12.5, 0.94, 0.0094)
    # closest to its requirement: drive 1.2 / 1.1 = 1.09, before hold 1.7 / 1.5 = 1.13 (docs/physics.md)
    assert row.worst_margin == ("drive", 1.2) and row.unsafe_segments == 0 and row.risk == 0.012
    assert cell_text(row, "margin") == "1.20 drive (needs ≥ 1.1)"
    assert cell_text(row, "battery") == "0.9 % (99.0 % left)"
    assert ("physics.posture", "upright") in row.more and ("drift.runs", "10000") in row.more
    assert not any(k in ("physics.time_s", "physics.safety_factor") for k, _ in row.more)
    keys = [k for k, _ in table_columns([row, route_figures("r1", docs[1][1])])]
    assert keys[-5:] == ["energy", "battery", "margin", "unsafe", "risk"]
    bad = dict(doc, physics=[1, 2])
    with pytest.raises(QueryError, match=r"r0.json: 'physics' must be an object, not list"):
        route_figures("r0", bad, source="r0.json")


@pytest.fixture
def page_files(tmp_path):
    g = garments.two_panels()
    spec = tmp_path / "two.toml"
    save_garment(g, spec)
    rng = np.random.default_rng(5)
    path = tmp_path / "r0.json"
    write_route_json(path, route_document(er.two_panel_route(rng), g))
    return spec, path


def test_cli_writes_a_page_without_3d_when_there_is_no_drape(page_files, tmp_path, capsys):
    spec, route = page_files
    out = tmp_path / "plan.html"
    assert main(["page", str(spec), str(route), "--out", str(out), "--title", "Two panels"]) == 0
    assert f"wrote {out}" in capsys.readouterr().out
    text = out.read_text(encoding="utf-8")
    html5lib.HTMLParser(strict=True).parse(text)
    assert "<title>Two panels</title>" in text and "there is no 3D view" in text and 'id="garnav-scene"' not in text


@pytest.mark.parametrize(
    "content, message",
    [
        ("not json", "not JSON"),
        ('{"format": "other"}', "not a garnav-route document"),
        ('{"format": "garnav-route", "version": 9}', "version 9 is not supported"),
    ],
)
def test_cli_refuses_bad_route_documents_with_one_message(page_files, tmp_path, capsys, content, message):
    spec, _ = page_files
    bad = tmp_path / "bad.json"
    bad.write_text(content)
    out = tmp_path / "plan.html"
    assert main(["page", str(spec), str(bad), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("garnav page: error: ") and str(bad) in err and message in err
    assert "Traceback" not in err and len(err.strip().splitlines()) == 1
    assert not out.exists()


def test_cli_refuses_a_route_of_another_garment_and_a_bad_out_name(page_files, tmp_path, capsys):
    spec, route = page_files
    doc = json.loads(route.read_text())
    doc["garment"]["name"] = "other_top"
    other = tmp_path / "other.json"
    other.write_text(json.dumps(doc))
    assert main(["page", str(spec), str(other), "--out", str(tmp_path / "p.html")]) == 2
    assert "planned on garment 'other_top'" in capsys.readouterr().err
    assert main(["page", str(spec), str(route), "--out", str(tmp_path / "p.pdf")]) == 2
    assert "use a .html or .htm file name" in capsys.readouterr().err


def test_a_fine_mannequin_is_decimated_and_the_page_says_by_how_much():
    import pyvista as pv

    from garnav.page.geometry import decimate_body

    sphere = pv.Sphere(radius=150.0, center=(0.0, 0.0, 200.0), theta_resolution=120, phi_resolution=120)
    verts = np.asarray(sphere.points, dtype=float)
    faces = np.asarray(sphere.faces).reshape(-1, 4)[:, 1:]
    v2, f2 = decimate_body(verts, faces, 2000)
    assert 1500 <= len(f2) <= 2000 < len(faces)
    # the simplified surface stays on the sphere (reference: its radius, analytic)
    r = np.linalg.norm(v2 - [0.0, 0.0, 200.0], axis=1)
    assert np.all(np.abs(r - 150.0) < 3.0)  # observed 0.31 mm
    g = garments.two_panels()
    page = plan_page(g, [], cylinder_drape(g), (verts, faces), max_body_triangles=2000)
    assert f"from {len(faces):,} to {len(f2):,} triangles" in page.html


@pytest.mark.slow
def test_cli_page_of_the_committed_demo_spec_with_drape_and_mannequin(tmp_path, capsys):
    from pathlib import Path

    spec = Path(__file__).resolve().parents[1] / "meshes" / "sensing_top.toml"
    route = tmp_path / "r1.json"
    assert main(["route", str(spec), "--from", "wrist_left", "--to", "sternum_left", "--json", str(route)]) == 0
    out = tmp_path / "plan.html"
    assert main(["page", str(spec), str(route), "--out", str(out), "--max-body-triangles", "10000"]) == 0
    printed = capsys.readouterr().out
    assert f"wrote {out}" in printed and "MB; 1 route," in printed
    text = out.read_text(encoding="utf-8")
    html5lib.HTMLParser(strict=True).parse(text)
    scene = _scene(text)
    groups = {p["group"] for p in scene["parts"]}
    assert {"garment", "body", "keepouts", "edges", "landmarks", "route-0"} <= groups
    body = next(p for p in scene["parts"] if p["group"] == "body")
    assert body["triangle_count"] <= 10000 and "The mannequin was simplified for this page from 23,424" in text


@pytest.mark.parametrize(
    "change, message",
    [
        ({"summary": "fast"}, "'summary' must be an object, not str"),
        ({"length_mm": "long"}, "'length_mm' and 'summary.estimated_time_s' must be numbers"),
        ({"drift": 0.5}, "'drift' must be an object, not float"),
    ],
)
def test_cli_refuses_route_figures_of_the_wrong_type(page_files, tmp_path, capsys, change, message):
    spec, route = page_files
    doc = json.loads(route.read_text())
    doc.update(change)
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps(doc))
    out = tmp_path / "plan.html"
    assert main(["page", str(spec), str(bad), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert f"{bad}: {message}" in err and len(err.strip().splitlines()) == 1 and not out.exists()


def test_cli_page_shows_the_contact_risk_of_garnav_drift(page_files, tmp_path, capsys):
    spec, route = page_files
    drift = tmp_path / "drift.json"
    assert main(["drift", str(route), "--garment", str(spec), "--runs", "300", "--seed", "1",
                 "--json", str(drift)]) == 0
    capsys.readouterr()
    d = json.loads(drift.read_text())
    out = tmp_path / "plan.html"
    assert main(["page", str(spec), str(route), "--drift", str(drift), "--out", str(out)]) == 0
    text = out.read_text(encoding="utf-8")
    assert "Contact risk" in text
    p, hi = d["overall"]["probability"], d["overall"]["ci95"][1]
    assert f"{100 * p:.2g} % (95 % ≤ {100 * hi:.2g} %)" in text
    assert "drift.runs: 300" in text
    # a drift file of another route is refused, naming it
    other = tmp_path / "other.json"
    d["distance_mm"] += 50.0
    other.write_text(json.dumps(d))
    assert main(["page", str(spec), str(route), "--drift", str(other), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert f"{other}: matches none of the routes given" in err and "Traceback" not in err
    assert main(["page", str(spec), str(route), "--drift", str(route), "--out", str(out)]) == 2
    assert "not a garnav-drift document" in capsys.readouterr().err


def test_a_sweep_document_shows_its_coverage(cylinder_page):
    _, docs, _ = cylinder_page
    doc = dict(docs[0][1], sweep={"swath_mm": 10.0, "covered_fraction": 0.9412, "lanes": 7})
    row = route_figures("sweep", doc)
    assert ("coverage", "Covered (sweep)") in table_columns([row])
    assert cell_text(row, "coverage") == "94.1 % of reachable, 10 mm swath"


def _schedule(garment_name: str) -> dict:
    # a hand-made garnav-fleet-schedule (docs/fleet.md): robot 'a' drives on 'left', waits 2 s,
    # crosses the seam 'middle' at x = 300 (left) / x = 0 (right) and ends on 'right'
    wps = [
        {"t_s": 0.0, "piece": "left", "x_mm": 200.0, "y_mm": 100.0, "heading_deg": 0.0},
        {"t_s": 5.0, "piece": "left", "x_mm": 300.0, "y_mm": 100.0, "heading_deg": 0.0},
        {"t_s": 5.0, "piece": "right", "x_mm": 0.0, "y_mm": 100.0, "heading_deg": 0.0},
        {"t_s": 7.0, "piece": "right", "x_mm": 0.0, "y_mm": 100.0, "heading_deg": 0.0},
        {"t_s": 12.0, "piece": "right", "x_mm": 100.0, "y_mm": 100.0, "heading_deg": 0.0},
    ]
    robot = {"name": "a", "profile": {"name": "r", "radius_mm": 10.0, "speed_mm_s": 20.0, "side": "outside"},
             "depart_s": 0.0, "arrive_s": 12.0, "driving_s": 10.0, "waiting_s": 2.0, "length_mm": 200.0,
             "waypoints": wps, "commands": [{"op": "go", "distance_mm": 100.0},
                                            {"op": "cross", "seam": "middle", "at_mm": 100.0},
                                            {"op": "go", "distance_mm": 100.0}]}
    return {"format": "garnav-fleet-schedule", "version": 1, "garment": garment_name, "robots": [robot]}


def test_cli_page_shows_each_robot_of_a_fleet_schedule(tmp_path, capsys):
    g = garments.two_panels()
    spec = tmp_path / "two.toml"
    save_garment(g, spec)
    sched = tmp_path / "sched.json"
    sched.write_text(json.dumps(_schedule(g.name)))
    out = tmp_path / "plan.html"
    assert main(["page", str(spec), "--fleet", str(sched), "--out", str(out)]) == 0
    text = out.read_text(encoding="utf-8")
    html5lib.HTMLParser(strict=True).parse(text)
    assert "sched:<wbr>a" not in text and "sched:a" in text  # no underscore, no break
    assert "200.0 mm" in text and "12.0 s" in text and ">middle<" in text
    assert "fleet.waiting_s: 2" in text
    svg = DET.fromstring(re.search(r"<svg .*?</svg>", text, re.S).group(0).encode("utf-8"))
    legs = [e for e in svg.iter(SVG + "path") if e.get("class") == "route-leg"]
    assert len(legs) == 2  # one leg per piece; the wait adds no geometry
    bad = dict(_schedule(g.name), garment="other_top")
    sched.write_text(json.dumps(bad))
    assert main(["page", str(spec), "--fleet", str(sched), "--out", str(out)]) == 2
    assert "planned on garment 'other_top'" in capsys.readouterr().err
    assert main(["page", str(spec), "--out", str(out)]) == 2
    assert "give at least one ROUTE.json or --fleet" in capsys.readouterr().err


def test_3d_figures_of_a_route_lifted_for_the_page():
    from garnav.page.build import _with_3d_figures

    doc = {"length_mm": 7.0, "length_3d_mm": None, "summary": {"estimated_time_s": 1.0}}
    pts = np.array([[0.0, 0.0, 0.0], [3.0, 0.0, 4.0], [3.0, 0.0, 2.0]])
    out = _with_3d_figures(doc, pts)
    # by hand: |(3, 0, 4)| = 5 (Pythagoras) plus 2; climbs 4 up, 2 down
    assert out["length_3d_mm"] == pytest.approx(7.0)
    assert (out["summary"]["climb_up_mm"], out["summary"]["climb_down_mm"]) == (4.0, 2.0)
    assert doc["length_3d_mm"] is None  # the input is not changed
