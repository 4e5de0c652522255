"""The report's 3D view in a real browser: Debian's headless Chromium driven by playwright.

The report is loaded from a local file (no network: the viewer library is embedded), the page
must log no console error, moving the fold-fraction slider must change what is drawn (two
screenshots differ), and clicking a panel must show its id. Skips only when Chromium is absent
and ``THICKPANEL_REQUIRE_BROWSER`` is unset (``.ci/run`` installs Chromium and sets it, so in CI
the test always runs).

Outside sources: the rendering is done by Chromium's WebGL implementation (SwiftShader software
rasteriser, no GPU) and the pixels are compared with numpy on PNGs decoded by matplotlib's reader.
"""

from __future__ import annotations

import io
import os
from pathlib import Path

import numpy as np
import pytest

from tests.sheet_designs import miura_sheet_toml
from thickpanel.build import run_pipeline
from thickpanel.design import loads_design
from thickpanel.export.report import write_report

CHROMIUM = Path("/usr/bin/chromium")
ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
        "--disable-background-networking", "--disable-component-update", "--disable-sync",
        "--use-angle=swiftshader", "--enable-unsafe-swiftshader"]

DESIGN = miura_sheet_toml("browser-sheet", states=10, target_deg=120.0)


def _browser_or_skip():
    if not CHROMIUM.exists():
        if os.environ.get("THICKPANEL_REQUIRE_BROWSER"):
            pytest.fail(f"{CHROMIUM} is missing but THICKPANEL_REQUIRE_BROWSER is set")
        pytest.skip(f"{CHROMIUM} not installed")
    return pytest.importorskip("playwright.sync_api")


def open_report(path: Path, *, width: int = 1280, height: int = 900):
    """(playwright, browser, page, console errors) with the report at ``path`` loaded and drawn."""
    api = _browser_or_skip()
    pw = api.sync_playwright().start()
    browser = pw.chromium.launch(executable_path=str(CHROMIUM), args=ARGS, headless=True)
    page = browser.new_page(viewport={"width": width, "height": height})
    errors: list[str] = []
    page.on("console", lambda m: errors.append(m.text) if m.type == "error" else None)
    page.on("pageerror", lambda e: errors.append(str(e)))
    page.route("http*://**", lambda route: route.abort())  # offline: nothing may be fetched
    page.goto(path.as_uri())
    page.wait_for_function("window.tpView && window.tpView.ready", timeout=30000)
    page.locator("#tp-canvas").scroll_into_view_if_needed()
    return pw, browser, page, errors


def _pixels(png: bytes) -> np.ndarray:
    from matplotlib.image import imread

    return imread(io.BytesIO(png), format="png")


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    pytest.importorskip("thickpanel.layouts.classic")
    _browser_or_skip()
    res = run_pipeline(loads_design(DESIGN), command="report",
                       stages=("pattern", "foldability", "rigidity", "fold path", "method", "clearance", "solids"))
    return write_report(res, tmp_path_factory.mktemp("browser") / "report.html"), res


def test_viewer_folds_and_picks(report):
    path, res = report
    pw, browser, page, errors = open_report(path)
    try:
        canvas = page.locator("#tp-canvas")
        assert page.evaluate("window.tpView.ids()") == [p.name for p in res.parts.parts]
        flat = canvas.screenshot()
        # move the slider as a person would: focus it and press End (t = 1), then check the state shown
        page.locator("#tp-t").focus()
        page.keyboard.press("End")
        assert page.evaluate("window.tpView.t") == pytest.approx(1.0)
        assert "t = 1.000" in page.locator("#tp-tval").inner_text()
        folded = canvas.screenshot()
        a, b = _pixels(flat), _pixels(folded)
        assert a.shape == b.shape
        changed = np.mean(np.any(np.abs(a - b) > 0.05, axis=-1))
        assert changed > 0.02, f"only {changed:.2%} of the pixels changed between t = 0 and t = 1"
        # the picture is not blank: the panels are drawn in a different shade from the background
        assert np.mean(np.any(np.abs(a[..., :3] - a[0, 0, :3]) > 0.05, axis=-1)) > 0.02
        # the clearance line names the closest pair of the sweep state nearest to t = 1
        near = min(res.clearance.table, key=lambda r: abs(float(r.t) - 1.0))
        text = page.locator("#tp-closest").inner_text()
        if near.pair and near.min_clearance <= res.clearance.margin:
            assert near.pair[0] in text and near.pair[1] in text and "(marked)" in text
        else:  # beyond the sweep's search margin the clearance is a bound and no pair is named
            assert "at least" in text or "No pair" in text
        # back to flat, click the middle of a panel: its id, area and hinge lines appear
        page.evaluate("window.tpView.setT(0)")
        target = res.parts.parts[2]
        x, y = page.evaluate(f"window.tpView.screenOf('{target.name}')")
        assert page.evaluate(f"window.tpView.pickAt({x}, {y})") == target.name
        page.mouse.click(x, y)
        assert page.locator("#tp-picked").inner_text() == target.name
        txt = page.locator("#tp-info").inner_text()
        assert f"{target.area:.1f} mm²" in txt and "hinge lines" in txt
        n_h = sum(1 for h in res.plan.hinges if target.panel in h.panels)
        assert f"{n_h} hinge lines" in txt and n_h >= 2
        assert errors == []
    finally:
        browser.close()
        pw.stop()
