"""Local flat-foldability and Miura-ori flat geometry against published results.

Sources:
- Kawasaki 1989 ("On the relation between mountain-creases and valley-creases of a flat origami",
  Proc. 1st Int. Meeting of Origami Science and Technology) and Justin: an even-degree vertex folds
  flat iff the alternating sector sum is zero (restated as Thm 12.2.? in Demaine & O'Rourke 2007,
  *Geometric Folding Algorithms*, Cambridge UP; theorem number from memory).
- Maekawa-Justin theorem: #M - #V = +-2 at a flat-folded vertex (Demaine & O'Rourke 2007, ch. 12).
- Big-little-big lemma and its run generalisation (Demaine & O'Rourke 2007, sec. 12.2).
- Schenk & Guest 2013, "Geometry of Miura-folded metamaterials", PNAS 110(9):3276,
  doi:10.1073/pnas.1217998110: flat state theta = 0 has S = b sin(gamma), V = b cos(gamma), L = a.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from thickpanel.foldability import check_foldability, check_sectors
from thickpanel.layouts.classic import miura_ori


def test_miura_vertex_passes_kawasaki_and_maekawa():
    cp = miura_ori(25.0, 15.0, 65.0, 6, 6)
    rep = check_foldability(cp)
    assert len(rep.vertices) == 25
    # Kawasaki-Justin: alternating sum zero at every Miura vertex (sectors g, pi-g, pi-g, g).
    assert np.all(np.abs(rep.kawasaki) < 1e-12)
    # Maekawa-Justin: |#M - #V| = 2.
    assert np.all(np.abs(rep.maekawa) == 2)
    assert rep.ok and rep.failing == ()


def test_sectors_100_80_90_90_fail_kawasaki_by_20_deg():
    # Kawasaki 1989 / Justin: alternating sum 100 - 80 + 90 - 90 = 20 deg != 0, so not flat-foldable.
    rep = check_sectors([100, 80, 90, 90], ["M", "V", "M", "M"], degrees=True)
    assert math.degrees(rep.kawasaki[0]) == pytest.approx(20.0, abs=1e-9)
    assert not rep.ok and rep.failing == ("V000",)
    assert "Kawasaki residual 20 deg" in rep.summary()
    # the sum of sectors is 360 deg: the vertex is developable (angle defect 0)
    assert rep.angle_defect[0] == pytest.approx(0.0, abs=1e-12)


def test_big_little_big_violation_reported():
    # Sectors 60/30/120/150 satisfy Kawasaki (60 - 30 + 120 - 150 = 0). Sector 30 is a strict
    # local minimum between creases 1 and 2; big-little-big (Demaine & O'Rourke 2007, sec. 12.2)
    # requires them to differ. M, M, M, V satisfies Maekawa (3 - 1 = 2) but breaks big-little-big.
    rep = check_sectors([60, 30, 120, 150], ["V", "M", "M", "M"], degrees=True)
    assert abs(rep.kawasaki[0]) < 1e-12 and abs(rep.maekawa[0]) == 2
    assert rep.blb_violations[0] == 1 and rep.blb_creases[0] == (1, 2)
    assert not rep.ok
    # the same sectors with creases 1 and 2 opposite pass every local check
    assert check_sectors([60, 30, 120, 150], ["V", "V", "M", "V"], degrees=True).ok


def test_big_little_big_run_of_equal_minimal_sectors():
    # Run of k = 4 equal minimal sectors (45 deg) bounded by larger ones: among its k + 1 = 5
    # creases the M and V counts must differ by at most one (Demaine & O'Rourke 2007, sec. 12.2).
    sectors = [45, 45, 45, 45, 90, 90]
    bad = check_sectors(sectors, ["M", "M", "M", "M", "V", "V"], degrees=True)
    assert bad.blb_violations[0] == 1 and bad.blb_creases[0] == (0, 1, 2, 3, 4)
    assert abs(bad.maekawa[0]) == 2  # Maekawa alone does not catch it
    good = check_sectors(sectors, ["M", "V", "M", "V", "M", "M"], degrees=True)
    assert good.blb_violations[0] == 0 and good.ok


def test_miura_flat_geometry_schenk_guest():
    a, b, gamma = 30.0, 18.0, 48.0
    cp = miura_ori(a, b, gamma, 2, 2)
    g = math.radians(gamma)
    v = cp.vertices
    # vertex (i, j) has index j (nx + 1) + i; the zigzag from (0, 0) to (0, 1) to (0, 2)
    s_vec = v[3] - v[0]
    assert s_vec[1] == pytest.approx(b * math.sin(g), rel=1e-12)  # S (Schenk & Guest 2013)
    assert s_vec[0] == pytest.approx(b * math.cos(g), rel=1e-12)  # V (Schenk & Guest 2013)
    assert (v[6] - v[3])[0] == pytest.approx(-b * math.cos(g), rel=1e-12)  # zigzag returns
    assert (v[1] - v[0])[0] == pytest.approx(a, rel=1e-12)  # L = a at theta = 0
    # flat unit cell 2L x 2S (four facets) has area 4 a b sin(gamma)
    assert sum(p.area for p in cp.panels) == pytest.approx(4 * a * b * math.sin(g), rel=1e-12)
