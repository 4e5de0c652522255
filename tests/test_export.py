"""Exports read back by independent readers: OCP XCAF and gmsh (STEP), trimesh (STL), lib3mf
(3MF), ezdxf (DXF); bill of materials, metrics, determinism and all-or-nothing writing."""

from __future__ import annotations

import csv
import json
import math
import os

import numpy as np
import pytest

from tests.test_solids_plans import plain_plan, two_panels
from thickpanel import occ
from thickpanel.errors import ExportError
from thickpanel.export import available_formats, export_parts, register_format
from thickpanel.poses import fold_state_from_angles
from thickpanel.solids import build_parts


@pytest.fixture(scope="module")
def knuckle_set():
    plan = plain_plan(two_panels(), 3.0, 0.5)
    angles = np.zeros(plan.pattern.n_creases)
    angles[6] = math.pi / 2
    state = fold_state_from_angles(plan.pattern, angles, base=0)
    return build_parts(plan, hinge_style="knuckle", material="al-6061-t6"), state


@pytest.fixture(scope="module")
def knuckle_out(knuckle_set, tmp_path_factory):
    ps, state = knuckle_set
    out = tmp_path_factory.mktemp("knuckle")
    paths = export_parts(ps, out, "all", state=state, name="two panels")
    return out, paths


def read_step(path):
    """Components of the top assembly as {name: located shape}, via OCP's XCAF reader."""
    from OCP.STEPCAFControl import STEPCAFControl_Reader
    from OCP.TCollection import TCollection_ExtendedString
    from OCP.TDataStd import TDataStd_Name
    from OCP.TDF import TDF_LabelSequence
    from OCP.TDocStd import TDocStd_Document
    from OCP.XCAFDoc import XCAFDoc_DocumentTool, XCAFDoc_ShapeTool

    doc = TDocStd_Document(TCollection_ExtendedString("XmlOcaf"))
    r = STEPCAFControl_Reader()
    r.SetNameMode(True)
    r.ReadFile(str(path))
    r.Transfer(doc)
    tool = XCAFDoc_DocumentTool.ShapeTool_s(doc.Main())
    free = TDF_LabelSequence()
    tool.GetFreeShapes(free)
    assert free.Length() == 1
    comps = TDF_LabelSequence()
    XCAFDoc_ShapeTool.GetComponents_s(free.Value(1), comps, False)
    out = {}
    for i in range(1, comps.Length() + 1):
        lab = comps.Value(i)
        attr = TDataStd_Name()
        assert lab.FindAttribute(TDataStd_Name.GetID_s(), attr)
        out[attr.Get().ToExtString()] = XCAFDoc_ShapeTool.GetShape_s(lab)
    return out


def test_registry_names():
    assert available_formats() == ["3mf", "bom", "dxf", "gltf", "metrics", "step", "step-parts", "stl"]


def test_written_names_are_deterministic(knuckle_out):
    out, paths = knuckle_out
    rel = sorted(str(p.relative_to(out)) for p in paths)
    assert rel == sorted([
        "assembly.glb", "assembly.step", "assembly.stl", "bom.csv", "bom.json", "metrics.json", "plate.3mf",
        "dxf/P000.dxf", "dxf/P001.dxf", "step/P000.step", "step/P001.step", "step/PIN-C006.step",
        "stl/P000.stl", "stl/P001.stl", "stl/PIN-C006.stl",
    ])
    assert not [f for f in out.rglob("*") if f.name.endswith(".tmp")]


def test_step_assembly_reads_back_with_xcaf(knuckle_set, knuckle_out):
    # ISO 10303-21 file read with OCP's STEPCAFControl_Reader (names on, as in the perf notes)
    ps, state = knuckle_set
    out, _ = knuckle_out
    text = (out / "assembly.step").read_text()
    assert "AUTOMOTIVE_DESIGN" in text  # AP214 schema name in FILE_SCHEMA (ISO 10303-214)
    assert "SI_UNIT(.MILLI.,.METRE.)" in text
    comps = read_step(out / "assembly.step")
    assert sorted(comps) == ["P000", "P001", "PIN-C006"]
    placed = dict(zip([p.name for p in ps.parts], ps.placed(state), strict=True))
    for p in ps.parts:
        assert occ.volume(comps[p.name]) == pytest.approx(p.volume, rel=1e-6)
        assert np.allclose(occ.bbox(comps[p.name]), occ.bbox(placed[p.name]), atol=1e-3)


