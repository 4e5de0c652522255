"""Log-polar lattices behind the spiral layouts, and the Kawasaki solve of their parameters.

In log-polar coordinates ``w = ln z = u + i theta`` (``u = ln r``) a logarithmic spiral is a
straight line and the similarity ``z -> lambda e^(i delta) z`` is a translation by
``(ln lambda, delta)``. Every spiral layout here places its vertices on the lattice::

    w(m, j) = m (h + i delta) + i 2 pi j / N,      m = 0..M (vertex ring), j = 0..N-1 (arm)

and joins them by straight creases (chords) along a few lattice *steps* ``(dm, dj)``: crease from
vertex ``(m, j)`` to ``(m + dm, j + dj)``. Because every vertex maps to every other by a
similarity of the plane, the sector angles are the same at all interior vertices and the Kawasaki
condition (Kawasaki 1989) is one equation ``F(h, delta) = 0`` on the two lattice parameters.
Fixing one parameter (or their ratio, the spiral constant ``b = h / delta``) leaves a scalar root
problem solved here with :func:`scipy.optimize.brentq`.

Only numpy and scipy are used. Angles are radians, lengths are relative (the generators scale).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from ..errors import PatternError
from ..typing import FloatArray, IntArray

__all__ = [
    "Step",
    "TWO_FAMILY_STEPS",
    "RING_STEPS",
    "RADIAL_STEPS",
    "b_from_k",
    "k_from_b",
    "b_from_pitch",
    "pitch_from_b",
    "spiral_arc_length",
    "step_offsets",
    "kawasaki_residual",
    "solve_parameter",
    "solution_curve",
    "lattice_points",
    "lattice_creases",
]

Step = tuple[int, int]

# family 1 (left-handed for delta > 0) and family 2 of the two-family grid
TWO_FAMILY_STEPS: tuple[Step, ...] = ((1, 0), (1, -1))
# one spiral family crossed by ring chords
RING_STEPS: tuple[Step, ...] = ((1, 0), (0, 1))
# radial lines (delta = 0) crossed by one spiral family
RADIAL_STEPS: tuple[Step, ...] = ((1, 0), (1, 1))

_SCAN = 1601  # samples of the bracketing scan; roots closer than 1/_SCAN of the range may merge


# ---------------------------------------------------------------------------- spiral facts
def b_from_k(k: float) -> float:
    """Spiral constant of a spoke curled at constant arc length with radius = k x arc length.

    For r = a e^(b theta) the arc length from the pole is s = r sqrt(1 + b^2) / b, so
    r / s = b / sqrt(1 + b^2) = k, hence b = k / sqrt(1 - k^2).
    """
    return k / math.sqrt(1.0 - k * k)


def k_from_b(b: float) -> float:
    """Inverse of :func:`b_from_k`: k = b / sqrt(1 + b^2)."""
    return b / math.sqrt(1.0 + b * b)


def b_from_pitch(pitch: float) -> float:
    """Spiral constant from the pitch angle (rad) between the tangent and the circle: b = tan(pitch)."""
    return math.tan(pitch)


def pitch_from_b(b: float) -> float:
    """Pitch angle (rad) between the tangent of r = a e^(b theta) and the circle: atan(b)."""
    return math.atan(b)


def spiral_arc_length(r: float | FloatArray, b: float) -> float | FloatArray:
    """Arc length of r = a e^(b theta) from the pole to radius ``r`` (same unit as r): r sqrt(1+b^2)/|b|."""
    return r * math.sqrt(1.0 + b * b) / abs(b)


# ---------------------------------------------------------------------------- vertex condition
def step_offsets(steps: Sequence[Step], n_arms: int, h: FloatArray | float, delta: FloatArray | float) -> np.ndarray:
    """Complex log-polar offsets of the crease steps, both directions.

    Returns
    -------
    (..., 2 s) complex
        ``+step`` for every step, then ``-step`` for every step.
    """
    beta = 2.0 * math.pi / n_arms
    h = np.asarray(h, dtype=float)[..., None]
    d = np.asarray(delta, dtype=float)[..., None]
    dm = np.array([s[0] for s in steps], dtype=float)
    dj = np.array([s[1] for s in steps], dtype=float)
    w = dm * h + 1j * (dm * d + dj * beta)
    return np.concatenate([w, -w], axis=-1)


def kawasaki_residual(
    steps: Sequence[Step], n_arms: int, h: FloatArray | float, delta: FloatArray | float
) -> FloatArray:
    """Alternating sector sum at a generic lattice vertex (rad), vectorised over h and delta.

    The sectors are taken counter-clockwise starting at the crease of the first step, so the value
    is continuous wherever the cyclic order of the creases does not change. Zero means the vertex
    satisfies Kawasaki's theorem (Kawasaki 1989): alternating sum of sector angles = 0.
    """
    w = step_offsets(steps, n_arms, h, delta)
    d = np.exp(w) - 1.0  # chord directions from the vertex at z = 1
    ang = np.angle(d)
    rel = np.mod(ang - ang[..., :1], 2.0 * math.pi)
    rel = np.sort(rel, axis=-1)
    sectors = np.diff(np.concatenate([rel, np.full(rel.shape[:-1] + (1,), 2.0 * math.pi)], axis=-1), axis=-1)
    signs = np.where(np.arange(sectors.shape[-1]) % 2 == 0, 1.0, -1.0)
    return np.asarray((sectors * signs).sum(axis=-1), dtype=float)


def _order_key(steps: Sequence[Step], n_arms: int, h: FloatArray, delta: FloatArray) -> IntArray:
    """An integer code of the cyclic crease order at each sample (changes mark discontinuities)."""
    w = step_offsets(steps, n_arms, h, delta)
    ang = np.angle(np.exp(w) - 1.0)
    rel = np.mod(ang - ang[..., :1], 2.0 * math.pi)
    order = np.argsort(rel, axis=-1)
    base = order.shape[-1]
    code = np.zeros(order.shape[:-1], dtype=np.int64)
    for k in range(base):
        code = code * base + order[..., k]
    return code


@dataclass(frozen=True)
class Constraint:
    """How the free lattice parameter is tied to the given one.

    mode : ``"delta"`` (delta fixed, solve h), ``"h"`` (h fixed, solve delta) or ``"b"``
        (h = b x angular step of the reference family, solve delta).
    value : the fixed delta (rad), h, or b.
    ref_step : the step whose angular advance defines b (mode ``"b"``).
    """

    mode: str
    value: float
    ref_step: Step = (1, 0)


def _h_delta(c: Constraint, n_arms: int, x: FloatArray) -> tuple[FloatArray, FloatArray]:
    beta = 2.0 * math.pi / n_arms
    if c.mode == "delta":
        return x, np.full_like(x, c.value)
    if c.mode == "h":
        return np.full_like(x, c.value), x
    dm, dj = c.ref_step
    return c.value * (dm * x + dj * beta), x


def solve_parameter(
    steps: Sequence[Step],
    n_arms: int,
    constraint: Constraint,
    bracket: tuple[float, float],
    *,
    xtol: float,
    prefer: float | None = None,
    accept: float,
) -> float | None:
    """Root of the Kawasaki residual in the free parameter, or None when there is none.

    Parameters
    ----------
    steps, n_arms : the lattice (see module docstring).
    constraint : which parameter is fixed and its value.
    bracket : (lo, hi), the open interval searched (h or delta, rad).
    xtol : absolute tolerance passed to brentq.
    prefer : among several roots, the one closest to this value (default: the smallest).
    accept : largest |residual| (rad) at a root; larger ones are jumps of the crease order.
    """
    lo, hi = bracket
    x = np.linspace(lo, hi, _SCAN)[1:-1]
    h, d = _h_delta(constraint, n_arms, x)
    f = kawasaki_residual(steps, n_arms, h, d)
    key = _order_key(steps, n_arms, h, d)
    valid = (h > 0) & np.isfinite(f)
    cand = np.nonzero((np.sign(f[:-1]) != np.sign(f[1:])) & (key[:-1] == key[1:]) & valid[:-1] & valid[1:])[0]
    roots: list[float] = []
    exact = np.nonzero((f == 0.0) & valid)[0]
    roots.extend(float(x[i]) for i in exact)

    from scipy.optimize import brentq  # lazy: listing the layouts should not load scipy.optimize

    def g(t: float) -> float:
        hh, dd = _h_delta(constraint, n_arms, np.array([t]))
        return float(kawasaki_residual(steps, n_arms, hh, dd)[0])

    for i in cand:
        r = float(brentq(g, x[i], x[i + 1], xtol=xtol, rtol=4 * np.finfo(float).eps, maxiter=200))
        if abs(g(r)) <= accept:
            roots.append(r)
    if not roots:
        return None
    ref = prefer if prefer is not None else lo
    return min(roots, key=lambda r: (abs(r - ref), r))


def solution_curve(
    steps: Sequence[Step],
    n_arms: int,
    delta_range: tuple[float, float],
    h_range: tuple[float, float],
    *,
    samples: int = 241,
    xtol: float,
    accept: float,
) -> FloatArray:
    """Points (h, delta) of the flat-foldable curve F(h, delta) = 0, for nearest-value messages.

    Returns
    -------
    (k, 2) float
        Solved ``h`` for each sampled ``delta`` that admits one (smallest root).
    """
    out = []
    for d in np.linspace(delta_range[0], delta_range[1], samples)[1:-1]:
        r = solve_parameter(steps, n_arms, Constraint("delta", float(d)), h_range, xtol=xtol, accept=accept)
        if r is not None:
            out.append((r, float(d)))
    return np.array(out, dtype=float).reshape(-1, 2)


# ---------------------------------------------------------------------------- lattice geometry
def lattice_points(n_arms: int, n_rings: int, h: float, delta: float, r0: float, theta0: float = 0.0) -> FloatArray:
    """Vertex coordinates of rings m = 0..n_rings, arms j = 0..N-1; index m N + j.

    Returns
    -------
    ((n_rings + 1) N, 2) float, same unit as r0.
    """
    m = np.repeat(np.arange(n_rings + 1, dtype=float), n_arms)
    j = np.tile(np.arange(n_arms, dtype=float), n_rings + 1)
    r = r0 * np.exp(m * h)
    th = theta0 + m * delta + j * (2.0 * math.pi / n_arms)
    return np.stack([r * np.cos(th), r * np.sin(th)], axis=1)


def lattice_creases(n_arms: int, n_rings: int, step: Step, rings: IntArray | None = None) -> IntArray:
    """Creases of one step from every ring where both ends exist.

    Parameters
    ----------
    step : (dm, dj) with dm >= 0.
    rings : start rings to use (default: all that fit).

    Returns
    -------
    (k, 2) int, vertex indices ``m N + j``.
    """
    dm, dj = step
    if rings is None:
        rings = np.arange(0, n_rings - dm + 1)
    m = np.repeat(np.asarray(rings, dtype=np.int64), n_arms)
    j = np.tile(np.arange(n_arms, dtype=np.int64), len(rings))
    a = m * n_arms + j
    b = (m + dm) * n_arms + (j + dj) % n_arms
    return np.stack([a, b], axis=1)


def check_constraint_mode(mode: str) -> None:
    """Internal guard: an unknown constraint mode is a programming error, reported as PatternError."""
    if mode not in ("delta", "h", "b"):
        raise PatternError(f"unknown lattice constraint {mode!r}; use 'delta', 'h' or 'b'")
