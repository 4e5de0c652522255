"""Deployed states of strips closed into tubes by seams (Kresling-type twist cylinders).

A seamed strip has no flat deployed state: the strip only closes once it is rolled into the
tube. :func:`deployed_tube` builds that closed state from the analytic tube geometry (Guest &
Pellegrino 1994, J. Appl. Mech. 61:773): vertex ``(s, j)`` of the strip goes to

    (R cos theta, chi R sin theta, s H),   theta = 2 pi j / n + s phi,

with chirality ``chi = +1`` or ``-1``. Every triangle of the strip is congruent to its image, so
a proper rigid motion per panel takes it there; the fold angle of each crease is read from the
relative motion of its two panels in the pose convention of :mod:`thickpanel.poses` (valley,
rho > 0, lifts towards the sheet's +z). The chirality is chosen so the angles' signs agree with
the crease assignment; this fixes which face of the sheet is the tube's outside. The angles are
then Newton-corrected with the loop model (:mod:`thickpanel.loop_model`), so vertex loops and
the seam closure hold to the solver's tolerance.

:func:`tube_rigid_foldability` judges rigid folding from that deployed state: it counts the
first-order freedoms of the loop equations there and, where there are some, checks that a
finite step along them closes again.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from .errors import FoldError
from .layouts.assignment import layout_info
from .loop_model import LoopModel, loop_model, newton_correct
from .pattern import CreasePattern, cid
from .poses import FoldState, closure_error, edge_transforms, rigid_fit
from .tolerances import DEFAULT_TOL, Tolerances
from .typing import FloatArray

if TYPE_CHECKING:
    from .verdicts import RigidVerdict

__all__ = ["DeployedTube", "deployed_tube", "deployed_tube_state", "is_tube_strip", "tube_rigid_foldability"]

_KEYS = ("sides", "radius", "height", "twist_deg", "edge_a", "edge_b", "edge_c")
_PROBE_STEP = 0.02  # rad: finite step along a first-order freedom used to confirm a real motion


@dataclass(frozen=True)
class DeployedTube:
    """The closed deployed state of a seamed strip and the facts it was built from.

    Attributes
    ----------
    state : FoldState
        Crease angles (rad) and panel poses (mm); the tube axis is the z axis, the bottom end at z = 0.
    chirality : int
        +1 when the top ring turns counter-clockwise (seen from +z) by ``twist``, -1 for the mirror tube.
    outside : str
        ``"+z"`` when the sheet's top face (+z of the flat strip) is the tube's outside, else ``"-z"``.
    residual : float
        Largest loop or seam closure residual after the Newton correction (dimensionless).
    sign_mismatch : tuple of str
        Crease ids whose deployed angle disagrees in sign with the assignment (empty when it all agrees).
    """

    state: FoldState
    chirality: int
    outside: str
    residual: float
    sign_mismatch: tuple[str, ...]


def _params(pattern: CreasePattern) -> dict[str, float]:
    info = layout_info(pattern)
    params = info.params if info is not None else {}
    missing = [k for k in _KEYS if k not in params]
    if not pattern.seams or missing:
        raise FoldError(
            f"pattern {pattern.name!r} is not a seamed tube strip from the kresling layout "
            f"(seams: {len(pattern.seams)}, missing layout parameters: {', '.join(missing) or 'none'}); "
            "allowed: a pattern built by thickpanel.layouts.cylinder.kresling"
        )
    return {k: float(params[k]) for k in _KEYS}


def is_tube_strip(pattern: CreasePattern) -> bool:
    """True for a seamed strip whose deployed tube :func:`deployed_tube` can build."""
    try:
        _params(pattern)
    except FoldError:
        return False
    return True


def _tube_points(pattern: CreasePattern, prm: dict[str, float], chi: int, tol: Tolerances) -> FloatArray:
    """(V, 3) analytic tube position of every strip vertex, mm."""
    n = int(round(prm["sides"]))
    a, b, c = prm["edge_a"], prm["edge_b"], prm["edge_c"]
    x = (a * a + b * b - c * c) / (2.0 * a)
    y = math.sqrt(max(b * b - x * x, 0.0))
    v = pattern.vertices
    s = np.rint(v[:, 1] / y)
    j = np.rint((v[:, 0] - s * x) / a)
    off = np.hypot(v[:, 0] - (j * a + s * x), v[:, 1] - s * y)
    if off.max() > tol.length * 1e3:
        k = int(np.argmax(off))
        raise FoldError(f"vertex V{k:03d} is {off[k]:.3g} mm off the kresling strip lattice; allowed: on the lattice")
    theta = 2.0 * math.pi * j / n + s * math.radians(prm["twist_deg"])
    r = prm["radius"]
    return np.column_stack([r * np.cos(theta), chi * r * np.sin(theta), s * prm["height"]])


def _panel_motion(flat: FloatArray, target: FloatArray) -> FloatArray:
    """4x4 proper rigid motion taking flat corners (k, 3) onto target corners (k, 3) (Kabsch)."""
    return rigid_fit(flat, target)


def _angles_from_motions(pattern: CreasePattern, model: LoopModel, motions: FloatArray) -> FloatArray:
    """(m,) crease fold angles (rad) whose hinge transforms reproduce the panels' relative motions."""
    g = pattern.panel_graph
    ang = np.zeros(pattern.n_creases)
    for a, b, d in g.edges(data=True):
        c = int(d["crease"])
        if model.col_of[c] < 0:
            continue
        rel = np.linalg.inv(motions[a]) @ motions[b]
        base = edge_transforms(pattern, np.array([a]), np.array([b]), np.array([c]), np.zeros(pattern.n_creases))[0]
        rot = (np.linalg.inv(base) @ rel)[:3, :3]
        w = np.array([rot[2, 1] - rot[1, 2], rot[0, 2] - rot[2, 0], rot[1, 0] - rot[0, 1]])
        psi = math.atan2(0.5 * float(np.linalg.norm(w)), 0.5 * (float(np.trace(rot)) - 1.0))
        best = (math.inf, 0.0)
        for cand in (psi, -psi):
            trial = np.zeros(pattern.n_creases)
            trial[c] = cand
            m = edge_transforms(pattern, np.array([a]), np.array([b]), np.array([c]), trial)[0]
            best = min(best, (float(np.abs(m[:3, :3] - rel[:3, :3]).max()), cand))
        ang[c] = best[1]
    for s in pattern.seams:
        ang[s.b] = ang[s.a]
    return ang


