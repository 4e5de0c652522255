"""Wrapped-hub sheets: zero-thickness reference and thick construction, checked against invariants.

Sources named beside each check:
- Kawasaki 1989 (alternating sector sums at a flat-foldable vertex) and Maekawa/Justin (#M - #V = +-2),
  as restated in Demaine & O'Rourke 2007, *Geometric Folding Algorithms*, ch. 12.
- Guest & Pellegrino 1992, "Inextensional wrapping of flat membranes": the wrapped sheet is inextensional,
  so every panel's stowed image is an isometry of its flat piece and the panel areas add to the sheet's.
- Volume conservation (a stowed body cannot hold more material than its volume): the stowed radius bound
  R_s >= sqrt(R_h^2 + A t / (pi H)).
- OCP's BRepExtrema_DistShapeShape (OpenCascade) as an independent distance measurement.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from thickpanel.errors import PatternError
from thickpanel.foldability import check_foldability
from thickpanel.layouts import make_layout
from thickpanel.poses import closure_error
from thickpanel.wrap.check import check_stowed, isometry_error, plate_area_outside_hub, stowed_radius_bound
from thickpanel.wrap.geometry import polygon_area
from thickpanel.wrap.sheet import wrap_info


def _zero(m: int, r: int, h: float = 1.0, rh: float = 1.0, wrap: str = "ccw"):
    return make_layout("hub-wrap", sides=m, rings=r, ring_height=h, hub_circumradius=rh, wrap=wrap)


@pytest.mark.parametrize("m,r", [(6, 4), (4, 2), (3, 1), (5, 3), (8, 2), (12, 3)])
def test_zero_thickness_area_isometry_and_closure(m: int, r: int) -> None:
    cp = _zero(m, r)
    info = wrap_info(cp)
    assert info is not None
    a = math.cos(math.pi / m)
    # outline = offset polygon at distance r h: area m (a + r h)^2 tan(pi/m) (elementary geometry)
    outline_area = m * (a + r) ** 2 * math.tan(math.pi / m)
    assert sum(p.area for p in cp.panels) == pytest.approx(outline_area, rel=1e-9)
    # inextensional wrapping (Guest & Pellegrino 1992): every panel stowed by an isometry
    assert isometry_error(cp) < 1e-9
    # the fold angles read from the stowed poses close every loop (composition along hinges)
    assert closure_error(cp, np.nan_to_num(cp.target_angles), info.stowed_poses) < 1e-9
    # deployed outline: circumradius (a + r h) / cos(pi/m) (closed form of the construction)
    assert info.params["deployed_diameter"] == pytest.approx(2 * (a + r) / math.cos(math.pi / m), rel=1e-12)
    assert float(np.linalg.norm(cp.vertices, axis=1).max()) == pytest.approx((a + r) / math.cos(math.pi / m))


@pytest.mark.parametrize("m,r", [(6, 4), (4, 2), (5, 3)])
def test_zero_thickness_kawasaki_except_hub_corners(m: int, r: int) -> None:
    cp = _zero(m, r)
    info = wrap_info(cp)
    rep = check_foldability(cp)
    hub = {f"V{v:03d}" for v in info.hub_vertices}
    # Kawasaki 1989 and Maekawa/Justin hold at every interior vertex except the hub corners, which
    # are the exemption (degree 5 at a 90 deg hub fold)
    assert set(rep.failing) == hub
    assert len(hub) == m
    ok = ~np.isin(rep.vertices, list(info.hub_vertices))
    assert np.abs(rep.kawasaki[ok]).max() < 1e-9
    deg4 = ok & (rep.degree == 4)
    assert deg4.sum() > 0


def test_mirror_sense_is_a_valid_wrap() -> None:
    cp = _zero(6, 4, 100.0, 100.0, wrap="cw")
    info = wrap_info(cp)
    assert closure_error(cp, np.nan_to_num(cp.target_angles), info.stowed_poses) < 1e-9
    assert isometry_error(cp) < 1e-9
    assert cp.vertices[:, 0].min() == pytest.approx(-cp.vertices[:, 0].max())


def test_zero_thickness_counts_match_the_panel_estimate() -> None:
    from thickpanel.layouts import panel_estimate

    for m, r in [(6, 4), (4, 2), (12, 30)]:
        cp = _zero(m, r, 100.0, 100.0)
        assert cp.n_panels == panel_estimate("hub-wrap", {"sides": m, "rings": r, "ring_height": 100.0,
                                                          "hub_circumradius": 100.0})


# ----------------------------------------------------------------------------------------- thick
@pytest.fixture(scope="module")
def thick():
    cp = make_layout("hub-wrap", sides=6, rings=4, ring_height=100.0, hub_circumradius=100.0, panel_thickness=2.0)
    return cp, check_stowed(cp, margin=3.0)


def test_thick_plates_are_isometric_and_planar(thick) -> None:
    cp, _ = thick
    info = wrap_info(cp)
    assert isometry_error(cp) < 1e-9
    for p, pc in enumerate(info.pieces):
        if len(pc.plate) < 3:
            continue
        pts = np.column_stack([pc.plate, np.zeros(len(pc.plate))]) @ info.stowed_poses[p][:3, :3].T
        sv = np.linalg.svd(pts - pts.mean(axis=0), compute_uv=False)
        assert sv[-1] < 1e-9  # planar
        # the plate lies inside its flat panel (the bare backing strips are outside it)
        assert abs(polygon_area(pc.plate)) <= cp.panels[p].area + 1e-9


def test_thick_plates_do_not_penetrate_when_stowed(thick) -> None:
    cp, chk = thick
    info = wrap_info(cp)
    assert chk.max_penetration == 0.0
    assert chk.min_distance > 0.0
    # neighbouring layers sit one pitch apart: plates (thickness t) keep pitch - t between them
    assert chk.min_distance <= info.extra["layer_pitch"] - 2.0 + 1e-9
    # rings stand in 0 <= z <= ring height; the hub plate is centred on z = 0
    assert chk.z_range[0] == pytest.approx(-1.0) and chk.z_range[1] == pytest.approx(100.0)


def test_thick_acceptance_figures(thick) -> None:
    cp, chk = thick
    info = wrap_info(cp)
    t, h, rh = 2.0, 100.0, 100.0
    area = plate_area_outside_hub(cp)
    rs = chk.outer_radius
    bound = stowed_radius_bound(rh, 6, area, t, h)
    assert rs >= bound  # volume conservation
    hub_area = 0.5 * 6 * rh**2 * math.sin(2 * math.pi / 6)
    efficiency = area * t / ((math.pi * rs**2 - hub_area) * h)
    ratio = info.params["deployed_diameter"] / (2 * rs)
    assert ratio >= 4.0
    assert efficiency >= 0.45


@pytest.mark.cad
def test_thick_clearance_against_opencascade(thick) -> None:
    """The closest stowed pair measured again by OCP BRepExtrema_DistShapeShape on real prisms."""
    from OCP.BRepExtrema import BRepExtrema_DistShapeShape

    from thickpanel.occ import moved, prism

    cp, chk = thick
    info = wrap_info(cp)
    idx = [int(s[1:]) for s in chk.pair]
    shapes = [moved(prism(np.asarray(info.pieces[p].plate), -1.0, 1.0), info.stowed_poses[p]) for p in idx]
    d = BRepExtrema_DistShapeShape(shapes[0], shapes[1])
    assert d.IsDone()
    assert d.Value() == pytest.approx(chk.min_distance, abs=1e-6)


@pytest.mark.parametrize("m,r", [(3, 2), (4, 3), (5, 4), (8, 3), (12, 3)])
def test_thick_sheets_for_several_hubs(m: int, r: int) -> None:
    cp = make_layout("hub-wrap", sides=m, rings=r, ring_height=80.0, hub_circumradius=100.0, panel_thickness=1.5)
    chk = check_stowed(cp, margin=2.0)
    assert chk.max_penetration == 0.0 and chk.min_distance > 0.0
    assert isometry_error(cp) < 1e-9


@pytest.mark.parametrize("kw,key", [
    ({"sides": 2}, "sides"), ({"rings": 0}, "rings"), ({"ring_height": 0.0}, "ring_height"),
    ({"ring_height": -5.0}, "ring_height"), ({"panel_thickness": -1.0}, "panel_thickness"),
    ({"sides": 6.5}, "sides"), ({"wrap": "sideways"}, "wrap"), ({"hub_circumradius": float("nan")}, "hub_circumradius"),
])
def test_bad_input_names_the_key(kw: dict, key: str) -> None:
    args = {"sides": 6, "rings": 4, "ring_height": 100.0, "hub_circumradius": 100.0, **kw}
    with pytest.raises(PatternError, match=key):
        make_layout("hub-wrap", **args)


def test_thickness_too_large_to_nest_names_ring_and_amount() -> None:
    with pytest.raises(PatternError, match=r"ring 1.*by [0-9.]+ mm"):
        make_layout("hub-wrap", sides=6, rings=10, ring_height=20.0, hub_circumradius=100.0, panel_thickness=2.0)


def test_thick_backing_never_stretches(thick) -> None:
    """The backing is inextensible (a film): every stowed gap between facing plate edges must be at most
    the flat width of backing between them."""
    from thickpanel.wrap.check import backing_strain

    cp, _ = thick
    strain = backing_strain(cp)
    assert strain.stretch <= 1e-9
    assert {"hub", "accordion", "bend", "radial", "u-turn"} <= set(strain.by_label)


def test_zero_thickness_backing_is_exact() -> None:
    from thickpanel.wrap.check import backing_strain

    strain = backing_strain(_zero(6, 4, 100.0, 100.0))
    assert abs(strain.stretch) < 1e-9  # zero thickness: facing edges coincide flat and stowed


@pytest.mark.parametrize("m,r", [(4, 3), (8, 6), (12, 5)])
def test_thick_backing_never_stretches_other_hubs(m: int, r: int) -> None:
    from thickpanel.wrap.check import backing_strain

    cp = make_layout("hub-wrap", sides=m, rings=r, ring_height=60.0, hub_circumradius=100.0, panel_thickness=1.0)
    assert backing_strain(cp).stretch <= 1e-6


def test_thick_sheet_flat_foldability_is_judged_on_its_reference(thick) -> None:
    """The thick development's creases bound bare backing strips; Kawasaki 1989 and Maekawa/Justin are
    checked on the zero-thickness reference sheet of the same hub, where only the hub corners fail."""
    from thickpanel.build_wrap import hub_exemption, kawasaki_scope

    cp, _ = thick
    subject, note = kawasaki_scope(cp)
    assert subject is not cp and "zero-thickness reference" in note
    assert wrap_info(subject).params["panel_thickness"] == 0.0
    rep = check_foldability(subject)
    assert sorted(hub_exemption(subject, list(rep.failing))) == sorted(rep.failing)
    assert len(rep.failing) == 6
