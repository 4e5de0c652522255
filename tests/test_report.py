"""The HTML report: well-formed, self-contained (only embedded images), every section present.

Outside sources: HTML well-formedness is judged by Python's ``html.parser`` (standard library,
following the WHATWG HTML Living Standard tokenizer); embedded images are ``data:`` URLs (RFC 2397,
Masinter 1998) with base64 content (RFC 4648, Josefsson 2006); a PNG starts with the 8-byte
signature 89 50 4E 47 0D 0A 1A 0A (ISO/IEC 15948:2004, 5.2) and its IHDR chunk gives width and
height. The Miura-ori sheet's flat panel area a b sin(gamma) follows Schenk & Guest 2013 (PNAS
110(9):3276) at theta = 0.
"""

from __future__ import annotations

import base64
import shutil
import struct
import subprocess
from html.parser import HTMLParser
from pathlib import Path

import pytest

from tests.sheet_designs import miura_sheet_toml
from thickpanel.build import run_pipeline
from thickpanel.design import loads_design
from thickpanel.export.report import SAFETY, render_report, write_report

DESIGN = miura_sheet_toml("report-sheet", states=12, description="3 x 2 Miura sheet for the report test")

VOID = {"meta", "img", "br", "hr", "link", "input"}


class Checker(HTMLParser):
    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.stack: list[str] = []
        self.srcs: list[str] = []
        self.hrefs: list[str] = []
        self.headings: list[str] = []
        self._in_h2 = False
        self.errors: list[str] = []

    def handle_starttag(self, tag, attrs):
        a = dict(attrs)
        if tag == "img":
            self.srcs.append(a.get("src", ""))
        if "href" in a:
            self.hrefs.append(a["href"])
        if tag == "h2":
            self._in_h2 = True
        if tag not in VOID:
            self.stack.append(tag)

    def handle_endtag(self, tag):
        if tag == "h2":
            self._in_h2 = False
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"unbalanced </{tag}> (open: {self.stack[-3:]})")
        else:
            self.stack.pop()

    def handle_data(self, data):
        if self._in_h2:
            self.headings.append(data.strip())


@pytest.fixture(scope="module")
def result():
    pytest.importorskip("thickpanel.layouts.classic")
    d = loads_design(DESIGN)
    return run_pipeline(d, command="report", stages=("pattern", "foldability", "rigidity", "fold path", "method",
                                                     "clearance", "solids"))


@pytest.fixture(scope="module")
def page(result, tmp_path_factory):
    out = tmp_path_factory.mktemp("rep") / "r.html"
    p = write_report(result, out)
    assert p == out and out.is_file()
    assert not list(out.parent.glob("*.tmp"))  # written through a temporary file
    return out.read_text(encoding="utf-8")


def png_size(data: bytes) -> tuple[int, int]:
    # ISO/IEC 15948 (PNG): signature, then the IHDR chunk whose first 8 bytes are width, height.
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    assert data[12:16] == b"IHDR"
    return struct.unpack(">II", data[16:24])


def test_well_formed_and_self_contained(page):
    c = Checker()
    c.feed(page)
    c.close()
    assert not c.errors
    assert c.stack == []  # every element closed
    assert page.startswith("<!DOCTYPE html>")
    assert c.hrefs == []  # no links to outside files
    assert len(c.srcs) >= 3  # crease drawing, fold strip, envelope (+ clearance plot when available)
    for src in c.srcs:
        assert src.startswith("data:image/png;base64,")  # RFC 2397 data URL, nothing outside the page
        w, h = png_size(base64.b64decode(src.split(",", 1)[1], validate=True))
        assert w > 100 and h > 100


def test_sections_and_safety(page):
    c = Checker()
    c.feed(page)
    for h in ("Key figures", "Checks", "Crease pattern", "Fold sequence", "Clearance over the fold", "Stowed envelope",
              "Bill of materials", "Thickness method", "Hinges", "Safety cautions"):
        assert h in c.headings
    for caution in SAFETY:
        assert caution.replace("'", "&#x27;") in page
    assert "report-sheet" in page and "Verdict:" in page


