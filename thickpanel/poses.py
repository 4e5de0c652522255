"""Fold states and panel poses: composing hinge rotations along a spanning tree of panels.

This module holds the values every later stage consumes (:class:`FoldState`, :class:`FoldPath`)
and the one function that turns crease angles into panel poses. The path-following solver lives
in :mod:`thickpanel.kinematics`.

Pose convention
---------------
``poses[p]`` is a 4x4 rigid transform taking a point of the *flat sheet* (x, y, z) with z along
the sheet normal (+z up) to its folded position. The base panel keeps the identity. Crossing a
crease with fold angle rho from panel A to panel B: if B lies to the *right* of the crease's
forward direction d, ``pose_B = pose_A @ Rot(axis, -rho)``; if to the left, ``Rot(axis, +rho)``;
so a valley (rho > 0) lifts both sides towards +z. The rotation axis is the crease line on the
reference surface, or a shifted hinge line given by a thickness method.
"""

from __future__ import annotations

import weakref
from collections.abc import Callable
from dataclasses import dataclass, field, replace
from typing import TYPE_CHECKING

import networkx as nx
import numpy as np

from .errors import FoldError
from .pattern import CreasePattern, pid
from .typing import FloatArray, IntArray

if TYPE_CHECKING:
    pass

__all__ = [
    "FoldState",
    "FoldPath",
    "rotation_about_line",
    "rotations_about_lines",
    "edge_transforms",
    "spanning_tree",
    "default_base_panel",
    "compose_poses",
    "fold_state_from_angles",
    "closure_error",
    "rigid_fit",
]


def rotation_about_line(point: FloatArray, direction: FloatArray, angle: float) -> FloatArray:
    """4x4 rigid transform rotating by ``angle`` (rad, right-hand rule) about a line.

    Parameters
    ----------
    point : (3,) float, mm
        A point on the line.
    direction : (3,) float
        Line direction (normalised here).
    angle : float, rad
    """
    d = np.asarray(direction, dtype=float)
    d = d / np.linalg.norm(d)
    x, y, z = d
    c, s = np.cos(angle), np.sin(angle)
    C = 1.0 - c
    r = np.array(
        [
            [c + x * x * C, x * y * C - z * s, x * z * C + y * s],
            [y * x * C + z * s, c + y * y * C, y * z * C - x * s],
            [z * x * C - y * s, z * y * C + x * s, c + z * z * C],
        ]
    )
    t = np.eye(4)
    t[:3, :3] = r
    p = np.asarray(point, dtype=float)
    t[:3, 3] = p - r @ p
    return t


def rotations_about_lines(points: FloatArray, directions: FloatArray, angles: FloatArray) -> FloatArray:
    """Batch of 4x4 rigid transforms rotating by ``angles`` about lines (vectorised Rodrigues).

    Parameters
    ----------
    points : (k, 3) float, mm
    directions : (k, 3) float, unit vectors (not normalised here)
    angles : (k,) float, rad

    Returns
    -------
    (k, 4, 4) float
    """
    d = np.asarray(directions, dtype=float)
    x, y, z = d[:, 0], d[:, 1], d[:, 2]
    c, s = np.cos(angles), np.sin(angles)
    C = 1.0 - c
    k = len(d)
    t = np.zeros((k, 4, 4))
    t[:, 0, 0] = c + x * x * C
    t[:, 0, 1] = x * y * C - z * s
    t[:, 0, 2] = x * z * C + y * s
    t[:, 1, 0] = y * x * C + z * s
    t[:, 1, 1] = c + y * y * C
    t[:, 1, 2] = y * z * C - x * s
    t[:, 2, 0] = z * x * C - y * s
    t[:, 2, 1] = z * y * C + x * s
    t[:, 2, 2] = c + z * z * C
    t[:, 3, 3] = 1.0
    p = np.asarray(points, dtype=float)
    t[:, :3, 3] = p - np.einsum("kij,kj->ki", t[:, :3, :3], p)
    return t


