"""Every example builds; starters and examples agree.

Outside sources: the report must parse with Python's ``html.parser`` (WHATWG HTML tokenizer);
JSON summaries parse under RFC 8259 (Bray 2017); STEP files begin with the ISO 10303-21 header
keyword ``ISO-10303-21;`` (ISO 10303-21:2016, clause 5); binary STL files hold an 80-byte header,
a uint32 triangle count and 50 bytes per triangle (the de-facto STL specification, 3D Systems
"StereoLithography Interface Specification", 1989/1988), ASCII ones start with ``solid``; the lamp
band's panel areas are those of annular-sector trapezoids, (1/2) sin(15 deg) (R1^2 - R0^2) each
(plane geometry: triangle area (1/2) r^2 sin(angle), CRC Standard Mathematical Tables).
The spiral flagship's rim is a regular octagon of circumradius 600 mm, area (n/2) R^2 sin(2 pi/n)
(CRC Standard Mathematical Tables, regular polygons); its crease graph is a connected plane graph,
so vertices - edges + panels = 1 (Euler's formula without the outer face; D. B. West,
"Introduction to Graph Theory", 2nd ed. 2001, Thm 6.1.21); a 3MF file is an OPC ZIP package whose
model part ends in ``.model`` (3MF Consortium, "3MF Core Specification" 1.2, 2015, ch. 2).
"""

from __future__ import annotations

import json
import math
import subprocess
import sys
import zipfile
from html.parser import HTMLParser
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
EX = ROOT / "examples"
STARTERS = ROOT / "thickpanel" / "starters"
DESIGNS = sorted(p.stem for p in EX.glob("*.toml"))
FLAGSHIP = "field-shade-mast"  # what `make demo` builds (thickpanel/demo.py)
SPIRAL = "sun-shade-disc"  # the spiral example with its own checks below


def test_at_least_four_examples_each_documented():
    readme = (EX / "README.md").read_text()
    assert len(DESIGNS) >= 4 and FLAGSHIP in DESIGNS
    for name in DESIGNS + ["variant_family", "make_lamp_band"]:
        assert f"`{name}." in readme


@pytest.mark.parametrize("name", DESIGNS)
def test_starter_is_the_example(name):
    assert (STARTERS / f"{name}.toml").read_text() == (EX / f"{name}.toml").read_text()
    text = (EX / f"{name}.toml").read_text()
    assert "SAFETY" in text


def test_lamp_band_file_is_what_the_script_writes(tmp_path):
    sys.path.insert(0, str(EX))
    try:
        import make_lamp_band
    finally:
        sys.path.remove(str(EX))
    from thickpanel.io import read_pattern

    cp = make_lamp_band.band()
    stored = read_pattern(EX / "lamp-shade-band.json")
    assert (STARTERS / "lamp-shade-band.json").read_bytes() == (EX / "lamp-shade-band.json").read_bytes()
    assert stored.n_panels == cp.n_panels == 10
    assert list(stored.kinds) == list(cp.kinds)
    expect = 0.5 * math.sin(math.radians(15.0)) * (250.0**2 - 120.0**2)
    for p in stored.panels:
        assert p.area == pytest.approx(expect, rel=1e-12)


