"""Fold paths that choose among a mechanism's freedoms: ``symmetric``, ``clearance`` or ``target``.

:func:`thickpanel.kinematics.fold_path` follows whatever motion the assignment's signs give. For a
mechanism with several degrees of freedom :func:`chosen_path` picks the direction at every
predictor step inside the null space of the loop-closure Jacobian:

* ``symmetric`` -- stay in the subspace of fold angles that keeps the pattern's rotational
  symmetry (:mod:`thickpanel.symmetry`), continuing the previous tangent;
* ``clearance`` -- among the null-space directions (the continued tangent and its combinations
  with each null-space basis vector), step along the one whose corrected state keeps the largest
  smallest separation between panels not joined by a hinge at zero thickness
  (:func:`thickpanel.crossings.separation_score`, a sampled measure), never unfolding a crease
  (beyond the sign slack below). Maximising separation alone can stall compaction: a path may fold
  one ring of flaps flat while the rest opens little, so look at the folded extents too;
* ``target`` -- the projection on the null space of the way to given target angles.

``keep_symmetry`` restricts ``clearance`` and ``target`` to the symmetric subspace as well. The
first step off flat uses a second-order feasible start direction (:mod:`thickpanel.flat_start`)
inside the subspace: those keeping the assignment's signs first, for ``target`` the one closest to
the target. Crease signs are judged over the finite step: a crease
may dip against its kind by at most ``_DIP`` times the step (third-order creases dip that way near
flat) but no more, and never flip between steps once folded. After every sampled state the panels
are checked for zero-thickness crossings; the path stops at the first state with one
(``stop_reason = "contact"``, ``meta["first_contact"]`` the panel pair and ``meta["reachable"]``
the fold reached, rad). Every returned state closes to ``tol.closure``.

The fold fraction ``t`` is the largest fold magnitude over ``target`` (as in ``fold_path``). Pure
geometry.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from .crossings import crossing_pairs, nonadjacent_pairs, panel_triangles, separation_score
from .errors import FoldError
from .flat_start import second_order_starts
from .loop_model import LoopModel, loop_model
from .pattern import CreasePattern, cid
from .poses import FoldPath, FoldState
from .symmetry import rotational_symmetry, rotational_symmetry_none, symmetric_subspace
from .tolerances import DEFAULT_TOL, Tolerances
from .typing import FloatArray

__all__ = ["chosen_path", "PATH_CHOICES"]

PATH_CHOICES: tuple[str, ...] = ("symmetric", "clearance", "target")
_DIP = 0.05  # x step (rad): how far a crease may fold against its kind over one step
_MAX_NEWTON = 30
_FIRST = float(np.deg2rad(1.0))  # rad: first step off flat
_MIN_STEP = float(np.deg2rad(0.01))  # rad: smaller steps than this mean the path cannot go on
_MARGIN = 0.1  # x sheet size: separations beyond this do not rank clearance candidates
_RANK = 1e-8  # relative singular value below which a direction counts as free


class _Reduced:
    """The loop system restricted to fold angles ``x = B y``."""

    def __init__(self, model: LoopModel, basis: FloatArray, tol: Tolerances) -> None:
        self.model, self.B, self.tol = model, np.asarray(basis, dtype=float), tol

    def rj(self, y: FloatArray) -> tuple[FloatArray, FloatArray]:
        r, J = self.model.residual_jacobian(self.B @ y)
        assert J is not None
        return r, np.asarray(J @ self.B)

    def correct(self, y0: FloatArray, k: int) -> FloatArray | None:
        """Newton (minimum-norm least squares) with unknown ``x[k]`` (through its orbit) held."""
        y = y0.copy()
        fixed = int(np.nonzero(self.B[k])[0][0])
        free = np.ones(len(y), dtype=bool)
        free[fixed] = False
        goal = self.tol.closure * 1e-3
        prev = np.inf
        for _ in range(_MAX_NEWTON):
            r, A = self.rj(y)
            res = float(np.abs(r).max()) if len(r) else 0.0
            if res <= goal:
                return y
            if not np.isfinite(res) or res > prev and res > 1e3 * goal:
                return None
            prev = res
            dy, *_ = np.linalg.lstsq(A[:, free], -r, rcond=None)
            y[free] += dy
        r, _ = self.rj(y)
        return y if float(np.abs(r).max()) <= self.tol.closure else None

    def null(self, y: FloatArray) -> FloatArray:
        _, A = self.rj(y)
        _, s, vt = np.linalg.svd(A, full_matrices=True)
        rank = int(np.count_nonzero(s > _RANK * max(float(s.max(initial=0.0)), 1e-300)))
        return vt[rank:].T  # type: ignore[no-any-return]


def chosen_path(
    pattern: CreasePattern,
    *,
    choose: str = "symmetric",
    target: float | None = None,
    target_angles: FloatArray | None = None,
    n_states: int = 90,
    stop_at_crossing: bool = True,
    keep_symmetry: bool | str | None = None,
    tol: Tolerances = DEFAULT_TOL,
) -> FoldPath:
    """Fold ``pattern`` from flat choosing among its freedoms by ``choose``.

    Parameters
    ----------
    pattern : CreasePattern
    choose : str
        ``symmetric``, ``clearance`` or ``target`` (see the module text).
    target : float, rad, optional
        Largest fold magnitude at t = 1; default the largest of ``target_angles`` or 175 deg.
    target_angles : (m,) float, rad, optional
        Fold angle per crease of the state to aim for (``choose="target"`` needs it).
    n_states : int
        Sampled states evenly spaced in t (>= 2).
    stop_at_crossing : bool
        End the path at the first state where non-adjacent panels cross (zero thickness).
    keep_symmetry : bool or "auto", optional
        Stay in the rotationally symmetric subspace (default: True for ``symmetric`` only); with
        ``clearance`` or ``target`` it restricts their choice to symmetric motions; ``"auto"`` does
        so when the pattern has a rotational symmetry (``meta["subspace"]`` says which was used).
    tol : Tolerances

    Returns
    -------
    FoldPath
        ``meta``: ``choice``, ``subspace`` (e.g. ``8-fold symmetric``), ``reachable`` (rad),
        ``first_contact`` (``P012/P020`` or None), ``obstruction`` (second-order, at flat).

    Raises
    ------
    FoldError
        For an unknown option, ``symmetric`` on a pattern without rotational symmetry or with a
        single degree of freedom, ``target`` without matching target angles, a target outside
        (0, pi], or a pattern that cannot leave flat inside the chosen subspace (the message gives
        the second-order obstruction).
    """
    if choose not in PATH_CHOICES:
        raise FoldError(f"path option {choose!r} is unknown; choose one of {', '.join(PATH_CHOICES)}")
    model = loop_model(pattern)
    if keep_symmetry is None:
        keep_symmetry = choose == "symmetric"
    elif keep_symmetry == "auto":
        keep_symmetry = choose == "symmetric" or rotational_symmetry(model, tol=tol).order >= 2
    if choose == "symmetric" and not keep_symmetry:
        raise FoldError("path option 'symmetric' keeps the symmetry by definition; keep_symmetry=False contradicts it")
    if keep_symmetry:
        sym = symmetric_subspace(model, tol=tol)
        subspace = f"{sym.order}-fold symmetric"
    else:
        sym = rotational_symmetry_none(model)
        subspace = "full"
    goal_x: FloatArray | None = None
    if choose == "target":
        if target_angles is None:
            raise FoldError("path option 'target' needs target_angles (one fold angle per crease, rad)")
        ta = np.asarray(target_angles, dtype=float)
        if ta.shape != (pattern.n_creases,) or not np.all(np.isfinite(ta)):
            raise FoldError(
                f"target_angles must be {pattern.n_creases} finite angles (one per crease of {pattern.name!r}); "
                f"got shape {ta.shape}"
            )
        goal_x = ta[model.var_crease]
        wrong = np.nonzero(goal_x * model.signs < -tol.angle)[0]
        if len(wrong):
            c = int(model.var_crease[wrong[0]])
            raise FoldError(
                f"target state does not match the pattern: crease {cid(c)} is a {pattern.kinds[c]} but its target "
                f"angle is {np.rad2deg(goal_x[wrong[0]]):.4g} deg"
            )
    tgt = float(target if target is not None else (np.abs(goal_x).max() if goal_x is not None else np.deg2rad(175.0)))
    if not (0.0 < tgt <= np.pi):
        raise FoldError(f"target fold {tgt!r} rad is outside 0 < target <= pi rad")
    if int(n_states) < 2:
        raise FoldError(f"n_states = {n_states!r} must be at least 2 (flat and target states)")
    red = _Reduced(model, sym.basis, tol)
    search = second_order_starts(model, sym.basis, tol=tol)
    meta: dict[str, Any] = {"solver": "path_choice", "choice": choose, "subspace": subspace, "target": tgt,
                            "obstruction": search.obstruction, "first_contact": None}  # fmt: skip
    if not search.directions:
        raise FoldError(
            f"pattern {pattern.name!r} cannot leave the flat state rigidly inside the {subspace} subspace: no "
            f"first-order direction closes at second order (obstruction {search.obstruction:.3g}, relative); "
            "reachable range 0..0 rad"
        )
    tris = panel_triangles(pattern, tol=tol)
    pairs = nonadjacent_pairs(pattern)
    margin = _MARGIN * float(np.ptp(pattern.vertices, axis=0).max())
    levels = np.linspace(0.0, tgt, int(n_states))
    x0 = np.zeros(model.n)
    states = [model.state(x0, 0.0)]
    starts = _rank_starts(search.directions, search.second, goal_x, model)
    y = np.zeros(sym.n_orbits)
    tangent: FloatArray | None = None
    level, h, stop = 0.0, _FIRST, "target"
    pinv: FloatArray = np.asarray(np.linalg.pinv(sym.basis), dtype=float)
    for i in range(1, len(levels)):
        while level < levels[i] - 1e-15:
            step = min(h, levels[i] - level)
            got = _step(red, y, level, step, tangent, starts, pinv, choose, goal_x, (tris, pairs, margin), tol)
            if got is None:
                h = step / 2
                if h < _MIN_STEP:
                    break
                continue
            y_new, tangent = got
            if level == 0.0:  # remember the start (d, e) for exact states before the first sample
                meta["start"] = next((d, e) for d, e in starts if np.allclose(pinv @ d, tangent))
            y, level = y_new, level + step
            h = min(h * 1.5, np.deg2rad(5.0))
        if level < levels[i] - 1e-15:
            stop = "lock"
            break
        st = model.state(sym.basis @ y, i / (len(levels) - 1))
        if st.closure_error > tol.closure:
            stop = "lock"
            break
        if stop_at_crossing:
            hit = crossing_pairs(st, tol=tol, tris=tris, pairs=pairs)
            if hit:
                meta["first_contact"] = hit[0].label()
                meta["contact_depth_mm"] = hit[0].depth
                stop = "contact"
                meta["reachable"] = float(np.abs(states[-1].angles).max())
                return FoldPath(tuple(states), stop, "t", meta, refine=_refine)
        states.append(st)
    meta["reachable"] = float(np.abs(states[-1].angles).max())
    if len(states) == 1:
        raise FoldError(
            f"pattern {pattern.name!r}: the {choose} path found a second-order start but no rigid state at "
            f"{np.rad2deg(levels[1]):.3g} deg inside the {subspace} subspace; reachable range 0..0 rad"
        )
    return FoldPath(tuple(states), stop, "t", meta, refine=_refine)


def _refine(path: FoldPath, t: float) -> FoldState:
    """Exact state between two samples of a chosen path: the interpolated angles corrected with the
    largest fold held at ``t * target`` (inside the path's subspace); interpolated when that fails."""
    from dataclasses import replace

    pattern = path.states[0].pattern
    model = loop_model(pattern)
    tol = DEFAULT_TOL
    sym = rotational_symmetry_none(model) if path.meta.get("subspace") == "full" else symmetric_subspace(model)
    k = int(np.searchsorted(path.fractions, t))
    s0, s1 = path.states[max(k - 1, 0)], path.states[min(k, len(path.states) - 1)]
    w = 0.0 if s1.t == s0.t else (t - s0.t) / (s1.t - s0.t)
    x = (1 - w) * s0.angles[model.var_crease] + w * s1.angles[model.var_crease]
    j = int(np.argmax(np.abs(x)))
    if abs(x[j]) > 0:
        x = x * (t * float(path.meta["target"]) / abs(x[j]))
    if s0.t == 0.0 and "start" in path.meta:  # off flat: the second-order start, not a chord from flat
        d, e = path.meta["start"]
        lev = t * float(path.meta["target"])
        x = lev * d + lev * lev * e
        j = int(np.argmax(np.abs(x)))
        x = x * (lev / abs(x[j]))
    red = _Reduced(model, sym.basis, tol)
    y = red.correct(np.linalg.pinv(sym.basis) @ x, j)
    if y is None:
        return replace(path, refine=None).at(t)
    return model.state(sym.basis @ y, t)


def _rank_starts(dirs: tuple[FloatArray, ...], second: tuple[FloatArray, ...], goal: FloatArray | None,
                 model: LoopModel) -> list[tuple[FloatArray, FloatArray]]:  # fmt: skip
    """Start directions to try, best first: the closest to the goal for ``target``, else the order found
    (keeping the assignment's signs best first)."""
    pairs = list(zip(dirs, second, strict=True))
    if goal is not None:
        g = goal / max(float(np.linalg.norm(goal)), 1e-300)
        pairs.sort(key=lambda p: -float(p[0] @ g) / max(float(np.linalg.norm(p[0])), 1e-300))
    return pairs


def _signs_ok(x: FloatArray, prev: FloatArray, signs: FloatArray, step: float, tol: Tolerances) -> bool:
    slack = 1e3 * tol.angle + _DIP * step
    if np.any(x * signs < -slack):
        return False
    big = np.abs(prev) > slack
    return bool(np.all(np.sign(x[big]) == np.sign(prev[big])))


def _step(red: _Reduced, y: FloatArray, level: float, step: float, tangent: FloatArray | None,
          starts: list[tuple[FloatArray, FloatArray]], pinv: FloatArray, choose: str, goal: FloatArray | None,
          sweep: tuple[Any, Any, float], tol: Tolerances) -> tuple[FloatArray, FloatArray] | None:  # fmt: skip
    """One step from fold ``level`` to ``level + step``: (new y, tangent in y) or None."""
    B, signs = red.B, red.model.signs
    new = level + step
    x = B @ y
    if level == 0.0:
        for d, e in starts:
            yp = pinv @ (new * d + new * new * e)
            k = int(np.argmax(np.abs(B @ yp)))
            yp = yp * (new / abs(float((B @ yp)[k])))
            got = red.correct(yp, k)
            if got is not None and _signs_ok(B @ got, x, signs, step, tol) and abs(np.abs(B @ got).max() - new) < 1e-9:
                return got, pinv @ d
        return None
    N = red.null(y)
    if N.shape[1] == 0:
        return None
    prev = tangent if tangent is not None else y
    cands: list[FloatArray] = []
    base = N @ (N.T @ prev)
    if np.linalg.norm(base) > 1e-12:
        cands.append(base)
    if choose == "target" and goal is not None:
        tg = N @ (N.T @ (pinv @ goal - y))
        if np.linalg.norm(tg) > 1e-12:
            cands.insert(0, tg)
    if choose == "clearance":
        nb = np.linalg.norm(base) if len(cands) else 1.0
        for j in range(N.shape[1]):
            for s in (1.0, -1.0):
                c = base + s * 0.5 * nb * N[:, j]
                cands.append(c)
    best: tuple[float, FloatArray, FloatArray] | None = None
    for t in cands:
        xt = B @ t
        k = int(np.argmax(np.abs(x)))
        if abs(xt[k]) < 1e-12 or np.sign(xt[k]) != np.sign(x[k]):
            continue
        yp = y + t * (step / abs(xt[k]))
        kk = int(np.argmax(np.abs(B @ yp)))
        got = red.correct(yp, kk)
        if got is None:
            continue
        xg = B @ got
        if abs(np.abs(xg).max() - new) > 1e-6 * max(new, 1.0):
            got = red.correct(got * (new / np.abs(xg).max()), int(np.argmax(np.abs(xg))))
            if got is None:
                continue
            xg = B @ got
        if not _signs_ok(xg, x, signs, step, tol):
            continue
        if choose == "clearance" and np.any(np.abs(xg) < np.abs(x) - (1e3 * tol.angle + _DIP * step)):
            continue  # clearance never buys room by unfolding a crease (the stow must get more compact)
        if choose != "clearance":
            return got, (got - y) / step
        tris, pairs, margin = sweep
        st = red.model.state(xg, float("nan"))
        score = separation_score(st, tris=tris, pairs=pairs, margin=margin, tol=tol)
        if best is None or score > best[0]:
            best = (score, got, (got - y) / step)
    if best is None:
        return None
    return best[1], best[2]

