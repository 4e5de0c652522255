"""Spiral layouts: parameters, bad input, slits, triangulation, registry, tolerances.

Number checks name their source: closed forms are derived from Kawasaki 1989 (alternating sector
sum) or from standard log-spiral calculus (CRC Standard Mathematical Tables); panel and crease
counts are counted by hand from the lattice description in the module docstring.
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from thickpanel import PatternError, Tolerances
from thickpanel.foldability import check_foldability
from thickpanel.layouts import available_layouts, make_layout
from thickpanel.layouts.assignment import layout_info
from thickpanel.layouts.spiral import log_spiral_grid, spiral_radial, spiral_rings


def test_registry_names():
    names = available_layouts()
    for n in ("log-spiral", "spiral-rings", "spiral-radial", "kresling"):
        assert n in names
    cp = make_layout("log-spiral", arms=8, rings=3, outer_diameter=400.0, assign=0)
    assert cp.n_panels == 8 * (3 + 1) + 1


def test_counts_and_diameters():
    # hand count: N (rings - 1) kites + 2 N triangles + 1 hub; (rings + 1) N vertices;
    # 2 N rings spiral creases + N hub chords + N border chords
    n, m, d = 12, 5, 1200.0
    cp = log_spiral_grid(n, m, d, assign=0)
    assert cp.n_vertices == (m + 1) * n
    assert cp.n_creases == 2 * n * m + 2 * n
    assert cp.n_panels == n * (m + 1) + 1
    r = np.hypot(*cp.vertices.T)
    assert r.max() == pytest.approx(d / 2, rel=1e-12)
    info = layout_info(cp)
    assert r.min() == pytest.approx(info.params["hub_diameter"] / 2, rel=1e-12)
    # hub is one regular N-gon panel of circumradius hub/2: area = N/2 R^2 sin(2 pi / N) (standard)
    hub = max(cp.panels, key=lambda p: p.area if len(p.loop) == n else -1)
    rh = info.params["hub_diameter"] / 2
    assert hub.area == pytest.approx(n / 2 * rh * rh * math.sin(2 * math.pi / n), rel=1e-12)


def test_triangulated_counts():
    cp = log_spiral_grid(24, 20, 2000.0, triangulate="short", b=3.0, assign=0)
    # two triangles per full cell (N (rings - 1)), one per boundary triangle (2 N), plus the hub
    assert cp.n_panels == 24 * 19 * 2 + 2 * 24 + 1
    assert all(len(p.loop) == 3 for p in cp.panels if len(p.loop) != 24)


def test_chiral_solution_hits_requested_b_and_is_flat_foldable():
    cp = log_spiral_grid(12, 5, 1200.0, symmetric=False, b=2.0, assign=0)
    info = layout_info(cp)
    assert info.params["b"] == pytest.approx(2.0, rel=1e-12)
    assert info.params["b2"] < 0  # the second family winds the other way
    assert info.params["lattice_residual"] == pytest.approx(0.0, abs=1e-12)
    # pitch_deg and k give the same lattice (tan(pitch) = b; b = k / sqrt(1 - k^2), CRC tables)
    cp2 = log_spiral_grid(12, 5, 1200.0, symmetric=False, pitch_deg=math.degrees(math.atan(2.0)), assign=0)
    cp3 = log_spiral_grid(12, 5, 1200.0, symmetric=False, k=2.0 / math.sqrt(5.0), assign=0)
    assert np.allclose(cp2.vertices, cp.vertices, atol=1e-9)
    assert np.allclose(cp3.vertices, cp.vertices, atol=1e-9)


def test_overdetermined_symmetric_reports_nearest_value_that_works():
    with pytest.raises(PatternError, match=r"hub_diameter .*nearest feasible hub_diameter = ([0-9.]+)") as ei:
        log_spiral_grid(12, 5, 1200.0, hub_diameter=200.0)
    near = float(ei.value.args[0].split("nearest feasible hub_diameter = ")[1].split()[0].rstrip(";"))
    cp = log_spiral_grid(12, 5, 1200.0, hub_diameter=near, tol=Tolerances(kawasaki=1e-5), assign=0)
    assert cp.n_panels == 12 * 6 + 1


def test_infeasible_chiral_range_is_reported():
    with pytest.raises(PatternError, match=r"hub_diameter = 200 .*span .*nearest feasible hub_diameter"):
        log_spiral_grid(12, 5, 1200.0, symmetric=False, hub_diameter=200.0)


def test_flat_foldable_false_keeps_values_and_reports_deviation():
    cp = log_spiral_grid(12, 5, 1200.0, hub_diameter=200.0, flat_foldable=False, assign="keep")
    info = layout_info(cp)
    assert info.params["hub_diameter"] == pytest.approx(200.0, rel=1e-12)
    assert info.kawasaki_deviation > 1e-3
    rep = check_foldability(cp)
    assert not rep.ok


def test_kawasaki_tolerance_changes_the_result():
    # a hub slightly off the solved value: refused at the default tolerance, accepted at a loose one
    exact = layout_info(log_spiral_grid(12, 5, 1200.0, assign=0)).params["hub_diameter"]
    with pytest.raises(PatternError):
        log_spiral_grid(12, 5, 1200.0, hub_diameter=exact * (1 + 1e-6))
    cp = log_spiral_grid(12, 5, 1200.0, hub_diameter=exact * (1 + 1e-6), tol=Tolerances(kawasaki=1e-3), assign=0)
    assert layout_info(cp).kawasaki_deviation < 1e-3


@pytest.mark.parametrize("slits", [1, 2, 3, 12])
def test_slits_are_cut_chains_from_hub_to_border(slits):
    n, m = 12, 5
    cp = log_spiral_grid(n, m, 1200.0, slits=slits, assign=0)
    cut = [k for k, kind in enumerate(cp.kinds) if kind == "cut"]
    assert len(cut) == slits * m
    radii = np.hypot(*cp.vertices.T)
    ends = cp.creases[cut].reshape(-1)
    assert np.isclose(radii[ends].min(), radii.min()) and np.isclose(radii[ends].max(), 600.0)
    # slit vertices count as border; the sheet stays one piece through the hub
    import networkx as nx

    assert set(ends.tolist()) <= set(cp.border_vertices.tolist())
    assert nx.is_connected(cp.panel_graph)


def test_single_family_quads_are_not_flat_foldable_but_triangles_are():
    # Kawasaki (1989) at a spiral/ring vertex forces zero twist: quads are refused
    with pytest.raises(PatternError, match="no flat-foldable lattice"):
        spiral_rings(12, 4, 800.0, hub_diameter=200.0, triangulate="none")
    with pytest.raises(PatternError, match="no flat-foldable lattice"):
        spiral_radial(12, 4, 800.0, triangulate="none")
    cp = spiral_rings(12, 4, 800.0, hub_diameter=200.0, pitch_deg=55.0, assign=0)
    assert layout_info(cp).params["pitch_deg"] == pytest.approx(55.0, rel=1e-12)
    cp = spiral_radial(12, 4, 800.0, b=0.6, assign=0)
    assert layout_info(cp).params["b"] == pytest.approx(0.6, rel=1e-12)
    quads = spiral_rings(12, 4, 800.0, hub_diameter=200.0, b=1.0, triangulate="none", flat_foldable=False,
                         assign="keep")
    assert quads.n_panels == 12 * 4 + 1


@pytest.mark.parametrize(
    "kwargs,match",
    [
        (dict(arms=2), r"arms = 2 is out of range; allowed: 3\.\."),
        (dict(rings=0), r"rings = 0 is out of range; allowed: 1\.\."),
        (dict(hub_diameter=1300.0, symmetric=False), r"hub_diameter = 1300 mm is out of range"),
        (dict(k=1.0, symmetric=False), r"k = 1 is out of range; allowed: 0 < k < 1"),
        (dict(k=0.0, symmetric=False), r"k = 0 is out of range"),
        (dict(pitch_deg=0.0, symmetric=False), r"pitch_deg = 0 deg is out of range"),
        (dict(pitch_deg=90.0, symmetric=False), r"pitch_deg = 90 deg is out of range"),
        (dict(b=-1.0, symmetric=False), r"b = -1 is out of range"),
        (dict(outer_diameter=-5.0), r"outer_diameter = -5 mm is out of range"),
        (dict(slits=13), r"slits = 13 is out of range; allowed: 0\.\.12"),
        (dict(triangulate="diag"), r"triangulate = 'diag'; allowed: none, short, long"),
        (dict(b=1.0, k=0.5, symmetric=False), r"only one of b, pitch_deg and k"),
        (dict(hub_diameter=100.0, ring_scale=1.2, symmetric=False), r"not both"),
        (dict(symmetric=False), r"too few parameters"),
        (dict(arms="12"), r"arms must be a whole number"),
        (dict(outer_diameter=1e-9, rings=3), r"below the length tolerance"),
    ],
)
def test_bad_input_names_parameter_value_and_range(kwargs, match):
    args = dict(arms=12, rings=5, outer_diameter=1200.0)
    args.update(kwargs)
    with pytest.raises(PatternError, match=match):
        log_spiral_grid(**args)


def test_long_diagonal_over_two_rings_is_refused_when_flat_foldable():
    with pytest.raises(PatternError, match="odd degree"):
        log_spiral_grid(12, 5, 1200.0, triangulate="long", b=1.0)
    cp = log_spiral_grid(12, 5, 1200.0, triangulate="long", b=1.0, flat_foldable=False, assign="keep")
    assert cp.n_panels > 12 * 5


def test_deterministic():
    a = log_spiral_grid(10, 4, 500.0, symmetric=False, b=1.3, slits=2, assign=0)
    b = log_spiral_grid(10, 4, 500.0, symmetric=False, b=1.3, slits=2, assign=0)
    assert np.array_equal(a.vertices, b.vertices) and a.kinds == b.kinds


def test_solve_tolerance_changes_the_result():
    # tol.solve is the root-solve tolerance: a loose one leaves a visible Kawasaki residual
    tight = layout_info(log_spiral_grid(12, 5, 1200.0, symmetric=False, b=2.0, assign=0))
    loose = layout_info(
        log_spiral_grid(12, 5, 1200.0, symmetric=False, b=2.0, assign=0, tol=Tolerances(solve=1e-3, kawasaki=1e-1))
    )
    assert abs(tight.params["lattice_residual"]) < 1e-12
    assert abs(loose.params["lattice_residual"]) > 1e-8


def test_flat_foldable_false_logs_the_deviation(caplog):
    import logging

    with caplog.at_level(logging.INFO, logger="thickpanel"):
        log_spiral_grid(12, 5, 1200.0, hub_diameter=200.0, flat_foldable=False, assign="keep")
    assert any("largest Kawasaki deviation" in r.getMessage() for r in caplog.records)
