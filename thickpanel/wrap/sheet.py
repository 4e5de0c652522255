"""Turn the panels of a wrapped-hub construction into a :class:`~thickpanel.pattern.CreasePattern`.

The construction gives every panel as a flat polygon with the rigid pose of its plate in the stowed
state. The creases are the panels' shared edges; each crease's fold angle is read from the two
poses (the relative rotation about the crease line), so creases, mountain/valley and target angles
all come from the stowed state. A 180 deg fold has no sense in the rotation alone: it is a valley
when the second panel lies on the first panel's top side in the layer stack (``WrapPiece.rank``).
"""

from __future__ import annotations

import math
import weakref
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field, replace

import numpy as np
from scipy.spatial import cKDTree

from ..errors import PatternError
from ..pattern import CreasePattern, pid
from ..segments import merge_points
from ..tolerances import DEFAULT_TOL, Tolerances
from ..typing import FloatArray, IntArray
from .zero import WrapPiece

__all__ = ["WrapInfo", "build_sheet", "wrap_info", "fold_angles_from_poses", "mirrored", "crease_ids"]

_FLAT_FOLD = 1e-6  # rad: |pi - |rho|| below this is a 180 deg fold whose sense comes from the stack
_NO_FOLD = 1e-9  # rad: |rho| below this is a drawn line that does not fold
_SNAP = 1e-5  # mm: construction corners closer than this are one vertex (round-off of clipped corners)


@dataclass(frozen=True)
class WrapInfo:
    """What the wrapped-hub construction knows about the sheet it built (kept beside the pattern).

    Attributes
    ----------
    params : dict
        The generator's parameters and derived sizes (mm).
    pieces : tuple of WrapPiece
        One per panel, indexed like ``pattern.panels``.
    stowed_poses : (P, 4, 4) float
        Pose of every panel's plate in the stowed state (flat sheet frame -> stowed, mm).
    labels : tuple of str
        Crease class per crease (``hub``, ``accordion``, ``radial``, ``u-turn``, ``bend``, ``border``).
    gaps : (m,) float, mm
        Width of the backing left bare along each crease in the flat sheet (0 at zero thickness).
    hub_vertices : tuple of int
        The hub corners (where Kawasaki cannot hold; listed as the exemption).
    extra : dict
        Construction data for reports (layer pitch, stowed radius, misfit figures ...).
    """

    params: dict
    pieces: tuple[WrapPiece, ...]
    stowed_poses: FloatArray
    labels: tuple[str, ...]
    gaps: FloatArray
    hub_vertices: tuple[int, ...]
    extra: dict = field(default_factory=dict)


GapsFn = Callable[[CreasePattern, list[WrapPiece], list[str]], FloatArray]
"""``gaps_fn(pattern, pieces by panel, crease labels) -> (m,) float``: bare backing width per crease, mm."""

_INFO: weakref.WeakKeyDictionary[CreasePattern, WrapInfo] = weakref.WeakKeyDictionary()


def wrap_info(pattern: CreasePattern) -> WrapInfo | None:
    """The :class:`WrapInfo` of a pattern built by the ``hub-wrap`` layout, or None."""
    return _INFO.get(pattern)


def fold_angles_from_poses(pattern: CreasePattern, poses: FloatArray, ranks: FloatArray,
                           outs: FloatArray) -> FloatArray:
    """Signed fold angle (rad) of every crease from the two panels' poses.

    Convention of :mod:`thickpanel.poses`: with (left, right) panels of the crease's forward direction,
    ``pose_right = pose_left @ Rot(crease, -rho)``. Border creases get 0.
    """
    cp = pattern.crease_panels
    d = pattern.crease_directions
    rho = np.zeros(pattern.n_creases)
    for c in range(pattern.n_creases):
        lft, rgt = int(cp[c, 0]), int(cp[c, 1])
        if lft < 0 or rgt < 0:
            continue
        rel = np.linalg.solve(poses[lft], poses[rgt])[:3, :3]
        nz = rel[:, 2]
        dd = np.array([d[c, 0], d[c, 1], 0.0])
        side = np.cross(dd, [0.0, 0.0, 1.0])
        theta = math.atan2(float(nz @ side), float(nz[2]))
        r = -theta
        if abs(math.pi - abs(r)) < _FLAT_FOLD:
            n_left = poses[lft][:3, :3] @ np.array([0.0, 0.0, 1.0])
            out = np.append(outs[lft], 0.0)
            above = (ranks[rgt] - ranks[lft]) * float(n_left @ out)
            if above == 0.0:
                raise PatternError(f"hub-wrap: panels {pid(lft)} and {pid(rgt)} fold flat onto each other with no "
                                   "layer order between them")
            r = math.pi if above > 0 else -math.pi
        elif abs(r) < _NO_FOLD:
            r = 0.0
        rho[c] = r
    return rho


