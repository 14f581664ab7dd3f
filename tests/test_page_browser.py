"""The demo's plan page in a real browser: headless Chromium (Debian's ``chromium`` package) driven
through the Chrome DevTools protocol by Playwright, with the network blocked.

Checks: the 3D canvas draws (its pixels vary: not blank), the page makes no request besides its own
file and logs no console error, a route toggle changes the picture, on a desktop and on a
phone-sized viewport. Screenshots land in the test's temporary folder (set GARNAV_PAGE_SHOTS=DIR to
keep them). Also: the demo page is under 15 MB.
"""

from __future__ import annotations

import io
import os
import shutil
from pathlib import Path

os.environ.setdefault("PYVISTA_OFF_SCREEN", "true")
os.environ.setdefault("VTK_DEFAULT_OPENGL_WINDOW", "vtkEGLRenderWindow")

import numpy as np  # noqa: E402
import pytest  # noqa: E402

pytestmark = pytest.mark.slow

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
#: Flags for a quiet, self-contained headless run; SwiftShader draws WebGL without a GPU.
FLAGS = [
    "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking",
    "--disable-component-update", "--disable-sync", "--use-angle=swiftshader", "--enable-unsafe-swiftshader",
    # any request that still got out would go to a closed loopback port
    "--proxy-server=127.0.0.1:9", "--proxy-bypass-list=<-loopback>",
]
DESKTOP = {"viewport": {"width": 1400, "height": 900}, "device_scale_factor": 1}
PHONE = {"viewport": {"width": 390, "height": 844}, "device_scale_factor": 2, "is_mobile": True, "has_touch": True}


@pytest.fixture(scope="module")
def demo_page(tmp_path_factory):
    from garnav.demo.run import run_demo

    out = tmp_path_factory.mktemp("demo")
    result = run_demo(out, screenshot=False)
    return result.files["page"]


def test_demo_page_is_under_15_mb_and_well_formed(demo_page):
    from garnav.demo.run import PAGE_NAME

    assert demo_page.name == PAGE_NAME
    size = demo_page.stat().st_size
    assert size < 15e6  # observed 2.5 MB
    import html5lib  # a test extra: missing means a broken install
    # reference: html5lib's strict parser (WHATWG algorithm) raises on any parse error
    html5lib.HTMLParser(strict=True).parse(demo_page.read_text(encoding="utf-8"))


@pytest.fixture(scope="module")
def playwright():
    from playwright import sync_api  # a test extra: missing means a broken install

    if CHROMIUM is None:
        pytest.skip("no chromium on this machine (Debian: apt-get install chromium); .ci/run installs it")
    with sync_api.sync_playwright() as pw:
        yield pw


@pytest.fixture(scope="module")
def browser(playwright):
    # Playwright starts the browser with a new, empty profile folder of its own
    chromium = playwright.chromium.launch(executable_path=CHROMIUM, headless=True, args=FLAGS)
    yield chromium
    chromium.close()


def _pixels(png: bytes) -> np.ndarray:
    from matplotlib.image import imread

    return imread(io.BytesIO(png), format="png")[..., :3]


def _open(browser, path: Path, device: dict, wait_for: str | None = "#viewer[data-state=drawn], #viewer[data-state=no-webgl]"):
    context = browser.new_context(offline=True, **device)
    page = context.new_page()
    url = path.resolve().as_uri()
    requests: list[str] = []
    errors: list[str] = []

    def record(request_url: str) -> None:
        if request_url != url and request_url not in requests:
            requests.append(request_url)

    def block(route):  # every request but the page's own file is recorded and refused
        record(route.request.url)
        if route.request.url == url:
            route.continue_()
        else:
            route.abort()

    context.route("**/*", block)
    page.on("request", lambda r: record(r.url))  # also what the router does not see
    page.on("console", lambda m: m.type == "error" and errors.append(m.text))
    page.on("pageerror", lambda e: errors.append(str(e)))
    page.goto(url)
    if wait_for:
        page.wait_for_selector(wait_for, timeout=60_000)
    else:
        page.wait_for_load_state("load")
    return context, page, url, requests, errors