def _outside_of(pattern: CreasePattern, prm: dict[str, float], chi: int, tol: Tolerances) -> str:
    """Face of the strip that rolling with chirality ``chi`` puts outside (``"+z"`` or ``"-z"``)."""
    pts = _tube_points(pattern, prm, chi, tol)
    loop = list(pattern.panels[0].loop)
    m = _panel_motion(np.column_stack([pattern.vertices[loop], np.zeros(len(loop))]), pts[loop])
    cen = pts[loop].mean(axis=0)
    return "+z" if float(m[:2, 2] @ cen[:2]) > 0 else "-z"


def deployed_tube(pattern: CreasePattern, *, outside: str | None = None, tol: Tolerances = DEFAULT_TOL) -> DeployedTube:
    """The closed deployed state of a seamed Kresling strip (see the module docstring).

    Parameters
    ----------
    pattern : CreasePattern
        A strip built by :func:`thickpanel.layouts.cylinder.kresling` (its layout parameters are read).
    outside : ``"+z"``, ``"-z"`` or None
        Which face of the flat strip becomes the tube's outside; None picks the rolling whose
        fold-angle signs agree best with the crease assignment (ties: the top-ring turn is
        counter-clockwise).
    tol : Tolerances

    Returns
    -------
    DeployedTube

    Raises
    ------
    FoldError
        When the pattern is not a kresling strip or the loop model cannot close it.
    """
    if outside not in (None, "+z", "-z"):
        raise FoldError(f"outside = {outside!r}; allowed: '+z', '-z' or None")
    prm = _params(pattern)
    model = loop_model(pattern)
    best: tuple[int, int, FloatArray, FloatArray] | None = None
    for chi in (1, -1):
        if outside is not None and _outside_of(pattern, prm, chi, tol) != outside:
            continue
        pts = _tube_points(pattern, prm, chi, tol)
        motions = np.empty((pattern.n_panels, 4, 4))
        for p, panel in enumerate(pattern.panels):
            loop = list(panel.loop)
            flat = np.column_stack([pattern.vertices[loop], np.zeros(len(loop))])
            motions[p] = _panel_motion(flat, pts[loop])
        ang = _angles_from_motions(pattern, model, motions)
        x = ang[model.var_crease]
        wrong = int(np.count_nonzero(np.sign(x) * model.signs < 0))
        if best is None or wrong < best[0]:
            best = (wrong, chi, x, motions)
    assert best is not None
    _, chi, x0, motions = best
    sol = newton_correct(model, x0, int(np.argmax(np.abs(x0))), tol)
    r, _ = model.residual_jacobian(sol.x, jac=False)
    res = float(np.abs(r).max()) if len(r) else 0.0
    if not sol.ok or res > tol.closure:
        raise FoldError(
            f"pattern {pattern.name!r}: the deployed tube does not close (residual {res:.3g}; allowed <= "
            f"{tol.closure:g}); check the layout parameters"
        )
    raw = model.state(sol.x, 0.0)
    place = motions[model.base]
    poses = place[None] @ raw.poses
    poses.setflags(write=False)
    err = closure_error(pattern, np.asarray(raw.angles), poses)
    state = FoldState(pattern, raw.angles, poses, t=0.0, closure_error=err, base_panel=model.base)
    mism = tuple(cid(int(model.var_crease[k])) for k in np.nonzero(np.sign(sol.x) * model.signs < 0)[0])
    return DeployedTube(state, chi, _outside_of(pattern, prm, chi, tol), res, mism)