def default_base_panel(pattern: CreasePattern) -> int:
    """The panel whose centroid is nearest the centroid of the whole sheet (largest on ties)."""
    cents = np.array([p.centroid for p in pattern.panels])
    areas = np.array([p.area for p in pattern.panels])
    mid = (cents * areas[:, None]).sum(axis=0) / areas.sum()
    d = np.linalg.norm(cents - mid, axis=1)
    return int(np.lexsort((-areas, np.round(d, 9)))[0])


def spanning_tree(pattern: CreasePattern, base: int) -> list[tuple[int, int, int]]:
    """Breadth-first tree edges ``(parent, child, crease)`` from ``base`` over the panel graph.

    Seams are used only if needed to reach a panel. Neighbours are visited in increasing panel
    index so the tree is deterministic. Parents always come before their children.
    """
    g = pattern.panel_graph
    if base not in g:
        raise FoldError(f"base panel {pid(base)} does not exist (panels P000..{pid(pattern.n_panels - 1)})")
    order: list[tuple[int, int, int]] = []
    seen = {base}
    frontier = [base]
    while frontier:
        nxt: list[int] = []
        for a in frontier:
            nbrs = sorted(g.adj[a], key=lambda b: ("seam" in g.edges[a, b], b))
            for b in nbrs:
                if b in seen:
                    continue
                seen.add(b)
                order.append((a, b, int(g.edges[a, b]["crease"])))
                nxt.append(b)
        frontier = nxt
    if len(seen) != pattern.n_panels:
        missing = sorted(set(range(pattern.n_panels)) - seen)[:5]
        raise FoldError(
            "panels " + ", ".join(pid(p) for p in missing) + " are not connected to the base panel "
            f"{pid(base)} through folding or flat creases"
        )
    return order


def _hinge_axis(pattern: CreasePattern, crease: int) -> tuple[FloatArray, FloatArray]:
    v0, v1 = pattern.creases[crease]
    a = np.append(pattern.vertices[v0], 0.0)
    b = np.append(pattern.vertices[v1], 0.0)
    return a, b - a


def _default_axes(pattern: CreasePattern) -> tuple[FloatArray, FloatArray]:
    """(m, 3) points and unit forward directions of every crease line at z = 0."""
    m = pattern.n_creases
    pts = np.zeros((m, 3))
    dirs = np.zeros((m, 3))
    pts[:, :2] = pattern.vertices[pattern.creases[:, 0]]
    dirs[:, :2] = pattern.crease_directions
    return pts, dirs


