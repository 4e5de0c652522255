"""Shop hand-off of the exports (issue 11, item 6), read back by independent libraries.

- per-part STEP: one solid per part, product named by the part id, pins along an axis (OCP's
  STEP/XCAF reader, the OpenCascade reference implementation of ISO 10303-21);
- DXF outline area equals the area of the STEP slab's face (ezdxf reads the DXF; OCP's
  ``BRepGProp`` measures the face of the solid read back from the STEP file);
- 3MF plate items inside the plate (lib3mf, the 3MF Consortium's reference implementation);
- ISO 286-2 limit deviations of a 1.5 mm H7/g6 pin fit: H7 +10/0 um, g6 -2/-8 um (ISO 286-2:2010,
  size range up to 3 mm; quoted in REFERENCES.md section 7);
- file modes, names prefixed with the design name, state-independent files once, the fold command's
  own folder and ``--force``, bad input (plate too small, density <= 0).
"""

from __future__ import annotations

import math
import os
import shutil
from pathlib import Path

import numpy as np
import pytest

from tests.test_export import knuckle_set  # noqa: F401  (module fixture reused)
from thickpanel import occ
from thickpanel.errors import DesignFileError, ExportError
from thickpanel.export import export_parts

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"


def _read_step(path: Path):
    """(free-shape names, product names, shape) via OCP's XCAF reader."""
    from OCP.STEPCAFControl import STEPCAFControl_Reader
    from OCP.TCollection import TCollection_ExtendedString
    from OCP.TDataStd import TDataStd_Name
    from OCP.TDF import TDF_LabelSequence
    from OCP.TDocStd import TDocStd_Document
    from OCP.XCAFDoc import XCAFDoc_DocumentTool

    doc = TDocStd_Document(TCollection_ExtendedString("XmlOcaf"))
    r = STEPCAFControl_Reader()
    r.SetNameMode(True)
    assert r.ReadFile(str(path)) == 1
    r.Transfer(doc)
    tool = XCAFDoc_DocumentTool.ShapeTool_s(doc.Main())
    labs = TDF_LabelSequence()
    tool.GetShapes(labs)
    names = []
    for i in range(1, labs.Length() + 1):
        attr = TDataStd_Name()
        if labs.Value(i).FindAttribute(TDataStd_Name.GetID_s(), attr):
            names.append(attr.Get().ToExtString())
        else:
            names.append("")
    free = TDF_LabelSequence()
    tool.GetFreeShapes(free)
    return names, tool.GetShape_s(free.Value(1))


def _z_face_area(shape) -> float:
    """Largest area of a planar face with normal +-z (OCP BRepGProp)."""
    from OCP.BRepAdaptor import BRepAdaptor_Surface
    from OCP.BRepGProp import BRepGProp
    from OCP.GeomAbs import GeomAbs_Plane
    from OCP.GProp import GProp_GProps
    from OCP.TopAbs import TopAbs_FACE
    from OCP.TopExp import TopExp_Explorer
    from OCP.TopoDS import TopoDS

    best = 0.0
    ex = TopExp_Explorer(shape, TopAbs_FACE)
    while ex.More():
        f = TopoDS.Face_s(ex.Current())
        s = BRepAdaptor_Surface(f)
        if s.GetType() == GeomAbs_Plane and abs(abs(s.Plane().Axis().Direction().Z()) - 1) < 1e-9:
            p = GProp_GProps()
            BRepGProp.SurfaceProperties_s(f, p)
            best = max(best, p.Mass())
        ex.Next()
    return best


def _dxf_outline(path: Path) -> tuple[np.ndarray, list[str]]:
    import ezdxf

    doc = ezdxf.readfile(str(path))
    msp = doc.modelspace()
    poly = [e for e in msp if e.dxftype() == "LWPOLYLINE" and e.dxf.layer == "OUTLINE"]
    assert len(poly) == 1
    pts = np.array([p[:2] for p in poly[0].get_points()])
    texts = [e.dxf.text for e in msp if e.dxftype() == "TEXT"]
    return pts, texts


