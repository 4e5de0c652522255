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
from collections.abc import Sequence
from dataclasses import dataclass, field

import numpy as np
from scipy.spatial import cKDTree

from ..errors import PatternError
from ..pattern import CreasePattern, pid
from ..segments import pattern_from_segments
from ..tolerances import DEFAULT_TOL, Tolerances
from ..typing import FloatArray, IntArray
from .zero import WrapPiece

__all__ = ["WrapInfo", "build_sheet", "wrap_info", "fold_angles_from_poses", "mirrored", "crease_ids"]

_FLAT_FOLD = 1e-6  # rad: |pi - |rho|| below this is a 180 deg fold whose sense comes from the stack
_NO_FOLD = 1e-9  # rad: |rho| below this is a drawn line that does not fold


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


def _label(a: WrapPiece, b: WrapPiece, rho: float) -> str:
    kinds = {a.kind, b.kind}
    if "hub" in kinds:
        return "hub"
    if abs(abs(rho) - math.pi) < _FLAT_FOLD:
        if a.ring != b.ring:
            return "accordion"
        if kinds == {"g", "w"}:
            return "radial"
        return "u-turn"
    if rho == 0.0:
        return "flat"
    return "bend"


def build_sheet(pieces: Sequence[WrapPiece], outline: FloatArray, *, name: str, params: dict,
                gaps_fn: object = None, extra: dict | None = None, tol: Tolerances = DEFAULT_TOL) -> CreasePattern:
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
    # every shared edge once (pieces meet edge to edge or in T-junctions, which the splitter resolves)
    seen: dict[tuple, FloatArray] = {}
    for pc in pieces:
        p = np.asarray(pc.polygon, dtype=float)
        for a, b in zip(p, np.roll(p, -1, axis=0), strict=True):
            ka, kb = tuple(np.round(a, 7)), tuple(np.round(b, 7))
            key = (ka, kb) if ka <= kb else (kb, ka)
            seen.setdefault(key, np.array([a, b]))
    segs: list[FloatArray] = list(seen.values())
    kinds: list[str] = ["flat"] * len(segs)
    o = np.asarray(outline, dtype=float)
    raw = pattern_from_segments(np.array(segs), kinds, name=name, tol=tol, validate=False)
    # panels <-> pieces by centroid
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
    outside = (raw.crease_panels < 0).any(axis=1)
    kinds_c = np.where(outside, "border", np.where(rho > 0, "valley", np.where(rho < 0, "mountain", "flat")))
    cp = CreasePattern(raw.vertices, raw.creases, list(kinds_c), np.where(kinds_c == "border", np.nan, rho),
                       name=name, tol=tol)
    labels = []
    for c in range(cp.n_creases):
        lft, rgt = (int(x) for x in cp.crease_panels[c])
        labels.append("border" if lft < 0 or rgt < 0 else _label(ordered[lft], ordered[rgt], float(rho[c])))
    gaps = np.zeros(cp.n_creases) if gaps_fn is None else np.asarray(gaps_fn(cp, ordered, labels), dtype=float)  # type: ignore[operator]
    hub_pts = [pc for pc in ordered if pc.kind == "hub"][0].polygon
    hv = tuple(int(i) for i in cKDTree(cp.vertices).query(hub_pts)[1]) if cp.n_vertices else ()
    poses.setflags(write=False)
    _INFO[cp] = WrapInfo(dict(params), ordered, poses, tuple(labels), gaps, hv, dict(extra or {}))
    return cp


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
