"""Hub-wrap sheets through the pipeline: checks against outside sources.

Sources named beside each check:

* regular polygon area from its inradius a: ``m a^2 tan(pi/m)``; circumradius ``a / cos(pi/m)``
  (CRC Standard Mathematical Tables, regular polygons);
* Kawasaki's theorem: alternate sector sums of pi at a flat-foldable vertex (Kawasaki 1989, "On the
  relation between mountain-creases and valley-creases of a flat origami");
* an isometry keeps every pairwise distance (definition of a rigid motion);
* loop closure of rigid folding: the product of hinge rotations round a vertex is the identity
  (Belcastro & Hull 2002, "Modelling the folding of paper into three dimensions using affine
  transformations", Linear Algebra Appl. 348);
* the wrapped-hub pattern is not rigidly foldable (Lang, Magleby & Howell 2016, J. Mechanisms
  Robotics 8(3):031005), cross-checked by our general solver on a small case.

These tests use the zero-thickness reference sheet (``panel_thickness = 0``) with plates of a given
thickness for the slabs: the thick construction is the integrator's and had not landed when they were
written, so the stowed layers coincide and the stowed clearance is negative here by design.
"""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest

from thickpanel.errors import FoldError, PatternError, ThicknessError
from thickpanel.foldability import check_foldability
from thickpanel.layouts import make_layout
from thickpanel.thickness import make_plan, methods_for
from thickpanel.wrap.deploy import stowed_fold_path, vertex_misfit
from thickpanel.wrap.metrics import wrap_metrics
from thickpanel.wrap.sheet import wrap_info
from thickpanel.wrap.verdict import wrap_rigidity

H = 100.0
RH = 100.0


def _sheet(m: int, r: int, **kw: object):
    return make_layout("hub-wrap", sides=m, rings=r, ring_height=H, hub_circumradius=RH, **kw)


@pytest.fixture(scope="module")
def small():
    return _sheet(4, 2)


def _outline_area(m: int, r: int) -> float:
    a = RH * math.cos(math.pi / m) + r * H
    return m * a * a * math.tan(math.pi / m)  # CRC tables: regular polygon from its inradius


def _isometry_error(cp) -> float:
    info = wrap_info(cp)
    worst = 0.0
    for p in range(len(info.pieces)):
        q = cp.panel_polygon(p)
        flat = np.column_stack([q, np.zeros(len(q))])
        placed = flat @ info.stowed_poses[p][:3, :3].T + info.stowed_poses[p][:3, 3]
        d0 = np.linalg.norm(flat[:, None] - flat[None], axis=2)
        d1 = np.linalg.norm(placed[:, None] - placed[None], axis=2)
        worst = max(worst, float(np.abs(d1 - d0).max()))
    return worst


@pytest.mark.parametrize(("m", "r"), [(3, 3), (4, 3), (5, 3), (6, 4), (8, 3), (12, 3), (12, 30)])
def test_zero_thickness_sheet_against_outside_sources(m, r):
    cp = _sheet(m, r)
    # panel areas sum to the outline's area (CRC tables), 1e-9 relative
    area = sum(p.area for p in cp.panels)
    assert area == pytest.approx(_outline_area(m, r), rel=1e-9)
    # deployed outline diameter: circumradius (a + r h) / cos(pi/m) of the offset m-gon (CRC tables)
    met = wrap_metrics(cp, thickness=2.0)
    closed = 2.0 * (RH * math.cos(math.pi / m) + r * H) / math.cos(math.pi / m)
    assert met["deployed_diameter_mm"] == pytest.approx(closed, rel=1e-12)
    # the stowed map is an isometry of every panel (pairwise corner distances, 1e-9 mm)
    assert _isometry_error(cp) < 1e-9
    # Kawasaki (1989) at every non-hub vertex; the hub corners are the reported exemption
    rep = check_foldability(cp)
    hub = {f"V{v:03d}" for v in wrap_info(cp).hub_vertices}
    assert set(rep.failing) <= hub
    k = {int(v): float(x) for v, x in zip(rep.vertices, rep.kawasaki, strict=True)}
    assert max(abs(x) for v, x in k.items() if f"V{v:03d}" not in hub) < 1e-9
    # the structural verdict holds (m hub corners, straight crossings present)
    v = wrap_rigidity(cp)
    assert v.kind == "locked" and v.where[:m] == tuple(sorted(hub))


