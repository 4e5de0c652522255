"""Panel solids: validity, analytic volumes, placement by fold state, hinge clearance."""

from __future__ import annotations

import math

import numpy as np
import pytest
from OCP.BRepAlgoAPI import BRepAlgoAPI_Common

from tests.test_solids_plans import plain_plan, two_panels
from thickpanel import occ
from thickpanel.errors import GeometryError, HingeError
from thickpanel.poses import fold_state_from_angles
from thickpanel.solids import build_parts
from thickpanel.thickness.plan import CutPlane, Slab, ThickPlan


def clipped_disk_area(r: float, c: float) -> float:
    """Disk of radius r minus the circular segment beyond a chord at distance c from the centre.

    Segment area r^2 acos(c/r) - c sqrt(r^2 - c^2): CRC Standard Mathematical Tables (circular
    segment), also Weisstein, MathWorld "Circular Segment".
    """
    return math.pi * r * r - (r * r * math.acos(c / r) - c * math.sqrt(r * r - c * c))


def all_valid(part) -> bool:
    return all(occ.check_shape(s) for s in occ.solids_of(part.frame_shape))


def common_volume(a, b) -> float:
    op = BRepAlgoAPI_Common(a, b)
    return occ.volume(op.Shape())


def test_plain_panels_volume_is_area_times_thickness():
    # prism volume = base area x height (Euclid XII / any solid geometry text)
    ps = build_parts(plain_plan(two_panels(), 3.0, 0.5), hinge_style="none")
    assert [p.name for p in ps.parts] == ["P000", "P001"]
    for p in ps.parts:
        assert all_valid(p)
        assert p.volume == pytest.approx(39.75 * 30 * 3.0, rel=1e-12)
        assert occ.volume(p.frame_shape) == pytest.approx(p.volume, rel=1e-12)


def test_bevel_cut_removes_the_analytic_wedge():
    # 45 deg x c chamfer along the hinge-side top edge x = 39.75 of P000: the removed wedge is a
    # triangular prism of volume c^2 / 2 x edge length (solid geometry, prism volume)
    t, c = 3.0, 1.2
    base = plain_plan(two_panels(), t, 0.5)
    n = (1 / math.sqrt(2), 0.0, 1 / math.sqrt(2))
    cut = CutPlane(n, (39.75 + t - c) / math.sqrt(2), "bevel C006")
    s0 = base.slabs[0]
    slabs = (Slab(s0.panel, s0.polygon, s0.z0, s0.z1, (cut,)), base.slabs[1])
    plan = ThickPlan(base.pattern, "plain", slabs, base.hinges, base.target_fold)
    p = build_parts(plan, hinge_style="none").parts[0]
    assert all_valid(p)
    assert p.volume == pytest.approx(39.75 * 30 * t - 0.5 * c * c * 30, rel=1e-9)
    # bevel line on the top face at x = 39.75 - c
    top = [seg for layer, seg in p.bevels if layer == "BEVEL"]
    assert len(top) == 1 and np.allclose(top[0][:, 0], 39.75 - c)


