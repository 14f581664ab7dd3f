"""Class 9 of the hardening work: the route and show readers. A route document with unknown
pieces or seams, NaN, Infinity or huge coordinates is refused with one clear message naming the
file and the item, before anything is drawn or replayed."""

from __future__ import annotations

import json

import numpy as np
import pytest

import export_routes as er
import garments
from garnav.cli import main
from garnav.errors import QueryError
from garnav.export.route_checks import check_route_on_garment
from garnav.export.waypoints import read_route_document, route_document, write_route_json
from garnav.spec import save_garment


@pytest.fixture
def files(tmp_path):
    g = garments.two_panels()
    spec = tmp_path / "two.toml"
    save_garment(g, spec)
    route = tmp_path / "r.json"
    write_route_json(route, route_document(er.two_panel_route(np.random.default_rng(5)), g))
    return spec, route


def _write(tmp_path, text, name="bad.json"):
    p = tmp_path / name
    p.write_text(text)
    return p


@pytest.mark.parametrize("token", ["NaN", "Infinity", "-Infinity", "1e999", "-1e400"])
def test_class9_non_finite_numbers_are_refused_by_the_reader(files, tmp_path, token):
    _, route = files
    text = route.read_text()
    doc = json.loads(text)
    x = doc["waypoints"][1]["x"]
    bad = _write(tmp_path, text.replace(f'"x": {json.dumps(x)}', f'"x": {token}', 1))
    assert bad.read_text() != text
    with pytest.raises(QueryError, match=r"bad\.json: not JSON this reader can take: .*(JSON number|too large)"):
        read_route_document(bad)


def test_class9_an_integer_of_thousands_of_digits_is_refused(tmp_path):
    bad = _write(tmp_path, '{"format": "garnav-route", "version": 1, "n": ' + "9" * 5000 + "}")
    with pytest.raises(QueryError, match="not JSON this reader can take"):
        read_route_document(bad)


def _doc(route):
    return json.loads(route.read_text())


def test_class9_unknown_piece_and_seam_are_named(files):
    g = garments.two_panels()
    _, route = files
    doc = _doc(route)
    doc["waypoints"][0]["piece"] = "lefft"
    with pytest.raises(QueryError, match="waypoint 0: piece 'lefft' is not a piece of garment 'two_panels'; did you mean 'left'"):
        check_route_on_garment(doc, g, "r.json")
    doc = _doc(route)
    if doc["crossings"]:
        doc["crossings"][0]["seam"] = "midle"
        with pytest.raises(QueryError, match="crossing 0: seam 'midle' is not a seam .*did you mean 'middle'"):
            check_route_on_garment(doc, g, "r.json")


def test_class9_huge_coordinates_are_refused(files):
    g = garments.two_panels()
    _, route = files
    doc = _doc(route)
    doc["waypoints"][-1]["y"] = 1e300
    with pytest.raises(QueryError, match="waypoint .* lies .* mm outside piece"):
        check_route_on_garment(doc, g, "r.json")
    doc = _doc(route)
    doc["path3d"] = [[0.0, 0.0, 0.0], [0.0, float("nan"), 0.0]]
    with pytest.raises(QueryError, match="path3d point 1 is not three finite numbers"):
        check_route_on_garment(doc, g, "r.json")


@pytest.mark.parametrize("command", ["show", "page", "drift"])
def test_class9_every_route_reader_refuses_before_drawing(files, tmp_path, capsys, command):
    spec, route = files
    doc = _doc(route)
    doc["waypoints"][1]["piece"] = "sleeve"
    bad = _write(tmp_path, json.dumps(doc))
    out = tmp_path / "out.svg"
    argv = {
        "show": ["show", str(spec), str(bad), "--sheet", str(out)],
        "page": ["page", str(spec), str(bad), "--out", str(tmp_path / "p.html")],
        "drift": ["drift", str(bad), "--garment", str(spec), "--runs", "10"],
    }[command]
    assert main(argv) == 2
    err = capsys.readouterr().err
    assert "piece 'sleeve' is not a piece of garment" in err and "Traceback" not in err
    assert not out.exists() and not (tmp_path / "p.html").exists()