def _label(a: WrapPiece, b: WrapPiece) -> str:
    """Crease class from the two panels it joins."""
    kinds = {a.kind, b.kind}
    if "hub" in kinds:
        return "hub"
    if a.ring != b.ring:
        return "accordion"
    if kinds == {"g", "w"} and a.segment >= 0 and b.segment >= 0 and a.gore == b.gore:
        return "radial"
    if kinds == {"ring", "w"} and a.gore != b.gore:
        return "u-turn"
    return "bend"


def _settle_flat_folds(rho: FloatArray, labels: list[str], pairs: IntArray, pieces: Sequence[WrapPiece]) -> FloatArray:
    """Accordion and radial creases are 180 deg folds of the backing even where the two plates are not
    parallel (thick sheets); their sense is the one the parallel creases of the same fold line show."""
    rho = rho.copy()
    votes: dict[tuple, float] = {}
    for c, lb in enumerate(labels):
        if lb in ("accordion", "radial") and abs(abs(rho[c]) - math.pi) < _FLAT_FOLD:
            a, b = pieces[int(pairs[c, 0])], pieces[int(pairs[c, 1])]
            key = (lb, min(a.ring, b.ring))
            votes[key] = votes.get(key, 0.0) + (1.0 if rho[c] > 0 else -1.0) * (1 if a.ring <= b.ring else -1)
    for c, lb in enumerate(labels):
        if lb in ("accordion", "radial") and abs(abs(rho[c]) - math.pi) >= _FLAT_FOLD:
            a, b = pieces[int(pairs[c, 0])], pieces[int(pairs[c, 1])]
            v = votes.get((lb, min(a.ring, b.ring)), 0.0)
            if v != 0.0:
                rho[c] = math.copysign(math.pi, v * (1 if a.ring <= b.ring else -1))
    return rho


def build_sheet(pieces: Sequence[WrapPiece], outline: FloatArray, *, name: str, params: dict,
                gaps_fn: GapsFn | None = None, extra: dict | None = None,
                tol: Tolerances = DEFAULT_TOL) -> CreasePattern:
    """Crease pattern of a wrapped-hub sheet from its panels (flat polygons and stowed poses).

    Parameters
    ----------
    pieces : sequence of WrapPiece
        Panels tiling the flat sheet.
    outline : (k, 2) float, mm
        The sheet's outer boundary (counter-clockwise).
    name : str
    params : dict
        Stored in the :class:`WrapInfo`.
    gaps_fn : callable, optional
        ``gaps_fn(pattern, pieces_by_panel, labels) -> (m,) float`` bare backing width per crease.
    extra : dict, optional
    """
    # every shared edge once: snap all corners to one vertex set, then keep each vertex pair once
    # (pieces meet edge to edge or in T-junctions, which the splitter resolves)
    allpts = np.concatenate([np.asarray(pc.polygon, dtype=float) for pc in pieces])
    uniq, label = merge_points(allpts, tol=replace(tol, merge=max(tol.merge, _SNAP)))
    pairs: set[tuple[int, int]] = set()
    start = 0
    for pc in pieces:
        ids = label[start:start + len(pc.polygon)]
        start += len(pc.polygon)
        for a, b in zip(ids, np.roll(ids, -1), strict=True):
            if a != b:
                pairs.add((int(min(a, b)), int(max(a, b))))
    pair_arr = _split_at_vertices(uniq, np.array(sorted(pairs), dtype=np.int64), 10.0 * _SNAP)
    raw = CreasePattern(uniq, pair_arr, ["flat"] * len(pair_arr), name=name, tol=tol, validate=False)
    # panels <-> pieces by centroid
    o = np.asarray(outline, dtype=float)
    cents = np.array([pn.centroid for pn in raw.panels])
    pcs = np.array([_centroid(pc.polygon) for pc in pieces])
    dist, idx = cKDTree(pcs).query(cents)
    size = float(np.ptp(o, axis=0).max())
    if len(raw.panels) != len(pieces) or np.any(dist > 1e-7 * size) or len(set(idx.tolist())) != len(pieces):
        raise PatternError(f"hub-wrap: the construction's {len(pieces)} panels do not tile the sheet "
                           f"({len(raw.panels)} faces found); report this with the parameters {params}")
    ordered = tuple(pieces[int(i)] for i in idx)
    poses = np.array([pc.pose for pc in ordered])
    ranks = np.array([pc.rank for pc in ordered])
    outs = np.array([pc.out for pc in ordered])
    rho = fold_angles_from_poses(raw, poses, ranks, outs)
    cpan = raw.crease_panels
    outside = np.asarray((cpan < 0).any(axis=1), dtype=bool)
    labels = ["border" if outside[c] else _label(ordered[int(cpan[c, 0])], ordered[int(cpan[c, 1])])
              for c in range(raw.n_creases)]
    rho = _settle_flat_folds(rho, labels, cpan, ordered)
    kinds_c = np.where(outside, "border", np.where(rho > 0, "valley", np.where(rho < 0, "mountain", "flat")))
    cp = CreasePattern(raw.vertices, raw.creases, list(kinds_c), np.where(kinds_c == "border", np.nan, rho),
                       name=name, tol=tol)
    gaps = np.zeros(cp.n_creases) if gaps_fn is None else \
        np.asarray(gaps_fn(cp, list(ordered), labels), dtype=np.float64)
    hub_pts = [pc for pc in ordered if pc.kind == "hub"][0].polygon
    hv = tuple(int(i) for i in cKDTree(cp.vertices).query(hub_pts)[1]) if cp.n_vertices else ()
    poses.setflags(write=False)
    _INFO[cp] = WrapInfo(dict(params), ordered, poses, tuple(labels), gaps, hv, dict(extra or {}))
    return cp