def test_knuckle_panels_volume_matches_notches_and_barrels():
    t, g = 3.0, 0.5
    ps = build_parts(plain_plan(two_panels(), t, g), hinge_style="knuckle")
    assert [p.name for p in ps.parts] == ["P000", "P001", "PIN-C006"]
    des = ps.designs[0]
    a_barrels, b_barrels = des.sides[0].barrels, des.sides[1].barrels
    assert (len(a_barrels), len(b_barrels)) == (2, 1)
    br = a_barrels[0]
    k = br.s1 - br.s0
    # usable 2.25..27.75 mm less 0.2 mm at each end, 3 knuckles, 0.2 mm gaps: k = (25.1 - 0.4) / 3
    # = 8.233 mm, rounded down to the 0.1 mm length step: 8.2 mm
    assert k == pytest.approx(8.2)
    R, c, ca, cr = br.radius, br.clip, 0.2, 0.3
    barrel = k * (clipped_disk_area(R, c) - math.pi * br.hole**2)
    own = (c - g / 2) * k
    other = (R + cr - g / 2) * (k + 2 * ca)
    pa, pb, pin = ps.parts
    assert all(all_valid(p) for p in ps.parts)
    # panel A: 2 own notches, 1 other notch; panel B: 1 own, 2 other
    assert pa.volume == pytest.approx(t * (39.75 * 30 - 2 * own - other) + 2 * barrel, rel=1e-9)
    assert pb.volume == pytest.approx(t * (39.75 * 30 - own - 2 * other) + barrel, rel=1e-9)
    assert occ.volume(pa.frame_shape) == pytest.approx(pa.volume, rel=1e-9)
    # each barrel touches its panel body (OCP BRepExtrema distance 0), no overlap (common volume)
    from OCP.BRepExtrema import BRepExtrema_DistShapeShape

    body, *barrels = occ.solids_of(pa.frame_shape)
    for b in barrels:
        assert BRepExtrema_DistShapeShape(b, body).Value() < 1e-7
        assert common_volume(b, body) < 1e-6
    # pin: ISO 286-2 g6 mean 1.995 mm over the three knuckles + 2 gaps
    assert pin.volume == pytest.approx(math.pi * (1.995 / 2) ** 2 * (3 * 8.2 + 0.4), rel=1e-9)
    assert pin.pins == (2.0,) and pin.attrs["fit"] == "H7/g6"


@pytest.mark.parametrize("angle", [0.0, math.pi / 2, 0.9 * math.pi])
def test_knuckles_never_enter_the_other_panel(angle):
    # Truth by OCP boolean common volume (BRepAlgoAPI_Common), as in the project's perf notes.
    plan = plain_plan(two_panels(), 3.0, 0.5)
    angles = np.zeros(plan.pattern.n_creases)
    angles[6] = angle
    state = fold_state_from_angles(plan.pattern, angles, base=0)
    ps = build_parts(plan, hinge_style="knuckle", state=state)
    pa, pb, pin = ps.parts
    assert common_volume(pa.shape, pb.shape) < 1e-6
    # the pin sits inside the holes with the ISO H7/g6 clearance: no overlap with either panel
    assert common_volume(pin.shape, pa.shape) < 1e-6
    assert common_volume(pin.shape, pb.shape) < 1e-6


def test_fold_state_places_panel_by_rotation_about_the_hinge_axis():
    # Rigid rotation (Rodrigues' formula) of P001 (x 40.25..80, z 0..3) by +90 deg (valley lifts
    # towards +z) about the top-face axis x = 40, z = 3: x' = 40 + (3 - z), z' = 3 + (x - 40)
    plan = plain_plan(two_panels(), 3.0, 0.5)
    angles = np.zeros(plan.pattern.n_creases)
    angles[6] = math.pi / 2
    state = fold_state_from_angles(plan.pattern, angles, base=0)
    ps = build_parts(plan, hinge_style="none", state=state)
    box = occ.bbox(ps.parts[1].shape)
    assert np.allclose(box, [[40.0, 0.0, 3.25], [43.0, 30.0, 43.0]], atol=1e-6)
    assert np.allclose(occ.bbox(ps.parts[0].shape), [[0, 0, 0], [39.75, 30, 3]], atol=1e-6)


