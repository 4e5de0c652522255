"""Rigid-foldability verdicts and the closed-form degree-4 fold relations.

Degree-4 flat-foldable vertex (Huffman 1976, IEEE Trans. Computers C-25(10); restated in Tachi
2009, Evans et al. 2015 R. Soc. Open Sci. 2:150067 and Lang 2018 *Twists, Tilings, and
Tessellations*): with sectors ``(a, b, pi - a, pi - b)`` counter-clockwise and the "odd" crease
``o`` (the one whose sign differs from the other three, Maekawa) between the sectors ``a`` (from
crease ``o - 1``) and ``b`` (to crease ``o + 1``), the rigid branch selected by the assignment is

    rho(o+1) = rho(o-1),  rho(o+2) = -rho(o),
    tan(rho(o)/2) = -p tan(rho(o-1)/2),   p = cos((a+b)/2) / cos((a-b)/2).

This is the branch-A form of the references with ``c1 = o-1``; relabelling gives their branch B
(``q = -p`` of the relabelled sectors), so one formula covers both. Our pose convention
(:mod:`thickpanel.poses`: valley > 0 lifts both sides to +z, creases counter-clockwise seen from
+z) gives exactly this relation, including the sign; the relation is odd in all angles, so it does
not depend on which of mountain or valley is called positive. ``tests/test_kinematics_degree4.py``
checks it against the general loop-closure solver.

Across a quad mesh of such vertices the half-angle tangents are linear in one parameter per
connected cluster, ``tan(rho_k/2) = m_k tau``, when the multipliers compose to 1 around every
cell (Tachi 2009; Evans et al. 2015); otherwise the pattern is locked in the flat state.
"""

from __future__ import annotations

import re
from collections import deque
from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Any

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from .errors import FoldError
from .pattern import CreasePattern, cid, vid
from .tolerances import DEFAULT_TOL, Tolerances
from .typing import FloatArray, IntArray

if TYPE_CHECKING:
    from .loop_model import LoopModel

__all__ = ["RigidVerdict", "rigid_foldability", "ClosedForm", "closed_form_path", "locked_where", "nullity"]

_MULT_RTOL = 1e3  # x tol.closure: relative mismatch of two routes' multipliers that counts as "not 1"
_RANK_RTOL = 1e-7  # singular values below this fraction of the largest count as zero (off flat, the
# smallest true singular values of the constraint Jacobian are of the order of the fold, >> 1e-7)
_SHIFT = 1e-6  # relative negative shift of the shift-invert eigensolver (keeps J^T J - sigma I regular)
_DENSE_MAX = 300  # unknowns up to which the rank comes from a dense SVD (sparse eigensolver above)

PROBE_FOLD: float = float(np.deg2rad(10.0))
"""Largest fold (rad) the verdict asks a pattern to reach rigidly: far enough off flat that the
second-order locking of a non-rigid pattern shows (residual ~ rho^2 >> tol.closure)."""


@dataclass(frozen=True)
class RigidVerdict:
    """Whether a pattern folds with rigid panels and ideal hinges.

    Attributes
    ----------
    kind : str
        ``rigid`` (folds rigidly off flat), ``locked`` (only the flat state) or ``unknown``.
    dof : int
        Degrees of freedom after the first step off flat (0 when locked, -1 when unknown).
    where : tuple of str
        Vertex ids (``V012``) and crease ids where loop closure fails, for ``locked``.
    reason : str
        One sentence saying how the verdict was reached.
    reach : float, rad
        Largest fold magnitude checked (``PROBE_FOLD`` when rigid, 0 when locked).
    """

    kind: str
    dof: int
    where: tuple[str, ...] = ()
    reason: str = ""
    reach: float = 0.0

    def summary(self) -> str:
        """One line for reports."""
        loc = f" at {', '.join(self.where[:8])}" if self.where else ""
        return f"{self.kind} (dof {self.dof}){loc}: {self.reason}"