def test_structural_verdict_agrees_with_general_solver(small):
    from thickpanel.kinematics import rigid_foldability

    v = wrap_rigidity(small)
    assert v.kind == "locked" and "Lang, Magleby & Howell 2016" in v.reason
    assert "8 straight crease crossings" in v.reason  # 4 gores x 2 perpendicular lines x 1 accordion
    assert rigid_foldability(small).kind == "locked"  # the general solver, run on the small case


def test_deployment_path_end_states_and_compliance(small):
    path = stowed_fold_path(small, n_states=5)
    info = wrap_info(small)
    assert path.states[0].t == 0.0 and path.states[-1].t == 1.0
    assert np.allclose(path.states[0].poses, np.eye(4))
    assert np.array_equal(path.states[-1].poses, info.stowed_poses)
    comp = path.meta["compliance"]
    # end states: ideal hinges (loop closure, Belcastro & Hull 2002) up to round-off
    assert comp.vertex_misfit[0].max() == 0.0 and comp.hinge_play[0].max() == 0.0
    assert comp.vertex_misfit[-1].max() < 1e-6 and comp.hinge_play[-1].max() < 1e-9
    # between them the sheet needs compliance (it is locked), and the relaxation lowers the play
    raw = stowed_fold_path(small, n_states=5, relax=False).meta["compliance"]
    assert comp.hinge_play[2].max() > 1.0
    assert comp.hinge_play[2].max() < 0.2 * raw.hinge_play[2].max()
    assert "spanning tree" in comp.method and comp.worst_hinges(1)[0][0].startswith("C")
    # between samples the path computes the state the same way
    mid = path.at(0.5)
    assert np.allclose(mid.poses, path.states[2].poses)
    with pytest.raises(FoldError, match="n_states"):
        stowed_fold_path(small, n_states=1)


def test_vertex_misfit_is_zero_on_a_rigid_fold():
    # a Miura-ori folds rigidly (loop closure holds at every vertex: Belcastro & Hull 2002)
    from thickpanel.kinematics import fold_path

    cp = make_layout("miura", a=20.0, b=20.0, gamma_deg=60.0, nx=3, ny=3)
    st = fold_path(cp, target=math.radians(120), n_states=6).states[-1]
    assert vertex_misfit(cp, st.angles).max() < 1e-7
    bent = np.array(st.angles)
    bent[np.nonzero(bent)[0][0]] += 0.1  # one hinge off by 0.1 rad opens its vertex loops
    assert vertex_misfit(cp, bent).max() > 0.05


def test_wrap_backing_plan(small):
    path = stowed_fold_path(small, n_states=3)
    plan = make_plan(small, "wrap-backing", thickness=2.0, target_fold=math.pi, path=path)
    info = wrap_info(small)
    # explicit stowed poses are honoured (not re-composed from fold angles about the hinge axes)
    assert plan.poses(path.states[-1]) is plan.explicit_at(1.0)
    assert np.array_equal(plan.poses(path.states[-1]), info.stowed_poses)
    assert np.array_equal(plan.poses(path.states[1]), path.states[1].poses)
    assert all(sl.z0 == -1.0 and sl.z1 == 1.0 for sl in plan.slabs)
    backing = plan.meta["sheet_parts"][0]
    assert backing.name == "BACKING" and backing.z1 == -1.0 and backing.attrs["flat_only"]
    assert len(backing.attrs["bonded"]) == small.n_panels
    adv = {a.method: a for a in methods_for(small, math.pi, thickness=2.0, path=path)}
    assert adv["wrap-backing"].applies and not adv["plain"].applies