def test_print_in_place_and_tape_volumes():
    plan = plain_plan(two_panels(), 4.0, 0.5, material="pla")
    ps = build_parts(plan, hinge_style="print-in-place")
    assert [p.name for p in ps.parts] == ["P000", "P001"]
    assert all(all_valid(p) for p in ps.parts)
    rod = ps.designs[0].sides[0].rods[0]
    assert rod.s1 - rod.s0 == pytest.approx(ps.designs[0].info["knuckle_length"] + 0.4)
    tape = build_parts(plain_plan(two_panels(), 3.0, 0.5), hinge_style="tape",
                       hinge_options={"overlap_mm": 4.0}).parts[2]
    # strip (gap + 2 overlap) x usable length x thickness
    assert tape.name == "TAPE-C006"
    assert tape.volume == pytest.approx((0.5 + 8.0) * 25.5 * 0.1, rel=1e-9)
    assert tape.area == pytest.approx((0.5 + 8.0) * 25.5, rel=1e-9)


def test_holes_of_the_none_style_are_cut():
    ps = build_parts(plain_plan(two_panels(), 3.0, 0.5), hinge_style="none",
                     hinge_options={"hole_diameter_mm": 3.0})
    p = ps.parts[0]
    assert all_valid(p) and len(p.holes) == 2
    # cylinder volume pi r^2 h per hole
    assert p.volume == pytest.approx(39.75 * 30 * 3 - 2 * math.pi * 1.5**2 * 3, rel=1e-9)


def test_invalid_solid_is_a_geometry_error_naming_the_panel():
    base = plain_plan(two_panels(), 3.0, 0.5)
    bow = ((0.0, 0.0), (39.0, 30.0), (39.0, 0.0), (0.0, 30.0))  # self-crossing outline
    slabs = (Slab(0, bow, 0.0, 3.0), base.slabs[1])
    plan = ThickPlan(base.pattern, "plain", slabs, (), base.target_fold)
    with pytest.raises(GeometryError, match="P000"):
        build_parts(plan)


def test_overlapping_corner_notches_are_a_hinge_error():
    from thickpanel.layouts import make_layout

    cp = make_layout("miura", a=30.0, b=25.0, gamma_deg=70.0, nx=2, ny=2)
    plan = plain_plan(cp, 4.0, 0.6, face="mid", clear=1.0)
    with pytest.raises(HingeError, match="overlap on P00"):
        build_parts(plan, hinge_style="knuckle")


def test_miura_parts_share_prototypes_and_stay_valid():
    from thickpanel.layouts import make_layout

    cp = make_layout("miura", a=30.0, b=25.0, gamma_deg=70.0, nx=4, ny=3)
    plan = plain_plan(cp, 4.0, 0.6, face="mid", clear=8.0)
    ps = build_parts(plan, hinge_style="knuckle")
    panels = [p for p in ps.parts if p.kind == "panel"]
    assert len(panels) == 12 and len(ps.parts) == 12 + len(plan.hinges)
    keys = {p.pieces[0][0] for p in panels}
    assert len(keys) < len(panels)  # translation-congruent panels share one body
    for p in ps.parts:
        assert all_valid(p)
        assert occ.volume(p.frame_shape) == pytest.approx(p.volume, rel=1e-9)


def test_knuckles_on_standoffs_touch_but_never_overlap():
    # offset-panel-like plan: the axis at z = 4.5 lies above the 3 mm slabs; 3 mm standoffs on
    # each side carry the hinge. Overlap truth by BRepAlgoAPI_Common volume (OCP).
    import itertools

    from thickpanel.thickness.plan import HingeLine, Standoff

    base = plain_plan(two_panels(), 3.0, 0.5)
    h0 = base.hinges[0]
    st_a = Standoff(6, ((36.75, 0.0), (39.75, 0.0), (39.75, 30.0), (36.75, 30.0)), 3.0, 6.0)
    st_b = Standoff(6, ((40.25, 0.0), (43.25, 0.0), (43.25, 30.0), (40.25, 30.0)), 3.0, 6.0)
    s0, s1 = base.slabs
    slabs = (Slab(0, s0.polygon, 0.0, 3.0, (), (st_a,)), Slab(1, s1.polygon, 0.0, 3.0, (), (st_b,)))
    hinge = HingeLine(6, h0.panels, (40.0, 0.0, 4.5), h0.direction, "top", 0.5, h0.usable,
                      h0.fold_range)
    plan = ThickPlan(base.pattern, "offset-panel", slabs, (hinge,), base.target_fold)
    ps = build_parts(plan, hinge_style="knuckle")
    for p in ps.parts[:2]:
        sol = occ.solids_of(p.frame_shape)
        assert len(sol) == 2 + len(ps.designs[0].sides[p.panel].barrels)
        assert all(occ.check_shape(x) for x in sol)
        for a, b in itertools.combinations(sol, 2):
            assert common_volume(a, b) < 1e-6
        assert occ.volume(p.frame_shape) == pytest.approx(p.volume, rel=1e-9)
        # every barrel touches its standoff (OCP BRepExtrema distance 0): the part is connected
        from OCP.BRepExtrema import BRepExtrema_DistShapeShape

        for barrel in sol[2:]:
            assert BRepExtrema_DistShapeShape(barrel, sol[1]).Value() < 1e-7
    assert common_volume(ps.parts[0].frame_shape, ps.parts[1].frame_shape) < 1e-6


