"""Clearance sweep: convex narrow phase, broad phase, touching policy, report and plot."""

from __future__ import annotations

import math

import numpy as np
import pytest

from tests.thickness_fixtures import hinge_path, miura, miura_path, single_crease
from thickpanel.clearance import ClearanceReport, clearance, neighbour_keys, plan_pieces
from thickpanel.collide import (
    convex_parts,
    exact_distance,
    make_piece,
    pack_pieces,
    piece_from_points,
    sat_gaps,
    sweep_pairs,
)
from thickpanel.errors import ThicknessError
from thickpanel.geometry2d import polygon_area
from thickpanel.thickness import make_plan
from thickpanel.tolerances import Tolerances


def box(owner, lo, hi):
    n = np.array([[1, 0, 0], [-1, 0, 0], [0, 1, 0], [0, -1, 0], [0, 0, 1], [0, 0, -1]], float)
    o = np.array([hi[0], -lo[0], hi[1], -lo[1], hi[2], -lo[2]], float)
    return make_piece(owner, n, o)


def gaps_of(pieces):
    arr = pack_pieces(pieces)
    return sat_gaps(np.array([[0, 1]]), arr.verts, arr.normals, arr.edges)[0]


def test_convex_parts_of_l_shape_cover_its_area():
    # Oracle: the parts of a partition add up to the polygon's area (shoelace formula) and are convex.
    ell = np.array([[0, 0], [30, 0], [30, 10], [10, 10], [10, 30], [0, 30]], float)
    parts = convex_parts(ell)
    assert 2 <= len(parts) <= 3
    assert sum(polygon_area(p) for p in parts) == pytest.approx(polygon_area(ell), rel=1e-12)
    from thickpanel.geometry2d import polygon_is_convex

    assert all(polygon_is_convex(p, angle_tol=1e-9) for p in parts)
    square = np.array([[0, 0], [1, 0], [1, 1], [0, 1]], float)
    assert len(convex_parts(square)) == 1


def test_sat_face_separation_and_penetration_depth_exact():
    # Separating-axis theorem (Gottschalk, Lin & Manocha 1996; Ericson 2005 ch. 5): for boxes
    # separated along a face normal the gap is the distance; overlap gives minus the penetration depth.
    a = box(0, (0, 0, 0), (10, 10, 2))
    b = box(1, (12.5, 0, 0), (20, 10, 2))
    assert gaps_of([a, b]) == pytest.approx(2.5, abs=1e-12)
    c = box(1, (9.25, 3, 1), (15, 4, 5))
    assert gaps_of([a, c]) == pytest.approx(-0.75, abs=1e-12)
    d = box(1, (10, 0, 0), (20, 10, 2))  # face contact
    assert gaps_of([a, d]) == pytest.approx(0.0, abs=1e-12)


def test_exact_distance_edge_edge_beats_sat_lower_bound():
    # Ericson 2005, 5.1.9 (closest features of convex polytopes): two unit cubes whose nearest
    # corners are offset by (3, 4, 12) are 13 mm apart; SAT alone only bounds this from below.
    a = box(0, (0, 0, 0), (1, 1, 1))
    b = box(1, (4, 5, 13), (5, 6, 14))
    arr = pack_pieces([a, b])
    sat = sat_gaps(np.array([[0, 1]]), arr.verts, arr.normals, arr.edges)[0]
    ex = exact_distance(a.vertices, a.triangles, b.vertices, b.triangles)
    assert ex == pytest.approx(13.0, abs=1e-12)  # 3-4-12-13 Pythagorean quadruple
    assert sat <= ex + 1e-12 and sat == pytest.approx(12.0)  # SAT is a lower bound here


def test_sweep_pairs_matches_brute_force():
    # Oracle: sort-and-sweep must return exactly the brute-force set of overlapping boxes.
    rng = np.random.default_rng(7)
    lo = rng.uniform(0, 100, (300, 3))
    hi = lo + rng.uniform(0.5, 8, (300, 3))
    got = {tuple(p) for p in sweep_pairs(lo, hi, pad=0.5).tolist()}
    ov = np.all((lo[:, None] - 0.5 <= hi[None] + 0.5) & (lo[None] - 0.5 <= hi[:, None] + 0.5), axis=2)
    i, j = np.nonzero(np.triu(ov, 1))
    assert got == set(zip(i.tolist(), j.tolist(), strict=True))


def test_report_fields_table_and_png(tmp_path):
    cp = miura()
    path = miura_path(cp, 60.0, math.radians(50), 8)
    plan = make_plan(cp, "plain", thickness=2.0, target_fold=math.radians(100), path=path)
    rep = clearance(plan, path, refine=False)
    assert isinstance(rep, ClearanceReport)
    assert len(rep.table) == 8
    assert rep.table[0].t == 0.0 and rep.table[-1].t == 1.0
    assert rep.worst_pairs and rep.worst_pairs[0][1] == pytest.approx(rep.min_clearance)
    assert rep.min_clearance == pytest.approx(min(r.min_clearance for r in rep.table))
    png = rep.png_bytes()
    assert png[:8] == b"\x89PNG\r\n\x1a\n"
    out = rep.plot_png(tmp_path / "c.png")
    assert out.read_bytes()[:4] == b"\x89PNG"
    assert not list(tmp_path.glob("*.tmp"))
    # refinement adds states around the first contact
    assert len(clearance(plan, path).table) > 8


