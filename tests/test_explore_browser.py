"""The explore page in a real headless browser (Chromium from the system's packages).

The page is loaded from a file with every network request refused, a slider is moved to a
thickness and an angle, and the numbers the page then shows are compared with what
``filmoptic color --json`` gives for that stack. A screenshot must show the page, not a blank.

Without Chromium or the ``playwright`` package these tests skip with the reason; with
FILMOPTIC_REQUIRE_BROWSER=1 in the environment (CI sets it after installing Chromium) a missing
browser is a failure instead.
"""

from __future__ import annotations

import io
import json
import os
import shutil

import numpy as np
import pytest

REQUIRED = os.environ.get("FILMOPTIC_REQUIRE_BROWSER") == "1"
# Flags that keep a headless Chromium from looking anything up on the network.
QUIET_FLAGS = [
    "--no-sandbox", "--disable-gpu", "--no-first-run", "--no-default-browser-check",
    "--disable-background-networking", "--disable-component-update", "--disable-default-apps",
    "--disable-sync", "--disable-domain-reliability", "--disable-client-side-phishing-detection",
    "--metrics-recording-only", "--disable-features=Translate,OptimizationHints,MediaRouter,AutofillServerCommunication",
]


def _chromium():
    return shutil.which("chromium") or shutil.which("chromium-browser")


@pytest.fixture(scope="module")
def browser():
    problem = None
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        problem = "the playwright package is not installed (pip install playwright)"
    if problem is None and _chromium() is None:
        problem = "no Chromium on this machine (install it with the system's packages, e.g. apt-get install chromium)"
    if problem is not None:
        if REQUIRED:
            pytest.fail(f"FILMOPTIC_REQUIRE_BROWSER=1 but {problem}")
        pytest.skip(problem)
    with sync_playwright() as p:
        chromium = p.chromium.launch(executable_path=_chromium(), args=QUIET_FLAGS)
        yield chromium
        chromium.close()


@pytest.fixture
def open_page(browser):
    """Open an HTML file; every request that is not the file itself is refused and recorded."""
    pages = []

    def opener(path):
        page = browser.new_page(viewport={"width": 1200, "height": 1000})
        page.outside, page.errors = [], []
        page.on("pageerror", lambda error: page.errors.append(str(error)))
        page.on("console", lambda message: page.errors.append(message.text) if message.type == "error" else None)

        def refuse(route):
            if route.request.url.startswith("file:"):
                return route.continue_()
            page.outside.append(route.request.url)
            return route.abort()

        page.route("**/*", refuse)
        page.goto(path.resolve().as_uri())
        page.wait_for_function("document.body.dataset.ready === '1'", timeout=10_000)
        pages.append(page)
        return page

    yield opener
    for page in pages:
        page.close()


def _slide(page, selector, value):
    page.eval_on_selector(selector, f"e => {{ e.value = {value!r}; e.dispatchEvent(new Event('input')) }}")


def _number(text):
    return float(text.replace("−", "-"))


def _shown(page, keys):
    views = {}
    for key in keys:
        views[key] = {part: page.inner_text(f"#{key}-{part}") for part in ("L", "a", "b", "hex", "word")}
    return views


def test_slider_values_match_the_color_command(run_cli, tmp_path, open_page):
    path = tmp_path / "mirror.html"
    assert run_cli(["explore", "Ti 0..20nm / glass 4mm", "--out", path, "--angles", "0:60:30"]).exit_code == 0
    page = open_page(path)
    _slide(page, "#d0", 8.5)
    _slide(page, "#angle", 30)
    assert page.inner_text("#d0-value") == "8.5 nm" and page.inner_text("#angle-value") == "30°"
    expected = json.loads(run_cli(["color", "Ti 8.5nm / glass 4mm", "--angle", "30", "--json"]).stdout)
    shown = _shown(page, ("reflected", "reflected_reverse", "transmitted"))
    for key, view in shown.items():
        L, a, b = expected[key]["Lab"]
        # Shown to 0.1 from a value stored to 0.01: within 0.05 + 0.005 of the exact one.
        assert _number(view["L"]) == pytest.approx(L, abs=0.056)
        assert _number(view["a"]) == pytest.approx(a, abs=0.056)
        assert _number(view["b"]) == pytest.approx(b, abs=0.056)
        assert view["hex"] == expected[key]["hex"]
    lum = expected["luminous"]
    for name in ("T", "R", "R_reverse", "A_layers", "A_substrate"):
        # Percent to two decimals from a value stored to 1/65535.
        assert _number(page.inner_text(f"#lum-{name}")) == pytest.approx(100 * lum[name], abs=0.0051)
    assert page.errors == [] and page.outside == []


def test_screenshot_shows_the_page_and_the_colour(run_cli, tmp_path, open_page):
    from PIL import Image

    path = tmp_path / "oxide.html"
    assert run_cli(["explore", "TiO2 0..250nm / Ti", "--out", path]).exit_code == 0
    page = open_page(path)
    _slide(page, "#d0", 50)
    shot = np.asarray(Image.open(io.BytesIO(page.screenshot(full_page=True))).convert("RGB"), dtype=float)
    # Not blank: many colours and a real spread of lightness over the page.
    assert shot.std() > 20 and len(np.unique(shot.reshape(-1, 3), axis=0)) > 200
    patch = np.asarray(Image.open(io.BytesIO(page.locator("#reflected-patch").screenshot())).convert("RGB"), float)
    expected = json.loads(run_cli(["color", "TiO2 50nm / Ti", "--json"]).stdout)["reflected"]["hex"]
    inner = patch[4:-4, 4:-4].reshape(-1, 3)
    np.testing.assert_allclose(np.median(inner, axis=0), [int(expected[i:i + 2], 16) for i in (1, 3, 5)], atol=2)
    assert page.inner_text("#reflected-word") == "blue"
    # An opaque part: no patch through it, and the page says why.
    assert page.locator("#transmitted-patch").count() == 0
    assert "Nothing comes through" in page.inner_text("#view-transmitted")
    assert page.errors == [] and page.outside == []


def test_two_free_thicknesses(run_cli, tmp_path, open_page):
    path = tmp_path / "two.html"
    result = run_cli(["explore", "SiO2 ? / Cr ? / glass 4mm", "--out", path, "--range", "0:200",
                      "--range", "0:20", "--step", "2nm", "--angles", "0", "--json"])
    assert result.exit_code == 0, result.stderr
    page = open_page(path)
    _slide(page, "#d0", 100)
    _slide(page, "#d1", 8)
    expected = json.loads(run_cli(["color", "SiO2 100nm / Cr 8nm / glass 4mm", "--json"]).stdout)
    assert page.inner_text("#reflected-hex") == expected["reflected"]["hex"]
    assert _number(page.inner_text("#lum-T")) == pytest.approx(100 * expected["luminous"]["T"], abs=0.0051)
    assert page.errors == [] and page.outside == []