def test_wrap_backing_refusals(small):
    with pytest.raises(ThicknessError, match="applies only to sheets made by the hub-wrap layout"):
        miura = make_layout("miura", a=20.0, b=20.0, gamma_deg=60.0, nx=2, ny=2)
        make_plan(miura, "wrap-backing", thickness=2.0, target_fold=math.pi)
    with pytest.raises(ThicknessError, match="min_backing"):
        make_plan(small, "wrap-backing", thickness=2.0, target_fold=math.pi, backing_thickness=0.01)
    thick = _sheet(4, 2, panel_thickness=2.0)
    with pytest.raises(ThicknessError, match="too thin for the bare gap"):
        make_plan(thick, "wrap-backing", thickness=2.0, target_fold=math.pi, max_span_ratio=10.0)
    with pytest.raises(ThicknessError, match="differs from the layout's panel_thickness"):
        make_plan(thick, "wrap-backing", thickness=3.0, target_fold=math.pi)
    with pytest.raises(ThicknessError, match="differs from the layout's backing_thickness"):
        make_plan(thick, "wrap-backing", thickness=2.0, target_fold=math.pi, backing_thickness=0.1)
    with pytest.raises(ThicknessError, match="backing_material = 'unobtainium'"):
        make_plan(small, "wrap-backing", thickness=2.0, target_fold=math.pi, backing_material="unobtainium")
    from thickpanel.thickness.plan import ThickPlan

    live = np.tile(np.eye(4), (small.n_panels, 1, 1))
    with pytest.raises(ValueError, match="read-only"):
        ThickPlan(small, "x", (), (), 1.0, explicit_poses=((1.0, live),))


def test_stowed_metrics_against_the_volume_bound(small):
    plan = make_plan(small, "wrap-backing", thickness=2.0, target_fold=math.pi)
    met = wrap_metrics(small, plan)
    # stowed slabs stand round a hub of circumradius 100 mm: vertical panels up to z = h, the hub
    # plate +-t/2 (so the height is h + t/2 + t/2 = 101 mm for these centred 2 mm plates)
    assert met["stowed_height_mm"] == pytest.approx(H + 1.0, abs=1e-9)
    assert met["stowed_diameter_mm"] > 2 * RH
    assert met["diameter_ratio"] == pytest.approx(met["deployed_diameter_mm"] / met["stowed_diameter_mm"])
    # the bound sqrt(R_h^2 + A t / (pi H)) with A = outline area - hub area (CRC tables, regular polygons)
    m, r = 4, 2
    area = _outline_area(m, r) - 0.5 * m * RH * RH * math.sin(2 * math.pi / m)
    bound = math.sqrt(RH * RH + area * 2.0 / (math.pi * (H + 1.0)))
    assert met["stowed_radius_bound_mm"] == pytest.approx(bound, rel=1e-12)
    # the zero-thickness sheet's stowed layers coincide, so its plates overlap and the stowed radius
    # falls below the volume-conservation bound (no packing without overlap can do that); the packing
    # efficiency accordingly exceeds what the annulus can hold at the bound
    assert met["stowed_diameter_mm"] / 2 < met["stowed_radius_bound_mm"]
    assert met["packaging_efficiency"] > 0


@pytest.mark.parametrize(("key", "value"), [("sides", 2), ("rings", 0), ("ring_height", 0.0),
                                            ("ring_height", -5.0), ("panel_thickness", -1.0)])
def test_bad_input_names_the_key(key, value):
    kw = {"sides": 4, "rings": 2, "ring_height": H, "hub_circumradius": RH}
    kw[key] = value
    with pytest.raises(PatternError, match=key):
        make_layout("hub-wrap", **kw)


def _design(tmp_path, layout: str, thickness: float = 2.0):
    text = f"""name = "wrap-bad"
[layout]
family = "hub-wrap"
{layout}
[panels]
thickness = {thickness}
[method]
name = "wrap-backing"
"""
    p = tmp_path / "d.toml"
    p.write_text(text)
    return p