def deployed_tube_state(pattern: CreasePattern, *, tol: Tolerances = DEFAULT_TOL) -> FoldState:
    """:attr:`DeployedTube.state` of :func:`deployed_tube` (crease angles rad, poses mm)."""
    return deployed_tube(pattern, tol=tol).state


def pattern_size(pattern: CreasePattern) -> float:
    """Largest extent of the flat strip, mm (scale for rates in mm per rad)."""
    return float(np.ptp(pattern.vertices, axis=0).max()) or 1.0


def _vertex_points(state: FoldState, owner: list[tuple[int, int]]) -> FloatArray:
    """(V, 3) folded position of every vertex from the pose of one panel holding it, mm."""
    out = np.empty((len(owner), 3))
    for v, (p, k) in enumerate(owner):
        out[v] = state.panel_vertices_3d(p)[k]
    return out


def _end_rigidity_rows(pattern: CreasePattern, model: LoopModel, x: FloatArray, basis: FloatArray) -> FloatArray:
    """Rates of every pairwise distance within each end ring along each basis motion (central differences)."""
    owner: list[tuple[int, int]] = [(-1, -1)] * pattern.n_vertices
    for p, panel in enumerate(pattern.panels):
        for k, v in enumerate(panel.loop):
            if owner[v][0] < 0:
                owner[v] = (p, k)
    bot, top = end_rings(pattern)
    pairs = [(int(i), int(j)) for ring in (bot, top) for a, i in enumerate(ring) for j in ring[a + 1 :]]
    h = 1e-6
    cols = []
    for v in basis.T:
        up = _vertex_points(model.state(x + h * v, 0.0), owner)
        dn = _vertex_points(model.state(x - h * v, 0.0), owner)
        du = np.array([np.linalg.norm(up[i] - up[j]) for i, j in pairs] + [_height(up, bot, top)])
        dd = np.array([np.linalg.norm(dn[i] - dn[j]) for i, j in pairs] + [_height(dn, bot, top)])
        cols.append((du - dd) / (2 * h))
    return np.array(cols).T.reshape(len(pairs) + 1, basis.shape[1])


