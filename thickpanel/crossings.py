"""Zero-thickness panel crossings: do two non-adjacent panels of a fold state pass through each other?

At zero thickness two panels may touch (a flat-folded stack lies at distance 0) but not cross. A
crossing is a transversal intersection of two triangles of the panels' fan triangulations: each
triangle strictly straddles the other's plane and the two intersection intervals on the line
where the planes meet overlap by more than ``tol.contact`` (the interval test of Moeller 1997,
"A fast triangle-triangle intersection test", J. Graphics Tools 2(2)). Coplanar overlaps (a
stack) are touching, not crossing. Panels joined by a hinge (mountain, valley or flat crease) are
never compared; panels meeting only at a vertex or along a cut (a slit) are (they can swing through
each other), a shared vertex being one end of their intersection segment.

Pure geometry (numpy only).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from .collide import convex_parts
from .pattern import CreasePattern, pid
from .poses import FoldState
from .tolerances import DEFAULT_TOL, Tolerances
from .typing import FloatArray, IntArray

__all__ = ["Crossing", "panel_triangles", "first_crossing", "crossing_pairs", "nonadjacent_pairs", "separation_score"]


@dataclass(frozen=True)
class Crossing:
    """Two non-adjacent panels passing through each other.

    Attributes
    ----------
    panels : (int, int)
    depth : float, mm
        Longest intersection segment of one pair of the panels' fan triangles (a measure of how
        far one runs through the other; a segment crossing a fan diagonal counts in pieces).
    """

    panels: tuple[int, int]
    depth: float

    def label(self) -> str:
        return f"{pid(self.panels[0])}/{pid(self.panels[1])}"


def panel_triangles(pattern: CreasePattern, *, tol: Tolerances = DEFAULT_TOL) -> tuple[FloatArray, IntArray]:
    """Fan triangles of every panel's convex parts: (T, 3, 2) flat corners (mm) and (T,) panel index."""
    tris: list[FloatArray] = []
    owner: list[int] = []
    for p in range(pattern.n_panels):
        for part in convex_parts(pattern.panel_polygon(p), tol=tol):
            for i in range(1, len(part) - 1):
                tris.append(np.array([part[0], part[i], part[i + 1]]))
                owner.append(p)
    return np.array(tris, dtype=float).reshape(-1, 3, 2), np.array(owner, dtype=np.int64)


def nonadjacent_pairs(pattern: CreasePattern) -> IntArray:
    """(k, 2) panel pairs not joined by a hinge (a mountain, valley or flat crease). Pairs meeting only
    at a vertex or along a cut (a slit) are included: they can pass through each other."""
    joined = {(min(a, b), max(a, b)) for (a, b), kind in zip(pattern.crease_panels.tolist(), pattern.kinds, strict=True)
              if a >= 0 and b >= 0 and kind in ("mountain", "valley", "flat")}  # fmt: skip
    n = pattern.n_panels
    out = [(a, b) for a in range(n) for b in range(a + 1, n) if (a, b) not in joined]
    return np.array(out, dtype=np.int64).reshape(-1, 2)


def _intervals(t: FloatArray, dist: FloatArray, line_d: FloatArray, line_p: FloatArray) -> FloatArray:
    """(k, 2) interval on the line (point, direction) of each triangle ``t`` (k, 3, 3) cut by the
    other plane: its corners in that plane (distance 0) and the points where its edges cross it."""
    lo = np.full(len(t), np.inf)
    hi = np.full(len(t), -np.inf)
    for i in range(3):
        on = dist[:, i] == 0
        s = np.einsum("ki,ki->k", t[:, i] - line_p, line_d)
        lo = np.where(on, np.minimum(lo, s), lo)
        hi = np.where(on, np.maximum(hi, s), hi)
        j = (i + 1) % 3
        cross = dist[:, i] * dist[:, j] < 0
        w = np.where(cross, dist[:, i] / np.where(cross, dist[:, i] - dist[:, j], 1.0), 0.0)
        pt = t[:, i] + w[:, None] * (t[:, j] - t[:, i])
        s = np.einsum("ki,ki->k", pt - line_p, line_d)
        lo = np.where(cross, np.minimum(lo, s), lo)
        hi = np.where(cross, np.maximum(hi, s), hi)
    return np.stack([lo, hi], axis=1)


