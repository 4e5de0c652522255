"""Rigid folding kinematics against published results: Miura-ori geometry and square twists."""

import numpy as np
import pytest

from thickpanel.kinematics import fold_path, rigid_foldability
from thickpanel.layouts import make_layout

A, B, GAMMA_DEG = 20.0, 10.0, 60.0
NX = NY = 4


def _vertex_positions(cp, st):
    out = np.full((cp.n_vertices, 3), np.nan)
    for p, pan in enumerate(cp.panels):
        out[list(pan.loop)] = st.panel_vertices_3d(p)
    return out


@pytest.mark.parametrize("closed_form", [True, False])
def test_miura_cell_dimensions_schenk_guest(closed_form):
    # Schenk & Guest 2013, "Geometry of Miura-folded metamaterials", PNAS 110(9):3276,
    # doi:10.1073/pnas.1217998110: with facet tilt theta,
    #   H = a sin(theta) sin(gamma), S = b cos(theta) tan(gamma) / sqrt(1 + cos^2 theta tan^2 gamma),
    #   L = a sqrt(1 - sin^2 theta sin^2 gamma), V = b / sqrt(1 + cos^2 theta tan^2 gamma),
    # zigzag creases fold by 2 theta, straight creases by 2 atan(cos gamma tan theta).
    cp = make_layout("miura", a=A, b=B, gamma_deg=GAMMA_DEG, nx=NX, ny=NY)
    g = np.deg2rad(GAMMA_DEG)
    path = fold_path(cp, target=np.deg2rad(170.0), n_states=18, closed_form=closed_form)
    assert path.stop_reason == "target" and len(path.states) == 18
    dy = np.abs(np.diff(cp.vertices[cp.creases], axis=1)[:, 0, 1])
    folding = np.array([k in ("mountain", "valley") for k in cp.kinds])
    zig = folding & (dy > 1e-9)
    straight = folding & (dy <= 1e-9)

    def idx(i, j):
        return j * (NX + 1) + i

    checked = 0
    for st in path.states[2::3]:
        assert st.closure_error < 1e-9
        rz = np.abs(st.angles[zig])
        theta = rz.max() / 2
        assert np.ptp(rz) < 1e-9  # every zigzag crease folds alike
        rs = np.abs(st.angles[straight])
        assert np.abs(rs - 2 * np.arctan(np.cos(g) * np.tan(theta))).max() < 1e-9
        x = _vertex_positions(cp, st)
        # zigzag polylines lie in horizontal planes: their normal is the vertical
        z = np.cross(x[idx(2, 1)] - x[idx(2, 0)], x[idx(2, 2)] - x[idx(2, 1)])
        z /= np.linalg.norm(z)
        y = x[idx(2, 2)] - x[idx(2, 0)]
        y /= np.linalg.norm(y)
        xx = np.cross(y, z)
        side_a = x[idx(2, 1)] - x[idx(1, 1)]
        side_b = x[idx(2, 2)] - x[idx(2, 1)]
        h, l_ = abs(side_a @ z), abs(side_a @ xx)
        s, v = abs(side_b @ y), abs(side_b @ xx)
        root = np.sqrt(1 + np.cos(theta) ** 2 * np.tan(g) ** 2)
        assert h == pytest.approx(A * np.sin(theta) * np.sin(g), rel=1e-9, abs=1e-12)
        assert s == pytest.approx(B * np.cos(theta) * np.tan(g) / root, rel=1e-9)
        assert l_ == pytest.approx(A * np.sqrt(1 - np.sin(theta) ** 2 * np.sin(g) ** 2), rel=1e-9)
        assert v == pytest.approx(B / root, rel=1e-9)
        checked += 1
    assert checked >= 5


def test_miura_is_rigid_one_dof():
    # Miura-ori folds rigidly with one degree of freedom (Schenk & Guest 2013; Tachi 2009).
    cp = make_layout("miura", a=A, b=B, gamma_deg=GAMMA_DEG, nx=5, ny=3)
    v = rigid_foldability(cp)
    assert (v.kind, v.dof) == ("rigid", 1)


@pytest.mark.parametrize("twist", [22.5, 30.0, 45.0])
def test_square_twist_standard_is_locked(twist):
    # Hull 2020, *Origametry* (Cambridge UP): the standard square twist is flat-foldable but not
    # rigidly foldable; the fold-angle multipliers around the central square multiply to
    # (1 + sqrt 2)^4 != 1 at 45 deg twist. Each corner multiplies by tan(twist / 2) (Huffman's
    # degree-4 relation with sectors 90 - twist and 90 around the odd crease; our derivation), so
    # the product is tan(twist / 2)^(+-4).
    cp = make_layout("square-twist", side=20.0, twist_deg=twist, assignment="standard")
    v = rigid_foldability(cp)
    assert v.kind == "locked" and v.dof == 0
    assert {"V000", "V001", "V002", "V003"} <= set(v.where)  # the four corners of the centre square
    prod = float(v.reason.split("compose to ")[1].split(",")[0])
    expect = np.tan(np.deg2rad(twist) / 2) ** 4
    assert min(abs(prod - expect), abs(prod - 1 / expect)) < 1e-6 * max(1.0, 1 / expect)
    if twist == 45.0:
        assert min(abs(prod - (1 + 2**0.5) ** 4), abs(prod - (1 + 2**0.5) ** -4)) < 1e-6 * (1 + 2**0.5) ** 4


def test_square_twist_two_two_folds_with_one_dof():
    # Two corners on each rigid branch: the multipliers compose to 1 and the twist folds with one
    # degree of freedom (Hull 2020, *Origametry*; Evans, Lang, Magleby & Howell 2015, "Rigidly
    # foldable origami twists", in Origami^6; Tachi 2009).
    cp = make_layout("square-twist", side=20.0, twist_deg=30.0, assignment="two-two")
    v = rigid_foldability(cp)
    assert (v.kind, v.dof) == ("rigid", 1)
    path = fold_path(cp, target=np.deg2rad(120.0), n_states=12, closed_form=False)
    assert path.stop_reason == "target"
    assert max(s.closure_error for s in path.states) < 1e-9
