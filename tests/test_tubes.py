"""Closed deployed state of a seamed Kresling strip and its rigid-panel verdict.

Geometry after Guest & Pellegrino 1994, "The folding of triangulated cylinders, Part I",
J. Appl. Mech. 61:773 (REFERENCES section 6): ring vertices at angles 2 pi k / n on a circle of
radius R, the top ring turned by phi and lifted by H.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from thickpanel.errors import FoldError
from thickpanel.kinematics import rigid_foldability
from thickpanel.layouts.cylinder import kresling
from thickpanel.loop_model import loop_model
from thickpanel.pattern import CreasePattern
from thickpanel.tubes import deployed_tube, deployed_tube_state, is_tube_strip

CASES = [(6, 50.0, 40.0, 40.0, 1), (6, 50.0, 40.0, 40.0, 3), (5, 30.0, 25.0, 50.0, 2)]


def _chord(r: float, h: float, ang: float) -> float:
    # distance between two points of a cylinder of radius r, angular gap ang, axial gap h
    # (law of cosines, standard geometry; the a, b, c of Guest & Pellegrino 1994)
    return math.sqrt(h * h + 4.0 * r * r * math.sin(ang / 2.0) ** 2)


@pytest.mark.parametrize("n, r, h, phi, stories", CASES)
def test_deployed_state_lies_on_the_tube(n, r, h, phi, stories):
    cp = kresling(n, r, h, phi, stories)
    dt = deployed_tube(cp)
    st = dt.state
    # every loop and seam closes (Guest & Pellegrino 1994: the tube is a closed triangulated surface)
    model = loop_model(cp)
    res, _ = model.residual_jacobian(np.asarray(st.angles[model.var_crease]), jac=False)
    assert np.abs(res).max() < 1e-9 and dt.residual < 1e-9 and st.closure_error < 1e-9
    pts = np.vstack([st.panel_vertices_3d(p) for p in range(cp.n_panels)])
    # ring vertices on the circle of radius R (Guest & Pellegrino 1994)
    assert np.abs(np.hypot(pts[:, 0], pts[:, 1]) - r).max() < 1e-9
    # ends and story rings at z = 0, H, 2H, ...
    levels = pts[:, 2] / h
    assert np.abs(levels - np.rint(levels)).max() < 1e-9
    assert np.rint(levels).min() == 0 and np.rint(levels).max() == stories
    # panel edges: polygon side a, diagonals b and c (Guest & Pellegrino 1994, with the chord formula)
    a = _chord(r, 0.0, 2 * math.pi / n)
    b = _chord(r, h, math.radians(phi))
    c = _chord(r, h, math.radians(phi) - 2 * math.pi / n)
    for p in range(cp.n_panels):
        q = st.panel_vertices_3d(p)
        sides = sorted(np.linalg.norm(q - np.roll(q, 1, axis=0), axis=1))
        assert np.allclose(sides, sorted([a, b, c]), atol=1e-9)


@pytest.mark.parametrize("n, r, h, phi, stories", CASES)
def test_fold_angles_are_the_dihedral_angles(n, r, h, phi, stories):
    # |fold angle| = angle between the normals of the two panels of a crease (standard geometry),
    # computed here from the 3-D corners only
    cp = kresling(n, r, h, phi, stories)
    st = deployed_tube_state(cp)
    cpan = cp.crease_panels
    checked = 0
    for c in range(cp.n_creases):
        pa, pb = int(cpan[c, 0]), int(cpan[c, 1])
        if pa < 0 or pb < 0 or cp.kinds[c] not in ("mountain", "valley"):
            continue
        na, nb = (np.cross(*(st.panel_vertices_3d(p)[1:] - st.panel_vertices_3d(p)[0])) for p in (pa, pb))
        cosang = na @ nb / np.linalg.norm(na) / np.linalg.norm(nb)
        assert abs(abs(st.angles[c]) - math.acos(np.clip(cosang, -1, 1))) < 1e-9
        checked += 1
    assert checked > 0


def test_outside_face_choice_flips_every_angle():
    # rolling the strip with its other face outside mirrors the tube, so every fold angle changes
    # sign (mirror symmetry, standard geometry)
    cp = kresling(6, 50.0, 40.0, 40.0, 2)
    up = deployed_tube(cp, outside="+z")
    dn = deployed_tube(cp, outside="-z")
    assert up.outside == "+z" and dn.outside == "-z" and up.chirality == -dn.chirality
    assert np.allclose(up.state.angles, -dn.state.angles, atol=1e-9)
    assert np.abs(up.state.angles).max() > 0.1


def test_kresling_with_rigid_panels_and_rigid_ends_does_not_fold():
    # Guest & Pellegrino 1994: a triangulated (Kresling) tube with rigid panels cannot fold; it
    # folds only by deforming its panels. With free end rings the hinged n-gon of each end keeps
    # n - 3 freedoms (Gruebler count of a closed planar chain of n links, standard kinematics),
    # so the strip itself has 2 (n - 3).
    for n, stories in ((6, 2), (4, 3)):
        cp = kresling(n, 50.0, 40.0, 180.0 / n + 10.0, stories)
        v = rigid_foldability(cp)
        assert v.dof == 2 * (n - 3)
        assert "with both end rings held as rigid polygons no rigid fold remains" in v.reason
        assert "closed deployed tube" in v.reason


def test_not_a_tube_strip_is_refused():
    sq = CreasePattern(np.array([[0, 0], [1, 0], [1, 1], [0, 1.0]]), np.array([[0, 1], [1, 2], [2, 3], [3, 0]]),
                       ["border"] * 4)  # fmt: skip
    assert not is_tube_strip(sq)
    with pytest.raises(FoldError, match="not a seamed tube strip.*kresling"):
        deployed_tube(sq)
    with pytest.raises(FoldError, match="outside = 'up'; allowed"):
        deployed_tube(kresling(), outside="up")


def test_shortening_with_rigid_ends_needs_hinge_play():
    # Guest & Pellegrino 1994: with rigid panels and end rings kept regular, b and c fix both height
    # and twist, so only the deployed and the folded stable states close; a tube in between needs
    # deformation, here hinge play. The deployed tube itself closes with perfect hinges.
    from thickpanel.tube_slack import tube_slack

    cp = kresling(6, 50.0, 40.0, 40.0, 1)
    out = tube_slack(cp, height_mm=36.0, n_states=3, ends="rigid")
    assert out.slack.play_mm[0].max() < 1e-9
    assert out.slack.play_mm[-1].max() > 0.5  # mm: a 4 mm shortening of a 40 mm story is not small
    assert np.allclose(out.heights_mm, [40.0, 38.0, 36.0], atol=1e-9)
    # the reached height, measured from the returned poses: each end-ring corner averaged over the
    # panels holding it (they disagree by at most the hinge play), seam copies left out
    final = out.slack.poses[-1]
    v = cp.vertices
    ends = []
    for y in (v[:, 1].min(), v[:, 1].max()):
        ring = [k for k in np.nonzero(np.isclose(v[:, 1], y))[0] if v[k, 0] < v[np.isclose(v[:, 1], y), 0].max()]
        corners = []
        for k in ring:
            own = [p for p in range(cp.n_panels) if k in cp.panels[p].loop]
            corners.append(np.mean([final[p, :3, :3] @ np.append(v[k], 0.0) + final[p, :3, 3] for p in own], axis=0))
        ends.append(np.mean(corners, axis=0))
    assert len(ring) == 6
    assert abs(np.linalg.norm(ends[1] - ends[0]) - 36.0) < out.slack.play_mm[-1].max()
    with pytest.raises(FoldError, match=r"height_mm = 50.0 mm is out of range; allowed: 0 < height_mm < 40"):
        tube_slack(cp, height_mm=50.0)
    with pytest.raises(FoldError, match="ends = 'loose'; allowed"):
        tube_slack(cp, height_mm=30.0, ends="loose")
