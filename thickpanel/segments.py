"""Build a crease pattern from a line soup, as a CAD drawing gives it.

Steps, all vectorised with numpy/scipy:

1. validate the segments, kinds and optional target angles (bad input -> :class:`PatternError`
   naming the segment index and value);
2. merge end points closer than ``tol.merge`` into one vertex (the first point met represents its
   cluster, so output coordinates are input coordinates);
3. with ``split=True``, split segments where they cross (a new vertex at the crossing), where an
   end point of one lies inside another (T-junction) and where collinear segments overlap;
4. drop zero-length pieces and merge duplicate pieces. Duplicates of different kinds keep the
   strongest kind in the order mountain/valley > cut > border > flat; a piece drawn both as mountain
   and as valley is an error naming both segments.

The result is validated like any :class:`~thickpanel.pattern.CreasePattern`.
"""

from __future__ import annotations

import logging
from collections.abc import Sequence
from typing import Any

import numpy as np
from scipy.sparse import coo_matrix
from scipy.sparse.csgraph import connected_components
from scipy.spatial import cKDTree

from .errors import PatternError
from .geometry2d import point_segment_distance, segment_candidate_pairs, segment_pair_relations
from .limits import MAX_COORDINATE_MM
from .pattern import KINDS, CreasePattern
from .tolerances import DEFAULT_TOL, Tolerances
from .typing import FloatArray, IntArray

__all__ = ["pattern_from_segments", "merge_points", "split_segments"]

log = logging.getLogger("thickpanel")

_PRIORITY = {"mountain": 4, "valley": 4, "cut": 3, "border": 2, "flat": 1}


def merge_points(points: FloatArray, *, tol: Tolerances = DEFAULT_TOL) -> tuple[FloatArray, IntArray]:
    """Cluster points closer than ``tol.merge`` (transitively).

    Parameters
    ----------
    points : (p, 2) float, mm

    Returns
    -------
    unique : (u, 2) float, mm
        One representative per cluster (its first point), in order of first appearance.
    label : (p,) int
        Index into ``unique`` of every input point.
    """
    p = len(points)
    if p == 0:
        return np.zeros((0, 2)), np.zeros(0, dtype=np.int64)
    pairs = cKDTree(points).query_pairs(r=tol.merge, output_type="ndarray")
    if len(pairs):
        g = coo_matrix((np.ones(len(pairs)), (pairs[:, 0], pairs[:, 1])), shape=(p, p))
        _, comp = connected_components(g, directed=False)
    else:
        comp = np.arange(p)
    # renumber clusters by first appearance
    _, first = np.unique(comp, return_index=True)
    order = np.argsort(first)
    rank = np.empty(len(first), dtype=np.int64)
    rank[order] = np.arange(len(first))
    label = rank[comp]
    return points[np.sort(first)], label.astype(np.int64)


