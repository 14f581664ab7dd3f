"""Class 6 of the hardening work: a quiet ``garnav show`` — one that exits 0 having drawn nothing —
is an error; an image extension it cannot write is refused; ``--sheet`` needs no 3D window."""

from __future__ import annotations

import json

import numpy as np
import pytest

import export_routes as er
import garments
from cylinder_drape import cylinder_drape
from garnav.cli import main
from garnav.errors import QueryError
from garnav.export.route_checks import check_route_on_garment, view_bounds
from garnav.export.waypoints import route_document, write_route_json
from garnav.spec import save_garment


@pytest.fixture
def files(tmp_path):
    g = garments.two_panels()
    spec = tmp_path / "two.toml"
    save_garment(g, spec)
    route = tmp_path / "r.json"
    write_route_json(route, route_document(er.two_panel_route(np.random.default_rng(3)), g))
    return spec, route


@pytest.fixture
def no_display(monkeypatch):
    monkeypatch.delenv("DISPLAY", raising=False)
    monkeypatch.delenv("WAYLAND_DISPLAY", raising=False)
    monkeypatch.setenv("PYVISTA_OFF_SCREEN", "true")


def test_class6_no_display_and_no_screenshot_is_an_error(files, no_display, capsys):
    spec, route = files
    assert main(["show", str(spec), str(route)]) == 2
    err = capsys.readouterr().err
    assert "no display" in err and "--screenshot" in err and "Traceback" not in err


def test_class6_sheet_works_without_a_3d_window(files, no_display, tmp_path, capsys):
    spec, route = files
    out = tmp_path / "s.svg"
    assert main(["show", str(spec), str(route), "--sheet", str(out)]) == 0
    printed = capsys.readouterr().out
    assert out.read_bytes().startswith(b"<?xml") or b"<svg" in out.read_bytes()[:400]
    assert f"wrote {out}" in printed and "no display" in printed
    png = tmp_path / "s.png"
    assert main(["show", str(spec), str(route), "--sheet", str(png), "--sheet-only"]) == 0
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # the PNG signature (ISO/IEC 15948, 5.2)
    assert main(["show", str(spec), "--sheet-only"]) == 2
    assert "--sheet-only: give the sheet" in capsys.readouterr().err


@pytest.mark.parametrize("option, name, want", [("--screenshot", "x.jpg", ".png"), ("--sheet", "x.pdf", ".svg or .png"),
                                                ("--screenshot", "x", ".png")])
def test_class6_an_image_extension_it_cannot_write_is_refused(files, tmp_path, capsys, option, name, want):
    spec, route = files
    assert main(["show", str(spec), str(route), option, str(tmp_path / name)]) == 2
    assert f"use a {want} file name" in capsys.readouterr().err
    assert not (tmp_path / name).exists()


def _edited(route, tmp_path, change):
    doc = json.loads(route.read_text())
    change(doc)
    out = tmp_path / "edited.json"
    out.write_text(json.dumps(doc))
    return out


def test_class6_a_route_off_its_pieces_draws_nothing_and_fails(files, tmp_path, no_display, capsys):
    spec, route = files

    def shift(doc):
        for w in doc["waypoints"]:
            w["x"] += 5000.0

    bad = _edited(route, tmp_path, shift)
    out = tmp_path / "s.svg"
    assert main(["show", str(spec), str(bad), "--sheet", str(out)]) == 2
    assert "mm outside piece" in capsys.readouterr().err
    assert not out.exists()


def test_class6_a_route_outside_the_3d_view_is_refused():
    g = garments.two_panels()
    drape = cylinder_drape(g)
    doc = route_document(er.two_panel_route(np.random.default_rng(3)), g)
    view = view_bounds([drape.positions])
    doc["path3d"] = [[0.0, 0.0, 0.0], [1e5, 0.0, 0.0]]
    with pytest.raises(QueryError, match="path3d point 1 at .* is outside the 3D view"):
        check_route_on_garment(doc, g, "r.json", view)
    doc["path3d"] = [[0.0, 0.0, 0.0], [0.0, 10.0, 0.0]]
    check_route_on_garment(doc, g, "r.json", view)  # inside: fine
