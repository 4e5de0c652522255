"""ISO 286-2 limit deviations for the hinge fits against the standard's table.

Source: ISO 286-2:2010, "Geometrical product specifications (GPS) - ISO code system for tolerances
on linear sizes - Part 2: Tables of standard tolerance classes and limit deviations for holes and
shafts", tables for H (holes) and g, h (shafts); the values are the ones quoted in
../shared/REFERENCES.md section 7 (micrometres).
"""

from __future__ import annotations

import pytest

from hinges.fits import fit, limit_deviations
from thickpanel.errors import HingeError

# (class, size in mm, upper um, lower um): ISO 286-2:2010 tables (REFERENCES.md section 7)
ISO_286_2 = [
    ("H7", 2.0, 10, 0), ("H7", 3.0, 10, 0), ("H7", 5.0, 12, 0), ("H7", 6.0, 12, 0),
    ("H7", 8.0, 15, 0), ("H7", 10.0, 15, 0),
    ("g6", 1.0, -2, -8), ("g6", 4.0, -4, -12), ("g6", 9.0, -5, -14),
    ("h6", 2.5, 0, -6), ("h6", 3.5, 0, -8), ("h6", 6.5, 0, -9),
]


@pytest.mark.parametrize("cls,size,up,lo", ISO_286_2)
def test_limit_deviations_match_iso_286_2(cls, size, up, lo):
    # ISO 286-2:2010 limit deviation tables, values via REFERENCES.md section 7
    u, low = limit_deviations(cls, size)
    assert u == pytest.approx(up / 1000.0, abs=1e-12)
    assert low == pytest.approx(lo / 1000.0, abs=1e-12)


def test_range_boundaries_follow_over_up_to_and_including():
    # ISO 286-2: ranges are "over 3 up to and including 6"; 3.0 is in the first range
    assert limit_deviations("H7", 3.0)[0] == pytest.approx(0.010)
    assert limit_deviations("H7", 3.0001)[0] == pytest.approx(0.012)


def test_h7_g6_clearance_at_5mm():
    # ISO 286-2: H7 5 mm = 5.000..5.012, g6 5 mm = 4.988..4.996 -> clearance 0.004..0.024 mm
    f = fit("H7/g6", 5.0)
    assert f.min_clearance == pytest.approx(0.004, abs=1e-12)
    assert f.max_clearance == pytest.approx(0.024, abs=1e-12)


def test_h7_h6_is_a_transition_free_clearance_fit_from_zero():
    # ISO 286-2: H7/h6 at 8 mm has min clearance 0 (H lower = 0, h upper = 0), max 15 + 9 um
    f = fit("H7/h6", 8.0)
    assert f.min_clearance == pytest.approx(0.0, abs=1e-12)
    assert f.max_clearance == pytest.approx(0.024, abs=1e-12)


def test_out_of_table_sizes_and_classes_raise():
    with pytest.raises(HingeError, match="outside the fit table"):
        limit_deviations("H7", 45.0)
    with pytest.raises(HingeError, match="not in the table"):
        limit_deviations("K7", 5.0)
    with pytest.raises(HingeError, match="H7/g6"):
        fit("H7", 5.0)
