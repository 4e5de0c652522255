"""Convex narrow phase and broad phase for the clearance sweep (pure numpy/scipy; the SAT kernel in
numba, :mod:`thickpanel.sat_kernel`, loaded on first use).

A slab (panel polygon x z-range, trimmed by cut planes) becomes one or more *convex pieces*: the
polygon is split into convex parts (ear clipping, then merging triangles across diagonals while the
union stays convex, after Hertel & Mehlhorn 1983), and each part is the intersection of half-spaces.

Narrow phase
------------
* Separating-axis test (SAT) over the face normals of both pieces and the cross products of their
  edge directions. For overlapping convex polytopes the largest (negative) gap over these axes is
  minus the exact penetration depth; for separated ones it is a lower bound of the distance
  (Gottschalk, Lin & Manocha 1996; Ericson 2005, *Real-Time Collision Detection*, ch. 5).
* Exact distance of separated pieces: the minimum of vertex-triangle and edge-edge distances over
  the hull boundaries (Ericson 2005, 5.1.5 and 5.1.9), computed for the few pairs that matter.

Broad phase: sort-and-sweep of axis-aligned boxes on the axis giving the fewest candidates.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.spatial import ConvexHull, QhullError

from .errors import ThicknessError
from .tolerances import DEFAULT_TOL, Tolerances
from .typing import FloatArray, IntArray

__all__ = [
    "convex_parts",
    "halfspace_vertices",
    "Piece",
    "make_piece",
    "piece_from_points",
    "PieceArrays",
    "pack_pieces",
    "sweep_pairs",
    "sweep_candidates",
    "sat_gaps",
    "exact_distance",
]


# ---------------------------------------------------------------------------- convex partition
def _cross2(o: FloatArray, a: FloatArray, b: FloatArray) -> float:
    return float((a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0]))


def _is_convex_loop(pts: FloatArray, eps: float) -> bool:
    k = len(pts)
    for i in range(k):
        if _cross2(pts[i - 1], pts[i], pts[(i + 1) % k]) < -eps:
            return False
    return True


def _ear_clip(poly: FloatArray, eps: float) -> list[tuple[int, int, int]]:
    idx = list(range(len(poly)))
    tris: list[tuple[int, int, int]] = []
    guard = 0
    while len(idx) > 3 and guard < 10 * len(poly) ** 2:
        guard += 1
        n = len(idx)
        for k in range(n):
            i0, i1, i2 = idx[k - 1], idx[k], idx[(k + 1) % n]
            if _cross2(poly[i0], poly[i1], poly[i2]) <= eps:
                continue
            inside = False
            for j in idx:
                if j in (i0, i1, i2):
                    continue
                p = poly[j]
                if (
                    _cross2(poly[i0], poly[i1], p) >= -eps
                    and _cross2(poly[i1], poly[i2], p) >= -eps
                    and _cross2(poly[i2], poly[i0], p) >= -eps
                ):
                    inside = True
                    break
            if not inside:
                tris.append((i0, i1, i2))
                idx.pop(k)
                break
        else:  # no ear found (degenerate input): fan the rest
            break
    for k in range(1, len(idx) - 1):
        tris.append((idx[0], idx[k], idx[k + 1]))
    return tris


def convex_parts(poly: FloatArray, *, tol: Tolerances = DEFAULT_TOL) -> list[FloatArray]:
    """Split a simple counter-clockwise polygon into convex counter-clockwise parts.

    Parameters
    ----------
    poly : (k, 2) float, mm

    Returns
    -------
    list of (k_i, 2) float
        The polygon itself when it is convex.
    """
    pts = np.asarray(poly, dtype=float)
    scale = float(np.ptp(pts, axis=0).max()) or 1.0
    eps = tol.length * scale  # mm^2: cross products of mm vectors
    if _is_convex_loop(pts, eps):
        return [pts]
    parts: list[list[int]] = [list(t) for t in _ear_clip(pts, eps)]
    merged = True
    while merged:
        merged = False
        for i in range(len(parts)):
            for j in range(i + 1, len(parts)):
                a, b = parts[i], parts[j]
                # shared diagonal: a has (u, v) consecutive, b has (v, u)
                for ka in range(len(a)):
                    u, v = a[ka], a[(ka + 1) % len(a)]
                    if v in b and b[(b.index(v) + 1) % len(b)] == u:
                        kb = b.index(v)
                        # a: ... u v ...   b: ... v u ...  -> a up to u, then b after u to before v
                        rest = [b[(kb + 2 + s) % len(b)] for s in range(len(b) - 2)]
                        cand = a[: ka + 1] + rest + a[ka + 1 :]
                        if _is_convex_loop(pts[cand], eps):
                            parts[i] = cand
                            parts.pop(j)
                            merged = True
                        break
                if merged:
                    break
            if merged:
                break
    return [pts[p] for p in parts]


# ---------------------------------------------------------------------------- convex pieces
def halfspace_vertices(normals: FloatArray, offsets: FloatArray, *, eps: float) -> FloatArray:
    """Vertices of the bounded polytope ``normals @ x <= offsets``, (n, 3) float (may be empty).

    Every triple of planes is intersected and points violating a constraint by more than ``eps``
    are dropped; duplicates (closer than ``eps``) are merged.
    """
    k = len(normals)
    ii, jj, kk = np.array([(a, b, c) for a in range(k) for b in range(a + 1, k) for c in range(b + 1, k)]).T
    mats = np.stack([normals[ii], normals[jj], normals[kk]], axis=1)
    rhs = np.stack([offsets[ii], offsets[jj], offsets[kk]], axis=1)
    det = np.linalg.det(mats)
    ok = np.abs(det) > 1e-12
    pts = np.linalg.solve(mats[ok], rhs[ok][..., None])[..., 0]
    good = np.all(pts @ normals.T <= offsets + eps, axis=1)
    pts = pts[good]
    if len(pts) == 0:
        return pts
    key = np.round(pts / eps).astype(np.int64)
    _, first = np.unique(key, axis=0, return_index=True)
    return pts[np.sort(first)]


@dataclass(frozen=True)
class Piece:
    """One convex piece of a slab or extra part, in its owner's flat frame.

    Attributes
    ----------
    owner : int
        Panel index (or an extra part's owner index).
    vertices : (n, 3) float, mm
    triangles : (f, 3) int
        Boundary triangulation (hull simplices).
    normals : (a, 3) float
        Distinct face normal directions (up to sign).
    edges : (e, 3) float
        Distinct edge directions (up to sign).
    label : str
    joins : tuple of int
        Panels (besides ``owner``) this piece is never compared with: hinge hardware sits in the
        notches of the two panels it joins, so its fit there is the hinge style's own check.
    """

    owner: int
    vertices: FloatArray
    triangles: IntArray
    normals: FloatArray
    edges: FloatArray
    label: str = ""
    joins: tuple[int, ...] = ()


def _unique_dirs(d: FloatArray, eps: float) -> FloatArray:
    if len(d) == 0:
        return d.reshape(0, 3)
    d = d / np.linalg.norm(d, axis=1)[:, None]
    # canonical sign: first clearly non-zero component positive
    lead = np.argmax(np.abs(d) > eps, axis=1)
    s = np.sign(d[np.arange(len(d)), lead])
    d = d * s[:, None]
    key = np.round(d / max(eps, 1e-12)).astype(np.int64)
    _, first = np.unique(key, axis=0, return_index=True)
    return d[np.sort(first)]


def make_piece(
    owner: int, normals: FloatArray, offsets: FloatArray, *, label: str = "", joins: tuple[int, ...] = (),
    tol: Tolerances = DEFAULT_TOL,
) -> Piece:
    """Convex piece from half-spaces ``normals @ x <= offsets`` (mm); raises when it is empty."""
    verts = halfspace_vertices(np.asarray(normals, float), np.asarray(offsets, float), eps=tol.merge)
    if len(verts) < 4:
        raise ThicknessError(f"{label or 'piece'} is empty or flat after its cut planes ({len(verts)} corners)")
    try:
        hull = ConvexHull(verts)
    except QhullError:
        raise ThicknessError(f"{label or 'piece'} has no volume after its cut planes") from None
    verts = verts[hull.vertices]
    remap = np.full(int(hull.simplices.max()) + 1, -1)
    remap[hull.vertices] = np.arange(len(hull.vertices))
    tris = remap[hull.simplices]
    fn = hull.equations[:, :3]
    normals_u = _unique_dirs(fn, tol.angle * 1e3)
    # real edges: between two facets whose normals differ
    nb = hull.neighbors
    f_idx = np.repeat(np.arange(len(nb)), 3)
    g_idx = nb.reshape(-1)
    keep = g_idx > f_idx
    f_idx, g_idx = f_idx[keep], g_idx[keep]
    dots = np.einsum("ij,ij->i", fn[f_idx], fn[g_idx])
    sharp = dots < 1.0 - 1e-9
    e_dirs = np.cross(fn[f_idx[sharp]], fn[g_idx[sharp]])
    edges_u = _unique_dirs(np.array(e_dirs).reshape(-1, 3), tol.angle * 1e3)
    # orient triangles consistently is not needed for distances
    return Piece(owner, verts, tris.astype(np.int64), normals_u, edges_u, label, tuple(int(j) for j in joins))


def piece_from_points(owner: int, points: FloatArray, *, label: str = "", joins: tuple[int, ...] = (),
                      tol: Tolerances = DEFAULT_TOL) -> Piece:
    """Convex piece as the hull of ``points`` ((n, 3) float, mm, owner's flat frame); ``joins`` as
    in :class:`Piece`."""
    pts = np.asarray(points, dtype=float)
    try:
        hull = ConvexHull(pts)
    except (QhullError, ValueError):
        raise ThicknessError(f"{label or 'extra piece'} of owner {owner} has no volume") from None
    eq = hull.equations
    return make_piece(owner, eq[:, :3], -eq[:, 3], label=label, joins=joins, tol=tol)


@dataclass(frozen=True)
class PieceArrays:
    """Pieces packed into padded arrays (padding repeats the first entry, harmless for SAT).

    Attributes
    ----------
    owner : (N,) int
    verts : (N, V, 3) float, mm (flat frames)
    normals : (N, F, 3) float
    edges : (N, E, 3) float
    pieces : tuple of Piece
    joins : (N, J) int
        Each piece's ``joins`` padded with -1 (J >= 1).
    """

    owner: IntArray
    verts: FloatArray
    normals: FloatArray
    edges: FloatArray
    pieces: tuple[Piece, ...]
    joins: IntArray

    def skipped(self, i: IntArray, j: IntArray) -> IntArray:
        """(k,) bool: piece pairs ``(i, j)`` never compared (same owner, or one joins the other's owner)."""
        oi, oj = self.owner[i], self.owner[j]
        return np.asarray((oi == oj) | (self.joins[i] == oj[:, None]).any(axis=1)
                          | (self.joins[j] == oi[:, None]).any(axis=1))


def _pad(rows: list[FloatArray], width: int) -> FloatArray:
    out = np.empty((len(rows), width, 3))
    for i, r in enumerate(rows):
        out[i, : len(r)] = r
        out[i, len(r) :] = r[0]
    return out


def pack_pieces(pieces: list[Piece]) -> PieceArrays:
    """Pack pieces for the vectorised kernels."""
    v = max(len(p.vertices) for p in pieces)
    f = max(len(p.normals) for p in pieces)
    e = max(max(len(p.edges) for p in pieces), 1)
    edges = [p.edges if len(p.edges) else np.array([[1.0, 0.0, 0.0]]) for p in pieces]
    nj = max(max(len(p.joins) for p in pieces), 1)
    joins = np.full((len(pieces), nj), -1, dtype=np.int64)
    for k, p in enumerate(pieces):
        joins[k, : len(p.joins)] = p.joins
    return PieceArrays(
        owner=np.array([p.owner for p in pieces], dtype=np.int64),
        verts=_pad([p.vertices for p in pieces], v),
        normals=_pad([p.normals for p in pieces], f),
        edges=_pad(edges, e),
        pieces=tuple(pieces),
        joins=joins,
    )


# ---------------------------------------------------------------------------- broad phase
def _best_axis(lo: FloatArray, hi: FloatArray) -> tuple[int, IntArray, IntArray]:
    """(candidate count, sort order, candidates per box) of the sweep axis with the fewest candidates."""
    n = len(lo)
    best: tuple[int, IntArray, IntArray] | None = None
    for axis in range(3):
        order = np.argsort(lo[:, axis], kind="stable")
        slo = lo[order, axis]
        end = np.searchsorted(slo, hi[order, axis], side="right")
        counts = np.maximum(end - np.arange(n) - 1, 0)
        total = int(counts.sum())
        if best is None or total < best[0]:
            best = (total, order, counts)
    assert best is not None
    return best


def sweep_candidates(lo: FloatArray, hi: FloatArray, *, pad: float) -> int:
    """How many candidate pairs :func:`sweep_pairs` would test (an upper bound of the pairs it returns),
    counted in O(N log N) without listing them."""
    if len(lo) < 2:
        return 0
    return _best_axis(lo - pad, hi + pad)[0]


def sweep_pairs(lo: FloatArray, hi: FloatArray, *, pad: float) -> IntArray:
    """Index pairs (i < j) of boxes overlapping after growing each by ``pad`` (mm).

    Sort-and-sweep on whichever of the three axes yields the fewest candidates (PERF-NOTES §5).

    Parameters
    ----------
    lo, hi : (N, 3) float, mm
    """
    n = len(lo)
    if n < 2:
        return np.zeros((0, 2), dtype=np.int64)
    lo = lo - pad
    hi = hi + pad
    total, order, counts = _best_axis(lo, hi)
    first = np.repeat(np.arange(n), counts)
    offs = np.arange(total) - np.repeat(np.cumsum(counts) - counts, counts)
    i = order[first]
    j = order[first + 1 + offs]
    keep = np.all((lo[i] <= hi[j]) & (lo[j] <= hi[i]), axis=1)
    i, j = i[keep], j[keep]
    return np.stack([np.minimum(i, j), np.maximum(i, j)], axis=1)


# ---------------------------------------------------------------------------- SAT kernel
def sat_gaps(pairs: IntArray, verts: FloatArray, normals: FloatArray, edges: FloatArray) -> FloatArray:
    """(p,) float, mm: signed SAT gap of every piece pair in world coordinates.

    Negative values are minus the exact penetration depth of the convex pieces; positive values are
    a lower bound of their distance.

    Parameters
    ----------
    pairs : (p, 2) int
    verts : (N, V, 3) float, mm
    normals : (N, F, 3) float
    edges : (N, E, 3) float
    """
    out = np.empty(len(pairs))
    if len(pairs):
        from .sat_kernel import sat_kernel  # numba loads with the first sweep, not with the package

        sat_kernel(
            np.ascontiguousarray(pairs[:, 0]),
            np.ascontiguousarray(pairs[:, 1]),
            np.ascontiguousarray(verts),
            np.ascontiguousarray(normals),
            np.ascontiguousarray(edges),
            out,
        )
    return out


# ---------------------------------------------------------------------------- exact distance
def _point_triangle(p: FloatArray, a: FloatArray, b: FloatArray, c: FloatArray) -> FloatArray:
    """Distances from points to triangles, row by row (Ericson 2005, 5.1.5), (k,) mm."""
    ab = b - a
    ac = c - a
    ap = p - a
    n = np.cross(ab, ac)
    nn = np.einsum("ij,ij->i", n, n)
    # barycentric projection onto the plane
    d = np.full(len(p), np.inf)
    with np.errstate(invalid="ignore", divide="ignore"):
        s_n = np.einsum("ij,ij->i", np.cross(ap, ac), n) / nn
        t_n = np.einsum("ij,ij->i", np.cross(ab, ap), n) / nn
    inside = (nn > 0) & (s_n >= 0) & (t_n >= 0) & (s_n + t_n <= 1)
    dist_plane = np.abs(np.einsum("ij,ij->i", ap, n)) / np.sqrt(np.where(nn > 0, nn, 1.0))
    d[inside] = dist_plane[inside]
    for q0, q1 in ((a, b), (b, c), (c, a)):
        d = np.minimum(d, _point_segment(p, q0, q1))
    return d


def _point_segment(p: FloatArray, a: FloatArray, b: FloatArray) -> FloatArray:
    ab = b - a
    dd = np.einsum("ij,ij->i", ab, ab)
    with np.errstate(invalid="ignore", divide="ignore"):
        s = np.clip(np.einsum("ij,ij->i", p - a, ab) / np.where(dd > 0, dd, 1.0), 0.0, 1.0)
    return np.linalg.norm(p - a - s[:, None] * ab, axis=1)


def _segment_segment(p1: FloatArray, q1: FloatArray, p2: FloatArray, q2: FloatArray) -> FloatArray:
    """Distances between segments row by row (Ericson 2005, 5.1.9), (k,) mm."""
    d1 = q1 - p1
    d2 = q2 - p2
    r = p1 - p2
    a = np.einsum("ij,ij->i", d1, d1)
    e = np.einsum("ij,ij->i", d2, d2)
    f = np.einsum("ij,ij->i", d2, r)
    c = np.einsum("ij,ij->i", d1, r)
    b = np.einsum("ij,ij->i", d1, d2)
    den = a * e - b * b
    with np.errstate(invalid="ignore", divide="ignore"):
        s = np.where(den > 1e-18 * np.maximum(a * e, 1e-300), np.clip((b * f - c * e) / den, 0, 1), 0.0)
        t = (b * s + f) / np.where(e > 0, e, 1.0)
        s = np.where(t < 0, np.clip(-c / np.where(a > 0, a, 1.0), 0, 1), s)
        s = np.where(t > 1, np.clip((b - c) / np.where(a > 0, a, 1.0), 0, 1), s)
        t = np.clip(t, 0, 1)
    return np.linalg.norm(p1 + d1 * s[:, None] - p2 - d2 * t[:, None], axis=1)


def exact_distance(va: FloatArray, ta: IntArray, vb: FloatArray, tb: IntArray) -> float:
    """Exact distance (mm) between two disjoint convex polytopes given by vertices and hull triangles.

    For overlapping polytopes the result is 0 or small; use :func:`sat_gaps` for penetration.
    """
    out = math.inf
    for v, t_, w in ((va, tb, vb), (vb, ta, va)):
        p = np.repeat(v, len(t_), axis=0)
        tri = np.tile(t_, (len(v), 1))
        out = min(out, float(_point_triangle(p, w[tri[:, 0]], w[tri[:, 1]], w[tri[:, 2]]).min()))
    ea = np.unique(np.sort(np.concatenate([ta[:, [0, 1]], ta[:, [1, 2]], ta[:, [2, 0]]]), axis=1), axis=0)
    eb = np.unique(np.sort(np.concatenate([tb[:, [0, 1]], tb[:, [1, 2]], tb[:, [2, 0]]]), axis=1), axis=0)
    ia = np.repeat(np.arange(len(ea)), len(eb))
    ib = np.tile(np.arange(len(eb)), len(ea))
    dd = _segment_segment(va[ea[ia, 0]], va[ea[ia, 1]], vb[eb[ib, 0]], vb[eb[ib, 1]])
    return min(out, float(dd.min()))