def test_tape_sheet_membrane_covers_the_sheet_outline():
    # two 40 x 30 panels: the sheet outline is the 80 x 30 rectangle; volume = area x thickness
    ps = build_parts(plain_plan(two_panels(), 3.0, 0.5), hinge_style="tape",
                     hinge_options={"sheet": True, "tape_thickness_mm": 0.05})
    assert [p.name for p in ps.parts] == ["P000", "P001", "MEMBRANE"]
    mem = ps["MEMBRANE"]
    assert mem.area == pytest.approx(80 * 30) and mem.volume == pytest.approx(80 * 30 * 0.05)
    assert np.allclose(occ.bbox(mem.frame_shape), [[0, 0, 3.0], [80, 30, 3.05]], atol=1e-6)
    assert common_volume(mem.frame_shape, ps["P000"].frame_shape) < 1e-6


def test_simple_polygon_check_handles_collinear_edges():
    # simple polygon = no two non-adjacent edges meet (de Berg et al., Computational Geometry,
    # 3rd ed. 2008, ch. 3). A U shape has two collinear but disjoint top edges: still simple.
    from thickpanel.outline import self_intersects as _self_intersects

    u_shape = np.array([[0, 0], [3, 0], [3, 2], [2, 2], [2, 1], [1, 1], [1, 2], [0, 2]], float)
    assert not _self_intersects(u_shape, 1e-6)
    bow = np.array([[0, 0], [2, 2], [2, 0], [0, 2]], float)
    assert _self_intersects(bow, 1e-6)
    # a vertex on a non-adjacent edge (T-junction) is not simple either
    tee = np.array([[0, 0], [4, 0], [4, 2], [2, 2], [2, 0], [1, 2], [0, 2]], float)
    assert _self_intersects(tee, 1e-6)


def test_profile_validation_gives_the_same_parts_and_catches_bad_outlines():
    plan = plain_plan(two_panels(), 3.0, 0.5)
    full = build_parts(plan, hinge_style="knuckle")
    fast = build_parts(plan, hinge_style="knuckle", validate="profile")
    for a, b in zip(full.parts, fast.parts, strict=True):
        assert a.name == b.name and a.volume == pytest.approx(b.volume, rel=1e-12)
        assert all_valid(b)  # the fast path's solids pass the full BRepCheck too
    base = plain_plan(two_panels(), 3.0, 0.5)
    bow = ((0.0, 0.0), (39.0, 30.0), (39.0, 0.0), (0.0, 30.0))
    bad = ThickPlan(base.pattern, "plain", (Slab(0, bow, 0.0, 3.0), base.slabs[1]), (),
                    base.target_fold)
    with pytest.raises(GeometryError, match="P000"):
        build_parts(bad, validate="profile")
    with pytest.raises(GeometryError, match="validate"):
        build_parts(base, validate="sometimes")