def _split_at_vertices(pts: FloatArray, pairs: IntArray, eps: float) -> IntArray:
    """Split every segment (vertex index pair) at the vertices lying on it (T-junctions); unique pairs."""
    tree = cKDTree(pts)
    out: set[tuple[int, int]] = set()
    a, b = pts[pairs[:, 0]], pts[pairs[:, 1]]
    mids, half = (a + b) / 2.0, np.linalg.norm(b - a, axis=1) / 2.0
    for n, (i, j) in enumerate(pairs):
        near = tree.query_ball_point(mids[n], half[n] + eps)
        d = b[n] - a[n]
        ll = float(d @ d)
        on = []
        for q in near:
            if q in (i, j):
                continue
            w = pts[q] - a[n]
            tt = float(w @ d) / ll
            if 0.0 < tt < 1.0 and abs(float(w[0] * d[1] - w[1] * d[0])) / math.sqrt(ll) < eps:
                on.append((tt, q))
        chain = [int(i)] + [q for _, q in sorted(on)] + [int(j)]
        for u, v in zip(chain[:-1], chain[1:], strict=True):
            out.add((min(u, v), max(u, v)))
    return np.array(sorted(out), dtype=np.int64).reshape(-1, 2)


def _centroid(poly: FloatArray) -> FloatArray:
    p = np.asarray(poly, dtype=float)
    x, y = p[:, 0], p[:, 1]
    xn, yn = np.roll(x, -1), np.roll(y, -1)
    cr = x * yn - xn * y
    a = cr.sum() / 2.0
    if abs(a) < 1e-300:
        return p.mean(axis=0)
    return np.array([((x + xn) * cr).sum(), ((y + yn) * cr).sum()]) / (6.0 * a)


def crease_ids(cp: CreasePattern, label: str) -> IntArray:
    """Creases of one class (see :attr:`WrapInfo.labels`)."""
    info = wrap_info(cp)
    if info is None:
        return np.zeros(0, dtype=np.int64)
    return np.array([c for c, lb in enumerate(info.labels) if lb == label], dtype=np.int64)


def mirrored(pieces: Sequence[WrapPiece], outline: FloatArray) -> tuple[list[WrapPiece], FloatArray]:
    """The mirror image (x -> -x) of a sheet and its stowed state (the other wrap sense)."""
    from dataclasses import replace

    s = np.diag([-1.0, 1.0, 1.0, 1.0])
    flip = np.array([-1.0, 1.0])
    out = [replace(pc, polygon=(np.asarray(pc.polygon) * flip)[::-1], plate=(np.asarray(pc.plate) * flip)[::-1],
                   pose=s @ pc.pose @ s, out=np.asarray(pc.out) * flip) for pc in pieces]
    return out, (np.asarray(outline) * flip)[::-1]
