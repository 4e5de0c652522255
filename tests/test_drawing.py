"""Crease-pattern drawings: SVG structure, units, line styles, PNG output, atomic writes.

The SVG is parsed with the standard library XML parser (W3C SVG 1.1: width/height with unit
identifiers, viewBox in user units); the PNG signature and IHDR layout follow the PNG
specification (ISO/IEC 15948:2004, W3C PNG 2nd edition, section 5.2 and 11.2.2).
"""

from __future__ import annotations

import re
import struct
import subprocess
import sys
import xml.etree.ElementTree as ET

import numpy as np
import pytest

from thickpanel import ExportError
from thickpanel.export.drawing import LINE_STYLES, nice_length, pattern_png, pattern_svg, write_drawings
from thickpanel.layouts.cylinder import kresling
from thickpanel.layouts.spiral import log_spiral_grid

NS = "{http://www.w3.org/2000/svg}"


@pytest.fixture(scope="module")
def spiral():
    return log_spiral_grid(12, 4, 1200.0, slits=1, assign=0)


def _lines(root, gid):
    g = [e for e in root.iter(NS + "g") if e.get("id") == gid]
    return (g[0], g[0].findall(NS + "line")) if g else (None, [])


def test_svg_units_and_geometry(spiral):
    root = ET.fromstring(pattern_svg(spiral))
    w, h = root.get("width"), root.get("height")
    assert w.endswith("mm") and h.endswith("mm")
    vb = [float(x) for x in root.get("viewBox").split()]
    assert float(w[:-2]) == pytest.approx(vb[2], abs=1e-3)  # 1 user unit = 1 mm
    # every crease appears once, in its kind's group, at the vertex coordinates (y flipped)
    total = 0
    for kind in ("valley", "mountain", "border", "cut"):
        g, lines = _lines(root, kind)
        n_kind = sum(1 for k in spiral.kinds if k == kind)
        assert len(lines) == n_kind
        total += len(lines)
    assert total == spiral.n_creases
    _, border = _lines(root, "border")
    xs = [float(e.get("x1")) for e in border]
    assert max(xs) == pytest.approx(spiral.vertices[:, 0].max(), abs=1e-3)


def test_svg_line_styles(spiral):
    root = ET.fromstring(pattern_svg(spiral, line_width=1.0))
    g, _ = _lines(root, "valley")
    assert g.get("stroke") == "black"
    assert [float(x) for x in g.get("stroke-dasharray").split()] == list(LINE_STYLES["valley"].dashes)
    g, _ = _lines(root, "mountain")
    dashes = [float(x) for x in g.get("stroke-dasharray").split()]
    assert len(dashes) == 6 and dashes[0] > 3 * dashes[2] and dashes[2] == dashes[4]  # dash-dot-dot
    gb, _ = _lines(root, "border")
    gc, _ = _lines(root, "cut")
    assert gb.get("stroke-dasharray") is None and gc.get("stroke-dasharray") is None
    assert float(gc.get("stroke-width")) > 2 * float(gb.get("stroke-width"))  # heavy cut line
    # no colour coding: every stroke in the drawing is black
    strokes = {e.get("stroke") for e in root.iter() if e.get("stroke")}
    assert strokes == {"black"}


def test_svg_labels_and_scale_bar(spiral):
    svg = pattern_svg(spiral, labels=True)
    assert "P000" in svg and f"C{spiral.n_creases - 1:03d}" in svg
    assert svg.count(">P0") == spiral.n_panels
    m = re.search(r">([0-9.]+) mm</text>", svg)
    assert m and float(m.group(1)) == 200.0  # a fifth of 1200 mm -> 200 (1-2-5 series)
    assert "P000" not in pattern_svg(spiral, labels=False)
    assert "scale-bar" not in pattern_svg(spiral, scale_bar=False)


def test_nice_length():
    # 1-2-5 series (common drafting practice for scale bars)
    assert [nice_length(x) for x in (0.9, 1.0, 3.3, 7.0, 240.0, 199.9)] == [0.5, 1.0, 2.0, 5.0, 200.0, 100.0]
    with pytest.raises(ExportError):
        nice_length(0.0)


def test_seam_tagged():
    svg = pattern_svg(kresling(6, 50.0, 40.0, 40.0, stories=2))
    assert svg.count(">seam C") == 4


def test_png_header_and_size(spiral):
    data = pattern_png(spiral, dpi=50, size_in=4.0)
    assert data[:8] == b"\x89PNG\r\n\x1a\n"  # PNG signature (ISO/IEC 15948)
    w, h = struct.unpack(">II", data[16:24])  # IHDR width, height
    assert max(w, h) == pytest.approx(200, abs=2)  # 4 in x 50 dpi
    assert pattern_png(spiral, dpi=50, size_in=4.0) == data  # deterministic
    with pytest.raises(ExportError, match="dpi = 5"):
        pattern_png(spiral, dpi=5)


def test_png_has_dark_pixels_along_creases(spiral):
    import io

    import matplotlib.image as mpimg

    img = mpimg.imread(io.BytesIO(pattern_png(spiral, dpi=60, size_in=5.0)))
    gray = img[..., :3].mean(axis=2)
    assert gray.min() < 0.2 and np.mean(gray < 0.5) > 0.01 and np.mean(gray > 0.9) > 0.7


def test_write_drawings_atomic(tmp_path, spiral):
    paths = write_drawings(spiral, tmp_path / "out", "disc")
    assert [p.name for p in paths] == ["disc.svg", "disc.png"]
    assert all(p.stat().st_size > 1000 for p in paths)
    assert sorted(x.name for x in (tmp_path / "out").iterdir()) == ["disc.png", "disc.svg"]
    with pytest.raises(ExportError, match="plain file name"):
        write_drawings(spiral, tmp_path, "a/b")


def test_importable_without_cadquery():
    code = "import sys, thickpanel.export.drawing; print('cadquery' in sys.modules or 'OCP' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"


def test_example_script_writes_drawings(tmp_path):
    # the example behind `make demo`: at least two spiral designs, SVG + PNG each
    from pathlib import Path

    script = Path(__file__).resolve().parents[1] / "examples" / "spiral_drawings.py"
    out = subprocess.run([sys.executable, str(script), str(tmp_path)], capture_output=True, text=True, check=True)
    svgs = sorted(p.stem for p in tmp_path.glob("*.svg"))
    pngs = sorted(p.stem for p in tmp_path.glob("*.png"))
    assert svgs == pngs and {"sun-shade-disc", "antenna-backing"} <= set(svgs)
    for stem in svgs:
        ET.parse(tmp_path / f"{stem}.svg")
        assert (tmp_path / f"{stem}.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert "sun-shade-disc" in out.stdout
