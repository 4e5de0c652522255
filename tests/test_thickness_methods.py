"""Thickness methods: registry, plan structure, bad input, applicability advice."""

from __future__ import annotations

import math

import numpy as np
import pytest

from tests.thickness_fixtures import degree4_path, degree4_vertex, hinge_path, miura, miura_path, single_crease
from thickpanel.errors import ThicknessError
from thickpanel.thickness import MethodAdvice, available_methods, make_plan, methods_for
from thickpanel.thickness.common import edge_cut, inradius, panel_thicknesses, vertex_clearance_radius
from thickpanel.thickness.layers import clip_convex, layer_order
from thickpanel.thickness.offset_panel import reference_height
from thickpanel.tolerances import Tolerances

METHODS = ["hinge-shift", "membrane-gap", "offset-crease", "offset-panel", "plain", "tapered", "wrap-backing"]


def test_registry_lists_every_method_and_rejects_unknown():
    assert available_methods() == METHODS
    cp = single_crease()
    with pytest.raises(ThicknessError, match="available methods: hinge-shift, membrane-gap"):
        make_plan(cp, "thicken", thickness=1.0, target_fold=1.0)
    with pytest.raises(ThicknessError, match="unexpected keyword"):
        make_plan(cp, "plain", thickness=1.0, target_fold=1.0, colour="red")


@pytest.mark.parametrize("bad", [0.0, -1.0, float("nan"), float("inf")])
def test_bad_thickness_names_value_and_range(bad):
    cp = single_crease()
    with pytest.raises(ThicknessError, match=r"thickness = .* mm is out of range; allowed: a finite length > 0"):
        make_plan(cp, "plain", thickness=bad, target_fold=1.0)


def test_thickness_above_inradius_names_panel():
    # Inradius of a 40 x 30 rectangle is 15 mm (half the short side; elementary geometry).
    cp = single_crease()
    assert inradius(cp.panel_polygon(0)) == pytest.approx(15.0, rel=1e-9)
    with pytest.raises(ThicknessError, match=r"panel P000 exceeds its inradius 15 mm"):
        make_plan(cp, "plain", thickness=16.0, target_fold=1.0)
    with pytest.raises(ThicknessError, match="no thickness given for panels P001"):
        panel_thicknesses(cp, {"P000": 1.0})
    with pytest.raises(ThicknessError, match="panel P007"):
        panel_thicknesses(cp, {0: 1.0, 7: 1.0})
    t = panel_thicknesses(cp, {"P000": 1.0, 1: 2.5})
    assert t.tolist() == [1.0, 2.5]


@pytest.mark.parametrize("target", [0.0, -0.5, 4.0, float("nan")])
def test_bad_target_fold(target):
    cp = single_crease()
    with pytest.raises(ThicknessError, match="target_fold"):
        make_plan(cp, "hinge-shift", thickness=1.0, target_fold=target)


def test_plans_have_one_slab_per_panel_and_one_hinge_per_folding_crease():
    cp = single_crease()
    path = hinge_path(cp, math.radians(120))
    for m in METHODS:
        if m == "offset-crease":
            continue  # needs an interior vertex, tested below
        if m == "wrap-backing":
            continue  # hub-wrap sheets only (tests/test_wrap_pipeline.py)
        plan = make_plan(cp, m, thickness=2.0, target_fold=math.radians(120), path=path)
        assert plan.method == m
        assert [s.panel for s in plan.slabs] == [0, 1]
        assert [h.crease for h in plan.hinges] == [6]
        assert all(s.z1 - s.z0 == pytest.approx(2.0) for s in plan.slabs)
        assert plan.hinge_for(6).usable_length == pytest.approx(30.0)
    with pytest.raises(ThicknessError, match="C000 has no hinge line"):
        plan.hinge_for(0)


def test_hinge_shift_refuses_non_parallel_folds_naming_crease():
    cp = miura(nx=2, ny=2)
    with pytest.raises(ThicknessError, match=r"single or parallel folds; crease C\d{3} is at 60 deg"):
        make_plan(cp, "hinge-shift", thickness=1.0, target_fold=1.0)


