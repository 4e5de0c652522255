"""The loop-closure constraint system of a crease pattern and its Newton corrector (used by
:mod:`thickpanel.kinematics`).

Unknowns are the fold angles of the folding creases (mountain, valley and seams). Per interior
vertex, the product of the rotations about its flat-state crease directions (counter-clockwise,
each pointing away from the vertex) must be the identity (Tachi 2009 "Simulation of rigid
origami"; Belcastro & Hull 2002, Linear Algebra Appl. 348); for every seam the full rigid motion
composed around the tube must be the identity. Crossing crease ``k`` from the panel clockwise
of it to the panel counter-clockwise of it rotates by ``+rho_k`` about the outward direction,
which is the pose convention of :mod:`thickpanel.poses` (child left of the hinge direction turns
by ``+rho``) whichever way the crease is stored, so loop residuals and panel poses agree.
"""

from __future__ import annotations

import weakref
from dataclasses import dataclass
from functools import cached_property
from typing import Any

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from .errors import FoldError
from .pattern import CreasePattern
from .poses import FoldState, closure_error, compose_poses, default_base_panel, edge_transforms, spanning_tree
from .tolerances import Tolerances
from .typing import FloatArray, IntArray

__all__ = ["LoopModel", "loop_model"]

_MAX_NEWTON = 16  # corrector iterations per step before the step is halved
DAMPING = 1e-10  # relative Levenberg-Marquardt damping (picks the minimum-norm correction)