def edge_transforms(
    pattern: CreasePattern,
    parents: IntArray,
    children: IntArray,
    creases: IntArray,
    angles: FloatArray,
    *,
    axis_points: FloatArray | None = None,
    axis_dirs: FloatArray | None = None,
) -> FloatArray:
    """Relative transforms ``M`` with ``pose[child] = pose[parent] @ M`` across panel-graph edges.

    An ordinary crease ``c`` rotates the child about the crease line by ``+rho`` when the child
    lies to the left of the crease's forward direction and by ``-rho`` otherwise. A seam (edge
    whose ``crease`` is the seam's ``a``) joins panel X on crease ``a`` to panel Y on crease ``b``;
    the fold angle is stored at ``angles[a]``. With ``E(b->a)`` the planar motion taking crease
    ``b`` onto crease ``a`` vertex for vertex, ``M(X->Y) = E(b->a) @ Rot(line b, +-rho)`` with the
    sign from Y's side of ``b``, and ``M(Y->X) = E(a->b) @ Rot(line a, +-rho)`` with the sign from
    X's side of ``a``; the two are inverse to each other because E keeps orientation and X and Y
    lie on opposite sides of the joined hinge.

    Parameters
    ----------
    parents, children, creases : (k,) int
        Edge list; ``creases`` holds the panel graph's ``crease`` attribute (seam ``a`` for seams).
    angles : (m,) float, rad
    axis_points, axis_dirs : (m, 3) float, optional
        Hinge lines per crease (mm; unit directions along the crease's forward direction).

    Returns
    -------
    (k, 4, 4) float
    """
    if axis_points is None or axis_dirs is None:
        axis_points, axis_dirs = _default_axes(pattern)
    cp = pattern.crease_panels
    parents = np.asarray(parents, dtype=np.int64)
    children = np.asarray(children, dtype=np.int64)
    creases = np.asarray(creases, dtype=np.int64)
    line = creases.copy()
    emap = np.zeros(len(creases), dtype=bool)
    e_from = np.zeros(len(creases), dtype=np.int64)
    e_to = np.zeros(len(creases), dtype=np.int64)
    seam_of = {s.a: s for s in pattern.seams}
    for k, c in enumerate(creases.tolist() if seam_of else ()):
        s = seam_of.get(c)
        if s is None:
            continue
        emap[k] = True
        if int(max(cp[s.b])) == children[k]:  # child on crease b: rotate about b, then map b onto a
            line[k], e_from[k], e_to[k] = s.b, s.b, s.a
        else:  # child on crease a: rotate about a, then map a onto b
            line[k], e_from[k], e_to[k] = s.a, s.a, s.b
    sign = np.where(cp[line, 0] == children, 1.0, -1.0)
    m = rotations_about_lines(axis_points[line], axis_dirs[line], sign * np.asarray(angles, dtype=float)[creases])
    if emap.any():
        idx = np.nonzero(emap)[0]
        maps = np.stack([_edge_map(pattern, int(e_to[k]), int(e_from[k])) for k in idx])
        m[idx] = maps @ m[idx]
    return m


def compose_poses(
    pattern: CreasePattern,
    angles: FloatArray,
    *,
    base: int | None = None,
    axis_points: FloatArray | None = None,
    axis_dirs: FloatArray | None = None,
    tree: list[tuple[int, int, int]] | None = None,
) -> FloatArray:
    """Panel poses for given crease fold angles, composed along a spanning tree.

    Parameters
    ----------
    pattern : CreasePattern
    angles : (m,) float, rad
        Signed fold angle of every crease (ignored for creases not in the tree). A seam's angle
        is read at its crease ``a``.
    base : int, optional
        Fixed panel; default :func:`default_base_panel`.
    axis_points, axis_dirs : (m, 3) float, optional
        Hinge axis per crease in the flat sheet frame (mm), for thickness methods whose hinges
        are off the reference surface; default the crease line at z = 0 with the crease's
        forward direction. ``axis_dirs`` must point along the crease's forward direction.
    tree : list of (parent, child, crease), optional
        Precomputed :func:`spanning_tree`.

    Returns
    -------
    (P, 4, 4) float
    """
    if base is None:
        base = default_base_panel(pattern)
    if tree is None:
        tree = spanning_tree(pattern, base)
    poses = np.empty((pattern.n_panels, 4, 4))
    poses[base] = np.eye(4)
    if not tree:
        return poses
    e = np.array(tree, dtype=np.int64).reshape(-1, 3)
    rel = edge_transforms(pattern, e[:, 0], e[:, 1], e[:, 2], angles, axis_points=axis_points, axis_dirs=axis_dirs)
    # depth of every child; parents precede children, so one pass suffices
    depth = np.zeros(pattern.n_panels, dtype=np.int64)
    for a, b, _ in tree:
        depth[b] = depth[a] + 1
    d_child = depth[e[:, 1]]
    for level in range(1, int(d_child.max()) + 1):
        sel = np.nonzero(d_child == level)[0]
        poses[e[sel, 1]] = poses[e[sel, 0]] @ rel[sel]
    return poses


