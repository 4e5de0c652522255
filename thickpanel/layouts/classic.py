"""Classic layouts: Miura-ori, square twist and accordion strip.

These are small, well-studied patterns used as references by the checks and the kinematics, and
for general use. Every generator validates its parameters and raises
:class:`~thickpanel.errors.PatternError` with the value and the allowed range.

Miura-ori conventions (after Schenk & Guest 2013, PNAS 110(9):3276, doi:10.1073/pnas.1217998110)
-----------------------------------------------------------------------------------------------
The sheet is tiled by congruent parallelograms with sides ``a`` and ``b`` and acute angle
``gamma``. The ``a`` sides lie along +x on the *straight* creases (the lines y = j S); the ``b``
sides run from row to row with components (+-V, S) and form the *zigzag* creases (one zigzag
polyline per column i). In the flat state (facet tilt theta = 0)::

    L = a,   S = b sin(gamma),   V = b cos(gamma)

so the flat unit cell of four parallelograms measures 2L x 2S and the zigzag amplitude is V.
Vertex ``(i, j)`` (column i = 0..nx, row j = 0..ny) sits at ``(i a + V (j mod 2), j S)`` and has
index ``j (nx + 1) + i``.

Standard mountain/valley assignment: each zigzag polyline has one kind, alternating from column to
column (column i is a mountain for even i, a valley for odd i); along each straight crease the kind
alternates from segment to segment and flips from row to row. At every interior vertex the crease
between the two small sectors (gamma, gamma) is the one whose kind differs from the other three,
as the big-little-big lemma requires (Demaine & O'Rourke 2007, *Geometric Folding Algorithms*).
"""

from __future__ import annotations

import math
import numbers

import numpy as np

from ..errors import PatternError
from ..pattern import CreasePattern
from ..tolerances import DEFAULT_TOL, Tolerances
from . import register_layout, register_panel_estimate

__all__ = ["miura_ori", "square_twist", "accordion", "SQUARE_TWIST_ASSIGNMENTS"]

SQUARE_TWIST_ASSIGNMENTS: tuple[str, ...] = ("standard", "two-two")


# ---------------------------------------------------------------------------- validation helpers
def _positive(name: str, value: object) -> float:
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise PatternError(f"{name} must be a number in mm; got {value!r}")
    x = float(value)
    if not (math.isfinite(x) and x > 0):
        raise PatternError(f"{name} = {value!r} mm is out of range; allowed: a finite length > 0 mm")
    return x


def _count(name: str, value: object, lo: int = 1, hi: int = 100_000) -> int:
    if isinstance(value, bool) or not isinstance(value, numbers.Integral):
        raise PatternError(f"{name} must be a whole number in {lo}..{hi}; got {value!r}")
    n = int(value)
    if not (lo <= n <= hi):
        raise PatternError(f"{name} = {n} is out of range; allowed: {lo}..{hi}")
    return n


def _angle_deg(name: str, value: object, lo: float, hi: float) -> float:
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise PatternError(f"{name} must be a number in degrees; got {value!r}")
    x = float(value)
    if not (math.isfinite(x) and lo < x < hi):
        raise PatternError(
            f"{name} = {value!r} deg is out of range; allowed: strictly between {lo:g} and {hi:g} deg"
        )
    return x


def _grid_index(nx: int, i: np.ndarray, j: np.ndarray) -> np.ndarray:
    return j * (nx + 1) + i