@pytest.mark.parametrize(("layout", "thickness", "key"), [
    ("sides = 2\nrings = 2\nring_height = 100.0\nhub_circumradius = 100.0", 2.0, "sides"),
    ("sides = 4\nrings = 0\nring_height = 100.0\nhub_circumradius = 100.0", 2.0, "rings"),
    ("sides = 4\nrings = 2\nring_height = 0.0\nhub_circumradius = 100.0", 2.0, "ring_height"),
    ("sides = 4\nrings = 2\nring_height = 100.0\nhub_circumradius = 100.0", 0.0, "thickness"),
])
def test_bad_design_file_writes_nothing(tmp_path, layout, thickness, key):
    import subprocess
    import sys

    out = tmp_path / "out"
    r = subprocess.run([sys.executable, "-m", "thickpanel.cli", "build", str(_design(tmp_path, layout, thickness)),
                        "-o", str(out)], capture_output=True, text=True, timeout=300)
    assert r.returncode == 2 and key in r.stderr
    assert not out.exists() or not any(out.iterdir())


def test_design_file_passes_the_thickness_once(tmp_path):
    from thickpanel.design import load_design

    d = load_design(_design(tmp_path, "sides = 4\nrings = 2\nring_height = 100.0\nhub_circumradius = 100.0\n"
                                      "panel_thickness = 0.0"))
    cp = d.make_pattern()
    assert wrap_info(cp).params["panel_thickness"] == 0.0  # [layout] wins when it sets the key


def test_stowed_clearance_cross_checked_with_occ(small):
    occ = pytest.importorskip("thickpanel.occ")
    from OCP.BRepAlgoAPI import BRepAlgoAPI_Common
    from OCP.BRepExtrema import BRepExtrema_DistShapeShape

    from thickpanel.clearance import clearance, plan_pieces
    from thickpanel.collide import exact_distance

    path = stowed_fold_path(small, n_states=3)
    plan = make_plan(small, "wrap-backing", thickness=2.0, target_fold=math.pi, path=path)
    stowed = path.with_states((path.states[-1],))
    rep = clearance(plan, stowed, margin=50.0, refine=False)
    assert rep.lower_bound is False and rep.where is not None
    # coincident stowed layers of the zero-thickness sheet: penetration by a full plate thickness
    assert rep.min_clearance == pytest.approx(-2.0, abs=1e-9)
    poses = plan.explicit_at(1.0)

    def solid(p: int):
        sl = plan.slabs[p]
        return occ.moved(occ.prism(sl.polygon_array(), sl.z0, sl.z1), poses[p])

    for (a, b), value, _t in rep.worst_pairs[:5]:
        pa, pb = int(a[1:]), int(b[1:])
        sa, sb = solid(pa), solid(pb)
        d = BRepExtrema_DistShapeShape(sa, sb).Value()
        if value < 0:  # OCP: the solids meet (distance 0) and share volume
            assert d < 1e-7 and occ.volume(BRepAlgoAPI_Common(sa, sb).Shape()) > 1.0
        else:
            assert d == pytest.approx(value, abs=1e-6)
    # a sample of separated pairs: the engine's exact narrow phase against OCP
    pieces = {pc.owner: pc for pc in plan_pieces(plan)}
    checked = 0
    for pa, pb in itertools.combinations(range(1, small.n_panels), 2):
        va = pieces[pa].vertices @ poses[pa][:3, :3].T + poses[pa][:3, 3]
        vb = pieces[pb].vertices @ poses[pb][:3, :3].T + poses[pb][:3, 3]
        ours = exact_distance(va, pieces[pa].triangles, vb, pieces[pb].triangles)
        if not 1.0 < ours < 500.0:
            continue
        assert BRepExtrema_DistShapeShape(solid(pa), solid(pb)).Value() == pytest.approx(ours, abs=1e-6)
        checked += 1
        if checked == 6:
            break
    assert checked == 6


