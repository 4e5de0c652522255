"""Panel poses: hinge rotations composed along the spanning tree, seams, closure error."""

import numpy as np
import pytest

from thickpanel import CreasePattern, FoldError, Seam
from thickpanel.poses import (
    closure_error,
    compose_poses,
    fold_state_from_angles,
    rotation_about_line,
    rotations_about_lines,
)


def ring(n: int, width: float = 30.0, panel: float = 10.0, kind: str = "valley") -> CreasePattern:
    """Strip of ``n`` panels (x = 0..n*panel, y = 0..width) whose two end borders are one seam."""
    xs = np.arange(n + 1) * panel
    v = np.concatenate([np.stack([xs, np.zeros_like(xs)], 1), np.stack([xs, np.full_like(xs, width)], 1)])
    e = [[k, k + 1] for k in range(n)] + [[n + 1 + k, n + 2 + k] for k in range(n)]
    e += [[q, n + 1 + q] for q in range(n + 1)]
    kinds = ["border"] * (2 * n) + ["border"] + [kind] * (n - 1) + ["border"]
    a, b = 2 * n, 3 * n  # end creases x = 0 and x = n*panel, both running +y
    return CreasePattern(v, e, kinds, seams=[Seam(a, b, kind)])


def test_rotation_about_line_quarter_turn():
    # Right-hand rule about +z through (1, 0, 0): (2, 0, 0) -> (1, 1, 0). Rodrigues' rotation
    # formula (Rodrigues 1840; any linear algebra text).
    t = rotation_about_line(np.array([1.0, 0, 0]), np.array([0, 0, 2.0]), np.pi / 2)
    assert np.allclose(t @ [2.0, 0, 0, 1], [1, 1, 0, 1], atol=1e-15)
    tb = rotations_about_lines(np.array([[1.0, 0, 0]]), np.array([[0, 0, 1.0]]), np.array([np.pi / 2]))
    assert np.allclose(tb[0], t, atol=1e-15)


def test_single_valley_lifts_both_sides():
    # Project convention (docs/architecture.md): valley (rho > 0) lifts both sides to +z.
    cp = CreasePattern([[0, 0], [10, 0], [20, 0], [20, 10], [10, 10], [0, 10]],
                       [[0, 1], [1, 2], [2, 3], [3, 4], [4, 5], [5, 0], [1, 4]],
                       ["border"] * 6 + ["valley"])  # fmt: skip
    ang = np.zeros(7)
    ang[6] = np.pi / 2
    st = fold_state_from_angles(cp, ang, base=0)
    moved = st.panel_vertices_3d(1)
    far = moved[np.argmax(np.abs(moved[:, 2]))]
    # the far edge of the other panel stands 10 mm above the hinge (right angle fold)
    assert far[2] == pytest.approx(10.0, abs=1e-12)
    assert st.closure_error < 1e-12


@pytest.mark.parametrize("n", [3, 4, 6, 9])
def test_closed_ring_closes_as_regular_prism(n):
    # A ring of n equal panels folded by the exterior angle 2 pi / n at every hinge is a regular
    # n-gon prism; its circumradius is s / (2 sin(pi / n)) (regular polygon, standard geometry,
    # e.g. CRC Standard Mathematical Tables).
    cp = ring(n)
    ang = np.zeros(cp.n_creases)
    folding = [c for c, k in enumerate(cp.kinds) if k == "valley"]
    ang[folding] = 2 * np.pi / n
    ang[cp.seams[0].a] = 2 * np.pi / n
    radius = 10.0 / (2 * np.sin(np.pi / n))
    ref = None
    for base in range(n):  # every base: the seam is a tree edge for the end panels
        poses = compose_poses(cp, ang, base=base)
        assert closure_error(cp, ang, poses) < 1e-12
        pts = np.concatenate([(poses[p] @ np.c_[cp.panel_polygon(p), np.zeros(4), np.ones(4)].T).T[:, :3]
                              for p in range(n)])  # fmt: skip
        bottom = pts[np.isclose(pts[:, 1], 0.0, atol=1e-9)]
        centre = bottom.mean(axis=0)
        assert np.allclose(np.linalg.norm(bottom - centre, axis=1), radius, rtol=1e-12)
        rel = np.linalg.inv(poses[0]) @ poses[n - 1]
        if ref is None:
            ref = rel
        assert np.allclose(rel, ref, atol=1e-12)  # same shape whichever panel is fixed


def test_closed_ring_with_wrong_angles_does_not_close():
    # An n-gon's exterior angles sum to 2 pi (standard geometry): 10 % more does not close.
    cp = ring(6)
    ang = np.zeros(cp.n_creases)
    ang[[c for c, k in enumerate(cp.kinds) if k == "valley"] + [cp.seams[0].a]] = 1.1 * 2 * np.pi / 6
    st = fold_state_from_angles(cp, ang)
    assert st.closure_error > 1e-2


def test_bad_angles_shape_names_count():
    cp = ring(3)
    with pytest.raises(FoldError, match=f"one entry per crease \\({cp.n_creases}\\)"):
        fold_state_from_angles(cp, np.zeros(3))


def test_seamed_tube_has_no_flat_start():
    # A closed ring cannot lie flat (its exterior angles must sum to 2 pi, standard geometry), so
    # the solver refuses a flat start and the verdict is "unknown" with the reason.
    from thickpanel.kinematics import fold_path, joint_slack, rigid_foldability

    cp = ring(6)
    with pytest.raises(FoldError, match="closed by seams.*no flat state"):
        fold_path(cp)
    with pytest.raises(FoldError, match="closed by seams"):
        joint_slack(cp, target=1.0, n_states=3)
    v = rigid_foldability(cp)
    assert v.kind == "unknown" and "seams" in v.reason