# ---------------------------------------------------------------------------- Miura-ori
def miura_ori(
    a: float,
    b: float,
    gamma_deg: float,
    nx: int,
    ny: int,
    *,
    name: str = "",
    tol: Tolerances = DEFAULT_TOL,
) -> CreasePattern:
    """Flat Miura-ori sheet of ``nx`` x ``ny`` parallelogram panels.

    Parameters
    ----------
    a : float, mm
        Parallelogram side along the straight creases (x). Flat half-length of the unit cell L = a.
    b : float, mm
        Parallelogram side along the zigzag creases; flat S = b sin(gamma), V = b cos(gamma).
    gamma_deg : float, degrees
        Acute parallelogram angle, strictly between 0 and 90.
    nx : int
        Panels along x (along the straight creases), 1..2000.
    ny : int
        Panels along y (across the straight creases, along the zigzags), 1..2000.
    name : str
        Pattern name; defaults to ``"miura a x b gamma nx x ny"``.
    tol : Tolerances

    Returns
    -------
    CreasePattern
        ``(nx + 1)(ny + 1)`` vertices, ``nx ny`` panels; border creases around the sheet, mountain
        and valley creases inside with the standard assignment (module docstring).

    Examples
    --------
    >>> cp = miura_ori(20.0, 10.0, 60.0, 4, 4)
    >>> cp.n_panels, len(cp.interior_vertices)
    (16, 9)
    """
    a_ = _positive("a", a)
    b_ = _positive("b", b)
    g = math.radians(_angle_deg("gamma_deg", gamma_deg, 0.0, 90.0))
    nx_ = _count("nx", nx, 1, 2000)
    ny_ = _count("ny", ny, 1, 2000)
    s = b_ * math.sin(g)
    v_off = b_ * math.cos(g)

    jj, ii = np.divmod(np.arange((nx_ + 1) * (ny_ + 1)), nx_ + 1)
    verts = np.stack([ii * a_ + v_off * (jj % 2), jj * s], axis=1).astype(np.float64)

    # straight creases: (i, j) -> (i + 1, j)
    sj, si = np.divmod(np.arange(nx_ * (ny_ + 1)), nx_)
    straight = np.stack([_grid_index(nx_, si, sj), _grid_index(nx_, si + 1, sj)], axis=1)
    # zigzag creases: (i, j) -> (i, j + 1)
    zj, zi = np.divmod(np.arange((nx_ + 1) * ny_), nx_ + 1)
    zigzag = np.stack([_grid_index(nx_, zi, zj), _grid_index(nx_, zi, zj + 1)], axis=1)

    # zigzag column i: mountain (True) for even i. Straight segment (i..i+1, row j) takes the
    # kind of column i + 1 on even rows and of column i on odd rows (see module docstring).
    zig_m = zi % 2 == 0
    col = np.where(sj % 2 == 0, si + 1, si)
    str_m = col % 2 == 0
    str_kind = np.where(str_m, "mountain", "valley").astype(object)
    zig_kind = np.where(zig_m, "mountain", "valley").astype(object)
    str_kind[(sj == 0) | (sj == ny_)] = "border"
    zig_kind[(zi == 0) | (zi == nx_)] = "border"

    creases = np.concatenate([straight, zigzag])
    kinds = [str(k) for k in np.concatenate([str_kind, zig_kind])]
    label = name or f"miura {a_:g}x{b_:g} {float(gamma_deg):g}deg {nx_}x{ny_}"
    return CreasePattern(verts, creases, kinds, name=label, tol=tol)