@dataclass
class ClosedForm:
    """Closed-form degree-4 parameterisation ``tan(rho/2) = m * tau`` per cluster.

    Attributes
    ----------
    applies : bool
        Every interior vertex is a flat-foldable degree-4 vertex with four folding creases.
    ok : bool
        It applies and the multipliers compose to 1 everywhere (rigidly foldable).
    mult : (n,) float
        Multiplier ``m_k`` of every unknown (relative to its cluster's reference crease).
    cluster : (n,) int
        Cluster index of every unknown.
    where : list of str
        Vertices/creases where the assignment or the multipliers fail.
    reason : str
    """

    applies: bool
    ok: bool
    mult: FloatArray
    cluster: IntArray
    where: list[str] = field(default_factory=list)
    reason: str = ""

    def direction(self) -> FloatArray:
        """Unit-scale start direction off flat: the multipliers normalised per cluster."""
        out = self.mult.copy()
        for c in np.unique(self.cluster):
            sel = self.cluster == c
            out[sel] /= np.abs(out[sel]).max()
        return out

    def at_level(self, level: float, driver: int | None) -> FloatArray:
        """Unknowns with the largest fold (or the driver's fold) at magnitude ``level`` (rad).

        Every cluster folds to the same largest magnitude.
        """
        x = np.zeros(len(self.mult))
        if driver is not None:
            sel = self.cluster == self.cluster[driver]
            tau = np.tan(level / 2) / abs(self.mult[driver])
            peak = 2 * np.arctan(tau * np.abs(self.mult[sel]).max())
        else:
            peak = level
        for c in np.unique(self.cluster):
            sel = self.cluster == c
            m = self.mult[sel]
            tau = np.tan(peak / 2) / np.abs(m).max()
            x[sel] = 2 * np.arctan(m * tau)
        return x


def _vertex_relation(model: LoopModel, i: int, tol: Tolerances) -> tuple[IntArray, FloatArray] | str:
    """Unknowns around loop ``i`` and their multipliers relative to crease ``o - 1``, or a reason."""
    slots = model.slot_var[i]
    v = int(model.loop_vertex[i])
    if np.count_nonzero(slots >= 0) != 4 or len(slots) < 4 or np.any(slots[:4] < 0):
        return f"vertex {vid(v)} is not a degree-4 vertex of four folding creases"
    u = model.slot_u[i, :4, :2]
    ang = np.arctan2(u[:, 1], u[:, 0])
    sect = np.mod(np.roll(ang, -1) - ang, 2 * np.pi)  # sect[k]: from crease k to crease k+1
    if abs(sect.sum() - 2 * np.pi) > tol.kawasaki or abs(sect[0] + sect[2] - np.pi) > tol.kawasaki:
        return f"vertex {vid(v)} is not a flat-foldable developable degree-4 vertex"
    s = model.signs[slots[:4]]
    odd = [k for k in range(4) if np.count_nonzero(s == s[k]) == 1]
    if len(odd) != 1:
        return (
            f"vertex {vid(v)} has {np.count_nonzero(s > 0)} valley and {np.count_nonzero(s < 0)} mountain creases; "
            "a rigid degree-4 branch needs 3 of one and 1 of the other (Maekawa)"
        )
    o = odd[0]
    a, b = sect[(o - 1) % 4], sect[o]
    p = np.cos((a + b) / 2) / np.cos((a - b) / 2)
    if p < -tol.angle:
        return (
            f"vertex {vid(v)}: the odd crease {cid(int(model.var_crease[slots[o]]))} does not bound the smallest "
            "sector, so no rigid branch has this assignment (big-little-big)"
        )
    mult = np.zeros(4)
    mult[(o - 1) % 4] = 1.0
    mult[(o + 1) % 4] = 1.0
    mult[o] = -p
    mult[(o + 2) % 4] = p
    return slots[:4].copy(), mult


def closed_form_path(model: LoopModel, *, tol: Tolerances = DEFAULT_TOL) -> ClosedForm | None:
    """Closed-form degree-4 parameterisation of ``model``, or None when it does not apply."""
    n = model.n
    rel: list[tuple[IntArray, FloatArray]] = []
    for i in range(len(model.loop_vertex)):
        r = _vertex_relation(model, i, tol)
        if isinstance(r, str):
            if "Maekawa" in r or "big-little-big" in r:
                where = [vid(int(model.loop_vertex[i]))]
                return ClosedForm(True, False, np.ones(n), np.zeros(n, dtype=np.int64), where, r)
            return None
        rel.append(r)
    by_var: list[list[int]] = [[] for _ in range(n)]
    for i, (slots, _) in enumerate(rel):
        for k in slots:
            by_var[int(k)].append(i)
    mult = np.full(n, np.nan)
    cluster = np.full(n, -1, dtype=np.int64)
    came: dict[int, tuple[int, int]] = {}  # loop -> (previous loop, via unknown)
    n_cl = 0
    for start in range(n):
        if cluster[start] >= 0:
            continue
        mult[start], cluster[start] = model.signs[start], n_cl
        queue = deque((i, start) for i in by_var[start])
        for i, _ in list(queue):
            came.setdefault(i, (-1, start))
        seen = set(by_var[start])
        while queue:
            i, via = queue.popleft()
            slots, mu = rel[i]
            j = int(np.nonzero(slots == via)[0][0])
            lam = mult[via] / mu[j] if mu[j] != 0 else np.nan
            for k, mk in zip(slots.tolist(), mu.tolist(), strict=True):
                want = mk * lam
                if cluster[k] < 0:
                    mult[k], cluster[k] = want, n_cl
                    for i2 in by_var[k]:
                        if i2 not in seen:
                            seen.add(i2)
                            came[i2] = (i, k)
                            queue.append((i2, k))
                elif abs(mult[k] - want) > tol.angle + _MULT_RTOL * tol.closure * abs(want):
                    loop = _loop_between(came, i, by_var[k])
                    ratio = want / mult[k] if mult[k] != 0 else np.inf
                    verts = [vid(int(model.loop_vertex[q])) for q in loop]
                    return ClosedForm(
                        True, False, mult, cluster, verts + [cid(int(model.var_crease[k]))],
                        f"fold-angle multipliers around the cell through {', '.join(verts)} compose to "
                        f"{ratio:.9g}, not 1, so only the flat state closes (Tachi 2009; Evans et al. 2015)",
                    )  # fmt: skip
        n_cl += 1
    return ClosedForm(True, True, mult, cluster, [], f"{n_cl} cluster(s) of flat-foldable degree-4 vertices")


