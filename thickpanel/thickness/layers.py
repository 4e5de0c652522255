"""Layer order of a folded stack, read from a fold state near the final fold.

Panels are projected onto the plane of the base panel; for every two panels whose projections
overlap, the one whose reference plane is higher over the overlap lies above. The "above" relation
is made a directed graph; its longest-path levels give each panel its layer, stacking thicknesses
(a cycle means no layer order exists). Stack heights are along the base panel's normal.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import networkx as nx
import numpy as np

from ..collide import convex_parts, sweep_candidates, sweep_pairs
from ..errors import ThicknessError
from ..geometry2d import clip_convex, polygon_area, polygon_centroid
from ..pattern import CreasePattern, pid
from ..poses import FoldState
from ..tolerances import DEFAULT_TOL, Tolerances
from ..typing import FloatArray, IntArray

__all__ = ["LayerOrder", "layer_order", "check_stack_work", "stack_pair_count", "clip_convex"]


@dataclass(frozen=True)
class LayerOrder:
    """Stack order of the panels of a folded state.

    Attributes
    ----------
    level : (P,) int
        Layer index (0 = bottom) by longest chain of panels below.
    base : (P,) float, mm
        Stack height of each slab's bottom face with thicknesses stacked (bottom layer at 0).
    facing : (P,) int
        +1 when the panel's flat-frame +z points along the stack normal, -1 when it is flipped.
    above : list of (int, int)
        Overlapping pairs (lower, upper).
    tucked : dict crease -> int
        Panels lying between the two panels of each folding crease near its midpoint.
    """

    level: IntArray
    base: FloatArray
    facing: IntArray
    above: list[tuple[int, int]]
    tucked: dict[int, int] = field(default_factory=dict)


def _footprints(
    pattern: CreasePattern, state: FoldState, poses: FloatArray | None, tol: Tolerances
) -> tuple[IntArray, FloatArray, list[tuple[int, FloatArray]], FloatArray, FloatArray, float]:
    """Facing, reference planes, convex footprint parts ``(panel, (k, 2))`` in the base panel's frame,
    their boxes and the pattern's size (mm; the sweep pads by ``-tol.length`` times it, so touching
    parts are not paired)."""
    n = pattern.n_panels
    ps = np.asarray(state.poses if poses is None else poses)
    base_rot = ps[state.base_panel, :3, :3]
    to_stack = base_rot.T  # world -> base panel's frame
    facing = np.empty(n, dtype=np.int64)
    parts: list[tuple[int, FloatArray]] = []
    planes = np.empty((n, 4))
    for p in range(n):
        r = to_stack @ ps[p, :3, :3]
        o = to_stack @ (ps[p, :3, 3] - ps[state.base_panel, :3, 3])
        nz = r[:, 2]
        facing[p] = 1 if nz[2] >= 0 else -1
        planes[p] = (*nz, float(nz @ o))
        poly = pattern.panel_polygon(p)
        world = poly @ r[:2, :2].T + o[:2]
        if polygon_area(world) < 0:
            world = world[::-1]
        for part in convex_parts(world, tol=tol):
            parts.append((p, part))
    lo = np.array([np.append(q.min(axis=0), -1.0) for _, q in parts]).reshape(-1, 3)
    hi = np.array([np.append(q.max(axis=0), 1.0) for _, q in parts]).reshape(-1, 3)
    scale = float(np.ptp(pattern.vertices, axis=0).max()) or 1.0
    return facing, planes, parts, lo, hi, scale


def stack_pair_count(pattern: CreasePattern, state: FoldState, *, tol: Tolerances = DEFAULT_TOL) -> int:
    """Candidate pairs of overlapping footprint parts :func:`layer_order` would test on ``state``
    (counted without listing them: linear in the panels, whatever the stack)."""
    *_, lo, hi, scale = _footprints(pattern, state, None, tol)
    return sweep_candidates(lo, hi, pad=-tol.length * scale)


def check_stack_work(
    pattern: CreasePattern, state: FoldState, *, method: str, pair_seconds: float, other_s: float = 0.0,
    tol: Tolerances = DEFAULT_TOL,
) -> float:
    """Estimated seconds of ``method``'s work on the stack of ``state``; refuse beyond the time bound.

    The estimate is ``pair_seconds`` per overlapping footprint pair of the stack
    (:func:`stack_pair_count`, the work that grows with the square of a stacked strip) plus ``other_s``
    seconds of the method's other work. Beyond :data:`~thickpanel.limits.METHOD_TIME_BOUND_S` the
    method refuses before starting, so no design inside the panel limit runs for hours. The decision
    depends on counts only (the same design is refused on every machine).

    Raises
    ------
    ThicknessError
        Naming the method, the pair count, the estimate and the bound.
    """
    from ..limits import METHOD_TIME_BOUND_S

    pairs = stack_pair_count(pattern, state, tol=tol)
    est = pairs * pair_seconds + other_s
    if est > METHOD_TIME_BOUND_S:
        raise ThicknessError(
            f"method {method}: about {est:,.0f} s of work estimated for {pattern.n_panels:,} panels "
            f"({pairs:,} overlapping footprint pairs in the stowed stack); the time bound is "
            f"{METHOD_TIME_BOUND_S:g} s per method (choose another method, or fewer panels)"
        )
    return est


def layer_order(
    pattern: CreasePattern,
    state: FoldState,
    *,
    thickness: FloatArray | None = None,
    poses: FloatArray | None = None,
    tol: Tolerances = DEFAULT_TOL,
) -> LayerOrder:
    """Layer order of the panels in ``state`` (near a flat fold).

    Parameters
    ----------
    thickness : (P,) float, mm, optional
        Slab thickness per panel for the stacked heights (default 1 mm each).
    poses : (P, 4, 4) float, optional
        Override of ``state.poses``.

    Raises
    ------
    ThicknessError
        When the overlaps form a cycle (no layer order), naming panels of the cycle.
    """
    n = pattern.n_panels
    t = np.ones(n) if thickness is None else np.asarray(thickness, float)
    facing, planes, parts, lo, hi, scale = _footprints(pattern, state, poses, tol)
    owners = np.array([p for p, _ in parts])
    pairs = sweep_pairs(lo, hi, pad=-tol.length * scale)
    area_tol = tol.length * scale
    votes: dict[tuple[int, int], float] = {}
    for i, j in pairs:
        a, b = int(owners[i]), int(owners[j])
        if a == b:
            continue
        inter = clip_convex(parts[i][1], parts[j][1])
        if len(inter) < 3:
            continue
        area = polygon_area(inter)
        if area <= area_tol:
            continue
        c = polygon_centroid(inter)

        def height(p: int, c: FloatArray = c) -> float:
            nx_, ny_, nz_, d = planes[p]
            return float((d - nx_ * c[0] - ny_ * c[1]) / nz_) if abs(nz_) > tol.angle else 0.0

        dz = height(b) - height(a)
        key = (min(a, b), max(a, b))
        votes[key] = votes.get(key, 0.0) + (dz if a < b else -dz) * area
    g = nx.DiGraph()
    g.add_nodes_from(range(n))
    above: list[tuple[int, int]] = []
    for (a, b), v in sorted(votes.items()):
        if v > 0:
            g.add_edge(a, b)
            above.append((a, b))
        elif v < 0:
            g.add_edge(b, a)
            above.append((b, a))
    try:
        topo = list(nx.lexicographical_topological_sort(g))
    except nx.NetworkXUnfeasible:
        cyc = nx.find_cycle(g)
        names = ", ".join(pid(u) for u, _ in cyc[:6])
        raise ThicknessError(f"no layer order exists: panels {names} overlap each other in a cycle") from None
    level = np.zeros(n, dtype=np.int64)
    base = np.zeros(n)
    for u in topo:
        for w in g.successors(u):
            level[w] = max(level[w], level[u] + 1)
            base[w] = max(base[w], base[u] + t[u])
    tucked: dict[int, int] = {}
    touching: dict[int, set[int]] = {}  # panel -> both panels of every overlap it takes part in
    for a, b in above:
        touching.setdefault(a, set()).update((a, b))
        touching.setdefault(b, set()).update((a, b))
    cp = pattern.crease_panels
    for ci in range(pattern.n_creases):
        if not pattern.folding[ci]:
            continue
        ca, cb = int(cp[ci, 0]), int(cp[ci, 1])
        if ca < 0 or cb < 0:
            continue
        lo_l, hi_l = sorted((int(level[ca]), int(level[cb])))
        between = touching.get(ca, set()) | touching.get(cb, set())
        tucked[ci] = int(sum(1 for x in between if lo_l < int(level[x]) < hi_l))
    return LayerOrder(level, base, facing, above, tucked)