def test_offset_crease_needs_path_and_degree_4():
    cp = degree4_vertex(45.0, 90.0)
    with pytest.raises(ThicknessError, match="needs a fold path"):
        make_plan(cp, "offset-crease", thickness=1.0, target_fold=1.0)
    with pytest.raises(ThicknessError, match="sets panel thicknesses by the ratio"):
        make_plan(cp, "offset-crease", thickness={p: 1.0 for p in range(4)}, target_fold=1.0,
                  path=degree4_path(cp, 45.0, 90.0, 1.0))
    # a degree-6 vertex (Kawasaki-flat hexagonal star) is refused with its id
    ang = np.radians([0, 60, 120, 180, 240, 300])
    v = [[0, 0]] + [[40 * math.cos(a), 40 * math.sin(a)] for a in ang]
    e = [[0, k] for k in range(1, 7)] + [[k, k % 6 + 1] for k in range(1, 7)]
    from thickpanel.pattern import CreasePattern

    star = CreasePattern(v, e, ["valley", "mountain"] * 3 + ["border"] * 6)
    with pytest.raises(ThicknessError, match="vertex V000 has degree 6"):
        make_plan(star, "offset-crease", thickness=1.0, target_fold=1.0, path=hinge_path(single_crease(), 1.0))


def test_tapered_bevel_too_wide_names_panel_and_limit():
    cp = single_crease(width=6.0, depth=30.0)  # inradius 3 mm
    with pytest.raises(ThicknessError, match=r"panel P00[01] along crease C006 exceeds .* reachable limit"):
        make_plan(cp, "tapered", thickness=2.0, target_fold=math.radians(170), reference="bottom")


def test_edge_cut_keeps_the_material_away_from_the_hinge():
    # bevel plane of a 90 deg valley: at the top face (z = 2) material starts 2 tan(45 deg) = 2 mm
    # from the crease (Tachi 2011).
    cp = single_crease()
    cut = edge_cut(cp, 1, 6, angle=math.pi / 2, z_ref=0.0, side=1, label="bevel")
    n = np.array(cut.normal)
    assert float(n @ [1.999, 10, 2]) > cut.offset  # removed
    assert float(n @ [2.001, 10, 2]) < cut.offset  # kept
    assert float(n @ [0.001, 10, 0]) < cut.offset  # bottom face untouched


def test_vertex_clearance_radius_and_reference_height():
    # [derived] stack / (2 tan(sector/2)), floored at stack / 2: 90 deg corner, 4 mm stack -> 2 mm
    assert vertex_clearance_radius(math.pi / 2, 4.0) == pytest.approx(2.0)
    assert vertex_clearance_radius(math.radians(30), 1.0) == pytest.approx(1 / (2 * math.tan(math.radians(15))))
    # centring the stack on the hinge plane: layers [0,1],[1,2],[2,3] -> shift -1.5, outer layers 0.5 mm off
    h, longest = reference_height(np.array([0.0, 1.0, 2.0]), np.ones(3))
    assert h == pytest.approx(-1.5) and longest == pytest.approx(0.5)


def test_clip_convex_and_layer_order_of_accordion():
    # Sutherland & Hodgman 1974: two unit squares offset by half overlap in a 0.5 x 1 rectangle.
    a = np.array([[0, 0], [1, 0], [1, 1], [0, 1]], float)
    from thickpanel.geometry2d import polygon_area

    assert polygon_area(clip_convex(a, a + [0.5, 0])) == pytest.approx(0.5)
    from thickpanel.layouts import make_layout
    from thickpanel.poses import fold_state_from_angles

    cp = make_layout("accordion", width=40.0, panel_width=30.0, n=3)
    sign = np.array([1.0 if k == "valley" else -1.0 if k == "mountain" else 0.0 for k in cp.kinds])
    st = fold_state_from_angles(cp, sign * math.radians(175))
    order = layer_order(cp, st)
    # an accordion stacks its panels in strip order, alternately face up and face down
    assert sorted(order.level.tolist()) == [0, 1, 2]
    assert abs(int(order.level[0]) - int(order.level[2])) == 2
    assert order.facing.tolist() in ([1, -1, 1], [-1, 1, -1])


def test_methods_for_reasons_and_order():
    cp = single_crease()
    path = hinge_path(cp, math.pi)
    adv = methods_for(cp, math.pi, thickness=2.0, path=path)
    assert all(isinstance(a, MethodAdvice) for a in adv)
    assert {a.method for a in adv} == set(METHODS)
    by = {a.method: a for a in adv}
    assert not by["wrap-backing"].applies and "hub-wrap" in by["wrap-backing"].reason
    assert not by["tapered"].applies and "reachable limit" in by["tapered"].reason
    assert 0 < by["tapered"].reachable < math.pi
    assert not by["offset-crease"].applies or by["offset-crease"].reachable <= math.pi
    assert by["hinge-shift"].applies and by["hinge-shift"].reachable == pytest.approx(math.pi)
    assert adv[-1].applies is False or adv[-1].method == "plain"
    applicable = [a.method for a in adv if a.applies]
    assert applicable[-1] == "plain"
    cpm = miura(nx=2, ny=2)
    adv_m = {a.method: a for a in methods_for(cpm, math.radians(100), thickness=1.0,
                                                path=miura_path(cpm, 60.0, math.radians(50), 6))}
    assert not adv_m["hinge-shift"].applies and "parallel" in adv_m["hinge-shift"].reason
    assert adv_m["tapered"].applies


