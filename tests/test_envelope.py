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


def test_axis_aligned_box_of_a_square_sheet_is_the_square():
    # a 240 mm square, 3 mm thick, drawn along the axes: its box is 240 x 240 x 3 whatever the
    # principal axes (which a square does not fix: its inertia tensor is isotropic in its plane)
    from thickpanel.envelope import box_extents

    sq = np.array([[x, y, z] for x in (-120.0, 120.0) for y in (-120.0, 120.0) for z in (0.0, 3.0)])
    assert box_extents(sq).tolist() == [240.0, 240.0, 3.0]


def test_enclosing_cylinder_about_a_given_axis():
    # regular octagon of circumradius 600 mm (CRC Standard Mathematical Tables): diameter 1200 about
    # its centre normal; about a parallel axis 100 mm off centre the farthest corner is 700 mm away
    from thickpanel.envelope import enclosing_cylinder

    ang = np.arange(8) * (2 * math.pi / 8)
    octagon = np.column_stack([600 * np.cos(ang), 600 * np.sin(ang), np.zeros(8)])
    slab = np.vstack([octagon, octagon + [0, 0, 2.0]])
    assert enclosing_cylinder(slab, [0, 0, 0], [0, 0, 1]) == pytest.approx((1200.0, 2.0))
    assert enclosing_cylinder(slab, [-100.0, 0, 0], [0, 0, -5.0]) == pytest.approx((1400.0, 2.0))
    # an axis along x: the height is the x extent, the radius reaches the corners at (0, +-600, 2)
    d, h = enclosing_cylinder(slab, [0, 0, 0], [1.0, 0, 0])
    assert h == pytest.approx(1200.0) and d == pytest.approx(2 * math.hypot(600.0, 2.0))
    with pytest.raises(ValueError):
        enclosing_cylinder(slab, [0, 0, 0], [0, 0, 0])
