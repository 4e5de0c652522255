"""Array size measures (thickpanel.envelope) against elementary geometry."""

import math

import numpy as np
import pytest

from thickpanel.envelope import diameter, packing_ratio, principal_extents


def _box(a: float, b: float, c: float) -> np.ndarray:
    return np.array([[x, y, z] for x in (0, a) for y in (0, b) for z in (0, c)], dtype=float)


def test_diameter_of_a_box_is_its_space_diagonal():
    # space diagonal sqrt(a^2 + b^2 + c^2) (Pythagoras, any geometry handbook)
    assert diameter(_box(3.0, 4.0, 12.0)) == pytest.approx(13.0, rel=1e-12)
    # collinear points: the hull fails, the answer is still the end-to-end distance
    assert diameter(np.array([[0, 0, 0], [1, 0, 0], [5, 0, 0]], dtype=float)) == pytest.approx(5.0)


def test_principal_extents_do_not_depend_on_orientation():
    # a rigid rotation leaves the principal axes of a point set attached to it (SVD, Golub & Van Loan)
    pts = _box(100.0, 40.0, 5.0)
    ang = math.radians(33.0)
    rot = np.array([[math.cos(ang), -math.sin(ang), 0], [math.sin(ang), math.cos(ang), 0], [0, 0, 1]])
    tilt = np.array([[1, 0, 0], [0, math.cos(0.4), -math.sin(0.4)], [0, math.sin(0.4), math.cos(0.4)]])
    moved = pts @ (tilt @ rot).T + [7.0, -3.0, 11.0]
    assert principal_extents(moved) == pytest.approx([100.0, 40.0, 5.0], rel=1e-9)


def test_packing_ratio_is_area_over_the_two_largest_extents():
    assert packing_ratio(6000.0, [5.0, 100.0, 40.0]) == pytest.approx(1.5)
    assert packing_ratio(10.0, [0.0, 0.0, 3.0]) is None