def split_segments(
    verts: FloatArray, segs: IntArray, *, tol: Tolerances = DEFAULT_TOL
) -> tuple[FloatArray, IntArray, IntArray]:
    """Split segments at crossings, T-junctions and overlaps.

    Parameters
    ----------
    verts : (n, 2) float, mm
    segs : (k, 2) int
        Vertex indices; no zero-length segment.

    Returns
    -------
    verts : (n', 2) float, mm
        The input vertices followed by new crossing vertices.
    pieces : (k', 2) int
        Sub-segments.
    source : (k',) int
        Input segment of every piece.
    """
    k = len(segs)
    a = verts[segs[:, 0]]
    b = verts[segs[:, 1]]
    pairs = segment_candidate_pairs(a, b, pad=tol.merge)
    split_seg: list[IntArray] = []
    split_par: list[FloatArray] = []
    split_vtx: list[IntArray] = []
    new_pts = np.zeros((0, 2))
    if len(pairs):
        i, j = pairs[:, 0], pairs[:, 1]
        # end points lying inside the other segment (T-junctions and collinear overlaps)
        for own, other in ((i, j), (j, i)):
            for end in (0, 1):
                pv = segs[own, end]
                pt = verts[pv]
                dist, par = point_segment_distance(pt, a[other], b[other])
                seg_len = np.linalg.norm(b[other] - a[other], axis=1)
                margin = tol.merge / seg_len
                hit = (dist < tol.merge) & (par > margin) & (par < 1 - margin)
                hit &= (pv != segs[other, 0]) & (pv != segs[other, 1])
                split_seg.append(other[hit])
                split_par.append(par[hit])
                split_vtx.append(pv[hit])
        # proper crossings: a new vertex at the crossing point
        rel, si, sj = segment_pair_relations(a, b, pairs, tol=tol.merge)
        cr = rel == 1
        if cr.any():
            ci, cj = i[cr], j[cr]
            pts = a[ci] + si[cr][:, None] * (b[ci] - a[ci])
            # a crossing point may coincide with an existing vertex or another crossing point
            tree = cKDTree(verts)
            uniq, lab = merge_points(pts, tol=tol)
            du, nu = tree.query(uniq, k=1) if len(uniq) else (np.zeros(0), np.zeros(0, dtype=np.int64))
            is_old = du < tol.merge
            new_index = np.where(is_old, nu, 0)
            fresh = np.nonzero(~is_old)[0]
            new_index[fresh] = len(verts) + np.arange(len(fresh))
            new_pts = uniq[fresh]
            vtx = new_index[lab].astype(np.int64)
            for seg_ids, par in ((ci, si[cr]), (cj, sj[cr])):
                split_seg.append(seg_ids)
                split_par.append(par)
                split_vtx.append(vtx)
    verts_out = np.concatenate([verts, new_pts]) if len(new_pts) else verts
    seg_all = np.concatenate([np.arange(k), np.arange(k), *split_seg]).astype(np.int64)
    par_all = np.concatenate([np.zeros(k), np.ones(k), *split_par])
    vtx_all = np.concatenate([segs[:, 0], segs[:, 1], *split_vtx]).astype(np.int64)
    order = np.lexsort((par_all, seg_all))
    seg_s, vtx_s = seg_all[order], vtx_all[order]
    same = seg_s[1:] == seg_s[:-1]
    pieces = np.stack([vtx_s[:-1][same], vtx_s[1:][same]], axis=1)
    source = seg_s[:-1][same]
    keep = pieces[:, 0] != pieces[:, 1]
    return verts_out, pieces[keep], source[keep]


def _as_segments(segments: Any) -> FloatArray:
    try:
        s = np.asarray(segments, dtype=np.float64)
    except (TypeError, ValueError) as exc:
        raise PatternError(f"segments must be a (k, 2, 2) array of numbers in mm: {exc}") from None
    if s.size == 0:
        return s.reshape(0, 2, 2)
    if s.ndim == 2 and s.shape[1] == 4:
        s = s.reshape(-1, 2, 2)
    if s.ndim != 3 or s.shape[1:] != (2, 2):
        raise PatternError(f"segments must have shape (k, 2, 2) (or (k, 4)); got {np.shape(segments)}")
    bad = np.nonzero(~np.all(np.isfinite(s.reshape(-1, 4)), axis=1))[0]
    if len(bad):
        q = int(bad[0])
        raise PatternError(f"segment {q} has a non-finite coordinate {s[q].tolist()}")
    far = np.nonzero(np.any(np.abs(s.reshape(-1, 4)) > MAX_COORDINATE_MM, axis=1))[0]
    if len(far):
        q = int(far[0])
        raise PatternError(
            f"segment {q} has a coordinate beyond the limit of +-{MAX_COORDINATE_MM:g} mm: {s[q].tolist()}"
        )
    return s