def test_step_per_part_files_are_flat_at_the_origin(knuckle_set, knuckle_out):
    ps, _ = knuckle_set
    out, _ = knuckle_out
    comps = read_step(out / "step" / "P001.step")
    assert list(comps) == ["P001"]
    box = occ.bbox(comps["P001"])
    assert np.allclose(box[0], 0.0, atol=1e-3)
    assert occ.volume(comps["P001"]) == pytest.approx(ps["P001"].volume, rel=1e-6)


def test_step_reads_back_independently_with_gmsh(knuckle_set, knuckle_out):
    # gmsh's own OpenCASCADE-based STEP import (PyPI gmsh), a second reader
    gmsh = pytest.importorskip("gmsh")
    ps, state = knuckle_set
    out, _ = knuckle_out
    gmsh.initialize()
    try:
        gmsh.option.setNumber("General.Terminal", 0)
        gmsh.model.occ.importShapes(str(out / "assembly.step"))
        gmsh.model.occ.synchronize()
        vols = gmsh.model.getEntities(3)
        box = gmsh.model.getBoundingBox(-1, -1)
    finally:
        gmsh.finalize()
    assert len(vols) == sum(len(p.pieces) for p in ps.parts)
    ours = occ.bbox(occ.compound(ps.placed(state)))
    assert np.allclose(np.reshape(box, (2, 3)), ours, atol=1e-2)


def test_stl_is_watertight_with_volume_within_mesh_tolerance(knuckle_set, tmp_path):
    # trimesh (PyPI trimesh) watertightness and signed volume
    trimesh = pytest.importorskip("trimesh")
    ps, state = knuckle_set
    fine = export_parts(ps, tmp_path / "fine", ["stl"], state=state, stl_linear_mm=0.01,
                        stl_angular_deg=5.0)
    coarse = export_parts(ps, tmp_path / "coarse", ["stl"], state=state, stl_linear_mm=0.5,
                          stl_angular_deg=45.0)
    for p in ps.parts:
        m = trimesh.load(tmp_path / "fine" / "stl" / f"{p.name}.stl")
        assert m.is_watertight
        # an inscribed polygon of 5 deg segments loses (1 - sin(5deg)/(5deg)) ~ 1.3e-3 of a
        # circle's area (elementary geometry); barrels are a small part of each volume
        assert m.volume == pytest.approx(p.volume, rel=1.3e-3)
        assert m.volume <= p.volume + 1e-6  # inscribed facets never add volume
    whole = trimesh.load(tmp_path / "fine" / "assembly.stl")
    assert whole.volume == pytest.approx(sum(p.volume for p in ps.parts), rel=1.3e-3)
    n_fine = sum(trimesh.load(f).faces.shape[0] for f in fine if "stl/" in str(f))
    n_coarse = sum(trimesh.load(f).faces.shape[0] for f in coarse if "stl/" in str(f))
    assert n_coarse < n_fine  # the tolerance parameter changes the mesh


def test_plain_panel_stl_volume_is_exact(tmp_path):
    trimesh = pytest.importorskip("trimesh")
    ps = build_parts(plain_plan(two_panels(), 3.0, 0.5))
    export_parts(ps, tmp_path, ["stl"])
    m = trimesh.load(tmp_path / "stl" / "P000.stl")
    assert m.is_watertight and m.volume == pytest.approx(39.75 * 30 * 3, rel=1e-6)  # float32
    assert np.allclose(m.bounds, [[0, 0, 0], [39.75, 30, 3]], atol=1e-4)


def test_3mf_reads_back_with_lib3mf(knuckle_set, knuckle_out):
    # lib3mf, the 3MF Consortium's reference implementation (PyPI lib3mf)
    lib3mf = pytest.importorskip("lib3mf")
    ps, _ = knuckle_set
    out, _ = knuckle_out
    wrapper = lib3mf.get_wrapper()
    model = wrapper.CreateModel()
    model.QueryReader("3mf").ReadFromFile(str(out / "plate.3mf"))
    it = model.GetMeshObjects()
    names, ok = [], []
    while it.MoveNext():
        obj = it.GetCurrentMeshObject()
        names.append(obj.GetName())
        ok.append(obj.IsManifoldAndOriented() and obj.GetTriangleCount() > 0)
    assert names == [p.name for p in ps.parts]
    assert all(ok)
    items = model.GetBuildItems()
    n_items = 0
    while items.MoveNext():
        n_items += 1
    assert n_items == len(ps.parts)


