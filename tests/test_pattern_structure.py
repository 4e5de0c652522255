"""CreasePattern structure: rotation system, faces, panel measures, graph, immutability.

Sources: shoelace formula and polygon centroid (e.g. Bourke 1988, "Calculating the area and
centroid of a polygon"; common practice); Euler's formula V - E + F = 2 (Diestel, *Graph Theory*,
Thm 4.2.9); half-edge face traversal as in de Berg et al., *Computational Geometry*, 3rd ed., sec. 2.2.
"""

from __future__ import annotations

import numpy as np
import pytest

from thickpanel import CreasePattern, PatternError, Tolerances
from thickpanel.geometry2d import (
    _sweep_pairs,
    loop_measures,
    polygon_area,
    polygon_centroid,
    segment_candidate_pairs,
)
from thickpanel.layouts.classic import miura_ori

# an L-shaped sheet (non-convex panel) next to a square, joined by a valley
L_V = [[0, 0], [20, 0], [20, 10], [10, 10], [10, 20], [0, 20], [30, 0], [30, 10]]
L_C = [[0, 1], [1, 2], [2, 3], [3, 4], [4, 5], [5, 0], [1, 6], [6, 7], [7, 2]]
L_K = ["border", "valley"] + ["border"] * 4 + ["border"] * 3


def _l_shape() -> CreasePattern:
    return CreasePattern(L_V, L_C, L_K)


def test_panels_area_centroid_convexity():
    cp = _l_shape()
    assert cp.n_panels == 2
    by_area = sorted(cp.panels, key=lambda p: p.area)
    sq, ell = by_area
    assert sq.area == pytest.approx(100.0) and sq.convex
    assert sq.centroid == pytest.approx((25.0, 5.0))
    # L made of a 20x10 bar and a 10x10 block above its left half: area 300, centroid
    # ((200*10 + 100*5)/300, (200*5 + 100*15)/300) (composite-area centroid, common practice)
    assert ell.area == pytest.approx(300.0) and not ell.convex
    assert ell.centroid == pytest.approx((2500 / 300, 2500 / 300))
    # loops counter-clockwise, starting at the smallest vertex index
    assert ell.loop[0] == min(ell.loop) and polygon_area(cp.panel_polygon(ell.index)) > 0
    # edges[k] joins loop[k] and loop[k + 1]
    for p in cp.panels:
        for k, e in enumerate(p.edges):
            assert set(cp.creases[e].tolist()) == {p.loop[k], p.loop[(k + 1) % len(p.loop)]}


def test_crease_panels_left_right():
    cp = _l_shape()
    cpan = cp.crease_panels
    # crease 1 runs (20,0) -> (20,10) upward: its left side (x < 20) is the L panel
    ell = max(cp.panels, key=lambda p: p.area).index
    sq = min(cp.panels, key=lambda p: p.area).index
    assert tuple(cpan[1]) == (ell, sq)
    # border creases have the outside (-1) on one side
    assert all(-1 in tuple(cpan[k]) for k in range(len(L_C)) if k != 1)


def test_star_is_counter_clockwise():
    cp = miura_ori(10.0, 10.0, 60.0, 3, 3)
    offsets, creases, angles = cp.star
    for v in range(cp.n_vertices):
        a = angles[offsets[v] : offsets[v + 1]]
        assert np.all(np.diff(a) > 0)
        assert cp.vertex_creases(v) == tuple(int(x) for x in creases[offsets[v] : offsets[v + 1]])
    # (nx - 1)(ny - 1) interior vertices for an nx x ny Miura sheet
    assert list(cp.interior_vertices) == [5, 6, 9, 10]
    assert len(cp.border_vertices) == 16 - 4


def test_panel_graph():
    cp = miura_ori(10.0, 10.0, 60.0, 4, 3)
    g = cp.panel_graph
    assert g.number_of_nodes() == 12
    # a grid of 4 x 3 cells has 3*3 + 4*2 = 17 interior edges
    assert g.number_of_edges() == 17
    for a, b, data in g.edges(data=True):
        c = data["crease"]
        assert set(cp.crease_panels[c].tolist()) == {a, b} and data["kind"] == cp.kinds[c]
    assert g.nodes[0]["id"] == "P000"
    with pytest.raises(Exception):  # noqa: B017  networkx frozen graph refuses edits
        g.add_edge(0, 5)


def test_immutable_arrays_and_replace():
    cp = _l_shape()
    with pytest.raises(ValueError):
        cp.vertices[0, 0] = 5.0
    with pytest.raises(ValueError):
        cp.creases[0, 0] = 1
    with pytest.raises(AttributeError, match="immutable"):
        cp.name = "other"
    moved = cp.replace(vertices=np.asarray(cp.vertices) * 2.0, name="scaled")
    assert moved.name == "scaled" and cp.name == ""
    assert sum(p.area for p in moved.panels) == pytest.approx(4 * 400.0)
    with pytest.raises(PatternError):
        cp.replace(kinds=["valley"] * len(L_C))


def test_deterministic_numbering():
    a = miura_ori(12.0, 9.0, 50.0, 5, 4)
    b = miura_ori(12.0, 9.0, 50.0, 5, 4)
    assert [p.loop for p in a.panels] == [p.loop for p in b.panels]
    assert np.array_equal(a.crease_panels, b.crease_panels)


def test_loop_measures_match_single_polygon_functions():
    rng = np.random.default_rng(7)
    polys = []
    for k in (3, 5, 8):
        ang = np.sort(rng.uniform(0, 2 * np.pi, k))
        r = rng.uniform(1, 3, k)
        polys.append(np.stack([r * np.cos(ang), r * np.sin(ang)], 1) + rng.uniform(-50, 50, 2))
    verts = np.concatenate(polys)
    offsets = np.cumsum([0] + [len(p) for p in polys])
    area, cen, _ = loop_measures(verts, offsets, np.arange(len(verts)), angle_tol=1e-9)
    for q, p in enumerate(polys):
        assert area[q] == pytest.approx(polygon_area(p), rel=1e-12)
        assert cen[q] == pytest.approx(polygon_centroid(p), rel=1e-12)


def test_grid_broad_phase_equals_sweep():
    rng = np.random.default_rng(3)
    a = rng.uniform(0, 100, (2000, 2))
    b = a + rng.normal(0, 2, (2000, 2))
    b[:4] = a[:4] + rng.uniform(-90, 90, (4, 2))  # a few long segments
    lo, hi = np.minimum(a, b) - 0.1, np.maximum(a, b) + 0.1
    grid = segment_candidate_pairs(a, b, pad=0.1)
    sweep = _sweep_pairs(lo, hi)
    assert set(map(tuple, grid.tolist())) == set(map(tuple, sweep.tolist()))
    assert len(grid) == len(set(map(tuple, grid.tolist())))


def test_angle_tolerance_decides_convexity():
    # a pentagon with a reflex corner turning by 4e-6 rad is convex only with a looser angle tolerance
    eps = 1e-6 * 10.0
    v = [[0, 0], [10, 0], [10, 10], [5, 10 - eps], [0, 10]]
    c = [[0, 1], [1, 2], [2, 3], [3, 4], [4, 0]]
    assert not CreasePattern(v, c, ["border"] * 5).panels[0].convex
    assert CreasePattern(v, c, ["border"] * 5, tol=Tolerances(angle=1e-4)).panels[0].convex


def test_empty_pattern_finding():
    cp = CreasePattern(np.zeros((0, 2)), np.zeros((0, 2), dtype=int), [], validate=False)
    assert [f.kind for f in cp.problems()] == ["empty"]