@pytest.mark.parametrize("device", [DESKTOP, PHONE], ids=["desktop", "phone"])
def test_page_draws_offline_without_errors(browser, demo_page, device, tmp_path):
    context, page, url, requests, errors = _open(browser, demo_page, device)
    try:
        assert page.get_attribute("#viewer", "data-state") == "drawn", "WebGL did not draw in headless Chromium"
        canvas = page.locator("#viewer canvas")
        box = canvas.bounding_box()
        assert box and box["width"] >= 300 and box["height"] >= 300
        before = canvas.screenshot()
        img = _pixels(before)
        grey = img.mean(axis=2)
        # not blank: a plain canvas has zero variance; the demo's garment, body and routes give ~0.02
        assert grey.var() > 1e-3
        background = np.array([0xF4, 0xF1, 0xEC]) / 255.0
        drawn = np.abs(img - background).max(axis=2) > 0.05
        assert 0.05 < drawn.mean() < 0.9  # observed ~0.2 (desktop), ~0.3 (phone)

        # a route toggle hides the route in 3D (the picture changes) and on the sheet
        page.locator('input[data-toggle="route-0"]').set_checked(False)
        page.wait_for_timeout(300)
        after = _pixels(canvas.screenshot())
        assert np.abs(after - img).max(axis=2).astype(bool).mean() > 1e-4
        assert page.locator("#layer-route-0").evaluate("e => getComputedStyle(e).display") == "none"
        page.locator('input[data-toggle="route-0"]').set_checked(True)

        shot = page.screenshot(full_page=True)
        keep = os.environ.get("GARNAV_PAGE_SHOTS")
        folder = Path(keep) if keep else tmp_path
        folder.mkdir(parents=True, exist_ok=True)
        name = "desktop" if device is DESKTOP else "phone"
        (folder / f"plan_{name}.png").write_bytes(shot)
        (folder / f"plan_{name}_3d.png").write_bytes(before)
        # labels stay legible: nothing in the page below 12 CSS px
        smallest = page.evaluate(
            "() => Math.min(...Array.from(document.querySelectorAll('p, li, td, th, label, button, .lm'))"
            ".filter(e => e.offsetParent !== null).map(e => parseFloat(getComputedStyle(e).fontSize)))")
        assert smallest >= 12
        # the sheet enlarges inside its own box; the page never scrolls sideways
        wrap = page.locator(".sheet-wrap").bounding_box()
        page.locator('button[data-zoom="4"]').click()
        svg = page.locator(".sheet-wrap svg").bounding_box()
        assert wrap and svg and svg["width"] >= 3.9 * max(wrap["width"], 760)
        width = page.evaluate("() => document.documentElement.scrollWidth")
        assert width <= device["viewport"]["width"] + 1
    finally:
        context.close()
    assert requests == [], f"the page asked the network for {requests}"
    assert errors == [], f"console errors: {errors}"


def test_the_checks_catch_a_request_and_a_console_error(browser, tmp_path):
    # the same request log and console watch on a page that breaks both rules (the request is
    # refused before it leaves the browser; the .invalid name never resolves anyway)
    bad = tmp_path / "bad.html"
    bad.write_text('<!DOCTYPE html><html><head><meta charset="utf-8"><title>t</title></head><body>'
                   '<img src="http://garnav.invalid/x.png" alt="">'
                   '<script>console.error("boom")</script></body></html>', encoding="utf-8")
    context, page, _, requests, errors = _open(browser, bad, DESKTOP, wait_for=None)
    page.wait_for_timeout(200)
    context.close()
    assert requests == ["http://garnav.invalid/x.png"]
    assert "boom" in errors


def test_without_webgl_the_page_says_so_and_keeps_the_rest(playwright, demo_page):
    chromium = playwright.chromium.launch(executable_path=CHROMIUM, headless=True,
                                          args=FLAGS + ["--disable-webgl", "--disable-3d-apis"])
    try:
        context, page, _, requests, errors = _open(chromium, demo_page, DESKTOP)
        assert page.get_attribute("#viewer", "data-state") == "no-webgl"
        assert "cannot draw the 3D view" in page.inner_text("#viewer-status")
        from garnav.demo.run import DEMO_ROUTES

        assert page.locator("table tbody tr:not(.more)").count() == len(DEMO_ROUTES)
        assert page.locator(".sheet-wrap svg").count() == 1
        # the toggles still show and hide the sheet's layers
        page.locator('input[data-toggle="route-1"]').set_checked(False)
        assert page.locator("#layer-route-1").evaluate("e => getComputedStyle(e).display") == "none"
        context.close()
    finally:
        chromium.close()
    assert requests == [] and errors == []