def test_envelope_numbers_match_metrics(result, page):
    m = result.metrics
    # 3 x 2 parallelograms a = b = 25 mm, gamma = 65 deg: area a b sin(gamma) each (Schenk & Guest 2013)
    import math

    assert m["deployed_area_mm2"] == pytest.approx(6 * 25 * 25 * math.sin(math.radians(65)), rel=1e-9)
    if "stowed_envelope_mm" in m:
        x, y, z = m["stowed_envelope_mm"]
        assert f"{x:.6g}" in page and f"{y:.6g}" in page and f"{z:.6g}" in page
        # deployed sheet, boxed along its principal axes: the flat slabs project without overlap
        # onto the sheet plane, so the box's two large sides hold at least the slabs' total area
        # (shoelace formula), and neither side exceeds the flat sheet's diagonal, with the sheet
        # nx a + V by ny S, V = b cos(gamma), S = b sin(gamma) (Schenk & Guest 2013, theta = 0).
        dx, dy, dz = m["deployed_envelope_mm"]
        fx = 3 * 25 + 25 * math.cos(math.radians(65))
        fy = 2 * 25 * math.sin(math.radians(65))
        diag = math.hypot(fx, fy)
        if result.plan is None:
            area = m["deployed_area_mm2"]
            thick = 0.0
        else:
            def shoelace(poly):
                nxt = poly[1:] + poly[:1]
                return 0.5 * abs(sum(x0 * y1 - x1 * y0 for (x0, y0), (x1, y1) in zip(poly, nxt, strict=True)))

            area = sum(shoelace(list(sl.polygon)) for sl in result.plan.slabs)
            thick = 1.5
        assert dx * dy >= area * (1 - 1e-9)
        assert dx <= diag + 1e-3 and dy <= diag + 1e-3
        assert dz >= thick - 1e-9 and dz < min(dx, dy)


def test_deterministic(result):
    assert render_report(result) == render_report(result)


def test_headless_browser_screenshot(tmp_path, page):
    exe = next((shutil.which(n) for n in ("chromium", "chromium-browser", "google-chrome") if shutil.which(n)), None)
    if exe is None:
        pytest.skip("no headless browser on this machine")
    f = tmp_path / "r.html"
    f.write_text(page)
    shot = tmp_path / "shot.png"
    subprocess.run([exe, "--headless", "--disable-gpu", "--no-sandbox", f"--screenshot={shot}",
                    "--window-size=1200,3000", f.as_uri()], check=True, timeout=120, capture_output=True)
    w, h = png_size(Path(shot).read_bytes())
    assert (w, h) == (1200, 3000)


def test_locked_pattern_report_shows_least_squares_fold():
    # The standard square twist is locked with ideal hinges (Hull, *Origametry*, 2020); the report
    # then renders the least-squares fold of the joint-slack analysis and tabulates the play.
    pytest.importorskip("thickpanel.kinematics")
    d = loads_design('[layout]\nfamily = "square-twist"\nside = 40.0\ntwist_deg = 30.0\n[panels]\nthickness = 1.0\n'
                     '[method]\nname = "membrane-gap"\n[fold]\ntarget_deg = 60.0\nstates = 8\n')
    res = run_pipeline(d, command="report", stages=("pattern", "rigidity", "fold path", "method"))
    assert res.rigid.kind == "locked" and res.path is None and res.slack is not None
    html_text = render_report(res)
    c = Checker()
    c.feed(html_text)
    assert not c.errors and "Joint slack (locked pattern)" in c.headings
    assert "least-squares fold" in html_text
    assert len(c.srcs) >= 3  # crease drawing, fold strip, envelope
    assert res.metrics["envelope_from"] == "least-squares fold"
