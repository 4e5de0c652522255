"""Second-order start directions off the flat state (where the first-order test over-counts freedom).

At the flat state the loop-closure Jacobian ``J0`` has a large null space (its in-plane rotation
rows vanish), so a first-order direction ``d`` with ``J0 d = 0`` need not be a fold. A fold
``x(h) = h d + h^2 e + O(h^3)`` leaving flat along ``d`` must also close at second order:
``J0 e + q(d) = 0`` with ``q(d)`` the ``h^2`` coefficient of the loop residual ``r(h d)``, i.e.
``q(d)`` must lie in the range of ``J0`` (the second-order test of frameworks, Connelly &
Whiteley 1996, SIAM J. Discrete Math. 9(3) "Second-order rigidity and prestress stability for
tensegrity frameworks", applied to the loop equations of Tachi 2009; cited from memory). Writing
``d = B N c`` (``B`` a subspace basis, e.g. the symmetric orbits of
:mod:`thickpanel.symmetry`; ``N`` an orthonormal basis of the null space of ``J0 B``) and ``L`` an
orthonormal basis of the left null space of ``J0 B``, the condition is the system of quadrics
``g(c) = L^T q(B N c) = 0`` on the unit sphere ``|c| = 1``. Its smallest value over the sphere, the
*second-order obstruction*, is zero when a start direction exists; a positive value proves that no
analytic fold path leaves flat inside the subspace (whatever the crease signs), since the leading
term of any such path is a direction of this kind. The minimum is searched from seeded
multiple starts (deterministic); a direction is reported only when its residual is below
``_FEASIBLE`` (relative to the largest quadric coefficient).

Pure geometry (numpy/scipy only).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import least_squares

from .loop_model import LoopModel
from .tolerances import DEFAULT_TOL, Tolerances
from .typing import FloatArray

__all__ = ["StartSearch", "second_order_starts", "second_order_term"]

_H = 1e-4  # rad: step of the central second difference giving q(d) (truncation ~ _H^2, round-off ~ 1e-16 / _H)
_FEASIBLE = 1e-7  # relative second-order residual below which a direction counts as feasible
_STARTS = 24  # seeded random starts of the sphere search (plus the null-space basis vectors)
_SIGN_PENALTY = 10.0  # weight of a crease folding against its kind in the signed search
_SIGNED_STARTS = 6  # best unsigned solutions re-started with the sign penalty
_RANK = 1e-9  # singular values below this fraction of the largest count as zero at flat


@dataclass(frozen=True)
class StartSearch:
    """Result of the second-order start search.

    Attributes
    ----------
    null_dim : int
        Dimension of the first-order feasible directions inside the subspace.
    obstruction : float
        Smallest relative second-order residual over unit first-order directions (0: a start exists).
    directions : tuple of (n,) float
        Second-order feasible directions in unknown space (largest magnitude 1, the largest entry
        positive when it is a valley), best first; empty when the obstruction is positive.
    second : tuple of (n,) float
        Second-order term ``e`` of each direction (``x(h) ~ h d + h^2 e``).
    """

    null_dim: int
    obstruction: float
    directions: tuple[FloatArray, ...]
    second: tuple[FloatArray, ...]


def second_order_term(model: LoopModel, d: FloatArray) -> FloatArray:
    """``q(d)``: the ``h^2`` coefficient of the loop residual along ``h d`` (central difference)."""
    rp, _ = model.residual_jacobian(_H * d, jac=False)
    rm, _ = model.residual_jacobian(-_H * d, jac=False)
    return (rp + rm) / (2.0 * _H * _H)


def second_order_starts(
    model: LoopModel, basis: FloatArray | None = None, *, tol: Tolerances = DEFAULT_TOL
) -> StartSearch:
    """Search the flat state's second-order feasible start directions inside ``range(basis)``.

    Parameters
    ----------
    model : LoopModel
    basis : (n, k) float, optional
        Subspace of the unknowns (default: all of them).
    tol : Tolerances

    Returns
    -------
    StartSearch
    """
    n = model.n
    B = np.eye(n) if basis is None else np.asarray(basis, dtype=float)
    _, J0s = model.residual_jacobian(np.zeros(n))
    assert J0s is not None
    A = np.asarray(J0s @ B) if J0s.shape[0] else np.zeros((0, B.shape[1]))
    if A.shape[0] == 0:
        return StartSearch(B.shape[1], 0.0, (), ())
    U, s, Vt = np.linalg.svd(A, full_matrices=True)
    rank = int(np.count_nonzero(s > _RANK * max(float(s.max(initial=0.0)), 1e-300)))
    N = Vt[rank:].T
    L = U[:, rank:]
    k = N.shape[1]
    if k == 0:
        return StartSearch(0, np.inf, (), ())
    cols = B @ N
    diag = [second_order_term(model, cols[:, i]) for i in range(k)]
    G = np.empty((k, k, L.shape[1]))
    for i in range(k):
        G[i, i] = L.T @ diag[i]
        for j in range(i + 1, k):
            both = second_order_term(model, cols[:, i] + cols[:, j])
            G[i, j] = G[j, i] = L.T @ (0.5 * (both - diag[i] - diag[j]))
    scale = float(np.abs(G).max()) or 1.0
    Gs = G / scale

    def fun(c: FloatArray) -> FloatArray:
        return np.concatenate([np.einsum("i,j,ijp->p", c, c, Gs), [c @ c - 1.0]])

    rng = np.random.default_rng(0)
    starts = [np.eye(k)[i] for i in range(k)] + [rng.normal(size=k) for _ in range(_STARTS)]
    found: list[tuple[float, FloatArray]] = []
    for c0 in starts:
        res = least_squares(fun, c0 / np.linalg.norm(c0), xtol=1e-15, ftol=1e-15, gtol=1e-15, max_nfev=200 * k)
        c = res.x / np.linalg.norm(res.x)
        found.append((float(np.linalg.norm(np.einsum("i,j,ijp->p", c, c, Gs))), c))
    found.sort(key=lambda f: f[0])
    obstruction = found[0][0]
    if obstruction <= _FEASIBLE:  # feasible directions exist: look for ones keeping the assignment's signs
        sg = model.signs

        def signed(c: FloatArray) -> FloatArray:
            d = cols @ c
            wrong = np.minimum(sg * d, 0.0) / max(float(np.abs(d).max()), 1e-300)
            return np.concatenate([fun(c), _SIGN_PENALTY * wrong])

        for c0 in [f[1] for f in found[:_SIGNED_STARTS]]:
            c1 = c0 if (sg * (cols @ c0)).min() >= (-sg * (cols @ c0)).min() else -c0
            res = least_squares(signed, c1, xtol=1e-15, ftol=1e-15, gtol=1e-15, max_nfev=100 * k)
            c = res.x / np.linalg.norm(res.x)
            found.append((float(np.linalg.norm(np.einsum("i,j,ijp->p", c, c, Gs))), c))
        feasible = [f for f in found if f[0] <= _FEASIBLE]
        found = sorted(feasible, key=lambda f: -_sign_margin(cols @ f[1], sg))
    dirs: list[FloatArray] = []
    sec: list[FloatArray] = []
    for val, c in found:
        if val > _FEASIBLE:
            break
        d = cols @ c
        d /= np.abs(d).max()
        if (model.signs * d).min() < (-model.signs * d).min():
            d = -d
        if any(np.allclose(d, e, atol=1e-6) for e in dirs):
            continue
        y, *_ = np.linalg.lstsq(A, -(second_order_term(model, d)), rcond=None)
        dirs.append(d)
        sec.append(B @ y)
    return StartSearch(k, obstruction, tuple(dirs), tuple(sec))


def _sign_margin(d: FloatArray, signs: FloatArray) -> float:
    """Smallest ``sign * d`` relative to ``max |d|`` over both orientations of ``d`` (>= 0: keeps the signs)."""
    m = max(float(np.abs(d).max()), 1e-300)
    return max(float((signs * d).min()), float((-signs * d).min())) / m