def end_rings(pattern: CreasePattern) -> tuple[np.ndarray, np.ndarray]:
    """Vertex indices of the bottom and top end rings of the strip, each without its seam copy
    (the last column, largest x, which meets the first column in the tube)."""
    v = pattern.vertices
    out = []
    for ring in (np.nonzero(np.isclose(v[:, 1], v[:, 1].min()))[0], np.nonzero(np.isclose(v[:, 1], v[:, 1].max()))[0]):
        out.append(np.delete(ring, int(np.argmax(v[ring, 0]))))
    return out[0], out[1]


def _height(points: FloatArray, bot: np.ndarray, top: np.ndarray) -> float:
    """Tube height (mm): distance between the centroids of the end rings' distinct vertices."""
    return float(np.linalg.norm(points[top].mean(axis=0) - points[bot].mean(axis=0)))


def tube_rigid_foldability(pattern: CreasePattern, *, tol: Tolerances = DEFAULT_TOL) -> RigidVerdict:
    """Rigid-panel verdict of a seamed Kresling strip, judged from its closed deployed state.

    First-order freedoms are the null space of the loop/seam Jacobian at :func:`deployed_tube`.
    Those that keep both end rings rigid polygons (every distance between two vertices of the
    same end unchanged, to first order) are counted separately: a tube whose ends are closed by
    rigid plates can only use these. A finite step along the first freedom, Newton-corrected,
    confirms that a free freedom is a real motion and not only first order.

    Returns
    -------
    RigidVerdict
        ``rigid`` when the strip with free ends moves rigidly (``dof`` = first-order freedoms),
        ``locked`` when no freedom exists at all; the reason gives the count with rigid ends.
    """
    from .verdicts import RigidVerdict, nullity

    dt = deployed_tube(pattern, tol=tol)
    model = loop_model(pattern)
    x = np.asarray(dt.state.angles[model.var_crease], dtype=float)
    _, J = model.residual_jacobian(x)
    assert J is not None
    dof = nullity(J)
    if dof == 0:
        return RigidVerdict(
            "locked", 0, ("seam cycle",),
            "the closed deployed tube has no first-order freedom of its fold angles: with rigid panels it does "
            "not fold (it can only fold by panel deformation)",
        )  # fmt: skip
    _, sv, vt = np.linalg.svd(J.toarray())
    basis = vt[-dof:].T
    full = _end_rigidity_rows(pattern, model, x, basis)
    rows, rate = full[:-1], full[-1]
    shortens = float(np.abs(rate).max()) > 1e-6 * pattern_size(pattern)
    s = np.linalg.svd(rows, compute_uv=False) if rows.size else np.zeros(0)
    s = np.concatenate([s, np.zeros(max(0, dof - len(s)))])
    capped = int(np.count_nonzero(s <= 1e-6 * max(float(s.max(initial=0.0)), 1e-300)))
    v = basis[:, 0]
    k = int(np.argmax(np.abs(v)))
    sol = newton_correct(model, x + _PROBE_STEP * v / abs(v[k]), k, tol)
    finite = "a Newton-corrected finite step confirms it" if sol.ok else "a finite step did not close again"
    ends = (
        "no rigid fold remains: a tube with rigid end plates folds only by panel deformation"
        if capped == 0
        else f"{capped} freedom(s) remain"
    )
    return RigidVerdict(
        "rigid" if sol.ok else "unknown", dof if sol.ok else -1, (),
        f"judged from the closed deployed tube (residual {dt.residual:.1e}): {dof} first-order freedom(s) of the "
        f"fold angles with free end rings ({finite}; they distort the end rings"
        f"{' and change the tube height' if shortens else '; the tube height is stationary'} at first order, "
        "tube_slack with free ends tests finite shortening); "
        f"with both end rings held as rigid polygons {ends}",
        _PROBE_STEP if sol.ok else 0.0,
    )  # fmt: skip
