"""Hinge play a Kresling tube needs to shorten from its closed deployed state.

:func:`tube_slack` starts from :func:`thickpanel.tubes.deployed_tube` and prescribes a shorter
tube height (the distance between the centroids of the two end rings) in equal steps. At each
height it finds, by least squares, rigid panel poses whose hinges mismatch least: the residuals
are the hinge end-point mismatches of :mod:`thickpanel.slack` (zero for perfect revolute joints)
plus two heavily weighted sets of equations: the height, and, with ``ends="rigid"``, every
distance between two vertices of the same end ring (end plates that stay rigid polygons). The
mismatches are reported per hinge as in :class:`thickpanel.slack.SlackReport`.

Caution: see :data:`thickpanel.slack.SLACK_CAUTION`; the figures are geometric requirements of
ideal rigid panels, not a hinge or panel design.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.optimize import least_squares

from .errors import FoldError
from .kinematics import loop_model
from .pattern import CreasePattern, cid
from .slack import SLACK_CAUTION, SlackProblem, SlackReport
from .tolerances import DEFAULT_TOL, Tolerances
from .tubes import deployed_tube, end_rings
from .typing import FloatArray

__all__ = ["TubeSlack", "tube_slack"]

_HARD = 1e3  # weight of the height and end-plate equations against the hinge mismatches (mm / mm)


@dataclass(frozen=True)
class TubeSlack:
    """Hinge play along a prescribed shortening of a Kresling tube.

    Attributes
    ----------
    heights_mm : (k,) float, mm
        Prescribed tube height of every row (row 0 is the deployed tube).
    slack : SlackReport
        Per-hinge mismatches; ``slack.fractions`` is the shortening fraction (0 deployed, 1 at the
        requested height) and ``slack.target`` is NaN (the drive is a height, not a fold angle).
    ends : str
        ``rigid`` or ``free`` end rings.
    """

    heights_mm: FloatArray
    slack: SlackReport
    ends: str

    def summary(self) -> str:
        """Plain-text table (mm and degrees)."""
        lines = [
            f"Kresling tube shortened to {self.heights_mm[-1]:.4g} mm ({self.ends} ends): largest hinge play "
            f"{self.slack.max_play_mm:.4g} mm",
            "  height mm   total mm",
        ]
        lines += [f"{h:11.4g} {t:10.4g}" for h, t in zip(self.heights_mm, self.slack.total_mm, strict=True)]
        lines.append("worst hinges: " + ", ".join(f"{h} {v:.4g} mm" for h, v in self.slack.worst()))
        lines.append(SLACK_CAUTION)
        return "\n".join(lines)


def tube_slack(
    pattern: CreasePattern,
    *,
    height_mm: float,
    n_states: int = 5,
    ends: str = "rigid",
    tol: Tolerances = DEFAULT_TOL,
) -> TubeSlack:
    """Least-squares shortening of a seamed Kresling strip from its deployed tube.

    Parameters
    ----------
    pattern : CreasePattern
        A strip from :func:`thickpanel.layouts.cylinder.kresling`.
    height_mm : float, mm
        Tube height to reach, strictly between 0 and the deployed height.
    n_states : int
        Rows from the deployed height to ``height_mm`` (>= 2).
    ends : ``"rigid"`` or ``"free"``
        Whether the end rings are held as rigid polygons (end plates).
    tol : Tolerances

    Returns
    -------
    TubeSlack
    """
    if ends not in ("rigid", "free"):
        raise FoldError(f"ends = {ends!r}; allowed: 'rigid', 'free'")
    if int(n_states) < 2:
        raise FoldError(f"n_states = {n_states!r} must be at least 2 (deployed and target heights)")
    dt = deployed_tube(pattern, tol=tol)
    model = loop_model(pattern)
    bot, top = end_rings(pattern)
    owner = _owners(pattern)
    poses = np.array(dt.state.poses)

    flat = np.column_stack([pattern.vertices, np.zeros(pattern.n_vertices)])

    def points(ps: FloatArray, vs: np.ndarray) -> FloatArray:
        own = owner[vs]
        return np.einsum("kij,kj->ki", ps[own, :3, :3], flat[vs]) + ps[own, :3, 3]

    def height(ps: FloatArray) -> float:
        return float(np.linalg.norm(points(ps, top).mean(axis=0) - points(ps, bot).mean(axis=0)))

    h0 = height(poses)
    if not 0.0 < float(height_mm) < h0:
        raise FoldError(f"height_mm = {height_mm!r} mm is out of range; allowed: 0 < height_mm < {h0:.6g} mm")
    ii, jj = np.triu_indices(len(bot), 1)
    ki, kj = np.triu_indices(len(top), 1)

    def plate_distances(ps: FloatArray) -> FloatArray:
        pb, pt = points(ps, bot), points(ps, top)
        return np.concatenate([np.linalg.norm(pb[ii] - pb[jj], axis=1), np.linalg.norm(pt[ki] - pt[kj], axis=1)])

    d0 = plate_distances(poses)
    prob = SlackProblem(pattern, model.base, np.ones(model.n), model.var_crease, tol)

    def residual(z: FloatArray, ref: FloatArray, goal: float) -> FloatArray:
        ps = prob.poses_from(ref, z)
        xa, xb, _ = prob._points(ps)
        parts: list[FloatArray] = [(xa - xb).ravel(), np.array([_HARD * (height(ps) - goal)])]
        if ends == "rigid":
            parts.append(_HARD * (plate_distances(ps) - d0))
        return np.concatenate(parts)

    heights = np.linspace(h0, float(height_mm), int(n_states))
    rows = [prob.measure(poses)]
    kept = [poses]
    for goal in heights[1:]:
        fit = least_squares(residual, np.zeros(6 * len(prob.free)), args=(poses, goal), xtol=1e-12, ftol=1e-12)
        poses = prob.poses_from(poses, fit.x)
        rows.append(prob.measure(poses))
        kept.append(poses)
    along, across, tilt, fold, end = (np.array([r[i] for r in rows]) for i in range(5))
    total = np.sqrt((end**2).sum(axis=1))
    all_poses = np.array(kept)
    all_poses.setflags(write=False)
    frac = (h0 - heights) / (h0 - float(height_mm))
    hinges = tuple(cid(int(c)) for c in prob.edges[:, 2])
    rep = SlackReport(frac, hinges, along, across, tilt, fold, total, end, float("nan"), all_poses, "target")
    return TubeSlack(heights, rep, ends)


def _owners(pattern: CreasePattern) -> np.ndarray:
    """(V,) int: a panel holding each vertex."""
    out = np.full(pattern.n_vertices, -1, dtype=np.int64)
    for p, panel in enumerate(pattern.panels):
        for v in panel.loop:
            if out[v] < 0:
                out[v] = p
    return out
