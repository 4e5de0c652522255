"""Spiral layouts checked against standard mathematics and published folding theorems.

Sources named beside each check:
- Logarithmic spiral facts (standard calculus; e.g. Zwillinger (ed.), *CRC Standard Mathematical
  Tables and Formulae*, "spirals"): the tangent meets the radius at a constant angle psi with
  cot psi = b, and the arc length from the pole is s = r sqrt(1 + b^2) / b.
- Kawasaki 1989 (Kawasaki-Justin theorem): an even-degree vertex folds flat iff the alternating
  sum of its sector angles is zero.
- Maekawa-Justin theorem: #M - #V = +-2 at every flat-folded vertex.
- Similarity z -> lambda e^(i delta) z maps log spirals with b = ln(lambda) / delta onto
  themselves (standard complex analysis: the spiral is a line in log-polar coordinates).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import quad

from thickpanel.foldability import check_foldability
from thickpanel.layouts.assignment import layout_info
from thickpanel.layouts.spiral import log_spiral_grid, spiral_radial, spiral_rings
from thickpanel.layouts.spiral_lattice import b_from_k, k_from_b, pitch_from_b, spiral_arc_length


# ---------------------------------------------------------------------------- spiral facts
@pytest.mark.parametrize("b", [0.1, 0.5, 1.0, 3.7])
def test_tangent_radius_angle_cot_psi_equals_b(b):
    # CRC Standard Mathematical Tables (spirals): r = a e^(b theta) has cot(psi) = b, psi the
    # angle between tangent and radius vector. Measured here on the curve by finite differences.
    a = 2.0
    for theta in (-1.0, 0.3, 2.5):
        eps = 1e-6
        p = lambda t: a * np.exp(b * t) * np.array([np.cos(t), np.sin(t)])  # noqa: E731
        tangent = (p(theta + eps) - p(theta - eps)) / (2 * eps)
        radius = p(theta)
        cos_psi = tangent @ radius / (np.linalg.norm(tangent) * np.linalg.norm(radius))
        psi = math.acos(cos_psi)
        assert 1.0 / math.tan(psi) == pytest.approx(b, rel=1e-7)
        # our pitch angle is the complement of psi (angle between tangent and circle)
        assert pitch_from_b(b) == pytest.approx(math.pi / 2 - psi, abs=1e-7)


@pytest.mark.parametrize("b", [0.2, 1.0, 2.5])
def test_arc_length_closed_form_against_quadrature(b):
    # CRC tables: s(pole -> r) = r sqrt(1 + b^2) / b; checked by numerical integration of
    # |dz/dtheta| = a e^(b theta) sqrt(1 + b^2) from a point where r is negligible.
    a, theta1 = 1.5, 1.2
    r1 = a * math.exp(b * theta1)
    theta0 = theta1 - 60.0 / b  # r(theta0) / r1 = e^-60
    s, _ = quad(lambda t: a * math.exp(b * t) * math.sqrt(1 + b * b), theta0, theta1, epsabs=1e-13, epsrel=1e-13)
    assert spiral_arc_length(r1, b) == pytest.approx(s, rel=1e-10)


@pytest.mark.parametrize("k", [0.1, 0.5, 0.9, 0.99])
def test_curled_spoke_b_from_k(k):
    # Derived from the CRC arc length: radius/arc length = b / sqrt(1 + b^2) = k  =>
    # b = k / sqrt(1 - k^2). Check the ratio with quadrature, independent of our closed form.
    b = b_from_k(k)
    assert b == pytest.approx(k / math.sqrt(1 - k * k), rel=1e-14)
    assert k_from_b(b) == pytest.approx(k, rel=1e-14)
    r1 = 1.0
    theta0 = -60.0 / b
    s, _ = quad(lambda t: math.exp(b * t) * math.sqrt(1 + b * b), theta0, 0.0, epsabs=1e-14, epsrel=1e-13)
    assert r1 / s == pytest.approx(k, rel=1e-9)


# ---------------------------------------------------------------------------- generated grids
def _cases():
    return [
        ("sym12", lambda: log_spiral_grid(12, 5, 1200.0, assign=0)),
        ("sym8", lambda: log_spiral_grid(8, 4, 300.0, assign=0)),
        ("chiral-b", lambda: log_spiral_grid(12, 5, 1200.0, symmetric=False, b=2.0, assign=0)),
        ("chiral-hub", lambda: log_spiral_grid(10, 4, 800.0, symmetric=False, hub_diameter=400.0, assign=0)),
        ("chiral-k", lambda: log_spiral_grid(16, 6, 1000.0, symmetric=False, k=0.8, assign=0)),
        ("sym-tri", lambda: log_spiral_grid(12, 5, 1200.0, triangulate="short", b=1.5, assign=0)),
        ("rings-tri", lambda: spiral_rings(12, 5, 1200.0, hub_diameter=300.0, pitch_deg=60.0, assign=0)),
        ("radial-tri", lambda: spiral_radial(12, 5, 1200.0, hub_diameter=250.0, assign=0)),
        ("slit", lambda: log_spiral_grid(12, 5, 1200.0, slits=2, assign=0)),
    ]


@pytest.mark.parametrize("name,make", _cases(), ids=[c[0] for c in _cases()])
def test_kawasaki_and_maekawa_at_every_lattice_vertex(name, make):
    # Kawasaki 1989 to 1e-10 rad and Maekawa-Justin (#M - #V = +-2) at every interior vertex
    # except the hub corners, which the layout lists as exempt (a corner cannot satisfy Kawasaki:
    # see the layout docstring), checked with the foundation's checker.
    cp = make()
    info = layout_info(cp)
    rep = check_foldability(cp)
    exempt = set(info.exempt)
    keep = np.array([v not in exempt for v in rep.vertices.tolist()])
    assert keep.sum() > 0 or cp.n_panels < 40
    assert np.all(np.abs(rep.kawasaki[keep]) < 1e-10)
    assert np.all(np.abs(rep.maekawa[keep]) == 2)
    assert np.all(rep.blb_violations[keep] == 0)
    # the exempt vertices are exactly the hub corners still inside the sheet
    assert exempt <= set(rep.vertices.tolist())
    assert info.kawasaki_deviation < 1e-10


def test_symmetric_ring_scale_closed_form():
    # Derived from Kawasaki (1989) at a mirror-symmetric degree-4 vertex: the two outward creases
    # enclose pi/2 + pi/N, giving ring scale = sin(pi/4 + pi/2N) / sin(pi/4 - pi/2N).
    for n in (5, 8, 12, 24):
        cp = log_spiral_grid(n, 3, 500.0, assign="keep")
        lam = layout_info(cp).params["ring_scale"]
        phi = math.pi / n
        assert lam == pytest.approx(math.sin(math.pi / 4 + phi / 2) / math.sin(math.pi / 4 - phi / 2), rel=1e-12)
        # hand value for N = 12: sin 52.5 deg / sin 37.5 deg = 1.30322537... (computed by hand, 4-figure tables)
        if n == 12:
            assert lam == pytest.approx(1.3032, abs=1e-4)


def _interior_quads(cp):
    hub = max(cp.panels, key=lambda p: p.area if len(p.loop) == layout_info(cp).n_arms else -1)
    return [p for p in cp.panels if len(p.loop) == 4 and p.index != hub.index]


def _shape_signature(poly):
    """Angles and side ratios of a quad, as a cyclic sequence starting at its largest angle."""
    k = len(poly)
    e = np.roll(poly, -1, axis=0) - poly
    lens = np.linalg.norm(e, axis=1)
    ang = []
    for i in range(k):
        a = -e[i - 1]
        b = e[i]
        ang.append(math.atan2(a[0] * b[1] - a[1] * b[0], a @ b))
    ang = np.abs(np.array(ang))
    s = int(np.argmax(ang))
    return np.roll(ang, -s), np.roll(lens / lens.sum(), -s)


@pytest.mark.parametrize("make", [lambda: log_spiral_grid(12, 6, 1200.0, assign=0),
                                  lambda: log_spiral_grid(9, 5, 900.0, symmetric=False, b=1.7, assign="keep"),
                                  lambda: spiral_rings(10, 5, 900.0, hub_diameter=200.0, b=2.0, flat_foldable=False,
                                                       triangulate="none")])
def test_all_cells_similar(make):
    # Self-similarity (standard: a similarity preserves angles and length ratios): every full cell
    # of the grid is the image of every other, so angles agree to 1e-9 rad and side ratios too.
    cp = make()
    quads = _interior_quads(cp)
    assert len(quads) >= 2 * layout_info(cp).n_arms
    sigs = [_shape_signature(cp.panel_polygon(p.index)) for p in quads]
    a0, l0 = sigs[0]
    for a, ln in sigs[1:]:
        assert np.max(np.abs(a - a0)) < 1e-9
        assert np.max(np.abs(ln - l0)) < 1e-9


@pytest.mark.parametrize("make", [lambda: log_spiral_grid(12, 6, 1200.0, assign=0),
                                  lambda: log_spiral_grid(9, 5, 900.0, symmetric=False, b=1.7, assign="keep")])
def test_vertex_orbits_lie_on_log_spirals(make):
    # A pattern invariant under z -> lambda e^(i delta) z has vertex orbits on log spirals with
    # b = ln(lambda) / delta (standard; the similarity is a translation in (ln r, theta)).
    cp = make()
    info = layout_info(cp)
    n, rings = info.n_arms, int(info.params["rings"])
    lam, delta = info.params["ring_scale"], math.radians(info.params["twist_deg"])
    b_expected = math.log(lam) / delta
    v = cp.vertices
    for j in (0, n // 3):
        pts = v[[m * n + j for m in range(rings + 1)]]
        r = np.hypot(pts[:, 0], pts[:, 1])
        th = np.unwrap(np.arctan2(pts[:, 1], pts[:, 0]))
        slope = np.diff(np.log(r)) / np.diff(th)
        assert np.allclose(slope, b_expected, rtol=1e-10)
        # ratio of successive radii is the similarity's lambda
        assert np.allclose(r[1:] / r[:-1], lam, rtol=1e-12)
    assert info.params["b"] == pytest.approx(b_expected, rel=1e-12)
