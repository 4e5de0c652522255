"""Joint slack: the hinge play a pattern needs to fold when ideal hinges would lock it.

Closed twist rings, wrapped patterns and many real designs do not fold with rigid panels and
perfect revolute joints (their verdict is ``locked``); hardware folds anyway because the joints
have play. :func:`joint_slack` computes, for fold fractions ``t`` from flat to the target, the
least-squares fold that keeps every panel rigid and lets each hinge deviate from a perfect
revolute joint: the unknowns are the panel poses (base panel fixed), the residuals are, for every
hinge, the mismatch of its two end points as carried by the two panels it joins (zero for a
perfect joint, whatever the fold angle), and one heavily weighted equation sets the overall fold
(the measured fold angles projected on the assignment's fold direction) to ``t`` times the
target. The mismatch at each hinge is reported as

* translation of the hinge midpoint **along** the hinge line and **across** it, mm;
* rotation **off-axis** (the two hinge lines' relative tilt), degrees;

plus the worst hinges and the root-sum-square total. For a rigidly foldable pattern every value
is zero to solver precision.

Caution: the play computed here is a geometric requirement of ideal rigid panels, not a hinge
design. Stored elastic energy, fatigue of compliant hinges, pinch points and flight or
structural qualification must be assessed against the applicable codes and standards and by
qualified engineering review.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla
from scipy.spatial.transform import Rotation

from .errors import FoldError
from .kinematics import DEFAULT_FULL_FOLD, default_target, loop_model, require_closed_flat, start_direction
from .pattern import CreasePattern, cid
from .poses import FoldPath, edge_transforms, graph_edges
from .tolerances import DEFAULT_TOL, Tolerances
from .typing import FloatArray, IntArray

__all__ = ["SlackReport", "joint_slack", "SLACK_CAUTION"]

_SIGN_WEIGHT = 10.0  # weight (per mm of hinge length and rad) against folding a hinge the wrong way
_NOMINAL_WEIGHT = 0.1  # weight (per mm of hinge length and rad) of the pull towards the nominal fold
_MERIT = 100.0  # weight (x sheet size) of the overall-fold equation in the step acceptance test
_LM_START, _LM_MIN = 1e-9, 1e-12  # relative Levenberg-Marquardt damping: start and floor
_ACCEPT_RTOL = 1e-12  # a step may raise the merit by this relative round-off and still count
_COST_RTOL = 1e-14  # relative merit decrease below which Gauss-Newton has converged
_STALL = 1e-3  # x target: overall-fold shortfall at which the least-squares fold counts as stalled
_MAX_SUBSTEP = float(np.deg2rad(5.0))  # rad: continuation step of the overall fold between solves

SLACK_CAUTION = (
    "Hinge play figures are geometric requirements of ideal rigid panels, not a hinge design; assess stored "
    "energy, fatigue, pinch points and flight or structural qualification against the applicable codes and "
    "standards with qualified engineering review."
)


@dataclass(frozen=True)
class SlackReport:
    """Hinge play needed along a least-squares fold with rigid panels.

    Attributes
    ----------
    fractions : (k,) float
        Fold fractions t of the rows.
    hinges : tuple of str
        Crease id of every hinge (columns), seams by their crease ``a``.
    along_mm, across_mm : (k, h) float, mm
        Translation of each hinge's midpoint along and across its line.
    off_axis_deg : (k, h) float, degrees
        Relative tilt of the hinge line as carried by its two panels.
    fold_deg : (k, h) float, degrees
        Fold angle of each hinge measured from the panel poses.
    total_mm : (k,) float, mm
        Root-sum-square of all hinge end-point mismatches.
    play_mm : (k, h) float, mm
        Largest end-point mismatch of each hinge (translation and tilt together).
    target : float, rad
        Fold magnitude at t = 1.
    poses : (k, P, 4, 4) float
        Panel poses of the least-squares fold at every fraction (flat sheet frame -> folded, mm).
    stop_reason : str
        ``target``, or ``stalled`` when the least-squares fold could not reach a fraction (some
        hinge would have to pass 180 deg); the rows then end at the last fraction reached.
    start : str
        Where the poses came from: ``assignment direction`` (least squares continued from flat
        along the assignment's fold direction) or ``fold path (<choice>)`` (the states of a given
        rigid fold path, measured as they are).
    """

    fractions: FloatArray
    hinges: tuple[str, ...]
    along_mm: FloatArray
    across_mm: FloatArray
    off_axis_deg: FloatArray
    fold_deg: FloatArray
    total_mm: FloatArray
    play_mm: FloatArray
    target: float
    poses: FloatArray
    stop_reason: str = "target"
    start: str = "assignment direction"

    @property
    def largest_fold_deg(self) -> FloatArray:
        """(k,) degrees: the largest hinge fold of each row's state, the fold the row refers to
        (the fraction t is of the nominal target, and the largest hinge may run ahead of it)."""
        return np.abs(self.fold_deg).max(axis=1) if self.fold_deg.size else np.zeros(len(self.fractions))

    @property
    def max_play_mm(self) -> float:
        """Largest hinge play over the whole fold, mm."""
        return float(self.play_mm.max()) if self.play_mm.size else 0.0

    def worst(self, n: int = 5) -> list[tuple[str, float]]:
        """The ``n`` hinges needing most play: (crease id, largest mismatch in mm over the fold)."""
        if not self.play_mm.size:
            return []
        peak = self.play_mm.max(axis=0)
        order = np.argsort(-peak, kind="stable")[:n]
        return [(self.hinges[i], float(peak[i])) for i in order]

    def rows(self) -> list[dict[str, float]]:
        """One row per fold fraction: t, total, and the worst hinge's along/across/tilt."""
        out = []
        for k, t in enumerate(self.fractions):
            j = int(np.argmax(self.play_mm[k])) if self.play_mm.shape[1] else 0
            out.append(
                {
                    "t": float(t),
                    "largest_fold_deg": float(self.largest_fold_deg[k]),
                    "total_mm": float(self.total_mm[k]),
                    "worst_along_mm": float(self.along_mm[k, j]) if self.along_mm.size else 0.0,
                    "worst_across_mm": float(self.across_mm[k, j]) if self.across_mm.size else 0.0,
                    "worst_off_axis_deg": float(self.off_axis_deg[k, j]) if self.off_axis_deg.size else 0.0,
                }
            )
        return out

    def summary(self) -> str:
        """Plain-text table for reports (mm and degrees)."""
        lines = [
            f"joint slack to {np.rad2deg(self.target):.4g} deg: largest hinge play {self.max_play_mm:.4g} mm"
            + ("" if self.stop_reason == "target" else f" (stalled after t = {self.fractions[-1]:g})"),
            f"poses from: {self.start}",
            "     t  largest fold deg   total mm   along mm  across mm  off-axis deg",
        ]
        for r in self.rows():
            lines.append(
                f"{r['t']:6.3f} {r['largest_fold_deg']:17.4g} {r['total_mm']:10.4g} {r['worst_along_mm']:10.4g} "
                f"{r['worst_across_mm']:10.4g} {r['worst_off_axis_deg']:13.4g}"
            )
        lines.append("worst hinges: " + ", ".join(f"{h} {v:.4g} mm" for h, v in self.worst()))
        lines.append(SLACK_CAUTION)
        return "\n".join(lines)