@pytest.mark.cad
def test_thick_acceptance_case_builds_and_clears():
    """m = 6, r = 4, ring height = hub circumradius = 100 mm, t = 2 mm (the issue's acceptance case)."""
    occ = pytest.importorskip("thickpanel.occ")
    from OCP.BRepExtrema import BRepExtrema_DistShapeShape

    from thickpanel.clearance import clearance
    from thickpanel.geometry2d import polygon_area
    from thickpanel.solids import build_parts

    cp = _sheet(6, 4, panel_thickness=2.0)
    path = stowed_fold_path(cp, n_states=3)
    plan = make_plan(cp, "wrap-backing", thickness=2.0, target_fold=math.pi, path=path)
    met = wrap_metrics(cp, plan)
    assert met["diameter_ratio"] >= 4.0 and met["packaging_efficiency"] >= 0.45
    # volume conservation (our derivation): the stowed radius is not below the bound
    assert met["stowed_diameter_mm"] / 2 >= met["stowed_radius_bound_mm"]
    rep = clearance(plan, path.with_states((path.states[-1],)), margin=10.0, refine=False)
    assert rep.lower_bound is False and rep.min_clearance >= 0.0 and rep.first_contact is None
    # neighbouring layers: plate faces a backing plus a layer gap apart (0.05 + 0.1 mm)
    assert rep.min_clearance == pytest.approx(0.15, abs=1e-6)
    poses = plan.explicit_at(1.0)
    slab = {sl.panel: sl for sl in plan.slabs}

    def solid(p: int):
        sl = slab[p]
        return occ.moved(occ.prism(sl.polygon_array(), sl.z0, sl.z1), poses[p])

    for (a, b), value, _t in rep.worst_pairs[:6]:  # OCP BRepExtrema on the closest pairs
        d = BRepExtrema_DistShapeShape(solid(int(a[1:])), solid(int(b[1:]))).Value()
        assert d == pytest.approx(value, abs=1e-6)
    # every solid valid (BRepCheck), plate volume = area x thickness, backing flat only
    ps = build_parts(plan, hinge_style="none")
    for part in ps.parts:
        assert occ.check_shape(part.frame_shape), part.name
        if part.kind == "panel":
            area = abs(polygon_area(slab[part.panel].polygon_array()))
            assert part.volume == pytest.approx(area * 2.0, rel=1e-9)
    names = [p.name for p in ps.parts]
    assert "BACKING" in names and "BACKING" not in [p.name for p in ps.in_state(path.states[-1])]


def test_thick_sheet_compliance_is_measured_on_its_reference(tmp_path):
    """A thick sheet's stowed panels include bent backing strips; the deployment's hinge compliance is
    measured on the zero-thickness reference sheet, whose stowed state closes exactly (loop closure,
    Kawasaki-Maekawa-consistent stowed fold angles), so its last row is zero; the backing must not stretch."""
    from thickpanel.build import run_check
    from thickpanel.design import load_design

    f = tmp_path / "small-wrap.toml"
    f.write_text('name = "small-wrap"\n[layout]\nfamily = "hub-wrap"\nsides = 4\nrings = 2\n'
                 'ring_height = 60.0\nhub_circumradius = 80.0\n[panels]\nthickness = 1.5\nmaterial = "pp"\n'
                 '[method]\nname = "wrap-backing"\n[hinge]\nstyle = "none"\n[fold]\ntarget_deg = 180.0\n'
                 'states = 5\n[checks]\nmin_clearance = 0.0\n', encoding="utf-8")
    s = run_check(load_design(f))
    m = s["metrics"]
    assert "zero-thickness reference" in m["compliance_method"]
    rows = m["compliance"]
    assert rows[0]["max_misfit_deg"] == 0.0 and rows[-1]["max_misfit_deg"] < 1e-4  # deg, round-off at 180 deg folds
    assert m["backing_stretch_mm"] <= 1e-6
    assert m["closure_error"] < 1e-6  # rad; angles read back from poses at 180 deg lose ~sqrt(eps)
