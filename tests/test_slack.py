"""Joint slack: hinge play needed by patterns that ideal hinges would lock."""

import numpy as np
import pytest

from thickpanel import FoldError
from thickpanel.kinematics import joint_slack
from thickpanel.layouts import make_layout
from thickpanel.slack import SLACK_CAUTION


def test_rigid_patterns_need_no_play():
    # Miura-ori is rigidly foldable (Schenk & Guest 2013, PNAS 110(9):3276) and so is the square
    # twist with two corners on each branch (Hull 2020, *Origametry*; Evans et al. 2015): the
    # least-squares fold is an exact rigid fold, so every hinge's play is zero.
    for cp in (
        make_layout("miura", a=20.0, b=10.0, gamma_deg=60.0, nx=4, ny=3),
        make_layout("square-twist", side=20.0, twist_deg=30.0, assignment="two-two"),
    ):
        rep = joint_slack(cp, target=np.deg2rad(90.0), n_states=3)
        assert rep.max_play_mm < 1e-6
        assert np.abs(rep.off_axis_deg).max() < 1e-6


@pytest.fixture(scope="module")
def locked():
    cp = make_layout("square-twist", side=20.0, twist_deg=30.0, assignment="standard")
    return cp, joint_slack(cp, target=np.deg2rad(120.0), n_states=5)


def test_locked_twist_needs_play_growing_with_fold(locked):
    # Standard square twist: not rigidly foldable (Hull 2020, *Origametry*), so any fold of rigid
    # panels needs hinge play; none at flat, more the further it folds.
    cp, rep = locked
    assert rep.play_mm.shape == (5, len(rep.hinges))
    assert rep.max_play_mm > 0.1
    assert rep.total_mm[0] < 1e-9
    assert np.all(np.diff(rep.total_mm) > 0)
    # every hinge keeps its assigned mountain/valley sense along the least-squares fold
    kinds = {f"C{c:03d}": k for c, k in enumerate(cp.kinds)}
    last = rep.fold_deg[-1]
    for h, f in zip(rep.hinges, last, strict=True):
        assert (f >= -1e-6) if kinds[h] == "valley" else (f <= 1e-6)


def test_locked_twist_play_respects_fourfold_symmetry(locked):
    # The layout is invariant under a quarter turn about its centre (square twist geometry,
    # Hull 2020), so a unique least-squares fold gives the four first pleats (C004, C006, C008,
    # C010) the same play, and the four second pleats likewise.
    _, rep = locked
    col = {h: i for i, h in enumerate(rep.hinges)}
    for group in (("C004", "C006", "C008", "C010"), ("C005", "C007", "C009", "C011")):
        vals = rep.play_mm[-1, [col[h] for h in group]]
        assert np.ptp(vals) < 1e-4 * vals.max()  # least-squares stopping precision
    worst = rep.worst(4)
    assert len(worst) == 4 and worst[0][1] == pytest.approx(rep.max_play_mm)


def test_summary_table_and_caution(locked):
    _, rep = locked
    text = rep.summary()
    assert "worst hinges:" in text and SLACK_CAUTION in text
    assert len(rep.rows()) == 5 and rep.rows()[0]["t"] == 0.0


@pytest.mark.parametrize("target", [0.0, np.pi, 7.0])
def test_bad_target(target):
    cp = make_layout("square-twist", side=20.0, twist_deg=30.0)
    with pytest.raises(FoldError, match="outside 0 < target < pi"):
        joint_slack(cp, target=target, n_states=3)