def pattern_from_segments(
    segments: Any,
    kinds: Sequence[str],
    target_angles: Any = None,
    *,
    split: bool = True,
    name: str = "",
    tol: Tolerances = DEFAULT_TOL,
    validate: bool = True,
) -> CreasePattern:
    """Crease pattern from line segments.

    Parameters
    ----------
    segments : (k, 2, 2) or (k, 4) float, mm
        End points ``[[x0, y0], [x1, y1]]`` per segment.
    kinds : sequence of str, length k
        Crease kind per segment (:data:`~thickpanel.pattern.KINDS`).
    target_angles : (k,) float, rad, optional
        Signed target fold angle per segment, inherited by its pieces.
    split : bool
        Split at crossings, T-junctions and overlaps (default). With False they are left for the
        validation to report.
    name : str
    tol : Tolerances
        ``tol.merge`` is the snapping distance for end points and intersections.
    validate : bool
        Passed to :class:`CreasePattern`.

    Returns
    -------
    CreasePattern

    Examples
    --------
    >>> cp = pattern_from_segments(
    ...     [[[0, 0], [10, 0]], [[10, 0], [10, 10]], [[10, 10], [0, 10]], [[0, 10], [0, 0]],
    ...      [[0, 0], [10, 10]], [[10, 0], [0, 10]]],
    ...     ["border"] * 4 + ["valley", "mountain"])
    >>> cp.n_vertices, cp.n_creases, cp.n_panels
    (5, 8, 4)
    """
    s = _as_segments(segments)
    k = len(s)
    if isinstance(kinds, str):
        raise PatternError(f"kinds must be a sequence of kind names, one per segment, not the string {kinds!r}")
    try:
        kinds_t = tuple(str(x) for x in kinds)
    except TypeError:
        raise PatternError(f"kinds must be a sequence of kind names ({', '.join(KINDS)}); got {kinds!r}") from None
    if len(kinds_t) != k:
        raise PatternError(f"kinds has {len(kinds_t)} entries for {k} segments")
    for q, kind in enumerate(kinds_t):
        if kind not in KINDS:
            raise PatternError(f"segment {q} has unknown kind {kind!r}; valid kinds: {', '.join(KINDS)}")
    if target_angles is None:
        ta = np.full(k, np.nan)
    else:
        try:
            ta = np.asarray(target_angles, dtype=np.float64).reshape(-1)
        except (TypeError, ValueError) as exc:
            raise PatternError(f"target_angles must be numbers in rad: {exc}") from None
        if len(ta) != k:
            raise PatternError(f"target_angles has {len(ta)} entries for {k} segments")
    verts, label = merge_points(s.reshape(-1, 2), tol=tol)
    segs = label.reshape(-1, 2)
    src = np.arange(k)
    nonzero = segs[:, 0] != segs[:, 1]
    if not nonzero.all():
        log.info("dropped %d zero-length segments", int((~nonzero).sum()))
    segs, src = segs[nonzero], src[nonzero]
    if split and len(segs):
        verts, pieces, sub = split_segments(verts, segs, tol=tol)
        src = src[sub]
    else:
        pieces = segs
    # duplicates: same unordered vertex pair
    key = np.sort(pieces, axis=1)
    kind_arr = np.array(kinds_t, dtype=object)[src] if len(src) else np.zeros(0, dtype=object)
    prio = np.array([_PRIORITY[x] for x in kind_arr], dtype=np.int64)
    # stable order: by key, then by priority (high first), then by source index
    order = np.lexsort((src, -prio, key[:, 1], key[:, 0]))
    ks = key[order]
    first = np.ones(len(order), dtype=bool)
    if len(order) > 1:
        first[1:] = np.any(ks[1:] != ks[:-1], axis=1)
    group = np.cumsum(first) - 1
    kept = order[first]
    # mountain drawn over valley on the same piece
    ko = kind_arr[order]
    ng = int(group[-1]) + 1 if len(group) else 0
    has_m = np.bincount(group, weights=(ko == "mountain"), minlength=ng) > 0
    has_v = np.bincount(group, weights=(ko == "valley"), minlength=ng) > 0
    clash = np.nonzero(has_m & has_v)[0]
    if len(clash):
        seg_ids = sorted({int(x) for x in src[order][group == clash[0]]})
        raise PatternError(
            f"segments {', '.join(map(str, seg_ids))} draw the same line as both mountain and valley"
        )
    kept = np.sort(kept)  # keep input order for deterministic crease numbering
    creases = pieces[kept]
    used = np.unique(creases.reshape(-1)) if len(creases) else np.zeros(0, dtype=np.int64)
    remap = np.full(len(verts), -1, dtype=np.int64)
    remap[used] = np.arange(len(used))
    return CreasePattern(
        verts[used],
        remap[creases] if len(creases) else np.zeros((0, 2), dtype=np.int64),
        [str(x) for x in kind_arr[kept]],
        ta[src[kept]],
        name=name,
        tol=tol,
        validate=validate,
    )
