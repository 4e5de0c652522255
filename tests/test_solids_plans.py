"""A plain thick plan for solids/hinge/export tests (stand-in until the thickness methods land).

``plain_plan`` extrudes every panel from z = 0 to t, insets each folding-crease edge by gap / 2
and puts a hinge line on the crease, at the top face (``face="top"``), the mid plane or z = 0.
"""

from __future__ import annotations

import math

import numpy as np

from thickpanel.pattern import CreasePattern
from thickpanel.thickness.plan import CutPlane, HingeLine, Slab, ThickPlan

FACE_Z = {"top": 1.0, "mid": 0.5, "reference": 0.0}


def inset_polygon(poly: np.ndarray, offsets: np.ndarray) -> np.ndarray:
    """Move edge k of a CCW polygon inwards by offsets[k] (mm) and re-intersect the lines."""
    k = len(poly)
    lines = []
    for i in range(k):
        a, b = poly[i], poly[(i + 1) % k]
        d = (b - a) / np.linalg.norm(b - a)
        n = np.array([-d[1], d[0]])  # inward for CCW
        lines.append((a + offsets[i] * n, d))
    out = []
    for i in range(k):
        (p0, d0), (p1, d1) = lines[i - 1], lines[i]
        m = np.column_stack([d0, -d1])
        t = np.linalg.solve(m, p1 - p0)
        out.append(p0 + t[0] * d0)
    return np.array(out)


def plain_plan(pattern: CreasePattern, t: float, gap: float, *, face: str = "top",
               clear: float = 2.0, material: str = "", cuts=None) -> ThickPlan:
    """Slabs z = 0..t inset by gap / 2 along folding creases; hinge lines on those creases."""
    fold = pattern.folding
    slabs = []
    for p in pattern.panels:
        poly = pattern.panel_polygon(p.index)
        off = np.array([0.5 * gap if fold[e] else 0.0 for e in p.edges])
        c = tuple(cuts(p.index)) if cuts else ()
        slabs.append(Slab(p.index, tuple(map(tuple, inset_polygon(poly, off))), 0.0, t, c,
                          (), material))
    hinges = []
    v = pattern.vertices
    cp = pattern.crease_panels
    for c in np.flatnonzero(fold):
        a, b = v[pattern.creases[c, 0]], v[pattern.creases[c, 1]]
        L = float(np.linalg.norm(b - a))
        d = (b - a) / L
        hinges.append(HingeLine(int(c), (int(cp[c, 0]), int(cp[c, 1])),
                                (float(a[0]), float(a[1]), FACE_Z[face] * t),
                                (float(d[0]), float(d[1]), 0.0), face, gap,
                                (clear + 0.5 * gap, L - clear - 0.5 * gap), (-math.pi, math.pi)))
    return ThickPlan(pattern, "plain", tuple(slabs), tuple(hinges), math.pi)


def two_panels(w: float = 40.0, h: float = 30.0, target: float = math.pi / 2) -> CreasePattern:
    """Two w x h rectangles side by side, one valley crease between them (crease 6, x = w)."""
    return CreasePattern(
        [[0, 0], [w, 0], [2 * w, 0], [0, h], [w, h], [2 * w, h]],
        [[0, 1], [1, 2], [2, 5], [5, 4], [4, 3], [3, 0], [1, 4]],
        ["border"] * 6 + ["valley"], [math.nan] * 6 + [target],
    )


def bevel_cut(x0: float, t: float, angle: float) -> CutPlane:
    """Bevel removing x > x0 + (t - z) tan(angle) ... i.e. the top edge at x0 leans in."""
    n = np.array([math.cos(angle), 0.0, math.sin(angle)])
    # plane through (x0, *, 0) tilted so it passes (x0 - t tan(angle), *, t)
    return CutPlane(tuple(map(float, n)), float(n[0] * x0), "bevel")


def test_inset_polygon_area():
    # Inset of a 40 x 30 rectangle by 1 mm on one side: area 39 x 30 (plain arithmetic).
    poly = np.array([[0, 0], [40, 0], [40, 30], [0, 30]], float)
    out = inset_polygon(poly, np.array([0.0, 1.0, 0.0, 0.0]))
    from thickpanel.geometry2d import polygon_area
    assert abs(polygon_area(out) - 39 * 30) < 1e-9