@dataclass(eq=False)
class LoopModel:
    """The loop-closure constraint system of one pattern (built once, reused by every solve).

    Attributes
    ----------
    pattern : CreasePattern
    var_crease : (n,) int
        Crease holding each unknown (a seam's angle lives at its crease ``a``).
    col_of : (m,) int
        Unknown index of every crease, -1 when it does not fold.
    signs : (n,) float
        Assignment sign of each unknown: +1 valley, -1 mountain.
    loop_vertex : (L,) int
        Interior vertices with a loop constraint.
    slot_var : (L, D) int
        Unknown index of the k-th crease counter-clockwise around each vertex (-1: flat or padding).
    slot_u : (L, D, 3) float
        Outward unit direction of that crease in the flat sheet.
    cycles : tuple of (k, 3) int arrays
        Extra panel cycles (seams, holes) as (parent, child, crease) steps closing on themselves.
    base : int
    tree : list of (parent, child, crease)
    ext : float, mm
        Sheet size used to make translation residuals dimensionless.
    """

    pattern: CreasePattern
    var_crease: IntArray
    col_of: IntArray
    signs: FloatArray
    loop_vertex: IntArray
    slot_var: IntArray
    slot_u: FloatArray
    cycles: tuple[IntArray, ...]
    base: int
    tree: list[tuple[int, int, int]]
    ext: float

    @property
    def n(self) -> int:
        return int(len(self.var_crease))

    @property
    def n_rows(self) -> int:
        return 3 * len(self.loop_vertex) + 6 * len(self.cycles)

    # ------------------------------------------------------------------ evaluation
    def angles(self, x: FloatArray) -> FloatArray:
        """(m,) crease angles for unknowns ``x`` (seam angles copied to both seam creases)."""
        ang = np.zeros(self.pattern.n_creases)
        ang[self.var_crease] = x
        for s in self.pattern.seams:
            ang[s.b] = ang[s.a]
        return ang

    def residual_jacobian(self, x: FloatArray, *, jac: bool = True) -> tuple[FloatArray, sp.csr_matrix | None]:
        """Residuals (n_rows,) and sparse Jacobian (n_rows, n) at unknowns ``x`` (rad)."""
        rows_r: list[FloatArray] = []
        ri: list[IntArray] = []
        ci: list[IntArray] = []
        vals: list[FloatArray] = []
        nl = len(self.loop_vertex)
        if nl:
            rho = np.where(self.slot_var >= 0, np.append(x, 0.0)[self.slot_var], 0.0)
            c = np.broadcast_to(np.eye(3), (nl, 3, 3)).copy()
            omegas = np.empty((nl, self.slot_var.shape[1], 3))
            for k in range(self.slot_var.shape[1]):
                u = self.slot_u[:, k]
                omegas[:, k] = np.einsum("lij,lj->li", c, u)
                c = c @ _rodrigues(u, rho[:, k])
            r = 0.5 * np.stack([c[:, 2, 1] - c[:, 1, 2], c[:, 0, 2] - c[:, 2, 0], c[:, 1, 0] - c[:, 0, 1]], axis=1)
            rows_r.append(r.reshape(-1))
            if jac:
                li, kk = self._loop_slots
                vals.append(omegas[li, kk].T.reshape(-1))
        row0 = 3 * nl
        for cyc in self.cycles:
            r6, cols, jv = self._cycle(cyc, x)
            rows_r.append(r6)
            if jac:
                for j in range(6):
                    ri.append(np.full(len(cols), row0 + j))
                    ci.append(cols)
                    vals.append(jv[:, j])
            row0 += 6
        res = np.concatenate(rows_r) if rows_r else np.zeros(0)
        if not jac:
            return res, None
        if not vals:
            return res, sp.csr_matrix((self.n_rows, self.n))
        if not self.cycles:  # fixed sparsity: fill the cached CSR structure in place
            data = np.concatenate(vals)[self._loop_csr[0]]
            indices, indptr = self._loop_csr[1], self._loop_csr[2]
            return res, sp.csr_matrix((data, indices, indptr), shape=(self.n_rows, self.n))
        li, kk = self._loop_slots
        ri = [np.concatenate([3 * li + j for j in range(3)])] + ri
        ci = [np.tile(self.slot_var[li, kk], 3)] + ci
        J = sp.csr_matrix((np.concatenate(vals), (np.concatenate(ri), np.concatenate(ci))), shape=(self.n_rows, self.n))
        return res, J

    @cached_property
    def _loop_slots(self) -> tuple[IntArray, IntArray]:
        return np.nonzero(self.slot_var >= 0)  # type: ignore[return-value]

    @cached_property
    def _loop_csr(self) -> tuple[IntArray, IntArray, IntArray]:
        """Order, column indices and row pointers of the loop rows in CSR form."""
        li, kk = self._loop_slots
        rows = np.concatenate([3 * li + j for j in range(3)])
        cols = np.tile(self.slot_var[li, kk], 3)
        order = np.lexsort((cols, rows))
        indptr = np.concatenate([[0], np.cumsum(np.bincount(rows, minlength=self.n_rows))])
        return order, cols[order], indptr

    def _cycle(self, cyc: IntArray, x: FloatArray) -> tuple[FloatArray, IntArray, FloatArray]:
        ang = self.angles(x)
        rel = edge_transforms(self.pattern, cyc[:, 0], cyc[:, 1], cyc[:, 2], ang)
        unit = edge_transforms(self.pattern, cyc[:, 0], cyc[:, 1], cyc[:, 2], ang + 1e-3)  # axis probe
        t = np.eye(4)
        cols: list[int] = []
        jv: list[FloatArray] = []
        for k in range(len(cyc)):
            col = int(self.col_of[cyc[k, 2]])
            if col >= 0:
                # spatial twist of this hinge: axis and point from the child's side, mapped by t
                w_rel = _twist_of(rel[k], unit[k])
                rw = t[:3, :3] @ w_rel[0]
                q = t[:3, :3] @ w_rel[1] + t[:3, 3]
                cols.append(col)
                jv.append(np.concatenate([rw, np.cross(q, rw) / self.ext]))
            t = t @ rel[k]
        r = 0.5 * np.array([t[2, 1] - t[1, 2], t[0, 2] - t[2, 0], t[1, 0] - t[0, 1]])
        return np.concatenate([r, t[:3, 3] / self.ext]), np.array(cols, dtype=np.int64), np.array(jv).reshape(-1, 6)

    def state(self, x: FloatArray, t: float) -> FoldState:
        """A :class:`FoldState` for unknowns ``x`` with poses composed from the base panel."""
        ang = self.angles(x)
        poses = compose_poses(self.pattern, ang, base=self.base, tree=self.tree)
        err = closure_error(self.pattern, ang, poses)
        ang.setflags(write=False)
        poses.setflags(write=False)
        return FoldState(self.pattern, ang, poses, t=float(t), closure_error=err, base_panel=self.base)


