"""``garnav show``: the sheet output, off-screen screenshots and clear errors."""

from __future__ import annotations

import os

os.environ.setdefault("PYVISTA_OFF_SCREEN", "true")
os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")

import json  # noqa: E402
from pathlib import Path  # noqa: E402

import defusedxml.ElementTree as DET  # noqa: E402
import numpy as np  # noqa: E402
import pytest  # noqa: E402

import export_routes as er  # noqa: E402
import garments  # noqa: E402
from garnav.cli import main  # noqa: E402
from garnav.export.waypoints import route_document, write_route_json  # noqa: E402
from garnav.spec import save_garment  # noqa: E402

SVG = "{http://www.w3.org/2000/svg}"


@pytest.fixture
def two_panel_files(tmp_path):
    g = garments.two_panels()
    spec = tmp_path / "two.toml"
    save_garment(g, spec)
    rng = np.random.default_rng(12)
    routes = []
    for i in range(2):
        path = tmp_path / f"r{i}.json"
        write_route_json(path, route_document(er.two_panel_route(rng, back=bool(i)), g))
        routes.append(path)
    return spec, routes


def test_sheet_svg_has_every_route_leg(two_panel_files, tmp_path, capsys):
    spec, routes = two_panel_files
    out = tmp_path / "sheet.svg"
    assert main(["show", str(spec), *map(str, routes), "--sheet", str(out)]) == 0
    assert f"wrote {out}" in capsys.readouterr().out
    root = DET.fromstring(out.read_bytes())
    legs = [e for e in root.iter(SVG + "path") if e.get("class") == "route-leg"]
    expect = sum(len({w["leg"] for w in json.loads(r.read_text())["waypoints"]}) for r in routes)
    assert len(legs) == expect == 2 + 3


@pytest.mark.parametrize(
    "extra, message",
    [
        (["--size", "4", "300"], "--size 4 300: width and height must be 16..8192"),
        (["--sheet", "x.pdf"], "use a .svg or .png"),
        (["--screenshot", "x.png"], "nothing to show in 3D"),
    ],
)
def test_bad_options_give_one_clear_message(two_panel_files, tmp_path, capsys, extra, message):
    spec, _ = two_panel_files
    extra = [str(tmp_path / e) if e.endswith((".pdf", ".png")) else e for e in extra]
    assert main(["show", str(spec), *extra]) == 2
    err = capsys.readouterr().err
    assert message in err and "Traceback" not in err


def test_bad_route_files_are_named(two_panel_files, tmp_path, capsys):
    spec, routes = two_panel_files
    bad = tmp_path / "bad.json"
    bad.write_text("{not json")
    assert main(["show", str(spec), str(bad), "--sheet", str(tmp_path / "s.svg")]) == 2
    assert f"{bad}: not JSON" in capsys.readouterr().err
    other = json.loads(routes[0].read_text())
    other["garment"]["name"] = "someone_else"
    wrong = tmp_path / "wrong.json"
    wrong.write_text(json.dumps(other))
    assert main(["show", str(spec), str(wrong), "--sheet", str(tmp_path / "s.svg")]) == 2
    assert "planned on garment 'someone_else', not 'two_panels'" in capsys.readouterr().err
    other["garment"] = "two_panels"
    wrong.write_text(json.dumps(other))
    assert main(["show", str(spec), str(wrong), "--sheet", str(tmp_path / "s.svg")]) == 2
    assert "'garment' must be an object" in capsys.readouterr().err
    other["format"] = "something"
    wrong.write_text(json.dumps(other))
    assert main(["show", str(spec), str(wrong), "--sheet", str(tmp_path / "s.svg")]) == 2
    assert "not a garnav-route document" in capsys.readouterr().err
    assert not (tmp_path / "s.svg").exists()


@pytest.mark.slow
def test_demo_screenshot_shows_a_hand_made_route(tmp_path, capsys):
    import matplotlib.image

    from garnav.preview.sheet import ROUTE_COLOURS
    from garnav.spec import load_garment

    root = Path(__file__).resolve().parents[1]
    spec = root / "meshes" / "sensing_top.toml"
    g = load_garment(spec)
    # a hand-made route on the front panel, below the chest keep-outs (no 3D path in the file:
    # show lifts the waypoints through the drape)
    route = er.build_route([("front", np.array([[60.0, 60.0], [220.0, 200.0], [380.0, 80.0]]))], [])
    rfile = tmp_path / "front.json"
    write_route_json(rfile, route_document(route, g))
    shot = tmp_path / "shot.png"
    assert main(["show", str(spec), str(rfile), "--screenshot", str(shot), "--size", "360", "300"]) == 0
    img = matplotlib.image.imread(shot)
    assert img.shape[:2] == (300, 360)
    colour = np.array([int(ROUTE_COLOURS[0][i : i + 2], 16) for i in (1, 3, 5)]) / 255.0
    assert np.sum(np.all(np.abs(img[..., :3] - colour) < 0.06, axis=2)) > 30