class _Parse(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.imgs = 0

    def handle_starttag(self, tag, attrs):
        if tag == "img":
            assert dict(attrs)["src"].startswith("data:image/png;base64,")
            self.imgs += 1


@pytest.mark.cad
@pytest.mark.parametrize("name", DESIGNS)
def test_example_builds(name, tmp_path):
    out = tmp_path / name
    r = subprocess.run([sys.executable, "-m", "thickpanel.cli", "build", str(EX / f"{name}.toml"), "-o", str(out),
                        "--json"], capture_output=True, text=True, timeout=900)
    assert r.returncode in (0, 1), r.stderr
    s = json.loads(r.stdout)
    # every example passes its own checks (clearance over the whole fold included)
    assert r.returncode == 0, [c for c in s["checks"] if c["verdict"] == "fail"]
    assert s["ok"] is True
    for st in s["stages"]:
        assert st["status"] in ("ok", "not available"), st
    files = [Path(p) for p in s["outputs"]]
    assert files and all(f.is_file() and f.stat().st_size > 0 for f in files)
    for f in files:
        if f.suffix == ".step":
            assert f.read_bytes()[:13] == b"ISO-10303-21;"
        if f.suffix == ".stl":
            data = f.read_bytes()
            if not data.startswith(b"solid"):
                n = int.from_bytes(data[80:84], "little")
                assert len(data) == 84 + 50 * n and n > 0
    report = Path(s["report"])
    p = _Parse()
    p.feed(report.read_text(encoding="utf-8"))
    assert p.imgs >= 3
    assert s["metrics"]["panels"] >= 4
    if name == FLAGSHIP:
        _check_wrap_flagship(s, files)
    if name == SPIRAL:
        _check_spiral(s, files)


def _check_wrap_flagship(s: dict, files: list[Path]) -> None:
    m = s["metrics"]
    assert m["rigid"] == "locked" and m["stowed_from"] == "construction"
    # the stowed state is proven: real distances measured (not a bound), no penetration
    assert m["min_clearance_mm"] >= 0.0 and not m.get("min_clearance_lower_bound")
    # closed form of the zero-thickness outline: 2 (a + r h) / cos(pi/m) = 2000 mm (outer_diameter);
    # the thick sheet adds its bare backing strips (at most 15 % here), so it is larger (CRC tables)
    assert 2000.0 < m["deployed_diameter_mm"] < 2300.0
    assert m["diameter_ratio"] == pytest.approx(m["deployed_diameter_mm"] / m["stowed_diameter_mm"], rel=1e-12)
    assert m["diameter_ratio"] >= 4.0
    # volume conservation: the stowed radius is not below sqrt(R_h^2 + A t / (pi H)) (our derivation)
    assert m["stowed_diameter_mm"] / 2 >= m["stowed_radius_bound_mm"]
    assert 0.0 < m["packaging_efficiency"] < 1.0
    names = {f.name for f in files}
    assert {"BACKING.dxf", "BACKING.step"} <= names and any(f.suffix == ".3mf" for f in files)
    stowed = [f for f in files if f.name == "metrics.json" and f.parent.name == "t1.00"]
    met = json.loads(stowed[0].read_text())
    for key in ("deployed_diameter_mm", "stowed_diameter_mm", "stowed_height_mm", "diameter_ratio",
                "packaging_efficiency", "stowed_radius_bound_mm"):  # one source: summary = metrics.json
        assert met[key] == pytest.approx(m[key], rel=1e-6)
    # the flexible backing is left out of the stowed assembly (named parts in the STEP file)
    step = [f for f in files if f.suffix == ".step" and f.parent.name == "t1.00"][0].read_text(errors="ignore")
    assert "'P001'" in step and "BACKING" not in step
    report = Path(s["report"]).read_text(encoding="utf-8")
    assert "Deployed and stowed (hub-wrap)" in report and "pinch point" in report


def _check_spiral(s: dict, files: list[Path]) -> None:
    m = s["metrics"]
    assert m["rigid"] == "rigid" and m["stop_reason"] == "target"
    assert m["reached_fold_deg"] == pytest.approx(100.0, abs=1e-6)
    assert m["closure_error"] < 1e-9
    assert m["min_clearance_mm"] >= 0.0
    # regular octagon rim, circumradius 600 mm (CRC Standard Mathematical Tables)
    assert m["deployed_area_mm2"] == pytest.approx(0.5 * 8 * 600.0**2 * math.sin(2 * math.pi / 8), rel=1e-9)
    # Euler's formula for a connected plane graph, outer face excluded (West 2001, Thm 6.1.21)
    assert m["vertices"] - m["creases"] + m["panels"] == 1
    assert 20 <= m["panels"] <= 150
    # no 3MF: machined CFRP panels up to ~430 x 480 mm fit no 250 x 250 mm build plate
    assert {f.suffix for f in files} >= {".step", ".stl", ".dxf", ".csv", ".json"}
    # one definition of the sizes: the summary and the stowed metrics.json agree on the deployed
    # diameter (the rim's circumscribed circle, 1200 mm across: CRC Standard Mathematical Tables)
    assert m["deployed_diameter_mm"] == pytest.approx(1200.0, rel=1e-9)
    stowed = [f for f in files if f.name == "metrics.json" and f.parent.name == "t1.00"]
    assert stowed
    met = json.loads(stowed[0].read_text())
    assert met["deployed_diameter_mm"] == pytest.approx(m["deployed_diameter_mm"], rel=1e-9)
    for f in files:
        if f.suffix == ".3mf":  # OPC ZIP package with a .model part (3MF Core Specification 1.2)
            with zipfile.ZipFile(f) as z:
                assert any(n.endswith(".model") for n in z.namelist())


def test_variant_family_script():
    r = subprocess.run([sys.executable, str(EX / "variant_family.py"), "--json"], capture_output=True, text=True,
                       timeout=900)
    assert r.returncode == 0, r.stderr
    rows = json.loads(r.stdout)
    assert len(rows) == 6
    assert {row["gamma_deg"] for row in rows} == {60.0, 70.0, 80.0}
    assert len({row["variant"] for row in rows}) == 6