def _rodrigues(u: FloatArray, a: FloatArray) -> FloatArray:
    """(k, 3, 3) rotations by angles ``a`` about unit axes ``u`` through the origin."""
    x, y, z = u[:, 0], u[:, 1], u[:, 2]
    c, s = np.cos(a), np.sin(a)
    C = 1.0 - c
    r = np.empty((len(u), 3, 3))
    r[:, 0, 0] = c + x * x * C
    r[:, 0, 1] = x * y * C - z * s
    r[:, 0, 2] = x * z * C + y * s
    r[:, 1, 0] = y * x * C + z * s
    r[:, 1, 1] = c + y * y * C
    r[:, 1, 2] = y * z * C - x * s
    r[:, 2, 0] = z * x * C - y * s
    r[:, 2, 1] = z * y * C + x * s
    r[:, 2, 2] = c + z * z * C
    return r


def _twist_of(m0: FloatArray, m1: FloatArray) -> tuple[FloatArray, FloatArray]:
    """Axis direction and a point of the rotation taking ``m0`` to ``m1`` (a pure hinge turn)."""
    d = m1 @ np.linalg.inv(m0)
    rot = d[:3, :3]
    w = np.array([rot[2, 1] - rot[1, 2], rot[0, 2] - rot[2, 0], rot[1, 0] - rot[0, 1]])
    w = w / np.linalg.norm(w)
    # point on the axis: least-squares solution of (I - R) p = t, orthogonal to w
    p = np.linalg.lstsq(np.eye(3) - rot, d[:3, 3], rcond=None)[0]
    return np.asarray(w, dtype=float), np.asarray(p, dtype=float)


_MODELS: weakref.WeakKeyDictionary[CreasePattern, LoopModel] = weakref.WeakKeyDictionary()


def loop_model(pattern: CreasePattern) -> LoopModel:
    """The (cached) :class:`LoopModel` of ``pattern``.

    Raises
    ------
    FoldError
        When the panels are not connected or nothing folds.
    """
    model = _MODELS.get(pattern)
    if model is None:
        model = _build_model(pattern)
        _MODELS[pattern] = model
    return model


def _build_model(pattern: CreasePattern) -> LoopModel:
    if pattern.n_panels == 0:
        raise FoldError("the pattern has no panels; nothing to fold (reachable range 0..0 rad)")
    base = default_base_panel(pattern)
    tree = spanning_tree(pattern, base)
    kinds = pattern.kinds
    seam_a = [s.a for s in pattern.seams]
    var = [c for c, k in enumerate(kinds) if k in ("mountain", "valley")] + seam_a
    var_crease = np.array(sorted(var), dtype=np.int64)
    col_of = np.full(pattern.n_creases, -1, dtype=np.int64)
    col_of[var_crease] = np.arange(len(var_crease))
    seam_kind = {s.a: s.kind for s in pattern.seams}
    signs = np.array([1.0 if seam_kind.get(c, kinds[c]) == "valley" else -1.0 for c in var_crease])
    if len(var_crease) == 0:
        raise FoldError(
            f"pattern {pattern.name!r} has no mountain, valley or seam crease and no interior vertex that "
            "could fold (reachable range 0..0 rad)"
        )
    offsets, star_c, _ = pattern.star
    verts = [int(v) for v in pattern.interior_vertices]
    deg = max((int(offsets[v + 1] - offsets[v]) for v in verts), default=0)
    slot_var = np.full((len(verts), deg), -1, dtype=np.int64)
    slot_u = np.zeros((len(verts), deg, 3))
    slot_u[:, :, 0] = 1.0
    cr, vx = pattern.creases, pattern.vertices
    for i, v in enumerate(verts):
        for k, c in enumerate(star_c[offsets[v] : offsets[v + 1]]):
            c = int(c)
            other = cr[c, 1] if cr[c, 0] == v else cr[c, 0]
            d = vx[other] - vx[v]
            slot_u[i, k, :2] = d / np.linalg.norm(d)
            slot_var[i, k] = col_of[c]
    ext = float(np.ptp(vx, axis=0).max()) or 1.0
    cycles = _extra_cycles(pattern, tree, len(verts))
    return LoopModel(
        pattern, var_crease, col_of, signs, np.array(verts, dtype=np.int64), slot_var, slot_u,
        cycles, base, tree, ext,
    )  # fmt: skip


