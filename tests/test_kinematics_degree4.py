"""Degree-4 flat-foldable vertex: the general loop-closure solver against Huffman's closed forms.

Closed forms (Huffman 1976, "Curvature and creases: a primer on paper", IEEE Trans. Computers
C-25(10):1010-1019; restated in Evans, Lang, Magleby & Howell 2015, R. Soc. Open Sci. 2:150067,
and Lang 2018, *Twists, Tilings, and Tessellations*), sectors (a, b, pi - a, pi - b)
counter-clockwise between creases c1..c4, a between c1 and c2:
  branch A: rho3 = rho1, rho4 = -rho2, tan(rho2/2) = -p tan(rho1/2), p = cos((a+b)/2)/cos((a-b)/2)
  branch B: rho4 = rho2, rho3 = -rho1, tan(rho1/2) =  q tan(rho2/2), q = sin((a-b)/2)/sin((a+b)/2)
Sign convention: our fold angles are valley > 0 seen from +z with creases counter-clockwise
(thickpanel.poses); the relations are odd in every angle, so they hold unchanged in our
convention, and the general solver (which knows nothing of them) confirms this below.
"""

import numpy as np
import pytest

from thickpanel import CreasePattern
from thickpanel.kinematics import fold_path, rigid_foldability


def vertex4(a: float, b: float, kinds: list[str], r: float = 100.0) -> CreasePattern:
    th = np.cumsum([0.0, a, b, np.pi - a])
    v = [[0.0, 0.0]] + [[r * np.cos(t), r * np.sin(t)] for t in th]
    e = [[0, 1], [0, 2], [0, 3], [0, 4], [1, 2], [2, 3], [3, 4], [4, 1]]
    return CreasePattern(v, e, kinds + ["border"] * 4)


SECTORS = [(60.0, 80.0), (45.0, 45.0), (30.0, 100.0), (85.0, 20.0)]


@pytest.mark.parametrize("a_deg,b_deg", SECTORS)
def test_branch_a_whole_range(a_deg, b_deg):
    a, b = np.deg2rad(a_deg), np.deg2rad(b_deg)
    cp = vertex4(a, b, ["valley", "mountain", "valley", "valley"])  # branch A: c2 is the odd crease
    path = fold_path(cp, target=np.deg2rad(178.0), n_states=40, closed_form=False)
    assert path.stop_reason == "target"
    p = np.cos((a + b) / 2) / np.cos((a - b) / 2)
    for st in path.states:
        r1, r2, r3, r4 = st.angles[:4]
        assert st.closure_error < 1e-9
        assert abs(r3 - r1) < 1e-9 and abs(r4 + r2) < 1e-9
        assert abs(r2 - 2 * np.arctan(-p * np.tan(r1 / 2))) < 1e-9
    assert np.rad2deg(path.states[-1].angles[0]) == pytest.approx(178.0, abs=1e-9)


@pytest.mark.parametrize("a_deg,b_deg", [(60.0, 80.0), (30.0, 100.0), (85.0, 20.0)])
def test_branch_b_whole_range(a_deg, b_deg):
    a, b = np.deg2rad(a_deg), np.deg2rad(b_deg)
    q = np.sin((a - b) / 2) / np.sin((a + b) / 2)
    # branch B: rho2 = rho4 share a sign; rho1 has the sign of q, rho3 the opposite
    kinds = ["mountain", "valley", "valley", "valley"] if q < 0 else ["valley", "valley", "mountain", "valley"]
    cp = vertex4(a, b, kinds)
    path = fold_path(cp, target=np.deg2rad(178.0), n_states=40, closed_form=False)
    assert path.stop_reason == "target"
    for st in path.states:
        r1, r2, r3, r4 = st.angles[:4]
        assert st.closure_error < 1e-9
        assert abs(r4 - r2) < 1e-9 and abs(r3 + r1) < 1e-9
        assert abs(r1 - 2 * np.arctan(q * np.tan(r2 / 2))) < 1e-9


def test_worked_example_a60_b80():
    # REFERENCES section 2 worked example from the closed form: a = 60, b = 80 deg, branch A,
    # rho1 = 90 deg -> rho2 = -38.30386 deg. Drive crease c1 directly to 90 deg.
    cp = vertex4(np.deg2rad(60), np.deg2rad(80), ["valley", "mountain", "valley", "valley"])
    path = fold_path(cp, target=np.pi / 2, driver="C000", n_states=5, closed_form=False)
    assert path.driver == "C000"
    r = np.rad2deg(path.states[-1].angles)
    assert r[0] == pytest.approx(90.0, abs=1e-9)
    assert r[1] == pytest.approx(-38.30386, abs=5e-6)


def test_closed_form_and_general_solver_agree():
    # Same vertex, both solvers: the closed form predictor must land on the loop-closure manifold.
    cp = vertex4(np.deg2rad(50), np.deg2rad(70), ["valley", "mountain", "valley", "valley"])
    p1 = fold_path(cp, target=np.deg2rad(150), n_states=16)
    p2 = fold_path(cp, target=np.deg2rad(150), n_states=16, closed_form=False)
    assert p1.meta["closed_form"] and not p2.meta["closed_form"]
    for s1, s2 in zip(p1.states, p2.states, strict=True):
        assert np.abs(s1.angles - s2.angles).max() < 1e-9


def test_inconsistent_vertex_assignment_is_locked():
    # Maekawa-Justin: a flat-folded degree-4 vertex has |M - V| = 2; two and two cannot fold rigidly.
    cp = vertex4(np.deg2rad(60), np.deg2rad(80), ["valley", "mountain", "valley", "mountain"])
    v = rigid_foldability(cp)
    assert v.kind == "locked" and v.dof == 0
    assert "V000" in v.where