# ---------------------------------------------------------------------------- square twist
def square_twist(
    side: float,
    twist_deg: float,
    *,
    assignment: str = "standard",
    sheet: float | None = None,
    name: str = "",
    tol: Tolerances = DEFAULT_TOL,
) -> CreasePattern:
    """Square twist cell: a central square rotated by ``twist_deg`` with four pleats.

    Corner ``k`` (k = 0..3, counter-clockwise, corner 0 in the upper-right quadrant) of the central
    square sits at ``R(twist) (side/2) (cos, sin)(45 + 90 k deg) sqrt(2)``. From each corner two
    axis-parallel pleat creases run to the sheet border: corner 0 sends +x and +y, corner k the
    same rotated by 90 k deg. Every corner is a degree-4 vertex with sectors (ccw from its first
    pleat crease) ``90, 90 + twist, 90, 90 - twist`` degrees, so it satisfies Kawasaki's theorem.

    Vertices: 0..3 the square corners, 4..7 the sheet corners (ccw from upper right), 8..15 the
    pleat ends on the border. Creases: 0..3 the square sides (side k joins corner k and k + 1),
    4..11 the pleats (4 + 2k: first pleat of corner k, 5 + 2k: second), then the border.

    Parameters
    ----------
    side : float, mm
        Side of the central square, > 0.
    twist_deg : float, degrees
        Rotation of the central square, strictly between 0 and 90.
    assignment : {"standard", "two-two"}
        ``standard``: the central square folds as valleys and each pleat is one mountain and one
        valley; all four corners are on the same rigid branch (this assignment is flat-foldable
        but not rigidly foldable, Hull 2020 *Origametry*). ``two-two``: corners 0 and 2 keep the
        standard choice (the first pleat is the odd crease), corners 1 and 3 take the other choice
        big-little-big allows (the side to the previous corner is the odd crease), so two corners
        lie on each of the two rigid branches of the degree-4 vertex. The tangent-of-half-angle
        multipliers between consecutive sides are cot(t/2) on one branch and -tan(t/2) on the
        other, so they multiply to one around the square and the cell folds rigidly with one
        degree of freedom (Tachi 2009; Evans et al. 2015). Sides: valley, mountain, mountain,
        valley.
    sheet : float, mm, optional
        Side of the square sheet, centred on the twist; default ``2 side``. Must exceed
        ``side (cos t + sin t)`` so that the pleats reach the border.
    name, tol
        As for :class:`CreasePattern`.

    Returns
    -------
    CreasePattern
        16 vertices, 24 creases, 9 panels (panel order from the half-edge structure).
    """
    s = _positive("side", side)
    t_deg = _angle_deg("twist_deg", twist_deg, 0.0, 90.0)
    if assignment not in SQUARE_TWIST_ASSIGNMENTS:
        raise PatternError(
            f"assignment = {assignment!r} is not known; allowed: {', '.join(SQUARE_TWIST_ASSIGNMENTS)}"
        )
    t = math.radians(t_deg)
    w = 2.0 * s if sheet is None else _positive("sheet", sheet)
    reach = s * (math.cos(t) + math.sin(t))
    if not 0.5 * (w - reach) > tol.merge:
        raise PatternError(
            f"sheet = {w:g} mm is too small for side {s:g} mm twisted {t_deg:g} deg; "
            f"allowed: sheet > {reach:.6g} mm"
        )
    h = 0.5 * w
    rot = np.array([[math.cos(t), -math.sin(t)], [math.sin(t), math.cos(t)]])
    base = 0.5 * s * np.array([[1.0, 1.0], [-1.0, 1.0], [-1.0, -1.0], [1.0, -1.0]])
    corners = base @ rot.T
    sheet_corners = h * np.array([[1.0, 1.0], [-1.0, 1.0], [-1.0, -1.0], [1.0, -1.0]])
    # pleat directions of corner k: first d1 = R(90 k) (+x), second d2 = R(90 k) (+y)
    d1 = np.array([[1.0, 0.0], [0.0, 1.0], [-1.0, 0.0], [0.0, -1.0]])
    d2 = np.array([[0.0, 1.0], [-1.0, 0.0], [0.0, -1.0], [1.0, 0.0]])
    ends: list[np.ndarray] = []
    border_pts: list[list[int]] = [[] for _ in range(4)]  # right, top, left, bottom sides
    for k in range(4):
        for d in (d1[k], d2[k]):
            p = corners[k].copy()
            ax = 0 if d[0] != 0 else 1
            p[ax] = h * d[ax]
            border_pts[{(1, 0): 0, (0, 1): 1, (-1, 0): 2, (0, -1): 3}[(int(d[0]), int(d[1]))]].append(
                8 + len(ends)
            )
            ends.append(p)
    verts = np.concatenate([corners, sheet_corners, np.array(ends)])
    creases: list[list[int]] = [[k, (k + 1) % 4] for k in range(4)]
    for k in range(4):
        creases.append([k, 8 + 2 * k])
        creases.append([k, 9 + 2 * k])
    # sides ccw: right goes up (LR sheet corner 7 -> UR 4), top goes left (4 -> 5), ...
    side_def = [(7, 4, 1), (4, 5, 0), (5, 6, 1), (6, 7, 0)]
    for sd, (c0, c1, ax) in enumerate(side_def):
        sign = 1.0 if verts[c1, ax] > verts[c0, ax] else -1.0
        pts = sorted(border_pts[sd], key=lambda e: sign * verts[e, ax])
        chain = [c0, *pts, c1]
        creases.extend([chain[q], chain[q + 1]] for q in range(len(chain) - 1))

    # Kinds. With the central square valley (V) in "standard", corner k's first pleat (bounding
    # the smallest sector 90 - twist together with the side to corner k - 1) is the odd mountain.
    # In "two-two" corners 1 and 3 instead make the side to corner k - 1 the odd crease.
    kinds = ["valley"] * 4 + ["mountain", "valley"] * 4
    if assignment == "two-two":
        # corner 0: option "pleat odd" with X = valley -> sides 3-0 and 0-1 valley
        # corner 1: option "side odd": e_prev (0-1) = valley = -X -> X = mountain, side 1-2 mountain,
        #           pleats mountain
        # corner 2: "pleat odd" with X = mountain: side 2-3 mountain, first pleat valley, second mountain
        # corner 3: "side odd": e_prev (2-3) = mountain = -X -> X = valley, side 3-0 valley, pleats valley
        kinds[0:4] = ["valley", "mountain", "mountain", "valley"]
        kinds[4:12] = [
            "mountain", "valley",  # corner 0
            "mountain", "mountain",  # corner 1
            "valley", "mountain",  # corner 2
            "valley", "valley",  # corner 3
        ]
    kinds += ["border"] * (len(creases) - 12)
    label = name or f"square twist {s:g} {t_deg:g}deg {assignment}"
    return CreasePattern(verts, creases, kinds, name=label, tol=tol)