def _extra_cycles(pattern: CreasePattern, tree: list[tuple[int, int, int]], n_loops: int) -> tuple[IntArray, ...]:
    """Panel cycles not bounded by interior vertices: one per seam (a tube's circumference)."""
    import networkx as nx

    g = pattern.panel_graph
    dim = g.number_of_edges() - g.number_of_nodes() + nx.number_connected_components(g)
    if dim <= n_loops:
        return ()
    flat = nx.Graph()
    flat.add_nodes_from(g.nodes)
    flat.add_edges_from((a, b, d) for a, b, d in g.edges(data=True) if "seam" not in d)
    cycles: list[IntArray] = []
    cp = pattern.crease_panels
    for s in pattern.seams:
        x, y = int(max(cp[s.a])), int(max(cp[s.b]))
        try:
            back = nx.shortest_path(flat, y, x)
        except nx.NetworkXNoPath:
            continue
        steps = [(x, y, s.a)] + [(back[i], back[i + 1], int(g.edges[back[i], back[i + 1]]["crease"])) for i in
                                 range(len(back) - 1)]  # fmt: skip
        cycles.append(np.array(steps, dtype=np.int64))
        flat.add_edge(x, y, crease=s.a, seam=s.b)
    if dim > n_loops + len(cycles):
        # panel cycles around holes or interior slits: close the full rigid motion around the
        # fundamental cycle of every non-tree edge (redundant with the vertex loops, which only
        # costs solver time; such patterns are rare)
        cycles.extend(_fundamental_cycles(g, tree))
    return tuple(cycles)


def _fundamental_cycles(g: object, tree: list[tuple[int, int, int]]) -> list[IntArray]:
    """(k, 3) steps (from, to, crease) around the fundamental cycle of every non-tree edge."""
    parent: dict[int, tuple[int, int]] = {}
    depth: dict[int, int] = {}
    for a, b, c in tree:
        parent[b] = (a, c)
        depth.setdefault(a, 0)
        depth[b] = depth[a] + 1
    used = {(min(a, b), max(a, b)) for a, b, _ in tree}
    out: list[IntArray] = []
    for a, b, d in g.edges(data=True):  # type: ignore[attr-defined]
        if (min(a, b), max(a, b)) in used or "seam" in d:
            continue
        up_a: list[tuple[int, int, int]] = []
        up_b: list[tuple[int, int, int]] = []
        x, y = a, b
        while x != y:
            if depth.get(x, 0) >= depth.get(y, 0):
                px, cx = parent[x]
                up_a.append((x, px, cx))
                x = px
            else:
                py, cy = parent[y]
                up_b.append((py, y, cy))
                y = py
        steps = up_a + list(reversed(up_b)) + [(b, a, int(d["crease"]))]
        out.append(np.array(steps, dtype=np.int64))
    return out


# ---------------------------------------------------------------------------------------- corrector
@dataclass
class _Solve:
    """Result of one corrector run."""

    x: FloatArray
    ok: bool
    iters: int
    residual: float
    factor: Any = None  # last factorisation used (reused for the next tangent)


