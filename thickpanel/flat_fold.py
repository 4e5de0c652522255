"""The flat-folded state of a flat-foldable pattern: a compact target for stow paths.

Folding every mountain/valley crease by exactly +-pi closes the loop at an interior vertex exactly
when its alternating sector sum vanishes (Kawasaki 1989): a rotation by pi about an in-plane
direction ``u`` is the reflection ``2 u u^T - I`` in the line of ``u`` (composed with a flip of the
normal), so an even product around the vertex is the rotation about z by twice the alternating
sum of the sectors. Maekawa/Justin (|#M - #V| = 2) and big-little-big are the local conditions for
the assignment to fold flat without panels crossing at the vertex; whether a global layer order
exists (the "taco-taco" / "taco-tortilla" conditions of Demaine & O'Rourke 2007, *Geometric Folding
Algorithms*) is not decided here.

:func:`flat_folded_state` returns the state with every folding crease at +-pi (the sign of its
kind), its closure error, the footprint (extents of the folded sheet in its plane, mm), and the
largest number of layers over any point of the footprint (sampled at every panel's fan-triangle
centroids), which times the panel thickness bounds the stack height from below. Patterns with
vertices that fail Kawasaki or Maekawa (e.g. hub corners of spiral grids) are refused with those
vertices named.

Pure geometry.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .crossings import panel_triangles
from .errors import FoldError
from .foldability import check_foldability
from .pattern import CreasePattern, vid
from .poses import FoldState, fold_state_from_angles
from .tolerances import DEFAULT_TOL, Tolerances

__all__ = ["FlatFolded", "flat_folded_state"]


@dataclass(frozen=True)
class FlatFolded:
    """The flat-folded state and its size.

    Attributes
    ----------
    state : FoldState
        Every mountain/valley crease at -pi / +pi.
    footprint_mm : (float, float)
        Sides of the smallest-area rectangle around the folded sheet in its plane (longer first), mm.
    layers : int
        Largest number of panels over one point of the footprint (sampled at fan-triangle centroids).
    """

    state: FoldState
    footprint_mm: tuple[float, float]
    layers: int

    def stack_height(self, thickness_mm: float) -> float:
        """Lower bound of the stack height with panels of ``thickness_mm`` (layers x thickness), mm."""
        return float(self.layers * thickness_mm)


def flat_folded_state(pattern: CreasePattern, *, tol: Tolerances = DEFAULT_TOL) -> FlatFolded:
    """The flat-folded state of ``pattern`` (see the module text).

    Raises
    ------
    FoldError
        When some interior vertex fails Kawasaki or Maekawa (they are named), or the state does not
        close to ``tol.closure``.
    """
    rep = check_foldability(pattern, tol=tol)
    bad = [int(v) for v, k, m in zip(rep.vertices, rep.kawasaki_ok, rep.maekawa_ok, strict=True) if not (k and m)]
    if bad:
        names = ", ".join(vid(v) for v in bad[:8])
        raise FoldError(
            f"pattern {pattern.name!r} has no flat-folded state: {len(bad)} interior vertices fail Kawasaki or "
            f"Maekawa ({names}{', ...' if len(bad) > 8 else ''}); hub corners of spiral grids are such vertices"
        )
    kinds = np.asarray(pattern.kinds)
    ang = np.where(kinds == "valley", np.pi, np.where(kinds == "mountain", -np.pi, 0.0)).astype(float)
    for s in pattern.seams:
        ang[s.b] = ang[s.a]
    st = fold_state_from_angles(pattern, ang)
    if st.closure_error > tol.closure:
        raise FoldError(
            f"pattern {pattern.name!r}: the flat-folded state does not close (closure error {st.closure_error:.3g} > "
            f"{tol.closure:g})"
        )
    flat, owner = panel_triangles(pattern, tol=tol)
    h = np.concatenate([flat, np.zeros((*flat.shape[:2], 1)), np.ones((*flat.shape[:2], 1))], axis=2)
    t3 = np.einsum("kij,knj->kni", st.poses[owner][:, :3, :], h)
    pts = t3.reshape(-1, 3)
    c = pts.mean(axis=0)
    _, _, vt = np.linalg.svd(pts - c, full_matrices=False)
    uv = (pts - c) @ vt[:2].T
    ext = _min_rectangle(uv)
    tri_uv = ((t3 - c) @ vt[:2].T).reshape(-1, 3, 2)
    probe = tri_uv.mean(axis=1)
    layers = 0
    for q in probe:  # panels covering each probe point (inside one of their triangles)
        a, b, cc = tri_uv[:, 0], tri_uv[:, 1], tri_uv[:, 2]

        def side(p: np.ndarray, r: np.ndarray, s: np.ndarray, q: np.ndarray = q) -> np.ndarray:
            return (r[:, 0] - p[:, 0]) * (q[1] - p[:, 1]) - (r[:, 1] - p[:, 1]) * (q[0] - p[:, 0])

        d1, d2, d3 = side(a, b, cc), side(b, cc, a), side(cc, a, b)
        eps = tol.length * max(1.0, float(ext.max()))
        inside = ((d1 >= -eps) & (d2 >= -eps) & (d3 >= -eps)) | ((d1 <= eps) & (d2 <= eps) & (d3 <= eps))
        layers = max(layers, len(np.unique(owner[inside])))
    return FlatFolded(st, (float(ext[0]), float(ext[1])), int(layers))


def _min_rectangle(uv: np.ndarray) -> np.ndarray:
    """Sides (longer first) of the smallest-area rectangle around planar points (rotating calipers
    over the convex hull's edge directions, Freeman & Shapira 1975)."""
    from scipy.spatial import ConvexHull, QhullError

    try:
        hull = uv[ConvexHull(uv).vertices]
    except QhullError:  # all points on a line
        return np.array([float(np.ptp(uv, axis=0).max()), 0.0])
    best = None
    for i in range(len(hull)):
        e = hull[(i + 1) % len(hull)] - hull[i]
        n = float(np.linalg.norm(e))
        if n == 0:
            continue
        e = e / n
        rot = hull @ np.array([[e[0], -e[1]], [e[1], e[0]]])
        ext = np.ptp(rot, axis=0)
        if best is None or ext[0] * ext[1] < best[0] * best[1]:
            best = ext
    assert best is not None
    return np.sort(best)[::-1]