def _area(p: np.ndarray) -> float:
    x, y = p[:, 0], p[:, 1]
    return 0.5 * abs(float(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1))))


@pytest.fixture(scope="module")
def reflector(tmp_path_factory):
    """One build of the reflector backing (knuckle hinges, vertex reliefs, bevels)."""
    from thickpanel.build import run_pipeline
    from thickpanel.design import load_design

    out = tmp_path_factory.mktemp("reflector") / "out"
    d = load_design(EXAMPLES / "reflector-backing.toml")
    res = run_pipeline(d, command="build", out_dir=out,
                       formats=("step", "step-parts", "dxf", "bom", "3mf", "metrics"),
                       stages=("pattern", "foldability", "rigidity", "fold path", "method",
                               "clearance", "solids", "exports"))
    return res, out


def test_per_part_step_one_solid_named_by_part_id(reflector):
    res, out = reflector
    counts = {}
    for p in res.parts.parts:
        names, shape = _read_step(out / "step" / f"{p.name}.step")
        assert set(names) == {p.name}, names  # no kind words (rigid, body, rod), none unnamed
        counts[p.name] = len(occ.solids_of(shape))
        assert occ.check_shape(shape)
        # fusing keeps the material: volume of the read-back solid = the BOM's part volume
        assert occ.volume(shape) == pytest.approx(p.volume, rel=1e-6)
    # P000 had 17 unfused solids before; now one. P002/P004 hold a standoff tab that only meets
    # its slab along an edge and stays a second solid (known; named in the report)
    assert counts["P000"] == 1
    ones = [n for n, c in counts.items() if c == 1]
    assert len(ones) >= len(counts) - 2, counts


def test_pins_lie_along_x(reflector):
    res, out = reflector
    pins = [p for p in res.parts.parts if p.kind == "pin"]
    assert pins
    for p in pins:
        _, shape = _read_step(out / "step" / f"{p.name}.step")
        lo, hi = occ.bbox(shape)
        # the model's pin is the middle of its g6 zone: 1.5 + (-0.002 - 0.008) / 2 mm
        # (ISO 286-2:2010, size range up to 3 mm)
        d = p.pins[0] - 0.005
        assert hi[0] - lo[0] == pytest.approx(p.attrs["length"], abs=1e-6)
        assert hi[1] - lo[1] == pytest.approx(d, abs=1e-6)
        assert hi[2] - lo[2] == pytest.approx(d, abs=1e-6)
        assert np.allclose(lo, 0.0, atol=1e-6)


def test_dxf_outline_area_equals_step_slab_face(reflector):
    res, out = reflector
    panels = [p for p in res.parts.parts if p.kind == "panel"]
    for p in panels:
        pts, texts = _dxf_outline(out / "dxf" / f"{p.name}.dxf")
        _, shape = _read_step(out / "step" / f"{p.name}.step")
        assert _area(pts) == pytest.approx(_z_face_area(shape), rel=1e-6, abs=1e-3), p.name
        assert any(t.startswith(p.name) for t in texts)  # part label
        # ISO 286-2:2010, 1.5 mm (size range up to 3 mm): H7 +0.010/0, g6 -0.002/-0.008
        assert any("H7 +0.010/+0.000" in t and "g6 -0.002/-0.008" in t for t in texts), texts
    # P000's corners carry vertex reliefs: the outline is more than the square slab polygon
    pts, texts = _dxf_outline(out / "dxf" / "P000.dxf")
    assert len(pts) > 4


