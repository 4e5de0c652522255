"""FoldabilityReport on generated patterns and hand-built vertices.

Sources: Kawasaki 1989 / Justin (alternating sum), Maekawa-Justin (#M - #V = +-2), big-little-big
(Demaine & O'Rourke 2007, *Geometric Folding Algorithms*, sec. 12.2); Hull 2020, *Origametry*
(square twist assignments are flat-foldable).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from thickpanel import CreasePattern, PatternError, Tolerances
from thickpanel.foldability import check_foldability, check_sectors
from thickpanel.layouts.classic import accordion, miura_ori, square_twist


def _star_pattern(angles_deg, kinds, r=10.0):
    """A single interior vertex at the origin with creases to a polygonal border."""
    ang = np.radians(np.asarray(angles_deg, dtype=float))
    pts = np.stack([np.cos(ang), np.sin(ang)], 1) * r
    v = np.vstack([[0.0, 0.0], pts])
    n = len(ang)
    creases = [[0, 1 + i] for i in range(n)] + [[1 + i, 1 + (i + 1) % n] for i in range(n)]
    return CreasePattern(v, creases, list(kinds) + ["border"] * n)


def test_square_twist_flat_foldable_both_assignments():
    # Both assignments satisfy Kawasaki, Maekawa and big-little-big at the four corners (Hull 2020).
    for asg in ("standard", "two-two"):
        rep = check_foldability(square_twist(20.0, 25.0, assignment=asg))
        assert rep.ok, rep.summary()
        assert list(rep.degree) == [4, 4, 4, 4]


def test_accordion_has_no_interior_vertex():
    rep = check_foldability(accordion(10.0, 5.0, 4))
    assert len(rep.vertices) == 0 and rep.ok


def test_pattern_vertex_kawasaki_failure_named():
    # sectors 100/80/90/90 at a pattern vertex: residual 20 deg (Kawasaki 1989).
    cp = _star_pattern([0, 100, 180, 270], ["mountain", "valley", "mountain", "mountain"])
    rep = check_foldability(cp)
    assert rep.failing == ("V000",)
    assert math.degrees(abs(rep.kawasaki[0])) == pytest.approx(20.0)
    assert "V000: Kawasaki residual" in rep.summary()


def test_pattern_blb_names_creases():
    # 60/30/120/150 with M M M V around the 30 deg sector: big-little-big (Demaine & O'Rourke 2007).
    cp = _star_pattern([0, 60, 90, 210], ["valley", "mountain", "mountain", "mountain"])
    rep = check_foldability(cp)
    assert rep.blb_creases == {0: (1, 2)}
    assert "C001, C002" in rep.summary()


def test_flat_creases_are_ignored():
    # a 'flat' line through the vertex does not fold: a straight degree-2 fold remains, which is
    # flat-foldable with both creases of one kind (Maekawa: |2 - 0| = 2).
    cp = _star_pattern([0, 90, 180, 270], ["valley", "flat", "valley", "flat"])
    rep = check_foldability(cp)
    assert list(rep.degree) == [2] and rep.ok


def test_odd_degree_fails():
    cp = _star_pattern([0, 120, 240], ["valley", "valley", "mountain"])
    rep = check_foldability(cp)
    assert np.isnan(rep.kawasaki[0]) and not rep.ok
    assert "odd degree 3" in rep.summary()


def test_conical_vertex_defect():
    # sectors summing to 350 deg: angle defect 10 deg (not developable).
    rep = check_sectors([90, 85, 90, 85], "MVVV", degrees=True)
    assert math.degrees(rep.angle_defect[0]) == pytest.approx(10.0)
    assert not rep.developable[0]


def test_tolerance_changes_verdict():
    # a 1e-6 rad Kawasaki error fails at the default 1e-9 rad and passes at 1e-5 rad
    s = np.radians([90, 90, 90, 90]) + np.array([1e-6, 0, 0, -1e-6])
    assert not check_sectors(s, "VMMM").ok
    assert check_sectors(s, "VMMM", tol=Tolerances(kawasaki=1e-5)).ok
    # tol.angle decides equal sectors: 45 and 45.001 deg form a run of two only with a loose tol
    s2 = np.radians([45, 45.001, 135, 134.999])
    loose = Tolerances(angle=1e-3, kawasaki=1e-3)
    # strict: 45 alone is the minimum and creases 0, 1 (M, M) break big-little-big;
    # loose: the run 45/45.001 has creases M, M, V whose counts differ by one, which is allowed.
    assert check_sectors(s2, "MMVM", tol=Tolerances(kawasaki=1e-3)).blb_violations[0] == 1
    assert check_sectors(s2, "MMVM", tol=loose).blb_violations[0] == 0


def test_large_miura_vectorised():
    rep = check_foldability(miura_ori(10.0, 8.0, 70.0, 40, 30))
    assert len(rep.vertices) == 39 * 29 and rep.ok


def test_bad_sector_input():
    with pytest.raises(PatternError, match="assignment has 3 entries for 4 sectors"):
        check_sectors([90, 90, 90, 90], "MVM", degrees=True)
    with pytest.raises(PatternError, match=r"assignment\[1\] = 'x'"):
        check_sectors([90, 90, 90, 90], "MxMM", degrees=True)
    with pytest.raises(PatternError, match="finite and > 0"):
        check_sectors([90, float("nan"), 90, 90], "MVMM", degrees=True)
    with pytest.raises(PatternError, match="V099 was not checked"):
        check_sectors([90, 90, 90, 90], "MVMM", degrees=True).reasons(99)
