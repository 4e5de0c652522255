"""Deployment path of a wrapped-hub sheet and the compliance its hinges must provide.

The stowed state of a ``hub-wrap`` sheet is known directly (its construction gives every panel's
stowed pose, :func:`thickpanel.wrap.sheet.wrap_info`); it is not reached by the rigid-panel solver,
because the pattern is not rigidly foldable with ideal hinges (:mod:`thickpanel.wrap.verdict`).
This module makes a :class:`~thickpanel.poses.FoldPath` from the deployed state (identity poses,
t = 0) to the stowed poses (t = 1) and measures what the hinges must give along it.

Method (our own; stated in reports as :data:`METHOD`):

1. fold angles interpolated linearly, ``rho(t) = t rho_stowed`` (every crease at the same fraction
   of its stowed fold), and panel poses composed from them along a breadth-first spanning tree of
   the panel graph rooted at the hub (:func:`thickpanel.poses.compose_poses`); the loops the tree
   leaves open carry the misfit;
2. a Levenberg-Marquardt least-squares relaxation of the panel poses (hub fixed, every panel
   rigid, 6 unknowns per panel) that minimises the mismatch of every hinge's two end points as
   carried by its two panels, plus a weak pull (weight :data:`PULL`, per panel: centroid and two
   points one panel size away) towards the composed poses of step 1, so the relaxed state stays
   at the same stage of the deployment. This is the least-misfit state *near* the interpolated
   fold, a local least-squares optimum, not a proven global one;
3. the end states are exact: identity poses at t = 0, the construction's stowed poses at t = 1.

Limitation: every crease moves at the same fraction of its stowed fold, which swings long wrapped
arms far from any physical deployment; the figures are what *this* path needs, an upper estimate,
not the least compliance a sequenced deployment (arms unwrapped first, then the accordions) needs.

Compliance figures per sampled state (:class:`WrapCompliance`):

* per-vertex angular misfit: rotation angle of the loop product of the hinge rotations round each
  interior vertex, with the fold angles measured from the relaxed panel poses (zero for a state
  rigid panels and ideal hinges can take);
* per-hinge play: the larger distance between the hinge's two end points as carried by its two
  panels, mm.

Caution: these are geometric requirements of ideal rigid plates, not a hinge design. A furled
array stores elastic energy in its backing and hinges and is released at once when unrestrained;
the hub is a pinch point while the arms wrap and unwrap. Assess both against the applicable
standards and with licensed engineering review.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla
from scipy.spatial.transform import Rotation

from ..errors import FoldError
from ..pattern import CreasePattern, cid, vid
from ..poses import FoldPath, FoldState, compose_poses, spanning_tree
from ..tolerances import DEFAULT_TOL, Tolerances
from ..typing import FloatArray, IntArray
from .sheet import wrap_info

__all__ = ["WrapCompliance", "stowed_fold_path", "measured_folds", "vertex_misfit", "hinge_play",
           "METHOD", "PULL", "WRAP_CAUTION"]

PULL = 0.05  # dimensionless weight of the pull towards the interpolated poses (our own choice)
_GN_ITER = 25  # Levenberg-Marquardt iterations per state
_LM = 1e-4  # relative Levenberg-Marquardt damping at the start
_LM_MIN = 1e-9  # its floor
_LM_TRIES = 8  # damping increases (x10) tried before a state counts as converged
_STEP_STOP = 1e-9  # x sheet size: increment below which the relaxation has converged
_COST_RTOL = 1e-4  # relative decrease of the squared residual below which it has converged

METHOD = ("fold angles interpolated linearly from 0 to their stowed values and composed along a "
          "breadth-first spanning tree from the hub, then a Levenberg-Marquardt least-squares relaxation "
          "of the rigid panel poses (hub fixed) minimising hinge end-point mismatch with a weak pull "
          f"(weight {PULL:g}) towards the interpolated poses; end states exact (deployed = identity, "
          "stowed = the construction's poses)")

WRAP_CAUTION = (
    "A furled array stores elastic energy in its backing and hinges and springs open when released; the hub "
    "is a pinch point while the arms wrap and unwrap. These figures are geometric requirements, not a "
    "design: assess stored energy, restraint and release, pinch points and hinge fatigue against the "
    "applicable standards with licensed engineering review."
)


@dataclass(frozen=True)
class WrapCompliance:
    """Compliance the hinges must provide along a wrapped-hub deployment.

    Attributes
    ----------
    fractions : (k,) float
        Fold fraction of every sampled state (0 deployed, 1 stowed).
    vertices : (n,) int
        Interior vertices measured.
    vertex_misfit : (k, n) float, rad
        Rotation angle of the loop product of hinge rotations round each vertex.
    hinges : (h,) int
        Creases measured (every crease between two panels).
    hinge_play : (k, h) float, mm
        Largest end-point mismatch of each hinge.
    method : str
    """

    fractions: FloatArray
    vertices: IntArray
    vertex_misfit: FloatArray
    hinges: IntArray
    hinge_play: FloatArray
    method: str = METHOD

    @property
    def max_misfit_deg(self) -> float:
        """Largest per-vertex angular misfit over the path, degrees."""
        return float(np.degrees(self.vertex_misfit.max())) if self.vertex_misfit.size else 0.0

    @property
    def max_play_mm(self) -> float:
        """Largest per-hinge play over the path, mm."""
        return float(self.hinge_play.max()) if self.hinge_play.size else 0.0

    def worst_vertices(self, n: int = 5) -> list[tuple[str, float, float]]:
        """``(vertex id, misfit deg, t)`` of the ``n`` vertices with the largest misfit."""
        if not self.vertex_misfit.size:
            return []
        peak = self.vertex_misfit.max(axis=0)
        at = self.fractions[self.vertex_misfit.argmax(axis=0)]
        order = np.argsort(-peak, kind="stable")[:n]
        return [(vid(int(self.vertices[i])), float(np.degrees(peak[i])), float(at[i])) for i in order]

    def worst_hinges(self, n: int = 5) -> list[tuple[str, float, float]]:
        """``(crease id, play mm, t)`` of the ``n`` hinges with the largest play."""
        if not self.hinge_play.size:
            return []
        peak = self.hinge_play.max(axis=0)
        at = self.fractions[self.hinge_play.argmax(axis=0)]
        order = np.argsort(-peak, kind="stable")[:n]
        return [(cid(int(self.hinges[i])), float(peak[i]), float(at[i])) for i in order]

    def rows(self) -> list[dict[str, float]]:
        """Per sampled state: ``t``, largest vertex misfit (deg), largest and RMS hinge play (mm)."""
        out = []
        for k, t in enumerate(self.fractions.tolist()):
            mis = self.vertex_misfit[k]
            play = self.hinge_play[k]
            out.append({"t": float(t), "max_misfit_deg": float(np.degrees(mis.max())) if mis.size else 0.0,
                        "max_play_mm": float(play.max()) if play.size else 0.0,
                        "rms_play_mm": float(np.sqrt(np.mean(play ** 2))) if play.size else 0.0})
        return out

    def summary(self) -> str:
        """One line for reports."""
        wv = ", ".join(f"{v} {d:.3g} deg" for v, d, _ in self.worst_vertices(3))
        wh = ", ".join(f"{c} {p:.3g} mm" for c, p, _ in self.worst_hinges(3))
        return (f"largest vertex misfit {self.max_misfit_deg:.3g} deg (worst: {wv}); largest hinge play "
                f"{self.max_play_mm:.3g} mm (worst: {wh})")


def _folding_creases(pattern: CreasePattern) -> IntArray:
    cp = pattern.crease_panels
    return np.nonzero((cp >= 0).all(axis=1))[0].astype(np.int64)


def measured_folds(pattern: CreasePattern, poses: FloatArray) -> FloatArray:
    """(m,) rad: fold angle of every crease about its own line, measured from the two panel poses.

    The angle is that of the right panel's normal about the crease line relative to the left
    panel (convention of :mod:`thickpanel.poses`: ``pose_right = pose_left @ Rot(crease, -rho)``);
    border creases get 0. A relative rotation that is not about the crease line leaves a
    residual that :func:`vertex_misfit` picks up.
    """
    out = np.zeros(pattern.n_creases)
    c = _folding_creases(pattern)
    if not len(c):
        return out
    cp = pattern.crease_panels[c]
    ra, rb = poses[cp[:, 0], :3, :3], poses[cp[:, 1], :3, :3]
    rel = np.einsum("kji,kjl->kil", ra, rb)
    nz = rel[:, :, 2]
    d = np.zeros((len(c), 3))
    d[:, :2] = pattern.crease_directions[c]
    side = np.cross(d, np.array([0.0, 0.0, 1.0]))
    out[c] = -np.arctan2(np.einsum("ki,ki->k", nz, side), nz[:, 2])
    return out


def vertex_misfit(pattern: CreasePattern, angles: FloatArray, vertices: IntArray | None = None) -> FloatArray:
    """(n,) rad: rotation angle of ``prod_ccw R(u_c, rho_c)`` round each vertex.

    ``u_c`` is the unit direction of crease ``c`` leaving the vertex; crossing it counter-clockwise
    from the sector before it to the one after applies ``R(u_c, rho_c)`` (derived from the pose
    convention of :mod:`thickpanel.poses`). Zero at every vertex of a state that rigid panels with
    ideal hinges can take (loop closure; the method of Belcastro & Hull 2002, "Modelling the
    folding of paper into three dimensions using affine transformations").
    """
    if vertices is None:
        vertices = pattern.interior_vertices
    offsets, creases, dirs = pattern.star
    out = np.zeros(len(vertices))
    for k, v in enumerate(np.asarray(vertices).tolist()):
        cs = creases[offsets[v]:offsets[v + 1]]
        th = dirs[offsets[v]:offsets[v + 1]]
        u = np.column_stack([np.cos(th), np.sin(th), np.zeros(len(th))])
        rot = Rotation.from_rotvec(u * np.asarray(angles)[cs][:, None]).as_matrix()
        prod = np.eye(3)
        for r in rot:
            prod = prod @ r
        cosang = max(-1.0, min(1.0, 0.5 * (float(np.trace(prod)) - 1.0)))
        out[k] = math.acos(cosang)
    return out


def hinge_play(pattern: CreasePattern, poses: FloatArray, creases: IntArray | None = None) -> FloatArray:
    """(h,) mm: larger distance between a hinge's two end points as carried by its two panels."""
    c = _folding_creases(pattern) if creases is None else np.asarray(creases, dtype=np.int64)
    if not len(c):
        return np.zeros(0)
    cp = pattern.crease_panels[c]
    q = np.zeros((len(c), 2, 3))
    q[:, :, :2] = pattern.vertices[pattern.creases[c]]
    pa, pb = poses[cp[:, 0]], poses[cp[:, 1]]
    xa = np.einsum("kij,knj->kni", pa[:, :3, :3], q) + pa[:, None, :3, 3]
    xb = np.einsum("kij,knj->kni", pb[:, :3, :3], q) + pb[:, None, :3, 3]
    return np.linalg.norm(xa - xb, axis=2).max(axis=1)


class _Relax:
    """Least-squares poses: hinge end-point mismatch plus a weak pull towards guide poses."""

    def __init__(self, pattern: CreasePattern, base: int) -> None:
        self.pattern = pattern
        c = _folding_creases(pattern)
        cp = pattern.crease_panels[c]
        q = np.zeros((len(c), 2, 3))
        q[:, :, :2] = pattern.vertices[pattern.creases[c]]
        # point pairs: (panel a, point in a's flat frame, panel b or -1 for the guide, point)
        self.pa = np.repeat(cp[:, 0], 2)
        self.pb = np.repeat(cp[:, 1], 2)
        self.q = q.reshape(-1, 3)
        size = float(np.ptp(pattern.vertices, axis=0).max()) or 1.0
        self.size = size
        cents = np.array([pn.centroid for pn in pattern.panels])
        ext = np.array([math.sqrt(max(pn.area, 0.0)) for pn in pattern.panels])
        g = np.zeros((pattern.n_panels, 3, 3))
        g[:, :, :2] = cents[:, None, :]
        g[:, 1, 0] += ext
        g[:, 2, 1] += ext
        self.guide_panel = np.repeat(np.arange(pattern.n_panels), 3)
        self.guide_q = g.reshape(-1, 3)
        self.free = np.array([p for p in range(pattern.n_panels) if p != base], dtype=np.int64)
        self.slot = np.full(pattern.n_panels, -1, dtype=np.int64)
        self.slot[self.free] = np.arange(len(self.free))

    @staticmethod
    def _apply(poses: FloatArray, panel: IntArray, q: FloatArray) -> FloatArray:
        return np.einsum("kij,kj->ki", poses[panel, :3, :3], q) + poses[panel, :3, 3]

    def _jac(self, x: FloatArray, panel: IntArray, sign: float, row0: int) -> tuple[list, list, list]:
        """Entries of d x / d (phi, tau) for the points ``x`` of ``panel`` (world-frame increments)."""
        rows, cols, vals = [], [], []
        sl = self.slot[panel]
        idx = np.nonzero(sl >= 0)[0]
        xx = x[idx]
        skews = (  # rows of -[x]_x
            ((1, xx[:, 2]), (2, -xx[:, 1])),
            ((0, -xx[:, 2]), (2, xx[:, 0])),
            ((0, xx[:, 1]), (1, -xx[:, 0])),
        )
        for comp in range(3):
            row = row0 + 3 * idx + comp
            for j, v in skews[comp]:
                rows.append(row)
                cols.append(6 * sl[idx] + j)
                vals.append(sign * v)
            rows.append(row)
            cols.append(6 * sl[idx] + 3 + comp)
            vals.append(np.full(len(idx), sign))
        return rows, cols, vals

    def _residual(self, poses: FloatArray, gx: FloatArray) -> tuple[FloatArray, tuple[FloatArray, ...]]:
        xa = self._apply(poses, self.pa, self.q)
        xb = self._apply(poses, self.pb, self.q)
        xg = self._apply(poses, self.guide_panel, self.guide_q)
        return np.concatenate([(xa - xb).ravel(), PULL * (xg - gx).ravel()]), (xa, xb, xg)

    def _jacobian(self, xs: tuple[FloatArray, ...], n_rows: int, n: int) -> sp.csr_matrix:
        xa, xb, xg = xs
        parts = [self._jac(xa, self.pa, 1.0, 0), self._jac(xb, self.pb, -1.0, 0),
                 self._jac(xg, self.guide_panel, PULL, 3 * len(xa))]
        rows = np.concatenate([np.concatenate(p[0]) for p in parts])
        cols = np.concatenate([np.concatenate(p[1]) for p in parts])
        vals = np.concatenate([np.concatenate(p[2]) for p in parts])
        return sp.csr_matrix((vals, (rows, cols)), shape=(n_rows, n))

    def _step(self, poses: FloatArray, dz: FloatArray) -> FloatArray:
        zz = dz.reshape(-1, 6)
        rot = Rotation.from_rotvec(zz[:, :3]).as_matrix()
        out = poses.copy()
        out[self.free, :3, :3] = rot @ poses[self.free, :3, :3]
        out[self.free, :3, 3] = np.einsum("kij,kj->ki", rot, poses[self.free, :3, 3]) + zz[:, 3:]
        return out

    def solve(self, poses: FloatArray, guide: FloatArray) -> FloatArray:
        """Relaxed poses starting from ``poses`` (usually ``guide``): Levenberg-Marquardt, a step
        is kept only when it lowers the squared residual, so the result is never worse than the start."""
        n = 6 * len(self.free)
        if n == 0:
            return poses
        gx = self._apply(guide, self.guide_panel, self.guide_q)
        r, xs = self._residual(poses, gx)
        cost = float(r @ r)
        mu = _LM
        eye = sp.identity(n, format="csc")
        for _ in range(_GN_ITER):
            J = self._jacobian(xs, len(r), n)
            N = (J.T @ J).tocsc()
            g = J.T @ r
            scale = float(N.diagonal().max()) or 1.0
            for _try in range(_LM_TRIES):
                lu = spla.splu(N + eye * (mu * scale), permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                               options={"SymmetricMode": True})
                dz = lu.solve(-g)
                trial = self._step(poses, dz)
                r2, xs2 = self._residual(trial, gx)
                cost2 = float(r2 @ r2)
                if cost2 < cost:
                    break
                mu *= 10.0
            else:
                break  # no step lowers the residual: converged as far as the damping allows
            done = cost - cost2 < _COST_RTOL * cost or float(np.abs(dz).max()) < _STEP_STOP * self.size
            poses, r, xs, cost = trial, r2, xs2, cost2
            mu = max(mu / 10.0, _LM_MIN)
            if done:
                break
        # re-orthonormalise (round-off of repeated products)
        u, _, vt = np.linalg.svd(poses[:, :3, :3])
        poses[:, :3, :3] = u @ vt
        return poses


def stowed_fold_path(pattern: CreasePattern, *, n_states: int = 9, relax: bool = True,
                     tol: Tolerances = DEFAULT_TOL) -> FoldPath:
    """Deployment path of a ``hub-wrap`` sheet from deployed (t = 0) to stowed (t = 1).

    Parameters
    ----------
    pattern : CreasePattern
        Made by the ``hub-wrap`` layout (its :func:`~thickpanel.wrap.sheet.wrap_info` is used).
    n_states : int
        Evenly spaced sampled states, 2..201 (both ends included).
    relax : bool
        Run the least-squares relaxation (step 2 of :data:`METHOD`); False keeps the composed poses.
    tol : Tolerances

    Returns
    -------
    FoldPath
        ``driver`` ``t``, ``stop_reason`` ``target``; ``meta``: ``solver`` (``hub-wrap``),
        ``method``, ``compliance`` (:class:`WrapCompliance`), ``caution``. ``path.at(t)``
        between samples computes that state the same way. Each state's ``angles`` are the fold
        angles measured from its poses, ``closure_error`` its largest vertex misfit (rad).

    Raises
    ------
    FoldError
        Not a hub-wrap sheet, or ``n_states`` out of range.
    """
    info = wrap_info(pattern)
    if info is None:
        raise FoldError("the direct stowed path needs a sheet made by the hub-wrap layout")
    if isinstance(n_states, bool) or not isinstance(n_states, int) or not 2 <= n_states <= 201:
        raise FoldError(f"n_states = {n_states!r} is out of range; allowed: 2..201")
    base = next(p for p, pc in enumerate(info.pieces) if pc.kind == "hub")
    stowed = np.array(info.stowed_poses, dtype=float)
    rho = np.nan_to_num(np.asarray(pattern.target_angles, dtype=float))
    tree = spanning_tree(pattern, base)
    solver = _Relax(pattern, base) if relax else None
    verts = np.asarray(pattern.interior_vertices, dtype=np.int64)
    hinges = _folding_creases(pattern)

    def make(t: float) -> tuple[FoldState, FloatArray, FloatArray]:
        if t <= 0.0:
            poses = np.tile(np.eye(4), (pattern.n_panels, 1, 1))
        elif t >= 1.0:
            poses = stowed.copy()
        else:
            guide = compose_poses(pattern, t * rho, base=base, tree=tree)
            poses = solver.solve(guide.copy(), guide) if solver is not None else guide
        ang = measured_folds(pattern, poses)
        if t >= 1.0:
            ang = rho.copy()  # the exact stowed angles (180 deg folds keep their sense)
        mis = vertex_misfit(pattern, ang, verts)
        play = hinge_play(pattern, poses, hinges)
        ang.setflags(write=False)
        poses.setflags(write=False)
        st = FoldState(pattern, ang, poses, t=float(t), closure_error=float(mis.max()) if mis.size else 0.0,
                       base_panel=base)
        return st, mis, play

    ts = np.linspace(0.0, 1.0, n_states)
    got = [make(float(t)) for t in ts]
    comp = WrapCompliance(ts, verts, np.array([g[1] for g in got]).reshape(len(ts), len(verts)), hinges,
                          np.array([g[2] for g in got]).reshape(len(ts), len(hinges)))
    refine: Callable[[FoldPath, float], FoldState] = lambda _path, t: make(float(t))[0]  # noqa: E731
    return FoldPath(tuple(g[0] for g in got), stop_reason="target", driver="t",
                    meta={"solver": "hub-wrap", "method": METHOD, "compliance": comp, "caution": WRAP_CAUTION,
                          "target": float(np.abs(rho).max()) if rho.size else 0.0},
                    refine=refine)

