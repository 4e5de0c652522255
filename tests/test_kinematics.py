"""fold_path / solve_state / rigid_foldability: API contract, bad input, stop hook, closure."""

import numpy as np
import pytest

from thickpanel import CreasePattern, FoldError
from thickpanel.kinematics import FoldPath, FoldState, fold_path, rigid_foldability, solve_state
from thickpanel.layouts import make_layout


@pytest.fixture(scope="module")
def miura():
    return make_layout("miura", a=20.0, b=10.0, gamma_deg=60.0, nx=4, ny=3)


@pytest.fixture(scope="module")
def miura_path(miura):
    return fold_path(miura, target=np.deg2rad(160.0), n_states=12)


def test_path_samples_and_closure(miura_path):
    # Acceptance: every returned state closes below 1e-9 (loop closure, Tachi 2009).
    assert isinstance(miura_path, FoldPath) and isinstance(miura_path.states[0], FoldState)
    assert miura_path.stop_reason == "target" and miura_path.driver == "t"
    assert np.allclose(miura_path.fractions, np.linspace(0, 1, 12))
    for st in miura_path.states:
        assert st.closure_error < 1e-9
        # t is the fraction of the largest fold magnitude
        assert np.abs(st.angles).max() == pytest.approx(st.t * np.deg2rad(160.0), abs=1e-12)
    # signs follow the assignment (valley > 0, mountain < 0) on every folding crease
    last = miura_path.states[-1]
    for c, k in enumerate(last.pattern.kinds):
        if k == "valley":
            assert last.angles[c] > 0
        elif k == "mountain":
            assert last.angles[c] < 0


def test_interpolated_and_solved_states_close(miura, miura_path):
    st = miura_path.at(0.37)
    assert st.t == pytest.approx(0.37) and st.closure_error < 1e-9
    assert np.abs(st.angles).max() == pytest.approx(0.37 * np.deg2rad(160.0), abs=1e-12)
    st2 = solve_state(miura, 0.37, path=miura_path)
    assert np.abs(st2.angles - st.angles).max() < 1e-12


def test_stop_when_hook_ends_with_contact(miura):
    seen = []

    def hook(state):
        seen.append(state.t)
        return np.abs(state.angles).max() > np.deg2rad(50.0)

    path = fold_path(miura, target=np.deg2rad(160.0), n_states=17, stop_when=hook)
    assert path.stop_reason == "contact"
    assert np.abs(path.states[-1].angles).max() > np.deg2rad(50.0)
    assert np.abs(path.states[-2].angles).max() <= np.deg2rad(50.0)
    assert seen == list(path.fractions)


def test_driver_crease(miura):
    c = next(i for i, k in enumerate(miura.kinds) if k == "mountain")
    path = fold_path(miura, target=1.0, n_states=5, driver=c)
    assert path.driver == f"C{c:03d}"
    assert path.states[-1].angles[c] == pytest.approx(-1.0, abs=1e-12)


def test_bad_driver_border_crease(miura):
    c = miura.kinds.index("border")
    with pytest.raises(FoldError, match=f"C{c:03d} is a border crease.*0..0 rad"):
        fold_path(miura, driver=c)
    with pytest.raises(FoldError, match="C999.*not a crease"):
        fold_path(miura, driver="C999")


@pytest.mark.parametrize("target", [np.pi + 1e-9, 4.0, 0.0, -0.5])
def test_target_beyond_reachable_range(miura, target):
    with pytest.raises(FoldError, match="reachable range of rigid panels, 0 < target <= pi"):
        fold_path(miura, target=target)


def test_full_flat_fold(miura):
    # Miura-ori folds completely flat (Schenk & Guest 2013): every folding crease at +-pi.
    path = fold_path(miura, target=np.pi, n_states=5)
    last = path.states[-1]
    assert path.stop_reason == "target" and last.closure_error < 1e-9
    assert np.allclose(np.abs(last.angles[miura.folding]), np.pi, atol=1e-9)


@pytest.mark.parametrize("t", [-0.1, 1.5, float("nan")])
def test_state_outside_unit_interval(miura, miura_path, t):
    with pytest.raises(FoldError, match=r"outside \[0, 1\].*covers 0..1"):
        solve_state(miura, t, path=miura_path)


def test_locked_pattern_is_error_for_fold_path_and_verdict_for_rigid_foldability():
    cp = make_layout("square-twist", side=20.0, twist_deg=30.0, assignment="standard")
    with pytest.raises(FoldError, match="does not fold rigidly.*0..0 rad"):
        fold_path(cp, n_states=5)
    assert rigid_foldability(cp).kind == "locked"