class Factor:
    """Factorised damped normal equations of the Jacobian with one unknown held fixed."""

    def __init__(self, J: sp.csr_matrix, fixed: int, damping: float = DAMPING) -> None:
        n = J.shape[1]
        self.free = np.ones(n, dtype=bool)
        self.free[fixed] = False
        self.fixed = fixed
        self.J = J
        self.A = J[:, self.free].tocsc()
        self.col = J[:, [fixed]].toarray().ravel()
        self.N = (self.A.T @ self.A).tocsc()
        self.scale = (float(self.N.diagonal().max()) if self.N.shape[0] else 1.0) or 1.0
        self.lu: Any = None
        self.refactor(damping)

    def refactor(self, damping: float) -> None:
        self.damping = damping
        if not self.N.shape[0]:
            return
        N = self.N + sp.identity(self.N.shape[0], format="csc") * (damping * self.scale)
        try:
            self.lu = spla.splu(N, permc_spec="MMD_AT_PLUS_A")
        except RuntimeError:
            self.lu = None

    def solve(self, b: FloatArray) -> FloatArray | None:
        """Damped least-squares step for residual-space vector ``b`` (free unknowns only)."""
        if not self.free.any():
            return np.zeros(0)
        if self.lu is None:
            return None
        out = self.lu.solve(self.A.T @ b)
        return out if np.all(np.isfinite(out)) else None

    def tangent(self) -> FloatArray | None:
        """Null-space direction with unit rate of the fixed unknown."""
        d = self.solve(-self.col)
        if d is None:
            return None
        t = np.zeros(len(self.free))
        t[self.fixed] = 1.0
        t[self.free] = d
        return t


def newton_correct(model: LoopModel, x0: FloatArray, fixed: int, tol: Tolerances,
                   factor: Factor | None = None) -> _Solve:
    """Newton corrector with unknown ``fixed`` held at its value in ``x0``.

    Gauss-Newton on the loop residuals with Levenberg-Marquardt damping: the damping is tiny (a
    minimum-norm correction for patterns with several degrees of freedom) while the residual
    falls, and grows when a step would raise it, which keeps the first steps off the singular
    flat state from running away. A run that stalls at a non-zero residual is a least-squares
    point, not a fold state, and fails.
    """
    x = x0.copy()
    goal = tol.closure * 1e-3
    r, _ = model.residual_jacobian(x, jac=False)
    res = float(np.abs(r).max()) if len(r) else 0.0
    norm = float(np.linalg.norm(r))
    slow = 0
    fac = factor if factor is not None and factor.fixed == fixed else None
    chord = fac is not None
    for it in range(_MAX_NEWTON):
        if not np.isfinite(res):
            return _Solve(x, False, it, res, fac)
        if res <= goal:
            return _Solve(x, True, it, res, fac)
        if fac is None or not chord:
            _, J = model.residual_jacobian(x)
            assert J is not None
            damp = fac.damping / 10 if fac is not None and fac.damping > DAMPING else DAMPING
            fac = Factor(J, fixed, damping=damp)
        for _ in range(8):
            dx = fac.solve(-r)
            if dx is None:
                return _Solve(x, False, it, res, fac)
            xt = x.copy()
            xt[fac.free] += dx
            rt, _ = model.residual_jacobian(xt, jac=False)
            nt = float(np.linalg.norm(rt))
            if np.isfinite(nt) and nt < norm:
                break
            fac.refactor(fac.damping * 100)
        else:
            return _Solve(x, False, it, res, fac)
        slow = slow + 1 if nt > 0.9 * norm else 0
        chord = nt < 0.25 * norm  # fast enough: keep this factorisation for the next step
        x, r, norm = xt, rt, nt
        res = float(np.abs(r).max())
        if slow >= 3:
            return _Solve(x, res <= goal, it, res, fac)
    return _Solve(x, res <= goal, _MAX_NEWTON, res, fac)


def damped_lsq(A: sp.csr_matrix, b: FloatArray) -> FloatArray | None:
    """Damped least-squares solution of ``A x = b`` (minimum norm where ``A`` is rank deficient)."""
    if A.shape[1] == 0:
        return np.zeros(0)
    N = (A.T @ A).tocsc()
    scale = float(N.diagonal().max()) or 1.0
    N = N + sp.identity(N.shape[0], format="csc") * (DAMPING * scale)
    try:
        out = spla.spsolve(N, A.T @ b, permc_spec="MMD_AT_PLUS_A")
    except RuntimeError:
        return None
    out = np.asarray(out, dtype=float)
    return out if np.all(np.isfinite(out)) else None