def joint_slack(
    pattern: CreasePattern,
    *,
    target: float | None = None,
    n_states: int = 10,
    path: FoldPath | None = None,
    tol: Tolerances = DEFAULT_TOL,
) -> SlackReport:
    """Least-squares fold of ``pattern`` with rigid panels and imperfect hinges.

    Parameters
    ----------
    pattern : CreasePattern
    target : float, rad, optional
        Overall fold magnitude at t = 1 (largest fold of the assignment's direction); default the
        pattern's largest target angle or :data:`thickpanel.kinematics.DEFAULT_FULL_FOLD`.
    n_states : int
        Fold fractions evenly spaced from 0 to 1 (>= 2).
    path : FoldPath, optional
        A rigid fold path of ``pattern`` (e.g. from :func:`thickpanel.path_choice.chosen_path`):
        its states are measured instead of the least-squares fold, so a rigid fold that the
        least-squares continuation from flat would miss (a local minimum) shows its zero play.
        ``target`` and ``n_states`` are then ignored.
    tol : Tolerances
        ``tol.length`` is the solver's stopping tolerance on hinge mismatch (mm).

    Returns
    -------
    SlackReport

    Raises
    ------
    FoldError
        For a target outside (0, pi) or fewer than 2 states.
    """
    model = loop_model(pattern)
    require_closed_flat(model, tol)
    tgt = float(default_target(model) if target is None else target)
    if not (0.0 < tgt < np.pi):
        raise FoldError(
            f"target fold {tgt!r} rad ({np.rad2deg(tgt):.6g} deg) is outside 0 < target < pi rad (0..180 deg "
            f"exclusive); default {np.rad2deg(DEFAULT_FULL_FOLD):g} deg"
        )
    if int(n_states) < 2:
        raise FoldError(f"n_states = {n_states!r} must be at least 2 (flat and target states)")
    prob = SlackProblem(pattern, model.base, start_direction(model), model.var_crease, tol)
    if path is not None:
        return _from_path(prob, path, pattern)
    fractions = np.linspace(0.0, 1.0, int(n_states))
    poses = np.broadcast_to(np.eye(4), (pattern.n_panels, 4, 4)).copy()
    rows = []
    level = 0.0
    kept = []
    stalled = False
    for t in fractions:
        while level < t * tgt and not stalled:
            level = min(t * tgt, level + _MAX_SUBSTEP)
            poses = prob.solve(poses, level)
            stalled = abs(prob.overall(poses) - level) > _STALL * tgt
        if stalled:  # the least-squares fold cannot go further (a hinge would pass 180 deg)
            break
        rows.append(prob.measure(poses))
        kept.append(poses)
    fractions = fractions[: len(rows)]
    along, across, tilt, fold, end = (np.array([r[i] for r in rows]) for i in range(5))
    total = np.sqrt((end**2).sum(axis=1)) if end.size else np.zeros(len(fractions))
    hinges = tuple(cid(int(c)) for c in prob.edges[:, 2])
    all_poses = np.array(kept)
    all_poses.setflags(write=False)
    return SlackReport(
        fractions, hinges, along, across, tilt, fold, total, end, tgt, all_poses, "stalled" if stalled else "target"
    )


