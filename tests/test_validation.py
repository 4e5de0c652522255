"""Validation findings: one test per malformed-pattern case, plus Euler's formula on generated patterns.

Sources: Euler's formula V - E + F = 1 + C for a plane graph with C connected pieces (F counts the
outer faces once per piece; standard graph theory, e.g. Diestel, *Graph Theory*, 5th ed., Thm 4.2.9
for C = 1). Segment intersection classification follows the orientation tests of de Berg et al.,
*Computational Geometry: Algorithms and Applications*, 3rd ed., ch. 2 (common practice).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from thickpanel import CreasePattern, PatternError, Tolerances
from thickpanel.foldability import check_foldability
from thickpanel.layouts.classic import accordion, miura_ori, square_twist

SQ = [[0.0, 0.0], [10.0, 0.0], [10.0, 10.0], [0.0, 10.0]]
SQ_E = [[0, 1], [1, 2], [2, 3], [3, 0]]


def _kinds(cp: CreasePattern) -> list[str]:
    return [f.kind for f in cp.problems()]


def _bad(v, c, k, **kw) -> CreasePattern:
    cp = CreasePattern(v, c, k, validate=False, **kw)
    with pytest.raises(PatternError):
        cp.assert_valid()
    return cp


def test_valid_square_has_no_findings():
    cp = CreasePattern(SQ, SQ_E, ["border"] * 4)
    assert cp.problems() == [] and cp.is_valid()


def test_coincident_vertices():
    v = SQ + [[10.0, 10.0 + 1e-8], [5.0, 5.0]]
    c = [[0, 1], [1, 2], [4, 3], [3, 0], [2, 5], [5, 4]]
    cp = _bad(v, c, ["border"] * 4 + ["valley"] * 2)
    f = cp.problems()[0]
    assert f.kind == "coincident" and f.ids == ("V002", "V004")
    assert "closer than the merge tolerance" in f.message and f.where == (10.0, 10.0)


def test_zero_length_crease():
    cp = _bad(SQ, SQ_E + [[2, 2]], ["border"] * 4 + ["valley"])
    f = [x for x in cp.problems() if x.kind == "zero_length"][0]
    assert f.ids == ("C004",) and "length 0 mm" in f.message


def test_crossing_creases():
    cp = _bad(SQ, SQ_E + [[0, 2], [1, 3]], ["border"] * 4 + ["valley", "mountain"])
    f = cp.problems()[0]
    assert f.kind == "crossing" and f.ids == ("C004", "C005")
    # diagonals of the 10 mm square cross at its centre (5, 5)
    assert f.where == pytest.approx((5.0, 5.0))
    with pytest.raises(PatternError, match=r"C004 and C005 cross at \(5, 5\) mm"):
        CreasePattern(SQ, SQ_E + [[0, 2], [1, 3]], ["border"] * 4 + ["valley", "mountain"])


def test_t_junction():
    v = SQ + [[5.0, 0.0 + 0.0], [5.0, 5.0]]
    # crease 1-? : V005 at (5, 5) lies on no crease; a crease from V004 (on the bottom edge, not split)
    cp = _bad(v, SQ_E + [[4, 5], [5, 2]], ["border"] * 4 + ["valley", "valley"])
    f = cp.problems()[0]
    assert f.kind == "t_junction" and set(f.ids) == {"C000", "C004"}
    assert f.where == pytest.approx((5.0, 0.0))


def test_dangling_crease():
    v = SQ + [[5.0, 5.0]]
    cp = _bad(v, SQ_E + [[0, 4]], ["border"] * 4 + ["valley"])
    f = [x for x in cp.problems() if x.kind == "dangling"][0]
    assert f.ids == ("C004", "V004") and "dangling" in f.message


def test_open_border_by_kind():
    cp = _bad(SQ, SQ_E, ["border", "border", "valley", "border"])
    f = cp.problems()[0]
    assert f.kind == "open_border" and f.ids == ("C002",)
    assert "'border' or 'cut'" in f.message


def test_open_border_missing_edge():
    cp = _bad(SQ, SQ_E[:3], ["border"] * 3)
    kinds = _kinds(cp)
    assert kinds.count("dangling") == 2
    assert cp.problems()[0].ids in (("C000", "V000"), ("C002", "V003"))


def test_self_touching_border():
    # two squares sharing only the corner V002: the outline passes V002 twice
    v = SQ + [[20.0, 10.0], [20.0, 20.0], [10.0, 20.0]]
    c = SQ_E + [[2, 4], [4, 5], [5, 6], [6, 2]]
    cp = _bad(v, c, ["border"] * 8)
    f = [x for x in cp.problems() if x.kind == "self_touching_border"]
    assert len(f) == 1 and f[0].ids == ("V002",) and f[0].where == (10.0, 10.0)


def test_zero_area_panel():
    # sliver triangle of area 0.05 mm^2 is "zero area" once tol.area = 1 mm^2 (tolerance is honoured)
    v = [[0.0, 0.0], [10.0, 0.0], [5.0, 0.01]]
    c = [[0, 1], [1, 2], [2, 0]]
    assert CreasePattern(v, c, ["border"] * 3).is_valid()
    cp = _bad(v, c, ["border"] * 3, tol=Tolerances(area=1.0))
    f = cp.problems()[0]
    assert f.kind == "zero_area" and f.ids == ("P000",)
    assert f.message == "panel P000 has zero area (0.05 mm^2)"


def test_non_simple_panel():
    # an inner square hanging on a single crease (bridge V000-V004) inside the sheet: the ring
    # panel's boundary passes V000 and V004 twice
    inner = [[3.0, 3.0], [7.0, 3.0], [7.0, 7.0], [3.0, 7.0]]
    c = SQ_E + [[4, 5], [5, 6], [6, 7], [7, 4], [0, 4]]
    cp = _bad(SQ + inner, c, ["border"] * 4 + ["valley"] * 5)
    f = [x for x in cp.problems() if x.kind == "non_simple_panel"]
    assert len(f) == 1 and set(f[0].ids[1:]) == {"V000", "V004"}


@pytest.mark.parametrize("bad", [float("nan"), float("inf"), -float("inf")])
def test_nonfinite_coordinates(bad):
    v = [list(p) for p in SQ]
    v[2][1] = bad
    cp = _bad(v, SQ_E, ["border"] * 4)
    f = cp.problems()[0]
    assert f.kind == "nonfinite" and f.ids == ("V002",)
    assert f"{bad}" in f.message


def test_unknown_kind():
    cp = _bad(SQ, SQ_E, ["border", "border", "valey", "border"])
    f = cp.problems()[0]
    assert f.kind == "unknown_kind" and f.ids == ("C002",)
    assert "'valey'" in f.message and "mountain, valley, border, cut, flat" in f.message


def test_index_out_of_range():
    cp = _bad(SQ, SQ_E + [[2, 9]], ["border"] * 4 + ["valley"])
    f = cp.problems()[0]
    assert f.kind == "index_range" and f.ids == ("C004",)
    assert "valid vertex indices are 0..3" in f.message
    cp = _bad(SQ, [[0, 1], [1, 2], [2, 3], [3, -1]], ["border"] * 4)
    assert cp.problems()[0].ids == ("C003",)


def test_disconnected_pieces():
    v = SQ + [[20.0, 0.0], [30.0, 0.0], [30.0, 10.0], [20.0, 10.0]]
    c = SQ_E + [[4, 5], [5, 6], [6, 7], [7, 4]]
    cp = _bad(v, c, ["border"] * 8)
    f = [x for x in cp.problems() if x.kind == "disconnected"]
    assert len(f) == 1 and "2 disconnected pieces" in f[0].message


def test_malformed_arrays_raise_pattern_error():
    with pytest.raises(PatternError, match=r"shape \(n, 2\)"):
        CreasePattern([[0, 0, 0]], [], [])
    with pytest.raises(PatternError, match="kinds has 3 entries for 4 creases"):
        CreasePattern(SQ, SQ_E, ["border"] * 3)
    with pytest.raises(PatternError, match="whole numbers"):
        CreasePattern(SQ, [[0, 1.5], [1, 2], [2, 3], [3, 0]], ["border"] * 4)
    with pytest.raises(PatternError, match="numbers in mm"):
        CreasePattern([["a", "b"]], [], [])


@pytest.mark.parametrize(
    "creases, kinds, match",
    [
        ([[0, 1], [1, 2], [2, 3], [3, float("nan")]], ["border"] * 4, r"C003 has vertex index nan; .* 0\.\.3"),
        ([[0, 1], [1, 2], [2, 3], [3, 1e30]], ["border"] * 4, r"C003 has vertex index 1e\+30"),
        (SQ_E, "bbbb", "not the string 'bbbb'"),
        (SQ_E, None, "got None"),
    ],
)
def test_bad_arguments_never_leak_numpy_errors(creases, kinds, match):
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("error")  # a numpy RuntimeWarning would fail the test
        with pytest.raises(PatternError, match=match):
            CreasePattern(SQ, creases, kinds)


def test_lookups_out_of_range_name_the_id():
    cp = CreasePattern(SQ, SQ_E, ["border"] * 4)
    with pytest.raises(PatternError, match="vertex V009 does not exist; valid vertices are V000..V003"):
        cp.vertex_creases(9)
    with pytest.raises(PatternError, match="panel P003 does not exist"):
        cp.panel_polygon(3)


def test_invalid_pattern_queries_raise_pattern_error():
    cp = CreasePattern(SQ, SQ_E + [[2, 9]], ["border"] * 4 + ["valley"], validate=False)
    with pytest.raises(PatternError, match="C004"):
        cp.panels  # noqa: B018


# ---------------------------------------------------------------- Euler on every generated pattern
GENERATED = [
    miura_ori(20.0, 10.0, 60.0, 1, 1),
    miura_ori(20.0, 10.0, 60.0, 7, 3),
    miura_ori(5.0, 30.0, 15.0, 2, 9),
    square_twist(10.0, 22.5),
    square_twist(10.0, 80.0, assignment="two-two", sheet=40.0),
    accordion(10.0, 3.0, 1),
    accordion(10.0, 3.0, 12),
]


@pytest.mark.parametrize("cp", GENERATED, ids=[c.name for c in GENERATED])
def test_euler_on_generated_patterns(cp):
    # Euler's formula for a connected plane graph: V - E + F = 2 (F includes the outer face).
    assert cp.n_vertices - cp.n_creases + (cp.n_panels + 1) == 2
    assert cp.problems() == []
    # the panels tile the sheet: their areas add up to the area inside the border loop
    assert all(p.area > 0 for p in cp.panels)


@settings(max_examples=25, deadline=None)
@given(
    a=st.floats(1.0, 100.0),
    b=st.floats(1.0, 100.0),
    gamma=st.floats(5.0, 85.0),
    nx=st.integers(1, 8),
    ny=st.integers(1, 8),
)
def test_miura_invariants(a, b, gamma, nx, ny):
    cp = miura_ori(a, b, gamma, nx, ny)
    # Euler's formula (Diestel, Thm 4.2.9)
    assert cp.n_vertices - cp.n_creases + cp.n_panels + 1 == 2
    assert cp.n_panels == nx * ny
    # every panel is the a x b parallelogram: area a b sin(gamma) (elementary geometry)
    areas = np.array([p.area for p in cp.panels])
    assert np.allclose(areas, a * b * math.sin(math.radians(gamma)), rtol=1e-9)
    # sector angles at each interior vertex sum to 360 deg and pass Kawasaki (Kawasaki 1989)
    rep = check_foldability(cp)
    assert rep.ok
    assert len(rep.vertices) == (nx - 1) * (ny - 1)


@settings(max_examples=20, deadline=None)
@given(side=st.floats(1.0, 50.0), twist=st.floats(1.0, 89.0), two=st.booleans())
def test_square_twist_invariants(side, twist, two):
    cp = square_twist(side, twist, assignment="two-two" if two else "standard")
    assert cp.n_vertices - cp.n_creases + cp.n_panels + 1 == 2
    # the panels tile the (2 side)^2 sheet
    assert sum(p.area for p in cp.panels) == pytest.approx(4 * side * side, rel=1e-9)
    assert check_foldability(cp).ok
