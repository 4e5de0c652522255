"""Rotational symmetry of a crease pattern and the symmetric subspace of its fold angles.

A pattern has ``n``-fold symmetry when the rotation by ``2 pi / n`` about its centre (the vertex
centroid) maps vertices onto vertices and every crease onto a crease of the same kind. Rotations
keep the plane's orientation, so a fold that keeps the symmetry gives the same angle to every
crease of one orbit: the fold angles are ``x = S y`` with ``S`` the (unknowns x orbits) 0/1 matrix
of :attr:`Symmetry.basis` and ``y`` one angle per orbit. Loop closure is equivariant under the
rotation (the residual at the rotated vertex is the rotated residual), so a symmetric solution of
the reduced system ``r(S y) = 0`` is a fold of the whole pattern.

Pure geometry (numpy/scipy only).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.spatial import cKDTree

from .errors import FoldError
from .loop_model import LoopModel
from .pattern import CreasePattern
from .tolerances import DEFAULT_TOL, Tolerances
from .typing import FloatArray, IntArray

__all__ = ["Symmetry", "rotational_symmetry", "symmetric_subspace", "MAX_ORDER"]

MAX_ORDER = 360
"""Largest rotation order searched (a 360-arm grid is the densest the layouts build quickly)."""


@dataclass(frozen=True)
class Symmetry:
    """The rotational symmetry of a pattern's fold angles.

    Attributes
    ----------
    order : int
        ``n`` of the ``2 pi / n`` rotation (1: no symmetry).
    centre : (2,) float, mm
    crease_map : (m,) int
        Image of every crease under one rotation.
    orbit : (n_unknowns,) int
        Orbit index of every fold-angle unknown of the loop model.
    basis : (n_unknowns, n_orbits) float
        0/1 matrix ``S``: symmetric fold angles are ``S @ y``.
    orbit_signs : (n_orbits,) float
        Assignment sign of each orbit (+1 valley, -1 mountain).
    """

    order: int
    centre: FloatArray
    crease_map: IntArray
    orbit: IntArray
    basis: FloatArray
    orbit_signs: FloatArray

    @property
    def n_orbits(self) -> int:
        return int(self.basis.shape[1])


def _crease_map(pattern: CreasePattern, centre: FloatArray, order: int, eps: float) -> IntArray | None:
    a = 2.0 * np.pi / order
    rot = np.array([[np.cos(a), -np.sin(a)], [np.sin(a), np.cos(a)]])
    v = pattern.vertices - centre
    d, vmap = cKDTree(v).query(v @ rot.T)
    if float(d.max()) > eps:
        return None
    key = {(int(min(p, q)), int(max(p, q))): i for i, (p, q) in enumerate(pattern.creases.tolist())}
    out = np.empty(pattern.n_creases, dtype=np.int64)
    for i, (p, q) in enumerate(pattern.creases.tolist()):
        p2, q2 = int(vmap[p]), int(vmap[q])
        j = key.get((min(p2, q2), max(p2, q2)), -1)
        if j < 0 or pattern.kinds[j] != pattern.kinds[i]:
            return None
        out[i] = j
    return out


def rotational_symmetry(model: LoopModel, *, tol: Tolerances = DEFAULT_TOL) -> Symmetry:
    """The largest rotational symmetry of ``model``'s pattern and its symmetric fold subspace.

    Parameters
    ----------
    model : LoopModel
    tol : Tolerances
        ``tol.merge`` (mm, scaled by the sheet size) matches rotated vertices.

    Returns
    -------
    Symmetry
        ``order`` 1 when the pattern has no rotational symmetry (every unknown its own orbit).
    """
    pattern = model.pattern
    centre = pattern.vertices.mean(axis=0)
    eps = tol.merge * max(1.0, float(np.ptp(pattern.vertices, axis=0).max()))
    order, cmap = 1, np.arange(pattern.n_creases)
    for n in range(min(MAX_ORDER, max(pattern.n_vertices, 1)), 1, -1):
        got = _crease_map(pattern, centre, n, eps)
        if got is not None:
            order, cmap = n, got
            break
    orbit = np.full(model.n, -1, dtype=np.int64)
    n_orb = 0
    for k in range(model.n):
        if orbit[k] >= 0:
            continue
        c = int(model.var_crease[k])
        while True:
            j = int(model.col_of[c])
            if j < 0 or orbit[j] >= 0:
                break
            orbit[j] = n_orb
            c = int(cmap[c])
        n_orb += 1
    if np.any(orbit < 0):  # a seam whose image is stored at its other crease: no usable symmetry
        return rotational_symmetry_none(model)
    basis = np.zeros((model.n, n_orb))
    basis[np.arange(model.n), orbit] = 1.0
    signs = np.array([model.signs[orbit == o][0] for o in range(n_orb)])
    for o in range(n_orb):
        if np.any(model.signs[orbit == o] != signs[o]):  # the assignment breaks the symmetry
            return rotational_symmetry_none(model)
    basis.setflags(write=False)
    return Symmetry(order, centre, cmap, orbit, basis, signs)


def rotational_symmetry_none(model: LoopModel) -> Symmetry:
    """The trivial symmetry (order 1): every unknown its own orbit."""
    basis = np.eye(model.n)
    basis.setflags(write=False)
    return Symmetry(1, model.pattern.vertices.mean(axis=0), np.arange(model.pattern.n_creases),
                    np.arange(model.n), basis, model.signs.copy())  # fmt: skip


def symmetric_subspace(model: LoopModel, *, tol: Tolerances = DEFAULT_TOL) -> Symmetry:
    """:func:`rotational_symmetry`, refusing patterns without one (for ``choose="symmetric"``)."""
    sym = rotational_symmetry(model, tol=tol)
    if sym.order < 2:
        raise FoldError(
            f"pattern {model.pattern.name!r} has no rotational symmetry (with its assignment) about its vertex "
            "centroid, so the path option 'symmetric' does not apply; use 'clearance' or 'target'"
        )
    return sym