def _from_path(prob: SlackProblem, path: FoldPath, pattern: CreasePattern) -> SlackReport:
    """Hinge play measured on the states of a given fold path (zero for a rigid path)."""
    if not path.states or path.states[0].pattern is not pattern and path.states[0].pattern != pattern:
        raise FoldError(f"fold path given to joint_slack belongs to another pattern than {pattern.name!r}")
    poses = np.array([np.asarray(st.poses) @ np.linalg.inv(np.asarray(st.poses)[prob.base]) for st in path.states])
    rows = [prob.measure(p) for p in poses]
    along, across, tilt, fold, end = (np.array([r[i] for r in rows]) for i in range(5))
    total = np.sqrt((end**2).sum(axis=1))
    poses.setflags(write=False)
    tgt = float(path.meta.get("target", np.abs(path.states[-1].angles).max()))
    choice = path.meta.get("choice", path.meta.get("solver", "given"))
    return SlackReport(path.fractions, tuple(cid(int(c)) for c in prob.edges[:, 2]), along, across, tilt, fold, total,
                       end, tgt, poses, "target" if path.stop_reason == "target" else "stalled",
                       f"fold path ({choice})")  # fmt: skip


class SlackProblem:
    """Residuals of the hinge end points for incremental panel motions from reference poses."""

    def __init__(
        self, pattern: CreasePattern, base: int, direction: FloatArray, var_crease: IntArray, tol: Tolerances
    ) -> None:
        self.pattern = pattern
        self.base = base
        self.tol = tol
        e = graph_edges(pattern)
        self.edges = e
        ne = len(e)
        m0 = edge_transforms(pattern, e[:, 0], e[:, 1], e[:, 2], np.zeros(pattern.n_creases))
        probe = np.zeros(pattern.n_creases)
        probe[e[:, 2]] = 1e-3
        m1 = edge_transforms(pattern, e[:, 0], e[:, 1], e[:, 2], probe)
        self.e_rot = m0[:, :3, :3]  # planar part of the edge map (identity for ordinary creases)
        rel = np.einsum("kji,kjl->kil", m0[:, :3, :3], m1[:, :3, :3])
        w = np.stack([rel[:, 2, 1] - rel[:, 1, 2], rel[:, 0, 2] - rel[:, 2, 0], rel[:, 1, 0] - rel[:, 0, 1]], 1)
        self.w = w / np.linalg.norm(w, axis=1)[:, None]  # signed hinge axis in the child's frame
        # hinge end points in each panel's flat frame; child side from the edge's own line
        cr, vx = pattern.creases, pattern.vertices
        seam_of = {s.a: s for s in pattern.seams}
        cp = pattern.crease_panels
        qa = np.zeros((ne, 2, 3))
        qb = np.zeros((ne, 2, 3))
        self.length = np.zeros(ne)
        for k, (a, _b, c) in enumerate(e.tolist()):
            s = seam_of.get(c)
            ca, cb = c, c
            if s is not None:
                ca, cb = (s.a, s.b) if int(max(cp[s.a])) == a else (s.b, s.a)
            qa[k, :, :2] = vx[cr[ca]]
            qb[k, :, :2] = vx[cr[cb]]
            self.length[k] = float(np.linalg.norm(vx[cr[c, 1]] - vx[cr[c, 0]]))
        self.qa, self.qb = qa, qb
        self.folding = np.isin(e[:, 2], var_crease)
        flat = ~self.folding
        # a flat crease is a weld: one extra point off the line keeps the two panels coplanar
        mid = qb[:, :, :].mean(axis=1)
        nrm = np.cross(np.array([0.0, 0.0, 1.0]), qb[:, 1] - qb[:, 0])
        self.q_off = mid + nrm
        self.flat_idx = np.nonzero(flat)[0]
        col_of = {int(c): i for i, c in enumerate(var_crease)}
        d = np.array([direction[col_of[int(c)]] if int(c) in col_of else 0.0 for c in e[:, 2]])
        kind_of = {sm.a: sm.kind for sm in pattern.seams}
        self.sign = np.array([1.0 if kind_of.get(int(c), pattern.kinds[int(c)]) == "valley" else -1.0 for c in e[:, 2]])
        self.dir = d / max(float(np.linalg.norm(d)), 1e-300)
        self.ext = float(np.ptp(vx, axis=0).max()) or 1.0
        self.free = np.array([p for p in range(pattern.n_panels) if p != base], dtype=np.int64)
        self.slot = np.full(pattern.n_panels, -1, dtype=np.int64)
        self.slot[self.free] = np.arange(len(self.free))

    def _points(self, poses: FloatArray) -> tuple[FloatArray, FloatArray, IntArray]:
        """World positions of the matched points: (R, 3) from panel a, from panel b, and (R,) pair index."""
        e = self.edges
        pa, pb = poses[e[:, 0]], poses[e[:, 1]]
        xa = np.einsum("kij,knj->kni", pa[:, :3, :3], self.qa) + pa[:, None, :3, 3]
        xb = np.einsum("kij,knj->kni", pb[:, :3, :3], self.qb) + pb[:, None, :3, 3]
        xa, xb = xa.reshape(-1, 3), xb.reshape(-1, 3)
        pair = np.repeat(np.arange(len(e)), 2)
        if len(self.flat_idx):
            f = self.flat_idx
            oa = np.einsum("kij,kj->ki", pa[f, :3, :3], self.q_off[f]) + pa[f, :3, 3]
            ob = np.einsum("kij,kj->ki", pb[f, :3, :3], self.q_off[f]) + pb[f, :3, 3]
            xa, xb, pair = np.concatenate([xa, oa]), np.concatenate([xb, ob]), np.concatenate([pair, f])
        return xa, xb, pair

    def _system(
        self, poses: FloatArray, level: float, pull: bool = True
    ) -> tuple[FloatArray, sp.csr_matrix, float, FloatArray]:
        """Residual, sparse Jacobian (w.r.t. world-frame increments at z = 0), constraint and its gradient."""
        xa, xb, pair = self._points(poses)
        r = (xa - xb).reshape(-1)
        e = self.edges
        rows, cols, vals = [], [], []
        n_pts = len(pair)
        for side, x, sgn in ((0, xa, 1.0), (1, xb, -1.0)):
            panel = e[pair, side]
            sl = self.slot[panel]
            ok = sl >= 0
            idx = np.nonzero(ok)[0]
            # d x / d phi = -[x]_x, d x / d tau = I
            for comp in range(3):
                row = 3 * idx + comp
                # rotation columns
                skew = np.zeros((len(idx), 3))
                xx = x[idx]
                if comp == 0:
                    skew[:, 1], skew[:, 2] = xx[:, 2], -xx[:, 1]
                elif comp == 1:
                    skew[:, 0], skew[:, 2] = -xx[:, 2], xx[:, 0]
                else:
                    skew[:, 0], skew[:, 1] = xx[:, 1], -xx[:, 0]
                for j in range(3):
                    rows.append(row)
                    cols.append(6 * sl[idx] + j)
                    vals.append(sgn * skew[:, j])
                rows.append(row)
                cols.append(6 * sl[idx] + 3 + comp)
                vals.append(np.full(len(idx), sgn))
        n_cols = 6 * len(self.free)
        ijv = (np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols)))
        J = sp.csr_matrix(ijv, shape=(3 * n_pts, n_cols))
        goal = level / max(float(np.abs(self.dir).max()), 1e-300)
        rho = self.folds(poses)
        c = float(rho @ self.dir) - goal
        # G: (E, n) sparse gradient of every hinge's fold angle (relative rotation about its axis)
        wa = np.einsum("kij,kj->ki", np.einsum("kij,kjl->kil", poses[e[:, 0], :3, :3], self.e_rot), self.w)
        gr, gc, gv = [], [], []
        for side, sgn in ((0, -1.0), (1, 1.0)):
            sl = self.slot[e[:, side]]
            ok = np.nonzero(sl >= 0)[0]
            for j in range(3):
                gr.append(ok)
                gc.append(6 * sl[ok] + j)
                gv.append(sgn * wa[ok, j])
        G = sp.csr_matrix((np.concatenate(gv), (np.concatenate(gr), np.concatenate(gc))), shape=(len(e), n_cols))
        g = np.asarray(G.T @ self.dir).ravel()
        # folding against the assignment is penalised (zero while every hinge keeps its kind)
        wrong = (self.sign * rho < 0) & self.folding
        pen = _SIGN_WEIGHT * self.length * np.where(wrong, self.sign * rho, 0.0)
        P = sp.diags(_SIGN_WEIGHT * self.length * np.where(wrong, self.sign, 0.0)) @ G
        # a weak pull towards the nominal fold keeps loosely held panels from taking up the whole fold
        wn = (_NOMINAL_WEIGHT if pull else 0.0) * self.length * self.folding
        nominal = level * self.dir / max(float(np.abs(self.dir).max()), 1e-300)
        res_n = wn * (rho - nominal)
        Q = sp.diags(wn) @ G
        return np.concatenate([r, pen, res_n]), sp.vstack([J, P, Q]).tocsr(), c, g

    def solve(self, ref: FloatArray, level: float) -> FloatArray:
        """Least-squares poses at overall fold ``level``: first with the weak pull towards the
        nominal fold, then polished without it (a rigid pattern then ends with zero play)."""
        if not len(self.free):
            return ref
        poses = ref
        if level > 0 and np.allclose(ref, np.eye(4)):
            poses = self.poses_from(ref, self._first_guess(level))
        poses = self._gauss_newton(poses, level, pull=True)
        return self._gauss_newton(poses, level, pull=False)

    def _gauss_newton(self, poses: FloatArray, level: float, *, pull: bool) -> FloatArray:
        """Gauss-Newton with the overall-fold equation as an exact linear constraint (KKT system)."""
        mu = _LM_START
        big = (_MERIT * self.ext) ** 2
        r, J, c, g = self._system(poses, level, pull)
        cost = float(r @ r) + big * c * c
        n = J.shape[1]
        for _ in range(60):
            N = (J.T @ J).tocsc()
            scale = float(N.diagonal().max()) or 1.0
            rhs = np.concatenate([-(J.T @ r), [-c]])
            for _try in range(10):
                K = sp.bmat([[N + sp.identity(n) * (mu * scale), g[:, None]], [g[None, :], None]], format="csc")
                try:
                    sol = spla.splu(K).solve(rhs)
                except RuntimeError:
                    mu *= 100
                    continue
                trial = self.poses_from(poses, sol[:n])
                r2, J2, c2, g2 = self._system(trial, level, pull)
                cost2 = float(r2 @ r2) + big * c2 * c2
                if cost2 <= cost * (1 + _ACCEPT_RTOL):
                    break
                mu *= 100
            else:
                break
            step = float(np.abs(sol[:n]).max())
            poses, r, J, c, g = trial, r2, J2, c2, g2
            done = cost - cost2 <= _COST_RTOL * max(cost, 1.0) and abs(c2) < self.tol.angle
            cost = cost2
            mu = max(mu / 10, _LM_MIN)
            if done or (step < self.tol.length * 1e-3 and abs(c) < self.tol.angle):
                break
        return poses

    def overall(self, poses: FloatArray) -> float:
        """Overall fold (rad) of ``poses``: the fold angles projected on the nominal direction."""
        return float(self.folds(poses) @ self.dir) * max(float(np.abs(self.dir).max()), 1e-300)

    def poses_from(self, ref: FloatArray, z: FloatArray) -> FloatArray:
        """Poses after world-frame increments ``z`` (rotation vector, translation mm) per free panel."""
        out = ref.copy()
        if len(self.free):
            zz = z.reshape(-1, 6)
            rot = Rotation.from_rotvec(zz[:, :3]).as_matrix()
            out[self.free, :3, :3] = rot @ ref[self.free, :3, :3]
            out[self.free, :3, 3] = np.einsum("kij,kj->ki", rot, ref[self.free, :3, 3]) + zz[:, 3:]
        return out

    def folds(self, poses: FloatArray) -> FloatArray:
        """(E,) rad: fold angle of every hinge measured from the panel rotations."""
        e = self.edges
        ra, rb = poses[e[:, 0], :3, :3], poses[e[:, 1], :3, :3]
        rel = np.einsum("kji,kjl->kil", np.einsum("kij,kjl->kil", ra, self.e_rot), rb)
        w = self.w
        perp = np.cross(w, np.array([0.0, 0.0, 1.0]))
        bad = np.linalg.norm(perp, axis=1) < 0.5
        perp[bad] = np.cross(w[bad], np.array([1.0, 0.0, 0.0]))
        perp /= np.linalg.norm(perp, axis=1)[:, None]
        moved = np.einsum("kij,kj->ki", rel, perp)
        return np.arctan2(np.einsum("ki,ki->k", moved, np.cross(w, perp)), np.einsum("ki,ki->k", moved, perp))

    def _first_guess(self, level: float) -> FloatArray:
        """Poses composed along the tree from the assignment direction (a start off flat)."""
        from .poses import compose_poses

        ang = np.zeros(self.pattern.n_creases)
        scale = level / max(float(np.abs(self.dir).max()), 1e-300)
        ang[self.edges[:, 2]] = self.dir * scale
        for s in self.pattern.seams:
            ang[s.b] = ang[s.a]
        poses = compose_poses(self.pattern, ang, base=self.base)
        z = np.zeros((len(self.free), 6))
        z[:, :3] = Rotation.from_matrix(poses[self.free, :3, :3]).as_rotvec()
        z[:, 3:] = poses[self.free, :3, 3]
        return z.reshape(-1)

    def measure(self, poses: FloatArray) -> tuple[FloatArray, FloatArray, FloatArray, FloatArray, FloatArray]:
        """Per hinge: along, across (mm), off-axis tilt (deg), fold (deg), end-point play (mm)."""
        e = self.edges
        pa, pb = poses[e[:, 0]], poses[e[:, 1]]
        xa = np.einsum("kij,knj->kni", pa[:, :3, :3], self.qa) + pa[:, None, :3, 3]
        xb = np.einsum("kij,knj->kni", pb[:, :3, :3], self.qb) + pb[:, None, :3, 3]
        d = xb - xa  # (E, 2, 3)
        axis = xa[:, 1] - xa[:, 0]
        axis /= np.linalg.norm(axis, axis=1)[:, None]
        mid = d.mean(axis=1)
        along = np.abs(np.einsum("ki,ki->k", mid, axis))
        across = np.linalg.norm(mid - np.einsum("ki,ki->k", mid, axis)[:, None] * axis, axis=1)
        twist = d[:, 1] - d[:, 0]
        twist_perp = twist - np.einsum("ki,ki->k", twist, axis)[:, None] * axis
        tilt = np.rad2deg(np.arctan2(np.linalg.norm(twist_perp, axis=1), self.length))
        end = np.linalg.norm(d, axis=2).max(axis=1)
        return along, across, tilt, np.rad2deg(self.folds(poses)), end
