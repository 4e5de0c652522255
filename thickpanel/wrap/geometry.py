"""Hub geometry shared by the wrapped-hub constructions: the regular m-gon hub, its edge frames and
planar helpers. Pure numpy; millimetres and radians.

Notation (``docs/hub-wrap.md``): ``m`` hub sides, ``R_h`` circumradius, ``s = 2 R_h sin(pi/m)`` side,
``a = R_h cos(pi/m)`` inradius. Hub vertices counter-clockwise ``P_i = R_h (cos th_i, sin th_i)`` with
``th_i = pi/2 + 2 pi i/m``; unit edge direction ``e_i = (P_{i+1} - P_i)/s``; outward edge normal
``n_i = (e_i.y, -e_i.x)``; radial unit ``u_i = P_i / R_h``. Every hub edge line is ``p . n_i = a``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..errors import PatternError
from ..poses import rigid_fit
from ..typing import FloatArray

__all__ = ["WrapSpec", "Hub", "clip_halfplane", "kabsch_pose", "polygon_area"]


@dataclass(frozen=True)
class WrapSpec:
    """Parameters of a wrapped-hub sheet (all lengths in mm).

    Attributes
    ----------
    sides : int
        Hub sides m (= gores = arms), at least 3.
    rings : int
        Accordion rings r per gore, at least 1.
    ring_height : float, mm
        Radial width of one ring in the zero-thickness sheet = stowed height h of a layer.
    hub_circumradius : float, mm
        R_h.
    wrap : str
        ``ccw`` (arms wrap clockwise round a counter-clockwise hub, the construction's own sense) or
        ``cw`` (the mirror image).
    """

    sides: int
    rings: int
    ring_height: float
    hub_circumradius: float
    wrap: str = "ccw"

    def __post_init__(self) -> None:
        if isinstance(self.sides, bool) or not isinstance(self.sides, int) or self.sides < 3:
            raise PatternError(f"hub-wrap: sides = {self.sides!r} must be a whole number >= 3")
        if isinstance(self.rings, bool) or not isinstance(self.rings, int) or self.rings < 1:
            raise PatternError(f"hub-wrap: rings = {self.rings!r} must be a whole number >= 1")
        for key in ("ring_height", "hub_circumradius"):
            v = getattr(self, key)
            if isinstance(v, bool) or not isinstance(v, int | float) or not math.isfinite(v) or v <= 0:
                raise PatternError(f"hub-wrap: {key} = {v!r} must be a finite length > 0 mm")
        if self.wrap not in ("ccw", "cw"):
            raise PatternError(f"hub-wrap: wrap = {self.wrap!r} must be 'ccw' or 'cw'")


class Hub:
    """The regular hub polygon and its per-edge frames (vectorised over i = 0..m-1)."""

    def __init__(self, m: int, circumradius: float) -> None:
        self.m = m
        self.R = float(circumradius)
        self.half = math.pi / m
        self.s = 2.0 * self.R * math.sin(self.half)
        self.a = self.R * math.cos(self.half)
        self.tan = math.tan(self.half)
        th = math.pi / 2 + 2 * math.pi * np.arange(m) / m
        self.P = self.R * np.column_stack([np.cos(th), np.sin(th)])
        e = np.roll(self.P, -1, axis=0) - self.P
        self.e = e / np.linalg.norm(e, axis=1)[:, None]
        self.n = np.column_stack([self.e[:, 1], -self.e[:, 0]])
        self.u = self.P / self.R

    def idx(self, i: int) -> int:
        """Index modulo m."""
        return i % self.m

    def local_to_flat(self, i: int, x: FloatArray, y: FloatArray) -> FloatArray:
        """Gore-``i`` coordinates (x along e_i from P_i, y along n_i) -> flat sheet (k, 2)."""
        i = self.idx(i)
        return self.P[i] + np.outer(x, self.e[i]) + np.outer(y, self.n[i])

    def flat_to_local(self, i: int, q: FloatArray) -> tuple[FloatArray, FloatArray]:
        """Flat sheet points (k, 2) -> gore-``i`` coordinates (x, y)."""
        i = self.idx(i)
        d = np.asarray(q, dtype=float) - self.P[i]
        return d @ self.e[i], d @ self.n[i]

    def reflect(self, i: int, q: FloatArray) -> FloatArray:
        """Mirror points (k, 2) in the radial line through P_i."""
        i = self.idx(i)
        d = np.asarray(q, dtype=float) - self.P[i]
        u = self.u[i]
        return self.P[i] + 2.0 * np.outer(d @ u, u) - d

    def line_meet(self, f1: int, c1: float, f2: int, c2: float) -> FloatArray:
        """Point with ``p . n_f1 = a + c1`` and ``p . n_f2 = a + c2`` (two offset edge lines)."""
        a = np.array([self.n[self.idx(f1)], self.n[self.idx(f2)]])
        return np.linalg.solve(a, np.array([self.a + c1, self.a + c2]))


def clip_halfplane(poly: FloatArray, normal: FloatArray, offset: float) -> FloatArray:
    """Part of a convex polygon (k, 2) where ``normal . p <= offset`` (Sutherland-Hodgman)."""
    poly = np.asarray(poly, dtype=float)
    if len(poly) == 0:
        return poly
    d = poly @ np.asarray(normal, dtype=float) - offset
    out: list[FloatArray] = []
    k = len(poly)
    for j in range(k):
        p, q = poly[j], poly[(j + 1) % k]
        dp, dq = d[j], d[(j + 1) % k]
        if dp <= 0:
            out.append(p)
        if (dp < 0 < dq) or (dq < 0 < dp):
            out.append(p + (q - p) * (dp / (dp - dq)))
    return np.array(out).reshape(-1, 2)


def polygon_area(poly: FloatArray) -> float:
    """Signed area (mm^2) of a polygon (k, 2), positive counter-clockwise."""
    p = np.asarray(poly, dtype=float)
    if len(p) < 3:
        return 0.0
    x, y = p[:, 0], p[:, 1]
    return 0.5 * float(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1)))


def kabsch_pose(flat: FloatArray, placed: FloatArray) -> tuple[FloatArray, float]:
    """Rigid 4x4 transform taking flat points (k, 2) at z = 0 onto placed points (k, 3).

    Returns the pose and the largest residual (mm). The points of a planar set always admit a proper
    rotation (the normal's sign is free), so a reflected planar image is fitted exactly.
    """
    a = np.column_stack([flat, np.zeros(len(flat))])
    b = np.asarray(placed, dtype=float)
    pose = rigid_fit(a, b)
    r = pose[:3, :3]
    res = float(np.abs(a @ r.T + pose[:3, 3] - b).max())
    return pose, res