def _loop_between(came: dict[int, tuple[int, int]], i: int, others: list[int]) -> list[int]:
    """Loops on the two search routes that meet at loop ``i`` and a loop of ``others``."""

    def route(q: int) -> list[int]:
        out = []
        while q >= 0 and q not in out:
            out.append(q)
            q = came.get(q, (-1, 0))[0]
        return out

    a = route(i)
    best = a
    for q in others:
        if q == i:
            continue
        b = route(q)
        common = [x for x in a if x in b]
        if common:
            c = common[0]
            return a[: a.index(c) + 1] + list(reversed(b[: b.index(c)]))
        best = a + list(reversed(b))  # both routes end at the cluster's first crease
    return best


def nullity(J: sp.csr_matrix, *, rel: float = _RANK_RTOL) -> int:
    """Dimension of the null space of ``J`` (singular values below ``rel`` times the largest)."""
    n = J.shape[1]
    if n == 0:
        return 0
    if J.shape[0] == 0:
        return n
    if n <= _DENSE_MAX:
        s = np.linalg.svd(J.toarray(), compute_uv=False)
        s = np.concatenate([s, np.zeros(max(0, n - len(s)))])
        return int(np.count_nonzero(s <= rel * max(float(s.max()), 1e-300)))
    N = (J.T @ J).tocsc()
    top = float(spla.eigsh(N, k=1, which="LA", return_eigenvectors=False)[0])
    k = 8
    while True:
        k = min(k, n - 2)
        ev = spla.eigsh(N, k=k, sigma=-_SHIFT * top, which="LM", return_eigenvectors=False)
        small = int(np.count_nonzero(np.abs(ev) <= (rel**2) * top))
        if small < k or k >= n - 2:
            return small
        k *= 2


def locked_where(model: LoopModel, direction: FloatArray, *, tol: Tolerances = DEFAULT_TOL) -> list[str]:
    """Vertices whose loops stay open at the least-squares fold nearest ``direction`` (largest first)."""
    from .loop_model import damped_lsq

    x = direction * (PROBE_FOLD / max(float(np.abs(direction).max()), 1e-300))
    k = int(np.argmax(np.abs(x)))
    free = np.ones(model.n, dtype=bool)
    free[k] = False
    for _ in range(8):
        r, J = model.residual_jacobian(x)
        assert J is not None
        dx = damped_lsq(J[:, free], -r)
        if dx is None:
            break
        x[free] += dx
    r, _ = model.residual_jacobian(x, jac=False)
    nl = len(model.loop_vertex)
    per = np.linalg.norm(r[: 3 * nl].reshape(nl, 3), axis=1) if nl else np.zeros(0)
    out = [vid(int(model.loop_vertex[i])) for i in np.argsort(-per) if per[i] > 0.1 * per.max() > 0]
    if len(r) > 3 * nl and np.abs(r[3 * nl :]).max() > 0.1 * max(per.max(initial=0.0), 1e-300):
        out.append("seam cycle")
    return out


