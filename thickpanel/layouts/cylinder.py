"""Twist cylinders: the Kresling-type strip as a flat crease pattern with its seams.

A Kresling cylinder (Kresling 2008; geometry after Guest & Pellegrino 1994, J. Appl. Mech.
61:773) has regular n-gon ends of circumradius R, story height H and relative twist phi between
the ends of a story. Each story is a ring of 2n congruent triangles with sides

    a = 2 R sin(pi / n)                       (polygon edge)
    b = sqrt(H^2 + 4 R^2 sin^2(phi / 2))      (diagonal from bottom vertex j to top vertex j)
    c = sqrt(H^2 + 4 R^2 sin^2(phi / 2 - pi / n))   (bottom j + 1 to top j)

Unrolled, a story is a strip of n parallelograms split by the c diagonals; the two end edges (b
creases) become one hinge line when the strip closes into a tube. They are recorded as a
:class:`~thickpanel.pattern.Seam` per story: ``creases[a, k]`` meets ``creases[b, k]``.

Vertex ``(s, j)`` (row s = 0..stories, column j = 0..n) sits at ``(j a + s x, s y)`` with
``x = (a^2 + b^2 - c^2) / (2 a)``, ``y = sqrt(b^2 - x^2)``; its index is ``s (n + 1) + j``.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from ..errors import PatternError
from ..pattern import CreasePattern, Seam
from ..tolerances import DEFAULT_TOL, Tolerances
from . import register_layout, register_panel_estimate
from .assignment import LayoutInfo, attach_info, choose_assignment
from .spiral import count_param, real_param

__all__ = ["kresling", "kresling_edges"]


def kresling_edges(n: int, radius: float, height: float, twist: float) -> tuple[float, float, float]:
    """Triangle sides (a, b, c) in mm of a Kresling story (Guest & Pellegrino 1994).

    Parameters
    ----------
    n : polygon sides; radius : R, mm; height : H, mm; twist : phi, rad.
    """
    a = 2.0 * radius * math.sin(math.pi / n)
    b = math.sqrt(height**2 + 4.0 * radius**2 * math.sin(twist / 2.0) ** 2)
    c = math.sqrt(height**2 + 4.0 * radius**2 * math.sin(twist / 2.0 - math.pi / n) ** 2)
    return a, b, c


def kresling(
    sides: int = 6,
    radius: float = 50.0,
    height: float = 40.0,
    twist_deg: float = 40.0,
    stories: int = 1,
    *,
    seam_kind: str = "valley",
    assign: Any = "keep",
    name: str = "",
    tol: Tolerances = DEFAULT_TOL,
) -> CreasePattern:
    """Flat crease pattern of a Kresling-type twist cylinder, with one seam per story.

    Parameters
    ----------
    sides : int, n >= 3, polygon sides of the ends.
    radius : float, mm, circumradius R of the end polygons.
    height : float, mm, > 0, height H of one story in the deployed tube.
    twist_deg : float, deg, relative rotation phi of a story's ends, strictly between 0 and 180.
    stories : int >= 1
    seam_kind : ``mountain`` or ``valley``; the b diagonals (and the seams) take this kind.
    assign : ``"keep"`` (b diagonals ``seam_kind``, c diagonals and polygon rings the other kind;
        common practice for Kresling folding), or as
        :func:`~thickpanel.layouts.assignment.choose_assignment`.
    name : str
    tol : Tolerances

    Returns
    -------
    CreasePattern with ``stories`` seams; crease classes ``ring``, ``diagonal-b``, ``diagonal-c``.
    """
    n = count_param("sides", sides, 3, 720)
    r = real_param("radius", radius, "mm")
    h = real_param("height", height, "mm")
    phi_deg = real_param("twist_deg", twist_deg, "deg")
    ns = count_param("stories", stories, 1, 10_000)
    if not r > 0:
        raise PatternError(f"radius = {r:g} mm is out of range; allowed: > 0 mm")
    if not h > 0:
        raise PatternError(f"height = {h:g} mm is out of range; allowed: > 0 mm")
    if not 0.0 < phi_deg < 180.0:
        raise PatternError(f"twist_deg = {phi_deg:g} deg is out of range; allowed: strictly between 0 and 180 deg")
    if seam_kind not in ("mountain", "valley"):
        raise PatternError(f"seam_kind = {seam_kind!r}; allowed: mountain, valley")
    other = "mountain" if seam_kind == "valley" else "valley"
    a, b, c = kresling_edges(n, r, h, math.radians(phi_deg))
    x = (a * a + b * b - c * c) / (2.0 * a)
    y = math.sqrt(max(b * b - x * x, 0.0))
    if y < tol.length or min(a, b, c) < tol.length:
        raise PatternError(f"kresling: story height {h:g} mm and twist {phi_deg:g} deg give a degenerate strip")
    s_idx, j_idx = np.meshgrid(np.arange(ns + 1), np.arange(n + 1), indexing="ij")
    verts = np.stack([j_idx.ravel() * a + s_idx.ravel() * x, s_idx.ravel() * y], axis=1)

    def vi(s: int | np.ndarray, j: int | np.ndarray) -> np.ndarray:
        return np.asarray(s * (n + 1) + j)

    cre: list[tuple[int, int]] = []
    kinds: list[str] = []
    labels: list[str] = []
    arm: list[int] = []
    for s in range(ns + 1):  # polygon rings: bottom and top rows are the border
        for j in range(n):
            cre.append((int(vi(s, j)), int(vi(s, j + 1))))
            edge = s in (0, ns)
            kinds.append("border" if edge else other)
            labels.append("border" if edge else "ring")
            arm.append(j)
    seams: list[Seam] = []
    for s in range(ns):
        for j in range(n + 1):  # b diagonals (bottom j -> top j); the end ones are the seam
            cre.append((int(vi(s, j)), int(vi(s + 1, j))))
            end = j in (0, n)
            kinds.append("border" if end else seam_kind)
            labels.append("border" if end else "diagonal-b")
            arm.append(j)
            if j == 0:
                first = len(cre) - 1
            if j == n:
                seams.append(Seam(first, len(cre) - 1, kind=seam_kind))
        for j in range(n):  # c diagonals (bottom j + 1 -> top j)
            cre.append((int(vi(s, j + 1)), int(vi(s + 1, j))))
            kinds.append(other)
            labels.append("diagonal-c")
            arm.append(j)
    label = name or f"kresling n={n} R={r:g}mm H={h:g}mm phi={phi_deg:g}deg x{ns}"
    cp = CreasePattern(verts, np.array(cre), kinds, seams=seams, name=label, tol=tol)
    params = {"edge_a": a, "edge_b": b, "edge_c": c, "sides": float(n), "radius": r, "height": h, "twist_deg": phi_deg}
    info = LayoutInfo(tuple(labels), np.array(arm, dtype=np.int64), n, params)
    attach_info(cp, info)
    return choose_assignment(cp, assign, tol=tol)


register_layout("kresling", kresling)
register_panel_estimate("kresling", lambda *, sides=6, stories=1, **_: 2 * int(sides) * int(stories))