def crossing_pairs(state: FoldState, *, tol: Tolerances = DEFAULT_TOL, tris: tuple[FloatArray, IntArray] | None = None,
                   pairs: IntArray | None = None) -> list[Crossing]:  # fmt: skip
    """Every non-adjacent panel pair crossing in ``state`` (deepest first)."""
    pattern = state.pattern
    flat, owner = panel_triangles(pattern, tol=tol) if tris is None else tris
    if pairs is None:
        pairs = nonadjacent_pairs(pattern)
    if not len(flat) or not len(pairs):
        return []
    h = np.concatenate([flat, np.zeros((*flat.shape[:2], 1)), np.ones((*flat.shape[:2], 1))], axis=2)
    t3 = np.einsum("kij,knj->kni", state.poses[owner][:, :3, :], h)
    lo, hi = t3.min(axis=1), t3.max(axis=1)
    pair_set = {(int(a), int(b)) for a, b in pairs}
    ia, ib = np.triu_indices(len(t3), 1)
    pa, pb = owner[ia], owner[ib]
    keep = np.array([(min(x, y), max(x, y)) in pair_set for x, y in zip(pa.tolist(), pb.tolist(), strict=True)],
                    dtype=bool).reshape(-1)  # fmt: skip
    eps = tol.contact
    keep &= np.all(lo[ia] <= hi[ib] + eps, axis=1) & np.all(lo[ib] <= hi[ia] + eps, axis=1)
    ia, ib = ia[keep], ib[keep]
    if not len(ia):
        return []
    A, B = t3[ia], t3[ib]
    na = np.cross(A[:, 1] - A[:, 0], A[:, 2] - A[:, 0])
    nb = np.cross(B[:, 1] - B[:, 0], B[:, 2] - B[:, 0])
    na /= np.linalg.norm(na, axis=1)[:, None]
    nb /= np.linalg.norm(nb, axis=1)[:, None]
    db = np.einsum("kj,knj->kn", na, B - A[:, :1])  # B's corners against A's plane
    da = np.einsum("kj,knj->kn", nb, A - B[:, :1])
    db = np.where(np.abs(db) <= eps, 0.0, db)
    da = np.where(np.abs(da) <= eps, 0.0, da)

    def straddles(d: FloatArray) -> Any:
        return (d.max(axis=1) > 0) & (d.min(axis=1) < 0)

    # each triangle must strictly straddle the other's plane (a corner in the plane, e.g. a shared
    # vertex, is one end of the intersection segment; a triangle only touching the plane never crosses)
    ok = straddles(db) & straddles(da)
    if not ok.any():
        return []
    A, B, na, nb, da, db, ia, ib = A[ok], B[ok], na[ok], nb[ok], da[ok], db[ok], ia[ok], ib[ok]
    ld = np.cross(na, nb)
    ld /= np.linalg.norm(ld, axis=1)[:, None]
    lp = A[:, 0]
    ra = _intervals(A, da, ld, lp)
    rb = _intervals(B, db, ld, lp)
    depth = np.minimum(ra[:, 1], rb[:, 1]) - np.maximum(ra[:, 0], rb[:, 0])
    best: dict[tuple[int, int], float] = {}
    for x, y, dep in zip(owner[ia].tolist(), owner[ib].tolist(), depth.tolist(), strict=True):
        if dep > eps:
            key = (min(x, y), max(x, y))
            best[key] = max(best.get(key, 0.0), dep)
    return sorted((Crossing(k, v) for k, v in best.items()), key=lambda c: (-c.depth, c.panels))


def first_crossing(state: FoldState, *, tol: Tolerances = DEFAULT_TOL, tris: tuple[FloatArray, IntArray] | None = None,
                   pairs: IntArray | None = None) -> Crossing | None:  # fmt: skip
    """The deepest crossing of ``state`` or None."""
    got = crossing_pairs(state, tol=tol, tris=tris, pairs=pairs)
    return got[0] if got else None


def separation_score(state: FoldState, *, tris: tuple[FloatArray, IntArray], pairs: IntArray, margin: float,
                     tol: Tolerances = DEFAULT_TOL) -> float:  # fmt: skip
    """Ranking score of a state's panel separation (mm): minus the deepest crossing depth when
    non-adjacent panels cross, else the smallest distance between sample points (corners, edge
    midpoints and centroids of the fan triangles) of non-adjacent panels, capped at ``margin``.

    The sampled distance over-estimates the true one by at most half the longest triangle edge; it
    ranks candidate directions, it does not prove clearance (the crossing test does).
    """
    got = crossing_pairs(state, tol=tol, tris=tris, pairs=pairs)
    if got:
        return -got[0].depth
    flat, owner = tris
    w = np.array([[1, 0, 0], [0, 1, 0], [0, 0, 1], [0.5, 0.5, 0], [0, 0.5, 0.5], [0.5, 0, 0.5], [1 / 3, 1 / 3, 1 / 3]])
    pts2 = np.einsum("sj,tjk->tsk", w, flat).reshape(-1, 2)
    own = np.repeat(owner, len(w))
    h = np.column_stack([pts2, np.zeros(len(pts2)), np.ones(len(pts2))])
    p3 = np.einsum("kij,kj->ki", state.poses[own][:, :3, :], h)
    from scipy.spatial import cKDTree

    close = cKDTree(p3).query_pairs(margin, output_type="ndarray")
    if not len(close):
        return margin
    pa, pb = own[close[:, 0]], own[close[:, 1]]
    lo, hi = np.minimum(pa, pb), np.maximum(pa, pb)
    n = int(owner.max()) + 1
    ok = np.isin(lo * n + hi, pairs[:, 0] * n + pairs[:, 1])
    if not ok.any():
        return margin
    d = np.linalg.norm(p3[close[ok, 0]] - p3[close[ok, 1]], axis=1)
    return float(min(d.min(), margin))