def test_nothing_to_fold():
    sq = CreasePattern([[0, 0], [10, 0], [10, 10], [0, 10]], [[0, 1], [1, 2], [2, 3], [3, 0]], ["border"] * 4)
    with pytest.raises(FoldError, match="no mountain, valley or seam crease.*0..0 rad"):
        fold_path(sq)


def test_disconnected_panels():
    # two squares joined at one corner only: no hinge between them
    cp = CreasePattern(
        [[0, 0], [10, 0], [10, 10], [0, 10], [20, 10], [20, 20], [10, 20]],
        [[0, 1], [1, 2], [2, 3], [3, 0], [2, 4], [4, 5], [5, 6], [6, 2]],
        ["border"] * 8,
        validate=False,
    )
    with pytest.raises(FoldError, match="not connected"):
        fold_path(cp)


def test_parallel_folds_have_one_dof_each():
    # An accordion's fold lines are independent hinges (elementary kinematics).
    cp = make_layout("accordion", width=40.0, panel_width=10.0, n=4)
    v = rigid_foldability(cp)
    assert (v.kind, v.dof) == ("rigid", 3)
    path = fold_path(cp, target=np.deg2rad(90.0), n_states=3)
    assert np.allclose(np.abs(path.states[-1].angles[cp.folding]), np.pi / 2)


def test_tolerance_changes_acceptance(miura):
    # tol.closure is honoured: a tolerance tighter than float round-off cannot be met.
    from thickpanel import Tolerances

    with pytest.raises(FoldError):
        fold_path(miura, target=1.0, n_states=3, tol=Tolerances(closure=1e-300))


def _star(angles_deg, kinds, r=50.0):
    th = np.deg2rad(np.asarray(angles_deg, dtype=float))
    n = len(th)
    v = [[0.0, 0.0]] + [[r * np.cos(t), r * np.sin(t)] for t in th]
    e = [[0, k + 1] for k in range(n)] + [[k + 1, (k + 1) % n + 1] for k in range(n)]
    return CreasePattern(v, e, list(kinds) + ["border"] * n)


def test_degree6_vertex_has_three_dof_general_solver():
    # A single interior vertex of degree n folds with n - 3 degrees of freedom off flat
    # (Belcastro & Hull 2002, Linear Algebra Appl. 348; Tachi 2009): 3 for degree 6. The closed
    # form does not apply (degree 6), so this exercises the general predictor-corrector.
    cp = _star([0, 55, 110, 180, 235, 290], ["valley", "valley", "mountain", "valley", "valley", "mountain"])
    v = rigid_foldability(cp)
    assert (v.kind, v.dof) == ("rigid", 3)
    path = fold_path(cp, target=np.deg2rad(120.0), n_states=9)
    assert not path.meta["closed_form"]
    assert max(s.closure_error for s in path.states) < 1e-9
    mid = path.at(0.55)
    assert mid.closure_error < 1e-9 and np.abs(mid.angles).max() == pytest.approx(0.55 * np.deg2rad(120.0))


def test_non_flat_foldable_degree4_vertex_has_one_dof():
    # A generic (not flat-foldable) developable degree-4 vertex is a spherical 4-bar linkage:
    # one degree of freedom (Belcastro & Hull 2002; Tachi 2009).
    cp = _star([0, 70, 160, 250], ["valley", "mountain", "valley", "valley"])
    v = rigid_foldability(cp)
    assert (v.kind, v.dof) == ("rigid", 1)
    assert "general path following" in v.reason


def test_interior_slit_cycle_is_closed():
    # A 3 x 3 grid of squares with the four creases around the centre panel's corner cut away:
    # an interior slit from (10, 10) to (20, 10) leaves a panel cycle around it that no interior
    # vertex bounds. Folding one straight line across the sheet (an accordion-like fold, rigid by
    # elementary kinematics) must keep every state closed around that cycle too.
    xs = np.arange(4) * 10.0
    v = np.array([[x, y] for y in xs for x in xs])
    idx = lambda i, j: 4 * j + i  # noqa: E731
    e, k = [], []
    for j in range(4):
        for i in range(3):
            e.append([idx(i, j), idx(i + 1, j)])
            k.append("border" if j in (0, 3) else ("cut" if (i, j) == (1, 1) else "flat"))
    for i in range(4):
        for j in range(3):
            e.append([idx(i, j), idx(i, j + 1)])
            k.append("border" if i in (0, 3) else ("valley" if i == 2 else "flat"))
    cp = CreasePattern(v, e, k)
    from thickpanel.loop_model import loop_model

    assert len(loop_model(cp).cycles) >= 1  # the slit's cycle is modelled
    path = fold_path(cp, target=np.deg2rad(90.0), n_states=4)
    assert path.stop_reason == "target"
    assert max(s.closure_error for s in path.states) < 1e-9