def test_dxf_profiles_read_back_with_ezdxf(tmp_path):
    import ezdxf

    ps = build_parts(plain_plan(two_panels(), 3.0, 0.5), hinge_style="none",
                     hinge_options={"hole_diameter_mm": 3.0})
    export_parts(ps, tmp_path, ["dxf"])
    doc = ezdxf.readfile(tmp_path / "dxf" / "P000.dxf")
    assert {"OUTLINE", "HOLES", "BEVEL", "BEVEL-BOTTOM"} <= {ly.dxf.name for ly in doc.layers}
    assert doc.header["$INSUNITS"] == 4  # DXF reference: 4 = millimetres
    msp = doc.modelspace()
    (pl,) = msp.query("LWPOLYLINE[layer=='OUTLINE']")
    pts = np.array([p[:2] for p in pl.get_points()])
    area = 0.5 * abs(np.dot(pts[:, 0], np.roll(pts[:, 1], -1))
                     - np.dot(pts[:, 1], np.roll(pts[:, 0], -1)))
    assert pl.closed and area == pytest.approx(39.75 * 30, rel=1e-12)  # shoelace formula
    holes = msp.query("CIRCLE[layer=='HOLES']")
    assert sorted(2 * c.dxf.radius for c in holes) == pytest.approx([3.0, 3.0])


def test_dxf_knuckle_outline_area_matches_solid(knuckle_set, knuckle_out):
    import ezdxf

    ps, _ = knuckle_set
    out, _ = knuckle_out
    (pl,) = ezdxf.readfile(out / "dxf" / "P000.dxf").modelspace().query("LWPOLYLINE")
    pts = np.array([p[:2] for p in pl.get_points()])
    area = 0.5 * abs(np.dot(pts[:, 0], np.roll(pts[:, 1], -1))
                     - np.dot(pts[:, 1], np.roll(pts[:, 0], -1)))
    barrels = sum(occ.volume(s) for s in occ.solids_of(ps["P000"].frame_shape)[1:])
    # body volume = outline area x thickness (prism), the rest are the barrels
    assert area * 3.0 + barrels == pytest.approx(ps["P000"].volume, rel=1e-9)


def test_bom_and_metrics(knuckle_set, knuckle_out):
    ps, state = knuckle_set
    out, _ = knuckle_out
    lines = (out / "bom.csv").read_text().splitlines()
    assert lines[0].startswith("# CAUTION") and "qualified engineer" in lines[0]
    rows = list(csv.DictReader(lines[1:]))
    assert [r["part"] for r in rows] == ["P000", "P001", "PIN-C006"]
    # mass = volume x density; 6061-T6 2.70 g/cm3 (ASM Handbook Vol. 2), 304 8.00 g/cm3
    assert float(rows[0]["mass_g"]) == pytest.approx(ps["P000"].volume * 2.70e-3, abs=1e-3)
    assert float(rows[2]["mass_g"]) == pytest.approx(ps["PIN-C006"].volume * 8.0e-3, abs=1e-3)
    assert rows[2]["pin_diameters_mm"] == "2" and rows[2]["fit"] == "H7/g6"
    assert rows[0]["hinge_count"] == "1"
    bom = json.loads((out / "bom.json").read_text())
    assert "CAUTION" in bom["caution"] and bom["totals"]["panel"]["count"] == 2
    met = json.loads((out / "metrics.json").read_text())
    assert "CAUTION" in met["caution"]
    # deployed diameter: corners (0, 0) and (80, 30): sqrt(80^2 + 30^2) (Pythagoras)
    assert met["deployed_diameter_mm"] == pytest.approx(math.hypot(80, 30), abs=1e-4)
    area = ps["P000"].area + ps["P001"].area
    assert met["deployed_area_mm2"] == pytest.approx(area, abs=1e-3)
    # the export state's box in the design frame holds every built part: OCP's optimal bounding box
    # of the placed parts (BRepBndLib::AddOptimal) lies inside it, and the box exceeds it by at
    # most the circumscribed-polygon allowance of the barrels (1 / cos(pi / 24) - 1 of a radius)
    from OCP.Bnd import Bnd_Box
    from OCP.BRep import BRep_Builder
    from OCP.BRepBndLib import BRepBndLib
    from OCP.TopoDS import TopoDS_Compound

    comp, bld = TopoDS_Compound(), BRep_Builder()
    bld.MakeCompound(comp)
    for shp in ps.placed(state):
        bld.Add(comp, shp)
    box = Bnd_Box()
    BRepBndLib.AddOptimal_s(comp, box, False, False)
    x0, y0, z0, x1, y1, z1 = box.Get()
    lo, hi = (np.array(c) for c in met["box_corners_mm"])
    assert np.all(lo <= np.array([x0, y0, z0]) + 1e-6) and np.all(hi >= np.array([x1, y1, z1]) - 1e-6)
    assert np.allclose(lo, [x0, y0, z0], atol=0.05) and np.allclose(hi, [x1, y1, z1], atol=0.05)
    assert met["box_mm"] == pytest.approx(list(hi - lo), abs=1e-3)
    # a state made from angles has no fold fraction; its largest crease fold is the 90 deg given
    assert met["state_t"] is None and met["fold_deg"] == pytest.approx(90.0)
    assert "stowed_envelope_mm" not in met  # a part set alone does not know its stowed state
    assert met["total_mass_g"] == pytest.approx(sum(r["mass_g"] for r in bom["parts"]), abs=1e-3)
    assert met["min_clearance_mm"] is None