# ---------------------------------------------------------------------------- accordion
def accordion(
    width: float,
    panel_width: float,
    n: int,
    *,
    first: str = "valley",
    name: str = "",
    tol: Tolerances = DEFAULT_TOL,
) -> CreasePattern:
    """Accordion strip: ``n`` rectangular panels side by side with alternating folds.

    Parameters
    ----------
    width : float, mm
        Length of every fold line (the strip's extent in y), > 0.
    panel_width : float, mm
        Width of every panel in x, > 0.
    n : int
        Number of panels, 1..100000 (and at most ``thickpanel.limits.MAX_PANELS`` through the
        registry and design files). The ``n - 1`` fold lines sit at x = k panel_width.
    first : {"valley", "mountain"}
        Kind of the first fold line (x = panel_width); the kinds then alternate.

    Returns
    -------
    CreasePattern
        Vertices ``2 (n + 1)``: bottom row 0..n, top row n+1..2n+1.
    """
    w = _positive("width", width)
    pw = _positive("panel_width", panel_width)
    n_ = _count("n", n, 1, 100_000)
    if first not in ("valley", "mountain"):
        raise PatternError(f"first = {first!r} is not known; allowed: valley, mountain")
    xs = np.arange(n_ + 1) * pw
    verts = np.concatenate(
        [np.stack([xs, np.zeros_like(xs)], 1), np.stack([xs, np.full_like(xs, w)], 1)]
    )
    k = np.arange(n_)
    bottom = np.stack([k, k + 1], 1)
    top = np.stack([n_ + 1 + k, n_ + 2 + k], 1)
    q = np.arange(n_ + 1)
    folds = np.stack([q, n_ + 1 + q], 1)
    other = "mountain" if first == "valley" else "valley"
    fold_kinds = ["border" if i in (0, n_) else (first if i % 2 == 1 else other) for i in range(n_ + 1)]
    creases = np.concatenate([bottom, top, folds])
    kinds = ["border"] * (2 * n_) + fold_kinds
    label = name or f"accordion {w:g}x{pw:g} n={n_}"
    return CreasePattern(verts, creases, kinds, name=label, tol=tol)


register_layout("miura", miura_ori)
register_layout("square-twist", square_twist)
register_layout("accordion", accordion)
register_panel_estimate("miura", lambda *, nx, ny, **_: int(nx) * int(ny))
register_panel_estimate("accordion", lambda *, n, **_: int(n))