def test_touching_policy_neighbours_and_contact_tolerance():
    # Two panels on a hinge: a valley fold about the top face never penetrates (neighbours may touch).
    cp = single_crease()
    plan = make_plan(cp, "hinge-shift", thickness=2.0, target_fold=math.pi, path=hinge_path(cp, math.pi))
    keys = neighbour_keys(plan)
    assert keys.tolist() == [1]
    rep = clearance(plan, hinge_path(cp, math.pi))
    assert rep.where is None and math.isinf(rep.min_clearance)
    # tolerance argument changes the result: the plain sheet's tiny first penetration counts only
    # when it exceeds tol.contact
    plain = make_plan(cp, "plain", thickness=2.0, target_fold=math.pi)
    p = hinge_path(cp, math.radians(0.01), 3)
    assert clearance(plain, p, refine=False).collides
    loose = Tolerances(contact=0.5)
    assert not clearance(plain, p, refine=False, tol=loose).collides


def test_extra_pieces_and_bad_input():
    cp = single_crease()
    path = hinge_path(cp, math.radians(90))
    plan = make_plan(cp, "hinge-shift", thickness=2.0, target_fold=math.pi / 2, path=path)
    # a block on panel 0 reaching over panel 1 collides when panel 1 folds up
    knob = piece_from_points(0, np.array([[x, y, z] for x in (-2, 5) for y in (10, 12) for z in (2, 6)], float))
    rep = clearance(plan, path, extra_pieces=[knob])
    assert rep.collides and rep.where[0] == ("P000", "P001")
    bad = piece_from_points(0, knob.vertices)
    object.__setattr__(bad, "owner", 9)
    with pytest.raises(ThicknessError, match="owner 9"):
        clearance(plan, path, extra_pieces=[bad])
    with pytest.raises(ThicknessError, match="margin"):
        clearance(plan, path, margin=-1.0)


@pytest.mark.cad
def test_penetration_agrees_with_opencascade_common_volume():
    # Cross-check against an independent kernel: OpenCascade BRepAlgoAPI_Common volume (> 0 iff
    # the solids overlap) on a sample of slab pairs of a folded plain and a tapered Miura sheet.
    pytest.importorskip("OCP")
    from tests.thickness_fixtures import ocp_common_volume, ocp_slab_solid
    from thickpanel.clearance import _measure  # noqa: PLC2701 (per-state kernel)

    cp = miura(nx=3, ny=3)
    theta = math.radians(55)
    path = miura_path(cp, 60.0, theta, 4)
    checked = {True: 0, False: 0}
    for method, state in (("plain", path.states[1]), ("tapered", path.states[-1]), ("plain", path.states[-1])):
        plan = make_plan(cp, method, thickness=2.0, target_fold=2 * theta, path=path)
        pieces = plan_pieces(plan)
        arr = pack_pieces(pieces)
        poses = plan.poses(state)
        res = _measure(arr, pieces, poses, np.zeros(0, np.int64), cp.n_panels, 5.0, Tolerances())
        solids = [ocp_slab_solid(s, poses[s.panel]) for s in plan.slabs]
        for key, val in zip(res.keys.tolist(), res.values.tolist(), strict=True):
            a, b = divmod(key, cp.n_panels)
            if abs(val) < 0.05:
                continue  # touching within 0.05 mm: both kernels are at their tolerance
            vol = ocp_common_volume(solids[a], solids[b])
            assert (vol > 1e-6) == (val < 0), (method, a, b, val, vol)
            checked[val < 0] += 1
    assert checked[True] >= 5 and checked[False] >= 5


def test_contact_stop_ends_a_fold_path_at_first_contact():
    # A tapered plan bevelled for 100 deg meets at 100 deg (Tachi 2011); used as the fold path's
    # stop hook it ends the zero-thickness path there (kinematics contract: stop_reason "contact").
    from thickpanel.clearance import contact_stop
    from thickpanel.kinematics import fold_path

    cp = single_crease()
    rho = math.radians(100)
    plan = make_plan(cp, "tapered", thickness=2.0, target_fold=rho, path=hinge_path(cp, rho))
    stop = contact_stop(plan)
    assert not stop(hinge_path(cp, math.radians(99), 2).states[-1])
    assert stop(hinge_path(cp, math.radians(101), 2).states[-1])
    path = fold_path(cp, target=math.radians(150), n_states=31, stop_when=stop)
    assert path.stop_reason == "contact"
    last = float(np.max(np.abs(path.states[-1].angles)))
    assert math.radians(100) <= last <= math.radians(100) + math.radians(150) / 30 + 1e-9


def test_minimum_is_a_lower_bound_when_no_pair_comes_within_the_margin():
    # Regression: a state whose only measured pairs are farther than the search margin proves only
    # "at least margin" (pairs outside the margin are never measured), so the report must not quote
    # a larger measured distance from another state as the minimum. Pure geometry, no outside value.
    from thickpanel.layouts import make_layout

    cp = make_layout("miura", a=30.0, b=30.0, gamma_deg=70.0, nx=4, ny=3)
    target = math.radians(120.0)
    from thickpanel.kinematics import fold_path

    path = fold_path(cp, target=target, n_states=12)
    plan = make_plan(cp, "tapered", thickness=2.0, target_fold=target, path=path)
    rep = clearance(plan, path)
    # the closest non-neighbour slabs of this sheet stay more than one thickness apart
    assert rep.lower_bound
    if rep.lower_bound:
        assert rep.min_clearance == pytest.approx(rep.margin)
        assert rep.where is None
        assert all(v < rep.margin for _, v, _ in rep.worst_pairs)
        assert "at least" in rep.summary()
    else:
        assert rep.min_clearance < rep.margin
    # a wide margin measures every pair: the minimum is then a real distance with its pair
    wide = clearance(plan, path, margin=200.0)
    assert not wide.lower_bound and wide.where is not None
    # the bound holds: the real minimum is not below the bounded one
    assert wide.min_clearance >= rep.min_clearance - 1e-9
