"""Offset-panel hinge set-backs, standoff trimming and full-path clearance of thick Miura sheets.

Technique: Edmondson, Lang, Magleby & Howell 2014, "An offset panel technique for thick rigidly
foldable origami", ASME IDETC 2014, DETC2014-35606; Morgan et al. 2016, "An approach to designing
origami-adapted aerospace mechanisms", Mech. Sci. 7:69, doi:10.5194/ms-7-69-2016 (hinge axes stay on
the zero-thickness creases, panels move to their own layers, joined to the axes by standoffs).
The set-back computation (2D sections of the two slabs at a hinge, bisection on their overlap) is
our own derivation, not taken from those papers; where a check rests on it, it says so.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from tests.thickness_fixtures import hinge_path, single_crease
from thickpanel.clearance import clearance
from thickpanel.errors import ThicknessError
from thickpanel.kinematics import fold_path
from thickpanel.layouts import make_layout
from thickpanel.thickness import make_plan
from thickpanel.thickness.layers import LayerOrder
from thickpanel.thickness.setback import hinge_section_overlap, section_overlap
from thickpanel.tolerances import DEFAULT_TOL

CREASE = 6  # the one folding crease of single_crease(): vertices (0, 0) - (0, 30)


@pytest.fixture(scope="module")
def miura150():
    cp = make_layout("miura", a=30, b=30, gamma_deg=70, nx=4, ny=3)
    path = fold_path(cp, target=math.radians(150), n_states=30)
    plan = make_plan(cp, "offset-panel", thickness=2.0, target_fold=math.radians(150), path=path)
    return cp, path, plan


def test_section_overlap_is_sat_penetration_depth():
    # Separating-axis theorem (Gottschalk, Lin & Manocha 1996, SIGGRAPH; Ericson 2005, Real-Time
    # Collision Detection, ch. 5): unit squares shifted by 0.5 overlap with depth 0.5; shifted by
    # 1.25 they are 0.25 apart (depth -0.25); corner-to-corner touching gives depth 0.
    sq = np.array([[0, 0], [1, 0], [1, 1], [0, 1]], float)
    pairs_a = np.array([sq, sq, sq])
    pairs_b = np.array([sq + [0.5, 0.25], sq + [1.25, 0.0], sq + [1.0, 1.0]])
    assert section_overlap(pairs_a, pairs_b) == pytest.approx([0.5, -0.25, 0.0], abs=1e-12)


def test_section_of_rotated_slab_meets_fixed_one_where_geometry_says():
    # [derived] by hand: a slab [1, 30] x [0, 2] fixed, its mirror [-30, -1] x [0, 2] turned by a
    # valley fold of 90 deg about the origin lies at x in [0, 2], z >= 1: it overlaps the fixed
    # slab's standoff [0, 1] x [0, 2] (set-back 1) by depth 1 (z 1..2) at 90 deg; flat, each
    # standoff is 1 mm from the other slab (depth -1; standoffs in disjoint slots are not compared).
    d = hinge_section_overlap((1.0, 1.0), (0.0, 2.0), (0.0, 2.0), (30.0, 30.0), np.array([0.0, math.pi / 2]))
    assert d[0] == pytest.approx(-1.0, abs=1e-12)
    assert d[1] == pytest.approx(1.0, abs=1e-9)


def test_two_panel_valley_180_setback_clears_and_ten_percent_less_collides():
    # [derived] (our own): panels 1 mm (P000) and 3 mm (P001) thick, hinge plane on P000's bottom
    # face (z = 0). Stowed, P000 is [s0, .) x [0, 1] and P001's 3 mm standoff fills [0, s1] x [0, 4],
    # so the slabs clear at 180 deg only if s0 >= s1; s1 >= 3 mm (standoff floor = its thickness),
    # hence s0 = 3 mm (+ tol.setback). A 10 % smaller s0 leaves the standoff 0.1 s0 inside P000.
    cp = single_crease()
    path = hinge_path(cp, math.pi, n=37)
    opts = dict(thickness={0: 1.0, 1: 3.0}, target_fold=math.pi, path=path, hinge_plane=0.0)
    plan = make_plan(cp, "offset-panel", **opts)
    assert [(s.z0, s.z1) for s in plan.slabs] == [(0.0, 1.0), (-4.0, -1.0)]  # different layer heights
    s0, s1 = plan.hinge_for(CREASE).setback
    assert s0 == pytest.approx(3.0 + DEFAULT_TOL.setback, abs=1e-5)
    assert s1 == pytest.approx(3.0 + DEFAULT_TOL.setback, abs=1e-5)
    assert plan.meta["setbacks"][CREASE] == (s0, s1)
    # the slab edges stand back from the crease line x = 0 by the set-backs
    assert min(abs(x) for x, _ in plan.slabs[0].polygon) == pytest.approx(s0, abs=1e-9)
    assert min(abs(x) for x, _ in plan.slabs[1].polygon) == pytest.approx(s1, abs=1e-9)
    rep = clearance(plan, path)
    assert not rep.collides and rep.min_clearance >= 0.0
    worse = make_plan(cp, "offset-panel", setbacks={CREASE: (0.9 * s0, s1)}, **opts)
    bad = clearance(worse, path)
    assert bad.collides
    assert bad.min_clearance == pytest.approx(-0.1 * s0, abs=1e-4)
    assert bad.where is not None and bad.where[1] == pytest.approx(1.0)


def test_no_setback_clears_is_refused_naming_the_crease():
    # [derived] (our own): a layer order that puts the valley-folded P001 under P000 stows both
    # slabs on the outer side of the axis; their standoffs meet at once whatever the set-back.
    cp = single_crease()
    path = hinge_path(cp, math.pi, n=9)
    order = LayerOrder(np.array([1, 0]), np.array([2.0, 0.0]), np.array([1, -1]), [(1, 0)])
    with pytest.raises(ThicknessError, match="C006"):
        make_plan(cp, "offset-panel", thickness=2.0, target_fold=math.pi, path=path, order=order)


def test_bad_setback_options_name_the_key():
    cp = single_crease()
    path = hinge_path(cp, math.pi, n=5)
    with pytest.raises(ThicknessError, match=r"setbacks\[C006\].*>= 0"):
        make_plan(cp, "offset-panel", thickness=2.0, target_fold=math.pi, path=path, setbacks={CREASE: (-1.0, 2.0)})
    with pytest.raises(ThicknessError, match="hinge_plane.*0..4"):
        make_plan(cp, "offset-panel", thickness=2.0, target_fold=math.pi, path=path, hinge_plane=5.0)
    with pytest.raises(ThicknessError, match="setback_samples"):
        make_plan(cp, "offset-panel", thickness=2.0, target_fold=math.pi, path=path, setback_samples=1)


def test_miura_axes_stay_on_zero_thickness_creases(miura150):
    # Edmondson et al. 2014; Morgan et al. 2016: hinge axes coincide with the zero-thickness
    # creases, so the thick sheet's poses equal the zero-thickness ones in every state.
    cp, path, plan = miura150
    for h in plan.hinges:
        a, b = cp.creases[h.crease]
        assert np.allclose(h.point, [*cp.vertices[a], 0.0], atol=1e-12)
        d = cp.vertices[b] - cp.vertices[a]
        assert np.allclose(h.direction[:2], d / np.linalg.norm(d), atol=1e-12)
    for st in (path.states[len(path.states) // 2], path.states[-1]):
        assert np.allclose(plan.poses(st), st.poses, atol=1e-9)


def test_thick_miura_150_clears_over_full_path(miura150):
    # Edmondson et al. 2014; Morgan et al. 2016: a thick Miura sheet made by the offset panel
    # technique folds over its whole path without self-intersection (min clearance >= 0).
    cp, path, plan = miura150
    rep = clearance(plan, path)
    assert rep.first_contact is None
    assert not rep.collides and rep.min_clearance >= 0.0
    # every hinge keeps standoff length for its hardware
    assert all(h.usable_length > 0 for h in plan.hinges)


def test_thick_miura_flat_folding_target_clears_over_full_path():
    # Edmondson et al. 2014; Morgan et al. 2016 (flat-folding offset-panel Miura); vertex
    # clearances for a flat-folding target (Lang et al. 2018, Appl. Mech. Rev. 70(1):010805).
    cp = make_layout("miura", a=60.0, b=40.0, gamma_deg=60.0, nx=3, ny=3)
    target = math.radians(178)
    path = fold_path(cp, target=target, n_states=30)
    plan = make_plan(cp, "offset-panel", thickness=0.3, target_fold=target, path=path)
    assert plan.meta["vertex_radii"]
    rep = clearance(plan, path)
    assert not rep.collides and rep.min_clearance >= 0.0


def test_sixteen_layer_miura_150_clears_after_standoff_trimming():
    # Edmondson et al. 2014; Morgan et al. 2016 (offset-panel Miura clears its whole path). This
    # 4x4 sheet stows in 16 layers at 150 deg; without trimming, standoffs of C004 and others passed
    # through neighbouring panels (P004-P005 by 2.1 mm in the methods doc before this change).
    cp = make_layout("miura", a=20.0, b=12.0, gamma_deg=60.0, nx=4, ny=4)
    target = math.radians(150)
    path = fold_path(cp, target=target, n_states=30)
    plan = make_plan(cp, "offset-panel", thickness=1.0, target_fold=target, path=path)
    assert any("shortened" in n for n in plan.notes)
    rep = clearance(plan, path)
    assert not rep.collides and rep.min_clearance >= 0.0
    # every remaining standoff still reaches its axis and lies within its hinge's usable length
    for slab in plan.slabs:
        for st in slab.standoffs:
            h = plan.hinge_for(st.crease)
            v0 = cp.vertices[cp.creases[st.crease, 0]]
            along = (np.asarray(st.polygon) - v0) @ cp.crease_directions[st.crease]
            assert along.min() >= h.usable[0] - 1e-9 and along.max() <= h.usable[1] + 1e-9
            assert min(st.z0, st.z1) <= 0.0 <= max(st.z0, st.z1)