def test_knuckle_slots_interleave_on_shared_stowed_lines():
    # Oracle: hinges whose lines coincide in the stowed stack must not share axial positions.
    from thickpanel.layouts import make_layout
    from thickpanel.poses import fold_state_from_angles
    from thickpanel.thickness.common import folding_creases
    from thickpanel.thickness.offset_panel import knuckle_slots

    cp = make_layout("accordion", width=40.0, panel_width=30.0, n=5)
    sign = np.array([1.0 if k == "valley" else -1.0 if k == "mountain" else 0.0 for k in cp.kinds])
    stowed = fold_state_from_angles(cp, sign * math.pi)
    fc = folding_creases(cp)
    slots = knuckle_slots(cp, stowed, fc, {c: (0.0, 0.0) for c in fc}, knuckles=3, stack_tol=1.0)
    # 4 folds of an accordion stack on two lines, two hinges each: 2 slots per hinge, 4 per line
    assert all(len(v) == 2 for v in slots.values())
    world = []
    for c, lst in slots.items():
        pose = stowed.poses[int(cp.crease_panels[c, 0])]
        p0 = np.append(cp.vertices[cp.creases[c, 0]], [0.0, 1.0]) @ pose.T
        u = np.append(cp.crease_directions[c], [0.0, 0.0]) @ pose.T
        for _, s0, s1 in lst:
            a, b = (p0 + s0 * u)[:3], (p0 + s1 * u)[:3]
            world.append((round(float(a[0]), 6), sorted((float(a[1]), float(b[1])))))
    by_line: dict[float, list] = {}
    for x, iv in world:
        by_line.setdefault(x, []).append(iv)
    assert len(by_line) == 2
    for ivs in by_line.values():
        ivs.sort()
        assert len(ivs) == 4
        assert all(ivs[k][1] <= ivs[k + 1][0] + 1e-9 for k in range(3))
        assert ivs[0][0] == pytest.approx(0.0) and ivs[-1][1] == pytest.approx(40.0)


def test_offset_panel_standoffs_inside_usable_length_and_buildable():
    # Oracle: every standoff lies within its hinge's usable length and within the vertex
    # clearances, so each one is a non-empty convex piece.
    from thickpanel.clearance import plan_pieces

    cp = miura(a=60.0, b=40.0, nx=3, ny=3)
    path = miura_path(cp, 60.0, math.radians(90), 8)
    plan = make_plan(cp, "offset-panel", thickness=0.3, target_fold=math.pi, path=path)
    assert plan.meta["vertex_radii"]  # flat target: vertex clearances on
    pieces = plan_pieces(plan)
    assert len(pieces) == cp.n_panels + sum(len(s.standoffs) for s in plan.slabs)
    for slab in plan.slabs:
        for so in slab.standoffs:
            h = plan.hinge_for(so.crease)
            v0 = cp.vertices[cp.creases[so.crease, 0]]
            along = (np.asarray(so.polygon) - v0) @ cp.crease_directions[so.crease]
            assert along.min() >= h.usable[0] - 1e-9 and along.max() <= h.usable[1] + 1e-9


def test_methods_for_with_sweep_ranks_clear_methods_first():
    # Miura-ori (Schenk & Guest 2013 kinematics): tapered bevels clear the path (Tachi 2011), the
    # plain baseline does not; with sweep=True the advice carries the clearance and its order.
    cpm = miura(nx=3, ny=3)
    path = miura_path(cpm, 60.0, math.radians(50), 8)
    adv = methods_for(cpm, math.radians(100), thickness=1.0, path=path, sweep=True)
    by = {a.method: a for a in adv}
    assert by["tapered"].min_clearance > 0
    assert by["plain"].min_clearance < 0 and "collides" in by["plain"].reason
    applicable = [a.method for a in adv if a.applies]
    # touching (within tol.contact) is clear, as in the clearance sweep's touching policy
    clear = [m for m in applicable if by[m].min_clearance >= -Tolerances().contact]
    assert applicable[: len(clear)] == clear
    assert math.isnan(methods_for(cpm, math.radians(100), thickness=1.0, path=path)[0].min_clearance)