def _edge_map(pattern: CreasePattern, ca: int, cb: int) -> FloatArray:
    """Rigid planar motion taking crease ``cb`` onto crease ``ca`` vertex for vertex."""
    va = pattern.vertices[pattern.creases[ca]]
    vb = pattern.vertices[pattern.creases[cb]]
    da = va[1] - va[0]
    db = vb[1] - vb[0]
    ang = np.arctan2(da[1], da[0]) - np.arctan2(db[1], db[0])
    c, s = np.cos(ang), np.sin(ang)
    t = np.eye(4)
    t[:2, :2] = [[c, -s], [s, c]]
    t[:2, 3] = va[0] - t[:2, :2] @ vb[0]
    return t


_EDGES: weakref.WeakKeyDictionary[CreasePattern, IntArray] = weakref.WeakKeyDictionary()


def graph_edges(pattern: CreasePattern) -> IntArray:
    """(E, 3) int: (panel, panel, crease) of every panel-graph edge (cached per pattern)."""
    e = _EDGES.get(pattern)
    if e is None:
        g = pattern.panel_graph
        e = np.array([(a, b, d["crease"]) for a, b, d in g.edges(data=True)], dtype=np.int64).reshape(-1, 3)
        _EDGES[pattern] = e
    return e


def closure_error(pattern: CreasePattern, angles: FloatArray, poses: FloatArray) -> float:
    """Largest mismatch of poses across every hinge of the panel graph (seams included).

    For every folding or flat crease between panels A and B, the pose of B must equal A's pose
    times the hinge transform (:func:`edge_transforms`). Returns the largest absolute difference
    of the 4x4 entries, the translation part divided by the sheet size so the number is
    dimensionless. Tree edges give 0 by construction; the others measure loop closure.
    """
    e = graph_edges(pattern)
    if len(e) == 0:
        return 0.0
    ext = np.ptp(pattern.vertices, axis=0).max() or 1.0
    rel = edge_transforms(pattern, e[:, 0], e[:, 1], e[:, 2], angles)
    diff = poses[e[:, 0]] @ rel - poses[e[:, 1]]
    diff[:, :3, 3] /= ext
    return float(np.abs(diff).max())


@dataclass(frozen=True)
class FoldState:
    """One configuration of the sheet.

    Attributes
    ----------
    pattern : CreasePattern
    angles : (m,) float, rad
        Signed fold angle of every crease (0 for border, cut and flat creases).
    poses : (P, 4, 4) float
        Pose of every panel (flat sheet frame -> folded position), mm.
    t : float
        Fold fraction in [0, 1] along the path (NaN for a free-standing state).
    closure_error : float
        Largest residual of the loop-closure constraints (see :func:`closure_error`).
    base_panel : int
    """

    pattern: CreasePattern
    angles: FloatArray
    poses: FloatArray
    t: float = float("nan")
    closure_error: float = 0.0
    base_panel: int = 0

    def panel_vertices_3d(self, p: int) -> FloatArray:
        """(k, 3) float, mm: panel ``p``'s corners in the folded position."""
        poly = self.pattern.panel_polygon(p)
        h = np.column_stack([poly, np.zeros(len(poly)), np.ones(len(poly))])
        return (h @ self.poses[p].T)[:, :3]

    def transform(self, p: int, points: FloatArray) -> FloatArray:
        """Map (k, 3) points of panel ``p``'s flat frame to the folded position (mm)."""
        pts = np.asarray(points, dtype=float)
        return pts @ self.poses[p][:3, :3].T + self.poses[p][:3, 3]


def fold_state_from_angles(
    pattern: CreasePattern, angles: FloatArray, *, base: int | None = None, t: float = float("nan")
) -> FoldState:
    """A :class:`FoldState` for given crease angles, with its closure error computed."""
    ang = np.asarray(angles, dtype=float).copy()
    if ang.shape != (pattern.n_creases,):
        raise FoldError(f"angles must have one entry per crease ({pattern.n_creases}); got shape {ang.shape}")
    if base is None:
        base = default_base_panel(pattern)
    poses = compose_poses(pattern, ang, base=base)
    err = closure_error(pattern, ang, poses)
    ang.setflags(write=False)
    poses.setflags(write=False)
    return FoldState(pattern, ang, poses, t=t, closure_error=err, base_panel=base)


