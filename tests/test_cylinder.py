"""Kresling-type twist cylinder strip: edge lengths, seams, bad input.

Edge lengths: Guest & Pellegrino 1994, "The folding of triangulated cylinders, Part I", J. Appl.
Mech. 61:773 (geometry of a story with n-gon ends of circumradius R, height H, twist phi), as
restated in ../shared/REFERENCES.md section 6: a = 2R sin(pi/n), b = sqrt(H^2 + 4R^2 sin^2(phi/2)),
c = sqrt(H^2 + 4R^2 sin^2(phi/2 - pi/n)).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

from thickpanel import PatternError
from thickpanel.foldability import check_foldability
from thickpanel.layouts import make_layout
from thickpanel.layouts.assignment import layout_info
from thickpanel.layouts.cylinder import kresling


def _tube_points(n, r, h, phi):
    """3D vertex positions of one story, independent of the code under test."""
    j = np.arange(n)
    bot = np.stack([r * np.cos(2 * np.pi * j / n), r * np.sin(2 * np.pi * j / n), 0 * j], 1)
    top = np.stack([r * np.cos(2 * np.pi * j / n + phi), r * np.sin(2 * np.pi * j / n + phi), h + 0 * j], 1)
    return bot, top


@pytest.mark.parametrize("n,r,h,phi_deg", [(6, 50.0, 40.0, 40.0), (8, 80.0, 25.0, 60.0), (5, 30.0, 60.0, 20.0)])
def test_edge_lengths_match_guest_pellegrino(n, r, h, phi_deg):
    cp = kresling(n, r, h, phi_deg, stories=2)
    phi = math.radians(phi_deg)
    a = 2 * r * math.sin(math.pi / n)  # Guest & Pellegrino 1994
    b = math.sqrt(h * h + 4 * r * r * math.sin(phi / 2) ** 2)
    c = math.sqrt(h * h + 4 * r * r * math.sin(phi / 2 - math.pi / n) ** 2)
    # the same lengths measured on the 3D tube built here from first principles
    bot, top = _tube_points(n, r, h, phi)
    assert np.linalg.norm(bot[1] - bot[0]) == pytest.approx(a, rel=1e-12)
    assert np.linalg.norm(top[0] - bot[0]) == pytest.approx(b, rel=1e-12)
    assert np.linalg.norm(top[0] - bot[1]) == pytest.approx(c, rel=1e-12)
    labels = layout_info(cp).labels
    lengths = cp.crease_lengths
    for lab, want in (("ring", a), ("diagonal-b", b), ("diagonal-c", c)):
        sel = np.array([x == lab for x in labels])
        assert sel.sum() > 0
        assert np.allclose(lengths[sel], want, rtol=1e-12)
    # every panel is a triangle with sides (a, b, c): area by Heron's formula
    s = (a + b + c) / 2
    heron = math.sqrt(s * (s - a) * (s - b) * (s - c))
    assert cp.n_panels == 2 * n * 2
    assert all(p.area == pytest.approx(heron, rel=1e-10) for p in cp.panels)


def test_seams_join_end_edges_and_are_kept():
    cp = make_layout("kresling", sides=6, radius=50.0, height=40.0, twist_deg=40.0, stories=3)
    assert len(cp.seams) == 3
    v, c = cp.vertices, cp.creases
    for s in cp.seams:
        assert cp.kinds[s.a] == cp.kinds[s.b] == "border"
        # creases[a, k] meets creases[b, k]: the end edges are translates by n a along x
        d0 = v[c[s.b, 0]] - v[c[s.a, 0]]
        d1 = v[c[s.b, 1]] - v[c[s.a, 1]]
        assert np.allclose(d0, d1) and d0[1] == pytest.approx(0.0, abs=1e-12)
        assert d0[0] == pytest.approx(6 * 2 * 50.0 * math.sin(math.pi / 6), rel=1e-12)
    # the seam adds a panel-graph edge per story (the closed tube is one ring of panels)
    plain = cp.replace(seams=())
    assert cp.panel_graph.number_of_edges() == plain.panel_graph.number_of_edges() + 3
    # an assignment keeps the seams
    out = kresling(6, 50.0, 40.0, 40.0, stories=3, assign=0)
    assert out.seams == cp.seams


def test_strip_vertices_fold_flat_locally():
    # Kawasaki (1989) at the interior strip vertices: opposite creases are parallel in the flat
    # strip, so the alternating sector sum is zero; Maekawa holds for the default kinds.
    cp = kresling(7, 40.0, 30.0, 35.0, stories=3)
    rep = check_foldability(cp)
    assert len(rep.vertices) == 6 * 2
    assert np.all(np.abs(rep.kawasaki) < 1e-10)
    assert rep.ok


@pytest.mark.parametrize(
    "kwargs,match",
    [
        (dict(sides=2), r"sides = 2 is out of range"),
        (dict(radius=0.0), r"radius = 0 mm is out of range"),
        (dict(height=-1.0), r"height = -1 mm is out of range"),
        (dict(twist_deg=0.0), r"twist_deg = 0 deg is out of range"),
        (dict(twist_deg=180.0), r"twist_deg = 180 deg is out of range"),
        (dict(stories=0), r"stories = 0 is out of range"),
        (dict(seam_kind="border"), r"seam_kind = 'border'"),
    ],
)
def test_bad_input(kwargs, match):
    with pytest.raises(PatternError, match=match):
        kresling(**kwargs)