def test_dxf_bevel_annotated_and_outline_at_the_wider_face(tmp_path):
    from tests.test_solids_plans import bevel_cut, plain_plan, two_panels
    from thickpanel.solids import build_parts

    # a 30 deg bevel on panel 0's outer edge x = 0 side: plane n = (cos a, 0, sin a) tilts by a
    # from the vertical (plane geometry)
    a = math.radians(30.0)
    cut = lambda k: [bevel_cut(30.0, 3.0, a)] if k == 0 else []  # noqa: E731
    plan = plain_plan(two_panels(), 3.0, 0.5, cuts=cut)
    ps = build_parts(plan, hinge_style="none")
    export_parts(ps, tmp_path, ["dxf", "step-parts"])
    name = ps.parts[0].name
    pts, texts = _dxf_outline(tmp_path / "dxf" / f"{name}.dxf")
    assert any("BEVEL 30.0 deg from vertical, cut from the top face" in t for t in texts), texts
    _, shape = _read_step(tmp_path / "step" / f"{name}.step")
    assert _area(pts) == pytest.approx(_z_face_area(shape), rel=1e-9)


def test_bom_density_and_pin_limits(reflector):
    import csv

    res, out = reflector
    rows = list(csv.DictReader((out / "reflector-backing-bom.csv").read_text().splitlines()[1:]))
    p0 = next(r for r in rows if r["part"] == "P000")
    assert float(p0["density_kg_m3"]) == 2700.0  # 6061: 2.70 g/cm3 (ASM Handbook Vol. 2, memory)
    assert "ASM" in p0["density_source"]
    pin = next(r for r in rows if r["kind"] == "pin")
    assert pin["limits_mm"] == "d1.5 g6 -0.002/-0.008"  # ISO 286-2:2010, up to 3 mm
    assert float(p0["mass_g"]) == pytest.approx(float(p0["volume_mm3"]) * 2.70 / 1000, rel=1e-6)


def test_names_modes_and_state_files_once(reflector):
    res, out = reflector
    top = sorted(q.name for q in out.iterdir())
    assert "reflector-backing-bom.csv" in top
    assert any(n.startswith("reflector-backing-plate") and n.endswith(".3mf") for n in top)
    for t in ("t0.00", "t1.00"):
        sub = sorted(q.name for q in (out / t).iterdir())
        assert f"reflector-backing-assembly-{t}.step" in sub
        assert not any(n in ("step", "dxf", "stl") or n.endswith((".3mf", ".csv")) for n in sub), sub
    mode = 0o666 & ~_umask()
    for q in out.rglob("*"):
        if q.is_file():
            assert q.stat().st_mode & 0o777 == mode, q


def _umask() -> int:
    old = os.umask(0o022)
    os.umask(old)
    return old


def test_plates_inside_the_plate_lib3mf(reflector):
    import lib3mf

    res, out = reflector
    plate = res.design.exports.plate_mm
    files = sorted(out.glob("reflector-backing-plate*.3mf"))
    wrapper = lib3mf.get_wrapper()
    names = []
    for f in files:
        model = wrapper.CreateModel()
        model.QueryReader("3mf").ReadFromFile(str(f))
        items = model.GetBuildItems()
        while items.MoveNext():
            obj = items.GetCurrent().GetObjectResource()
            mesh = model.GetMeshObjectByID(obj.GetResourceID())
            v = np.array([p.Coordinates[0:3] for p in mesh.GetVertices()])
            assert v.min() >= -1e-6 and v[:, 0].max() <= plate[0] + 1e-6
            assert v[:, 1].max() <= plate[1] + 1e-6
            names.append(obj.GetName())
    assert sorted(names) == sorted(p.name for p in res.parts.parts)


def test_pack_refuses_a_part_larger_than_the_plate(knuckle_set, tmp_path):  # noqa: F811
    ps, state = knuckle_set
    with pytest.raises(ExportError, match=r"part P00\d \(.* mm\) does not fit the build plate 20 x 20"):
        export_parts(ps, tmp_path / "x", ["bom", "3mf"], state=state, plate_mm=(20.0, 20.0))
    assert not (tmp_path / "x").exists()  # nothing written


