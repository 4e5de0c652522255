"""Basic structure of CreasePattern (half-edge faces, panel graph, Euler's formula)."""

import numpy as np
import pytest

from thickpanel import CreasePattern, PatternError


def grid(n: int) -> CreasePattern:
    xs, ys = np.meshgrid(np.arange(n + 1.0), np.arange(n + 1.0))
    v = np.stack([xs.ravel(), ys.ravel()], 1) * 10.0
    e, k = [], []
    for i in range(n + 1):
        for j in range(n):
            e.append([i * (n + 1) + j, i * (n + 1) + j + 1])
            k.append("border" if i in (0, n) else "valley")
            e.append([j * (n + 1) + i, (j + 1) * (n + 1) + i])
            k.append("border" if i in (0, n) else "mountain")
    return CreasePattern(v, e, k)


def test_grid_faces_and_euler():
    cp = grid(4)
    assert cp.n_panels == 16
    assert all(p.area == pytest.approx(100.0) for p in cp.panels)
    # Euler's formula V - E + F = 2 (F counts the outside face); standard graph theory.
    assert cp.n_vertices - cp.n_creases + cp.n_panels + 1 == 2
    assert len(cp.interior_vertices) == 9
    assert cp.panel_graph.number_of_edges() == 24


def test_crossing_is_reported_with_ids():
    with pytest.raises(PatternError, match="C000 and C001 cross"):
        CreasePattern([[0, 0], [2, 2], [0, 2], [2, 0]], [[0, 1], [2, 3]], ["valley"] * 2)


def test_seam_equality_treats_unset_angle_as_equal():
    from thickpanel import Seam

    # NaN marks "no target angle given"; two such seams are the same seam (round trips rely on it)
    assert Seam(3, 7) == Seam(3, 7)
    assert hash(Seam(3, 7)) == hash(Seam(3, 7))
    assert Seam(3, 7) != Seam(3, 7, target_angle=0.5)
    assert Seam(3, 7, "mountain") != Seam(3, 7, "valley")


def test_clip_halfplane_and_convex_intersection_areas():
    from thickpanel.geometry2d import clip_convex, clip_halfplane, polygon_area

    sq = np.array([[0.0, 0.0], [2.0, 0.0], [2.0, 2.0], [0.0, 2.0]])
    # keep x <= 0.5: a 0.5 x 2 rectangle (elementary area)
    assert polygon_area(clip_halfplane(sq, np.array([1.0, 0.0]), 0.5)) == pytest.approx(1.0)
    # keep x + y <= 2: half the square, cut along its diagonal
    assert polygon_area(clip_halfplane(sq, np.array([1.0, 1.0]), 2.0)) == pytest.approx(2.0)
    assert len(clip_halfplane(sq, np.array([1.0, 0.0]), -1.0)) == 0
    # two unit-offset squares overlap in a 1 x 1 square
    assert polygon_area(clip_convex(sq, sq + [1.0, 1.0])) == pytest.approx(1.0)