def test_metrics_takes_min_clearance_from_a_report(tmp_path):
    class Report:  # stand-in with the agreed ClearanceReport fields
        min_clearance = 0.4321
        where = ("P000", "P001", 0.5)

    ps = build_parts(plain_plan(two_panels(), 3.0, 0.5))
    export_parts(ps, tmp_path, ["metrics"], clearance=Report())
    met = json.loads((tmp_path / "metrics.json").read_text())
    assert met["min_clearance_mm"] == pytest.approx(0.4321)


def test_same_input_gives_same_files(knuckle_set, tmp_path):
    ps, state = knuckle_set
    a = export_parts(ps, tmp_path / "a", "all", state=state)
    b = export_parts(ps, tmp_path / "b", "all", state=state)
    for pa, pb in zip(a, b, strict=True):
        da, db = pa.read_bytes(), pb.read_bytes()
        if pa.suffix == ".step":  # ISO 10303-21 FILE_NAME carries a time stamp
            da = b"".join(x for x in da.splitlines() if b"FILE_NAME" not in x)
            db = b"".join(x for x in db.splitlines() if b"FILE_NAME" not in x)
        assert da == db, pa.name


def test_unknown_format_and_bad_folder(knuckle_set, tmp_path):
    ps, _ = knuckle_set
    with pytest.raises(ExportError, match="unknown export format 'iges'.*step"):
        export_parts(ps, tmp_path, ["iges"])
    f = tmp_path / "file"
    f.write_text("x")
    with pytest.raises(ExportError, match="not a folder"):
        export_parts(ps, f, ["bom"])
    if os.geteuid() != 0:
        ro = tmp_path / "ro"
        ro.mkdir()
        ro.chmod(0o500)
        try:
            with pytest.raises(ExportError, match="not writable"):
                export_parts(ps, ro, ["bom"])
        finally:
            ro.chmod(0o700)
    with pytest.raises(ExportError, match="stl_linear_mm"):
        export_parts(ps, tmp_path / "m", ["stl"], stl_linear_mm=0)


def test_export_failing_halfway_leaves_no_partial_files(knuckle_set, tmp_path, monkeypatch):
    ps, _ = knuckle_set
    # (1) a format fails after others were rendered: nothing is written
    def boom(partset, options):
        raise RuntimeError("disk on fire")

    register_format("boom-test", boom)
    with pytest.raises(ExportError, match="boom-test"):
        export_parts(ps, tmp_path / "one", ["bom", "dxf", "boom-test"])
    assert list((tmp_path / "one").rglob("*")) == []
    # (2) the third file write fails: the two already written are removed, no temp files
    import thickpanel.export.writer as w

    calls = {"n": 0}
    real = os.replace

    def flaky(src, dst):
        calls["n"] += 1
        if calls["n"] == 3:
            raise OSError("no space left on device")
        real(src, dst)

    monkeypatch.setattr(w.os, "replace", flaky)
    with pytest.raises(ExportError, match="no space left"):
        export_parts(ps, tmp_path / "two", ["bom", "dxf", "metrics"])
    assert [p for p in (tmp_path / "two").rglob("*") if p.is_file()] == []


def test_step_schema_choice(knuckle_set):
    # ISO 10303-21 FILE_SCHEMA names: AP214 AUTOMOTIVE_DESIGN, AP242 managed model based 3D
    from thickpanel.export.step import step_bytes

    ps, _ = knuckle_set
    items = [(p.name, p.pieces, None) for p in ps.parts]
    assert b"AP242_MANAGED_MODEL_BASED_3D_ENGINEERING" in step_bytes(items, schema="AP242")
    with pytest.raises(ExportError, match="schema 'AP999'"):
        step_bytes(items, schema="AP999")


def test_no_material_gives_blank_masses(tmp_path):
    ps = build_parts(plain_plan(two_panels(), 3.0, 0.5))
    assert ps["P000"].material == "" and ps["P000"].mass is None
    export_parts(ps, tmp_path, ["bom", "metrics"])
    rows = list(csv.DictReader((tmp_path / "bom.csv").read_text().splitlines()[1:]))
    assert rows[0]["mass_g"] == ""
    assert json.loads((tmp_path / "metrics.json").read_text())["total_mass_g"] is None