def rigid_foldability(pattern: CreasePattern, *, tol: Tolerances = DEFAULT_TOL) -> RigidVerdict:
    """Is ``pattern``, with its crease assignment, foldable with rigid panels and ideal hinges?

    The flat-state Jacobian is never used alone (it over-counts freedom at flat): flat-foldable
    degree-4 patterns are judged by composing the fold-angle multipliers around every cell and
    confirmed numerically; other patterns by following the fold to :data:`PROBE_FOLD` with the
    general solver. The degrees of freedom are counted at the first state off flat.

    Returns
    -------
    RigidVerdict
        ``kind`` ``rigid``, ``locked`` or ``unknown`` (solver failure, with the reason).

    Raises
    ------
    FoldError
        Only for unusable input (disconnected panels, nothing to fold).
    """
    from .kinematics import fold_path, loop_model, path_tracker, require_closed_flat

    model = loop_model(pattern)
    try:
        require_closed_flat(model, tol)
    except FoldError as exc:
        from .tubes import is_tube_strip, tube_rigid_foldability

        if is_tube_strip(pattern):  # a seamed tube: judged from its closed deployed state
            return tube_rigid_foldability(pattern, tol=tol)
        return RigidVerdict("unknown", -1, (), str(exc), 0.0)
    cf = closed_form_path(model, tol=tol) if not model.cycles else None
    if cf is not None and not cf.ok:
        return RigidVerdict("locked", 0, tuple(cf.where), cf.reason, 0.0)
    try:
        path = fold_path(pattern, target=PROBE_FOLD, n_states=3, tol=tol, closed_form=cf is not None)
    except FoldError as exc:
        if "does not fold rigidly" not in str(exc):
            raise
        sym_path, sym_note = _symmetric_probe(pattern, model, tol)
        if sym_path is None:
            where = locked_where(model, path_tracker(model, None, tol).direction, tol=tol)
            return RigidVerdict(
                "locked", 0, tuple(where),
                "the general solver finds no rigid fold off the flat state near the assignment's direction; the loops "
                "stay open (least-squares residual) first at the vertices listed" + sym_note,
            )  # fmt: skip
        path = sym_path
    except (np.linalg.LinAlgError, ArithmeticError, RuntimeError) as exc:
        return RigidVerdict("unknown", -1, (), f"the solver failed: {exc}", 0.0)
    first = path.states[1] if len(path.states) > 1 else path.states[0]
    _, J = model.residual_jacobian(np.asarray(first.angles[model.var_crease], dtype=float))
    assert J is not None
    try:
        dof = nullity(J)
    except (np.linalg.LinAlgError, ArithmeticError, RuntimeError) as exc:
        return RigidVerdict("unknown", -1, (), f"rank of the Jacobian off flat could not be found: {exc}")
    reach = float(path.meta.get("reachable", 0.0))
    how = (cf.reason + "; multipliers compose to 1 around every cell") if cf is not None else "general path following"
    if path.meta.get("solver") == "path_choice":
        how = (f"path following in the {path.meta['subspace']} subspace from a second-order start (the "
               "assignment's own start direction locks)")  # fmt: skip
    if path.stop_reason == "lock":
        return RigidVerdict(
            "rigid", dof, (),
            f"{how}; folds rigidly to {np.rad2deg(reach):.4g} deg, then the path locks", reach,
        )  # fmt: skip
    return RigidVerdict(
        "rigid", dof, (),
        f"{how}; followed to {np.rad2deg(reach):.4g} deg with closure error below {tol.closure:g}", reach,
    )  # fmt: skip


def _symmetric_probe(pattern: CreasePattern, model: LoopModel, tol: Tolerances) -> tuple[Any, str]:
    """Second chance for a pattern whose default start locks: a fold inside its rotationally
    symmetric subspace from a second-order feasible start (:mod:`thickpanel.path_choice`).

    Returns (path to :data:`PROBE_FOLD` or None, a clause for the locked verdict's reason).
    """
    from .path_choice import chosen_path
    from .symmetry import rotational_symmetry

    sym = rotational_symmetry(model, tol=tol)
    if sym.order < 2:
        return None, ""
    try:
        path = chosen_path(pattern, choose="symmetric", target=PROBE_FOLD, n_states=3, stop_at_crossing=False, tol=tol)
    except FoldError as exc:
        ob = re.search(r"obstruction ([0-9.eE+-]+)", str(exc))
        if ob:
            return None, (
                f"; no fold leaves flat inside the {sym.order}-fold symmetric subspace either (second-order "
                f"obstruction {float(ob.group(1)):.3g}: no first-order direction there closes at second order)"
            )
        return None, f"; the {sym.order}-fold symmetric subspace was tried too ({exc})"
    if path.stop_reason != "target":
        reach = np.rad2deg(float(path.meta["reachable"]))
        return None, f"; inside the {sym.order}-fold symmetric subspace the fold stops at {reach:.3g} deg"
    return path, ""
