"""Classic layouts: Miura-ori, square twist, accordion.

Sources named beside each check:
- Schenk & Guest 2013, "Geometry of Miura-folded metamaterials", PNAS 110(9):3276,
  doi:10.1073/pnas.1217998110 (flat-state S = b sin gamma, V = b cos gamma, L = a).
- Maekawa-Justin theorem (|#M - #V| = 2 at a flat-foldable vertex) and Kawasaki 1989 / Justin
  (alternating sector sum zero), as restated in Demaine & O'Rourke 2007, *Geometric Folding
  Algorithms*, ch. 12.
- Euler's formula V - E + F = 2 for a connected plane graph (standard graph theory, e.g.
  Diestel, *Graph Theory*, Thm 4.2.9).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from thickpanel import PatternError
from thickpanel.layouts import available_layouts, make_layout
from thickpanel.layouts.classic import accordion, miura_ori, square_twist


def _euler(cp) -> int:
    # Euler's formula, connected plane graph: V - E + F = 2 with F counting the outer face.
    return cp.n_vertices - cp.n_creases + cp.n_panels + 1


def _sectors(cp, v):
    offsets, _, ang = cp.star
    a = ang[offsets[v] : offsets[v + 1]]
    return np.diff(np.concatenate([a, [a[0] + 2 * np.pi]]))


def test_registered_names():
    assert {"miura", "square-twist", "accordion"} <= set(available_layouts())


@pytest.mark.parametrize("gamma", [30.0, 60.0, 75.0])
def test_miura_flat_geometry_schenk_guest(gamma):
    a, b = 20.0, 12.0
    cp = miura_ori(a, b, gamma, 4, 4)
    g = math.radians(gamma)
    v = cp.vertices
    # Schenk & Guest 2013 at theta = 0: L = a, S = b sin(gamma), V = b cos(gamma).
    i, j = 1, 0  # vertex (1, 0) -> (1, 1) is one zigzag segment
    d = v[(j + 1) * 5 + i] - v[j * 5 + i]
    assert d[1] == pytest.approx(b * math.sin(g), rel=1e-12)  # S
    assert d[0] == pytest.approx(b * math.cos(g), rel=1e-12)  # V
    d = v[1] - v[0]
    assert d[0] == pytest.approx(a, rel=1e-12) and d[1] == 0.0  # L = a
    # parallelogram area a b sin(gamma) (elementary geometry)
    assert all(p.area == pytest.approx(a * b * math.sin(g), rel=1e-12) for p in cp.panels)
    assert _euler(cp) == 2


def test_miura_counts_and_assignment():
    cp = miura_ori(20.0, 10.0, 55.0, 5, 4)
    assert cp.n_panels == 20
    assert len(cp.interior_vertices) == 4 * 3
    kinds = np.array(cp.kinds)
    for v in cp.interior_vertices:
        cs = cp.vertex_creases(int(v))
        ks = kinds[list(cs)]
        # Maekawa-Justin: |#M - #V| = 2 at a flat-foldable vertex.
        assert abs(int((ks == "mountain").sum()) - int((ks == "valley").sum())) == 2
        sec = _sectors(cp, int(v))
        # Kawasaki-Justin: alternating sum of sectors is zero.
        assert abs(sec[0::2].sum() - sec[1::2].sum()) < 1e-12
        # the odd crease sits between the two gamma sectors (big-little-big, Demaine & O'Rourke 2007)
        odd = [k for k in range(4) if (ks == ks[k]).sum() == 1][0]
        g = math.radians(55.0)
        assert sec[odd - 1] == pytest.approx(g) and sec[odd] == pytest.approx(g)


def test_zigzag_creases_share_a_kind_per_column():
    cp = miura_ori(20.0, 10.0, 60.0, 4, 5)
    nx = 4
    c = cp.creases
    kinds = np.array(cp.kinds)
    zig = c[:, 1] - c[:, 0] == nx + 1
    col = c[zig, 0] % (nx + 1)
    for i in range(1, nx):
        assert len(set(kinds[zig][col == i])) == 1
    assert kinds[zig][col == 1][0] != kinds[zig][col == 2][0]


@pytest.mark.parametrize("assignment", ["standard", "two-two"])
@pytest.mark.parametrize("twist", [15.0, 30.0, 45.0, 70.0])
def test_square_twist_vertices(assignment, twist):
    cp = square_twist(10.0, twist, assignment=assignment)
    assert cp.n_panels == 9 and _euler(cp) == 2
    assert list(cp.interior_vertices) == [0, 1, 2, 3]
    # central square area side^2 (elementary geometry)
    areas = sorted(p.area for p in cp.panels)
    assert any(abs(x - 100.0) < 1e-9 for x in areas)
    # total area = sheet side^2 = (2 side)^2
    assert sum(areas) == pytest.approx(400.0)
    kinds = np.array(cp.kinds)
    for v in range(4):
        sec = np.degrees(_sectors(cp, v))
        assert sorted(np.round(sec, 9)) == sorted(np.round([90, 90 + twist, 90, 90 - twist], 9))
        ks = kinds[list(cp.vertex_creases(v))]
        # Maekawa-Justin theorem
        assert abs(int((ks == "mountain").sum()) - int((ks == "valley").sum())) == 2
        # big-little-big: the creases bounding the strict minimum sector differ (Demaine & O'Rourke 2007)
        k = int(np.argmin(sec))
        assert ks[k] != ks[(k + 1) % 4]


def test_square_twist_branch_mix():
    # Standard: central square all one kind (Hull 2020, Origametry, square twist); two-two: both kinds.
    assert len(set(square_twist(10.0, 30.0).kinds[:4])) == 1
    assert len(set(square_twist(10.0, 30.0, assignment="two-two").kinds[:4])) == 2


def test_accordion():
    cp = accordion(30.0, 10.0, 6)
    assert cp.n_panels == 6 and _euler(cp) == 2
    assert all(p.area == pytest.approx(300.0) for p in cp.panels)
    folds = [k for k in cp.kinds if k != "border"]
    assert folds == ["valley", "mountain"] * 2 + ["valley"]
    assert make_layout("accordion", width=5.0, panel_width=2.0, n=1).n_panels == 1


@pytest.mark.parametrize(
    "fn, kwargs, match",
    [
        (miura_ori, dict(a=-1.0, b=1.0, gamma_deg=60, nx=2, ny=2), r"a = -1.0 mm .* > 0"),
        (miura_ori, dict(a=1.0, b=float("nan"), gamma_deg=60, nx=2, ny=2), r"b = nan"),
        (miura_ori, dict(a=1.0, b=1.0, gamma_deg=90, nx=2, ny=2), r"gamma_deg = 90 .*0 and 90"),
        (miura_ori, dict(a=1.0, b=1.0, gamma_deg=60, nx=0, ny=2), r"nx = 0 .*1\.\.2000"),
        (miura_ori, dict(a=1.0, b=1.0, gamma_deg=60, nx=2.5, ny=2), r"nx must be a whole number"),
        (square_twist, dict(side=10.0, twist_deg=0.0), r"twist_deg = 0.0 deg"),
        (square_twist, dict(side=10.0, twist_deg=30.0, assignment="x"), r"'x'.*standard, two-two"),
        (square_twist, dict(side=10.0, twist_deg=30.0, sheet=12.0), r"sheet = 12 mm .*> 13.66"),
        (accordion, dict(width=10.0, panel_width=0.0, n=3), r"panel_width = 0.0 mm"),
        (accordion, dict(width=10.0, panel_width=1.0, n=-2), r"n = -2"),
    ],
)
def test_parameter_errors_echo_value_and_range(fn, kwargs, match):
    with pytest.raises(PatternError, match=match):
        fn(**kwargs)


def _rot(axis, a):
    # rotation about an in-plane unit axis (Rodrigues' formula)
    x, y = axis
    k = np.array([[0.0, 0.0, y], [0.0, 0.0, -x], [-y, x, 0.0]])
    return np.eye(3) + math.sin(a) * k + (1 - math.cos(a)) * k @ k


def test_square_twist_two_two_closes_rigidly():
    # The fold state predicted by the degree-4 rigid-branch relations (Huffman 1976; restated in
    # Evans et al. 2015 and /shared REFERENCES sec. 2: branch A rho3 = rho1, rho4 = -rho2; branch B
    # rho4 = rho2, rho3 = -rho1; tangent-of-half-angle multipliers -tan(t/2) and cot(t/2)) must
    # satisfy loop closure R(l1, rho1) ... R(ln, rhon) = I at every corner (Tachi 2009, "Simulation
    # of rigid origami"; Belcastro & Hull 2002) and carry the layout's mountain/valley signs.
    twist = 30.0
    cp = square_twist(20.0, twist, assignment="two-two")
    sign = np.array([1.0 if k == "valley" else -1.0 for k in cp.kinds[:12]])
    t = math.tan(math.radians(twist) / 2)
    for drive_deg in (5.0, 45.0, 90.0, 150.0):
        h0 = math.tan(math.radians(drive_deg) / 2)
        sides = [h0, -h0 / t, -h0, h0 / t]  # tan(side/2); corner 1, 3 branch A, corner 0, 2 branch B
        side = [2 * math.atan(x) for x in sides]
        rho = np.zeros(12)
        rho[:4] = side
        for k in range(4):
            e_next, e_prev = side[k], side[(k - 1) % 4]
            if k % 2 == 0:  # branch B: first pleat = -e_next, second pleat = e_prev
                rho[4 + 2 * k], rho[5 + 2 * k] = -e_next, e_prev
            else:  # branch A: first pleat = e_next, second pleat = -e_prev
                rho[4 + 2 * k], rho[5 + 2 * k] = e_next, -e_prev
        assert np.all(np.sign(rho) == sign)
        for v in range(4):
            m = np.eye(3)
            for c in cp.vertex_creases(v):
                a, b = cp.creases[c]
                d = cp.vertices[b if a == v else a] - cp.vertices[v]
                m = m @ _rot(d / np.linalg.norm(d), rho[c])
            assert np.abs(m - np.eye(3)).max() < 1e-12, (drive_deg, v)