def test_pack_several_plates():
    from thickpanel.export.plates import pack

    spots = pack([("A", 100, 100), ("B", 100, 100), ("C", 100, 100)], (220, 150))
    assert sorted(s[0] for s in spots) == [0, 0, 1]  # two in a row, the third on a new plate
    for _, x, y, _ in spots:
        assert 5 <= x <= 220 - 105 and 5 <= y <= 150 - 105


def test_density_key_and_bad_density(tmp_path):
    from thickpanel.design import load_design

    text = (EXAMPLES / "shelter-roof.toml").read_text()
    d = load_design(EXAMPLES / "shelter-roof.toml")
    assert d.panels.density == 170.0
    bad = tmp_path / "bad.toml"
    bad.write_text(text.replace("density = 170.0", "density = 0.0"))
    with pytest.raises(DesignFileError, match=r"\[panels\] density"):
        load_design(bad)
    bad.write_text(text.replace("[exports]", "[exports]\nplate_mm = [250.0]"))
    with pytest.raises(DesignFileError, match=r"plate_mm"):
        load_design(bad)


def test_given_density_gives_masses(knuckle_set, tmp_path):  # noqa: F811
    import json

    ps, state = knuckle_set
    saved = [dict(p.attrs) for p in ps.parts]
    try:
        for p in ps.parts:
            if p.kind == "panel":
                p.attrs["density_kg_m3"] = 1200.0
                p.attrs["density_source"] = "test value"
        export_parts(ps, tmp_path, ["bom"], state=state, prefix="demo")
        doc = json.loads((tmp_path / "demo-bom.json").read_text())
        for r in doc["parts"]:
            if r["kind"] == "panel":
                assert r["density_kg_m3"] == 1200.0 and r["density_source"] == "test value"
                assert r["mass_g"] == pytest.approx(r["volume_mm3"] * 1.2 / 1000, rel=1e-4)
    finally:
        for p, a in zip(ps.parts, saved, strict=True):
            p.attrs.clear()
            p.attrs.update(a)


def test_living_hinge_band_is_one_print_body(tmp_path):
    import lib3mf

    from thickpanel.build import run_pipeline
    from thickpanel.design import load_design

    d = load_design(EXAMPLES / "lamp-shade.toml")
    res = run_pipeline(d, command="build", out_dir=tmp_path, formats=("3mf",),
                       stages=("pattern", "foldability", "rigidity", "fold path", "method",
                               "clearance", "solids", "exports"))
    files = sorted(tmp_path.glob("lamp-shade-plate*.3mf"))
    assert [f.name for f in files] == ["lamp-shade-plate.3mf"]
    model = lib3mf.get_wrapper().CreateModel()
    model.QueryReader("3mf").ReadFromFile(str(files[0]))
    items = model.GetBuildItems()
    n = 0
    while items.MoveNext():
        n += 1
    assert n == 1  # 10 panels + 9 webs printed as one body
    assert len(res.parts.parts) == 19


def test_fold_own_folder_and_force(tmp_path, monkeypatch):
    from thickpanel.cli import main

    src = tmp_path / "m.toml"
    shutil.copy(EXAMPLES / "miura-reference.toml", src)
    monkeypatch.chdir(tmp_path)
    out = tmp_path / "exports" / "miura-reference" / "fold-t0.50"
    out.mkdir(parents=True)
    (out / "keep.txt").write_text("x")
    assert main(["fold", str(src), "--at", "0.5", "--quiet", "--formats", "bom"]) == 2
    assert sorted(q.name for q in out.iterdir()) == ["keep.txt"]  # refused, nothing written
    assert main(["fold", str(src), "--at", "0.5", "--quiet", "--formats", "bom", "--force"]) in (0, 1)
    assert any(q.name.endswith("-bom.csv") for q in out.iterdir())