@dataclass(frozen=True)
class FoldPath:
    """Sampled fold states from deployed (t = 0) towards stowed (t = 1).

    Attributes
    ----------
    states : tuple of FoldState
        Ordered by increasing fold fraction.
    stop_reason : str
        Why path following stopped: ``target``, ``lock``, ``contact`` or ``request``.
    driver : str
        What drove the path (``C012`` for a crease, ``t`` for fold fraction).
    meta : dict
        Solver data (target, reachable fold ...), informative only.
    refine : callable, optional
        ``refine(path, t) -> FoldState``: the exact state between samples. Set by the solver that
        made the path and kept by :meth:`with_states` and :func:`dataclasses.replace`; without it
        :meth:`at` interpolates crease angles linearly.
    """

    states: tuple[FoldState, ...]
    stop_reason: str = "target"
    driver: str = "t"
    meta: dict = field(default_factory=dict, compare=False)
    refine: Callable[[FoldPath, float], FoldState] | None = field(default=None, compare=False, repr=False)

    def with_states(self, states: tuple[FoldState, ...], stop_reason: str | None = None) -> FoldPath:
        """The same path (solver hook and metadata kept) with other sampled states, e.g. cut short."""
        return replace(self, states=tuple(states), stop_reason=stop_reason or self.stop_reason,
                       meta=dict(self.meta))

    @property
    def fractions(self) -> FloatArray:
        """(k,) float: fold fraction of every sampled state."""
        return np.array([s.t for s in self.states])

    def at(self, t: float) -> FoldState:
        """State at fold fraction ``t`` in [0, 1].

        For paths carrying a ``refine`` hook (those made by :func:`thickpanel.kinematics.fold_path`)
        the state is solved exactly (closure error below the tolerance) from the nearest sampled
        state; for hand-made paths
        the crease angles are interpolated linearly and re-composed into poses.
        """
        if not (0.0 <= t <= 1.0):
            lo, hi = self.fractions[[0, -1]]
            raise FoldError(f"fold fraction t = {t} is outside [0, 1] (this path covers {lo:g}..{hi:g})")
        ts = self.fractions
        if t <= ts[0]:
            return self.states[0]
        if t >= ts[-1]:
            return self.states[-1]
        k = int(np.searchsorted(ts, t))
        if ts[k] == t:
            return self.states[k]
        if self.refine is not None:
            return self.refine(self, t)
        if self.meta.get("solver") == "kinematics":  # paths made before the refine hook existed
            from .kinematics import solve_state  # late import: kinematics builds on this module

            return solve_state(self.states[0].pattern, t, path=self)
        s0, s1 = self.states[k - 1], self.states[k]
        w = (t - s0.t) / (s1.t - s0.t)
        ang = (1 - w) * s0.angles + w * s1.angles
        return fold_state_from_angles(s0.pattern, ang, base=s0.base_panel, t=t)


def rigid_fit(source: FloatArray, target: FloatArray) -> FloatArray:
    """4x4 proper rigid motion taking points ``source`` (k, 3) onto ``target`` (k, 3), least squares.

    Kabsch's method (Kabsch 1976, Acta Cryst. A32:922) with the determinant fixed to +1, so a planar
    point set, whose mirror image is also a proper motion of it, is always fitted by a rotation.
    """
    cs, ct = source.mean(axis=0), target.mean(axis=0)
    h = (source - cs).T @ (target - ct)
    u, _, vt = np.linalg.svd(h)
    d = np.sign(np.linalg.det(vt.T @ u.T)) or 1.0
    rot = vt.T @ np.diag([1.0, 1.0, d]) @ u.T
    m = np.eye(4)
    m[:3, :3] = rot
    m[:3, 3] = ct - rot @ cs
    return m


def tree_creases(tree: list[tuple[int, int, int]]) -> IntArray:
    """Crease indices used by a spanning tree."""
    return np.array([c for _, _, c in tree], dtype=np.int64)


_ = nx  # networkx graphs are the panel_graph type used above
