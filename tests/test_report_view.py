"""The report's viewer data and fold-sequence pictures (no browser: see test_report_browser.py).

Outside sources: PNG size from the IHDR chunk (ISO/IEC 15948:2004, 11.2.2); the embedded poses are
compared with the fold path's own states; the Miura-ori panel area a b sin(gamma) follows
Schenk & Guest 2013 (PNAS 110(9):3276) at theta = 0; rigid transforms are checked as orthonormal
with numpy. The SVG id layer is read with Python's xml.etree (W3C SVG 1.1 groups).
"""

from __future__ import annotations

import base64
import math
import struct
import xml.etree.ElementTree as ET

import numpy as np
import pytest

from tests.sheet_designs import miura_sheet_toml
from thickpanel.build import run_pipeline
from thickpanel.design import loads_design
from thickpanel.export.drawing import pattern_svg, write_drawings
from thickpanel.export.report_view import VIEW_PX, fold_sequence_section, fold_views_png, view_data

DESIGN = miura_sheet_toml("view-sheet", states=9)


@pytest.fixture(scope="module")
def res():
    pytest.importorskip("thickpanel.layouts.classic")
    return run_pipeline(loads_design(DESIGN), command="report",
                        stages=("pattern", "foldability", "rigidity", "fold path", "method", "clearance", "solids"))


def _size(png: bytes) -> tuple[int, int]:
    assert png[:8] == b"\x89PNG\r\n\x1a\n"
    return struct.unpack(">II", png[16:24])


def test_view_data_matches_the_fold_path(res):
    d = view_data(res)
    assert [p["id"] for p in d["parts"]] == [p.name for p in res.parts.parts]
    assert d["t"] == [float(s.t) for s in res.path.states]
    poses = np.frombuffer(base64.b64decode(d["poses"]), "<f4").reshape(len(d["t"]), d["nposes"], 4, 4)
    for k, s in enumerate(res.path.states):
        assert np.allclose(poses[k], res.plan.poses(s), atol=1e-3)  # float32 of mm-sized poses
    r = poses[..., :3, :3].astype(float)
    assert np.allclose(r @ np.swapaxes(r, -1, -2), np.eye(3), atol=1e-5)
    for p, part in zip(d["parts"], res.parts.parts, strict=True):
        # 25 x 25 mm parallelograms at 65 deg: a b sin(gamma) (Schenk & Guest 2013); the part's
        # outline is the slab polygon, never larger than the panel
        assert 0 < p["area"] <= 25 * 25 * math.sin(math.radians(65)) + 1e-6
        assert p["thickness"] == pytest.approx(part.thickness)
        v = np.frombuffer(base64.b64decode(p["v"]), "<f4")
        f = np.frombuffer(base64.b64decode(p["f"]), "<u4")
        assert len(v) % 3 == 0 and len(f) % 3 == 0 and f.max() < len(v) // 3
        assert {h["crease"] for h in p["hinges"]} == {f"C{h.crease:03d}" for h in res.plan.hinges
                                                      if part.panel in h.panels}
    assert len(d["clearance"]["t"]) == len(res.clearance.table)


def test_fold_sequence_is_wide_enough(res):
    png = fold_views_png(res, 0.5)
    w, h = _size(png)
    assert w >= 2 * VIEW_PX and VIEW_PX >= 600 and h >= 400  # two views, each at least 600 px wide
    html = fold_sequence_section(res)
    assert html.count("<img") == 5


def test_drawing_id_layer(res, tmp_path):
    svg = pattern_svg(res.pattern, labels=True)
    root = ET.fromstring(svg.encode())
    ns = {"s": "http://www.w3.org/2000/svg"}
    layer = root.find(".//s:g[@id='labels']", ns)
    assert layer is not None
    assert layer.get("{http://www.inkscape.org/namespaces/inkscape}groupmode") == "layer"
    texts = {t.text for t in layer.iter("{http://www.w3.org/2000/svg}text")}
    assert {f"P{i:03d}" for i in range(res.pattern.n_panels)} <= texts
    assert {f"C{i:03d}" for i in range(res.pattern.n_creases)} <= texts
    svg_path, _ = write_drawings(res.pattern, tmp_path, "sheet")  # ids by default
    assert "P000" in svg_path.read_text()
    svg_path, _ = write_drawings(res.pattern, tmp_path / "plain", "sheet", labels=False)
    assert "P000" not in svg_path.read_text()
