"""Hinge set-backs of the offset-panel method: how far each slab edge stands back from its axis.

[derived] Our own construction (not taken from the offset-panel papers, Edmondson et al. 2014 ASME
IDETC; Morgan et al. 2016 Mech. Sci. 7:69): near a hinge both slabs are prisms along the axis, so
their sections perpendicular to it are 2D rectangles. The smallest set-backs that keep the sections
apart over the crease's fold range are found by bisection on the exact convex-polygon overlap
(separating-axis theorem).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import TYPE_CHECKING, Any

import numpy as np

from ..errors import ThicknessError
from ..geometry2d import clip_halfplane
from ..pattern import cid, pid
from ..tolerances import DEFAULT_TOL, Tolerances
from .common import final_angles, inradius
from .plan import Slab, Standoff

if TYPE_CHECKING:
    from ..pattern import CreasePattern
    from ..poses import FoldPath

__all__ = [
    "SETBACK_SAMPLES",
    "section_overlap",
    "hinge_section_overlap",
    "worst_section_overlap",
    "hinge_setbacks",
    "crease_setbacks",
    "trim_standoffs",
]

SETBACK_SAMPLES = 361
"""Fold angles sampled per crease for the set-back computation (0.5 deg steps over 180 deg)."""


# ---------------------------------------------------------------------------- hinge set-backs
# [derived] (our own construction, not from the offset-panel papers): near a hinge both slabs are
# prisms along the axis, so their sections perpendicular to it are 2D.  In the left panel's section
# frame (w along the crease's left normal, z along the sheet normal, axis at the origin) the left
# body is the standoff [0, s_l] x [min(z0, 0), max(z1, 0)] plus the slab [s_l, reach_l] x [z0, z1];
# the right body is the mirror image, turned by the signed fold angle rho (valley > 0 lifts it).
# Standoffs of the two panels sit in disjoint axial slots, so only slab-slab and standoff-slab
# pairs can meet.  Sections contain the 3D slabs' sections at every axial position, so sections
# that stay apart prove the slabs stay apart.


def _rect(w0: float, w1: float, z0: float, z1: float) -> np.ndarray:
    """Counter-clockwise rectangle [w0, w1] x [z0, z1], (4, 2)."""
    return np.array([[w0, z0], [w1, z0], [w1, z1], [w0, z1]], dtype=float)


def section_overlap(a: np.ndarray, b: np.ndarray) -> np.ndarray:
    """Penetration depth of convex polygons by the separating-axis theorem, (N,) mm.

    Parameters
    ----------
    a, b : (N, k, 2) float, mm
        Counter-clockwise convex polygons (one pair per row).

    Returns
    -------
    (N,) float, mm
        The smallest overlap of the two projections over all edge normals of both polygons:
        positive = the polygons overlap by that depth, <= 0 = apart (minus a lower bound of the gap).
    """
    best = np.full(a.shape[0], np.inf)
    ax, ay, bx, by = a[:, None, :, 0], a[:, None, :, 1], b[:, None, :, 0], b[:, None, :, 1]
    for poly in (a, b):
        e = np.concatenate((poly[:, 1:], poly[:, :1]), axis=1) - poly
        nx, ny = e[..., 1], -e[..., 0]
        ln = np.sqrt(nx * nx + ny * ny)
        ln = np.where(ln > 0, ln, 1.0)
        nx, ny = (nx / ln)[..., None], (ny / ln)[..., None]
        pa = nx * ax + ny * ay  # (N, axes, verts)
        pb = nx * bx + ny * by
        ov = np.minimum(pa.max(-1), pb.max(-1)) - np.maximum(pa.min(-1), pb.min(-1))
        best = np.minimum(best, ov.min(-1))
    return best


def _overlap_one(a: list[list[float]], b: list[tuple[float, float]]) -> float:
    """:func:`section_overlap` of one pair of polygons given as lists of (x, y), mm."""
    best = math.inf
    for poly in (a, b):
        x0, y0 = poly[-1]
        for x1, y1 in poly:  # edge i -> i+1 visited from the closing edge on; min over edges is order-free
            nx, ny = y1 - y0, -(x1 - x0)
            ln = math.sqrt(nx * nx + ny * ny)
            if not ln > 0:
                ln = 1.0
            nx, ny = nx / ln, ny / ln
            pa = [nx * x + ny * y for x, y in a]
            pb = [nx * x + ny * y for x, y in b]
            ov = min(max(pa), max(pb)) - max(min(pa), min(pb))
            if ov < best:
                best = ov
            x0, y0 = x1, y1
    return best


def hinge_section_overlap(
    setback: tuple[float, float],
    z_left: tuple[float, float],
    z_right: tuple[float, float],
    reach: tuple[float, float],
    angles: np.ndarray,
) -> np.ndarray:
    """Largest penetration (mm) of the two bodies at one hinge, per fold angle, (N,).

    Parameters
    ----------
    setback : (s_left, s_right), mm
        Distance of each slab's edge from the axis (the standoff width).
    z_left, z_right : (z0, z1), mm
        Slab extents along each panel's normal, axis at z = 0.
    reach : (w_left, w_right), mm
        Farthest extent of each panel from the crease line.
    angles : (N,) float, rad
        Signed fold angles (valley positive).
    """
    sl, sr = (float(x) for x in setback)
    a0, a1 = z_left
    b0, b1 = z_right
    rho = np.asarray(angles, float)
    c, s = np.cos(rho), np.sin(rho)
    rot = np.stack([np.stack([c, s], -1), np.stack([-s, c], -1)], -2)  # turn by -rho, (N, 2, 2)
    left = [_rect(sl, max(reach[0], sl), a0, a1)]
    right = [_rect(-max(reach[1], sr), -sr, b0, b1)]
    n = len(rho)
    worst = np.full(n, -np.inf)
    pairs = [(left[0], right[0])]
    if sl > 0:
        pairs.append((_rect(0.0, sl, min(a0, 0.0), max(a1, 0.0)), right[0]))
    if sr > 0:
        pairs.append((left[0], _rect(-sr, 0.0, min(b0, 0.0), max(b1, 0.0))))
    if n == 1:  # one angle (the Brent refinement): plain floats, same arithmetic, no array overhead
        cs, sn = float(c[0]), float(s[0])
        return np.array([max(_overlap_one(pa.tolist(), [(cs * x + sn * y, -sn * x + cs * y) for x, y in pb.tolist()])
                             for pa, pb in pairs)])
    for pa, pb in pairs:
        moved = np.einsum("nij,kj->nki", rot, pb)
        worst = np.maximum(worst, section_overlap(np.broadcast_to(pa, (n, 4, 2)), moved))
    return worst


def hinge_setbacks(
    z_left: tuple[float, float],
    z_right: tuple[float, float],
    reach: tuple[float, float],
    angles: np.ndarray,
    *,
    floor: tuple[float, float] = (0.0, 0.0),
    cap: tuple[float, float],
    tol: Tolerances = DEFAULT_TOL,
) -> tuple[float, float] | None:
    """Smallest set-backs (mm) of the two slabs at one hinge so that they never overlap.

    Bisection, first on one common set-back ``s`` (each side ``max(floor, s)``, at most ``cap``),
    then on each side alone with the other kept; every candidate is tested on all ``angles`` with the exact
    separating-axis overlap of the sections (:func:`hinge_section_overlap`), touching allowed up
    to ``tol.contact``. The result then gets ``tol.setback`` added on each side. [derived]

    Returns
    -------
    (s_left, s_right) or None
        None when even ``cap`` (e.g. the panels' inradii) does not clear.
    """

    grid = np.unique(np.asarray(angles, float))

    def ok(sl: float, sr: float) -> bool:
        return worst_section_overlap((sl, sr), z_left, z_right, reach, grid, tol=tol) <= tol.contact

    f0, f1 = floor
    if ok(f0, f1):
        return f0, f1
    if not ok(cap[0], cap[1]):
        return None

    def common(x: float) -> tuple[float, float]:
        return min(max(f0, x), cap[0]), min(max(f1, x), cap[1])

    lo, hi = min(f0, f1), max(cap[0], cap[1])
    while hi - lo > tol.length:
        mid = (lo + hi) / 2.0
        if ok(*common(mid)):
            hi = mid
        else:
            lo = mid
    best = list(common(hi))
    for side in (0, 1):
        lo_s, hi_s = floor[side], best[side]
        trial = list(best)
        trial[side] = lo_s
        if ok(*trial):
            best[side] = lo_s
            continue
        while hi_s - lo_s > tol.length:
            mid = (lo_s + hi_s) / 2.0
            trial[side] = mid
            if ok(*trial):
                hi_s = mid
            else:
                lo_s = mid
        best[side] = hi_s
    out = (min(best[0] + tol.setback, cap[0]), min(best[1] + tol.setback, cap[1]))
    return out if ok(*out) else (best[0], best[1])


def worst_section_overlap(
    setback: tuple[float, float],
    z_left: tuple[float, float],
    z_right: tuple[float, float],
    reach: tuple[float, float],
    grid: np.ndarray,
    *,
    refine: int = 3,
    tol: Tolerances = DEFAULT_TOL,
) -> float:
    """Largest section penetration (mm) over the fold range spanned by ``grid`` (sorted, rad).

    The sampled maximum is refined by bounded scalar maximisation (Brent 1973) around the
    ``refine`` worst samples, so a peak between samples is not missed.
    """
    from scipy.optimize import minimize_scalar

    vals = hinge_section_overlap(setback, z_left, z_right, reach, grid)
    worst = float(np.max(vals))
    if worst > tol.contact or len(grid) < 3:
        return worst
    for i in np.argsort(-vals, kind="stable")[:refine]:
        a, b = grid[max(int(i) - 1, 0)], grid[min(int(i) + 1, len(grid) - 1)]
        if b - a <= tol.angle:
            continue
        res = minimize_scalar(
            lambda x: -float(hinge_section_overlap(setback, z_left, z_right, reach, np.array([x]))[0]),
            bounds=(float(a), float(b)), method="bounded", options={"xatol": tol.angle},
        )
        worst = max(worst, -float(res.fun))
    return worst


def crease_setbacks(
    pattern: CreasePattern,
    creases: list[int],
    z_of: list[tuple[float, float]],
    t: np.ndarray,
    *,
    target: float,
    path: FoldPath | None,
    standoff_width: float | None,
    setbacks: Mapping[int, tuple[float, float]] | None,
    samples: int,
    tol: Tolerances = DEFAULT_TOL,
) -> dict[int, tuple[float, float]]:
    """Set-backs (left, right) in mm of the slab edges along every folding crease.

    The fold range of crease ``c`` is ``[min(0, rho), max(0, rho)]`` over the states of ``path``
    (or up to the final fold angle without a path), sampled at ``samples`` angles.

    Raises
    ------
    ThicknessError
        When no set-back below the panels' inradii clears (names the crease), or for a bad
        ``setbacks`` entry or ``samples``.
    """
    if isinstance(samples, bool) or not isinstance(samples, int) or samples < 2:
        raise ThicknessError(f"setback_samples = {samples!r} is out of range; allowed: a whole number >= 2")
    cp = pattern.crease_panels
    v = pattern.vertices
    if path is not None and len(path.states):
        ang = np.array([np.asarray(st.angles, float) for st in path.states])
        lo_a = np.minimum(ang.min(axis=0), 0.0)
        hi_a = np.maximum(ang.max(axis=0), 0.0)
    else:
        fa = np.asarray(final_angles(pattern, target, None), float)
        lo_a, hi_a = np.minimum(fa, 0.0), np.maximum(fa, 0.0)
    given = dict(setbacks or {})
    out: dict[int, tuple[float, float]] = {}
    for c in creases:
        pl, pr = int(cp[c, 0]), int(cp[c, 1])
        if c in given:
            val = given.pop(c)
            try:
                sl, sr = (float(x) for x in val)
            except (TypeError, ValueError):
                raise ThicknessError(
                    f"setbacks[{cid(c)}] = {val!r} is not a pair of lengths in mm (left, right)"
                ) from None
            if not all(math.isfinite(x) and x >= 0 for x in (sl, sr)):
                raise ThicknessError(
                    f"setbacks[{cid(c)}] = {val!r} mm is out of range; allowed: finite lengths >= 0 mm"
                )
            out[c] = (sl, sr)
            continue
        a_, b_ = pattern.creases[c]
        u = v[b_] - v[a_]
        u = u / np.linalg.norm(u)
        left = np.array([-u[1], u[0]])
        reach = (
            float(np.max((pattern.panel_polygon(pl) - v[a_]) @ left)),
            float(np.max(-(pattern.panel_polygon(pr) - v[a_]) @ left)),
        )
        floor = tuple(float(standoff_width) if standoff_width is not None else float(t[p]) for p in (pl, pr))
        cap = tuple(max(inradius(pattern.panel_polygon(p)), f) for p, f in zip((pl, pr), floor, strict=True))
        grid = np.linspace(float(lo_a[c]), float(hi_a[c]), samples)
        res = hinge_setbacks(
            z_of[pl], z_of[pr], reach, grid, floor=(floor[0], floor[1]), cap=(cap[0], cap[1]), tol=tol
        )
        if res is None:
            raise ThicknessError(
                f"crease {cid(c)}: no set-back of the slab edges up to the panels' inradii "
                f"({pid(pl)} {cap[0]:.4g} mm, {pid(pr)} {cap[1]:.4g} mm) keeps slabs at z = "
                f"[{z_of[pl][0]:.4g}, {z_of[pl][1]:.4g}] and [{z_of[pr][0]:.4g}, {z_of[pr][1]:.4g}] mm apart over "
                f"fold angles {math.degrees(lo_a[c]):.4g}..{math.degrees(hi_a[c]):.4g} deg; allowed: a layer order "
                f"whose hinge plane lies between the two layers, or thinner panels"
            )
        out[c] = res
    if given:
        bad = sorted(given)[0]
        raise ThicknessError(
            f"setbacks names {cid(bad) if isinstance(bad, int) else repr(bad)}, which is not a folding crease "
            f"of this pattern; allowed: the folding creases"
        )
    return out


def _clip_axial(poly: np.ndarray, u: np.ndarray, keep_ge: float | None, keep_le: float | None) -> np.ndarray:
    """Part of a convex polygon with ``keep_ge <= u . x <= keep_le`` (Sutherland & Hodgman 1974)."""
    out = np.asarray(poly, float)
    if keep_ge is not None:
        out = clip_halfplane(out, -u, -keep_ge)
    if keep_le is not None:
        out = clip_halfplane(out, u, keep_le)
    return out


def trim_standoffs(
    pattern: CreasePattern,
    slabs: list[Slab],
    path: FoldPath,
    *,
    panels: set[int] | None = None,
    extra_t: tuple[float, ...] = (),
    tol: Tolerances = DEFAULT_TOL,
) -> tuple[list[Slab], list[str]]:
    """Shorten standoffs that penetrate other panels near the vertices over ``path``.

    Every standoff is posed in every state of ``path`` and tested (exact separating-axis
    penetration) against the pieces of all other panels; one that penetrates is shortened from
    its end nearer a vertex by bisection on the trimmed length until it clears, keeping at least
    its own width of length. Trimming only removes material, so standoffs checked earlier stay
    clear. [derived]

    Parameters
    ----------
    panels : set of int, optional
        Only the standoffs of these panels are tested (e.g. the panels of the colliding pairs of
        a clearance sweep); default all.
    extra_t : tuple of float
        Fold fractions tested besides the path's states (``path.at(t)``, e.g. where a refined
        sweep found contact).

    Returns
    -------
    slabs : list of Slab
        With trimmed standoff footprints.
    notes : list of str
        One line per standoff that was trimmed or that no trim clears (left as it was, so the
        clearance sweep reports it).
    """
    from dataclasses import replace

    from ..clearance import slab_pieces
    from ..collide import pack_pieces, sat_gaps

    out = list(slabs)
    states = list(path.states) + [path.at(float(x)) for x in extra_t]
    poses = np.array([np.asarray(st.poses, float) for st in states])  # (S, P, 4, 4)
    notes: list[str] = []
    v = pattern.vertices

    pieces: dict[int, tuple[Slab, list[Any]]] = {}  # slab index -> (slab, its pieces), redone when trimmed

    def pieces_of(i: int) -> list[Any]:
        got = pieces.get(i)
        if got is None or got[0] is not out[i]:
            got = pieces[i] = (out[i], slab_pieces(out[i], tol=tol))
        return got[1]

    def others_of(p: int) -> list[Any]:
        return [pc for i, s in enumerate(out) if s.panel != p for pc in pieces_of(i)]

    def penetration(p: int, cand: list[Any], others: list[Any]) -> float:
        arr = pack_pieces(cand + others)
        owner = arr.owner
        k = len(cand)
        pairs = np.array([(i, j) for i in range(k) for j in range(k, len(owner))], dtype=np.int64).reshape(-1, 2)
        worst = -math.inf
        for ps in poses:
            rot = ps[owner, :3, :3]
            rt = rot.transpose(0, 2, 1)
            w = np.matmul(arr.verts, rt) + ps[owner, :3, 3][:, None, :]
            g = sat_gaps(pairs, w, np.matmul(arr.normals, rt), np.matmul(arr.edges, rt))
            if len(g):
                worst = max(worst, float(-g.min()))
        return worst

    for idx in range(len(out)):
        slab = out[idx]
        p = slab.panel
        if panels is not None and p not in panels:
            continue
        others = others_of(p)
        new_st: list[Standoff | None] = list(slab.standoffs)
        for k, st in enumerate(slab.standoffs):
            probe = replace(slab, polygon=st.polygon, z0=st.z0, z1=st.z1, standoffs=(), cuts=tuple(
                c for c in slab.cuts if c.label.startswith("vertex")))
            if penetration(p, slab_pieces(probe, tol=tol), others) <= tol.contact:
                continue
            c = st.crease
            a_, b_ = pattern.creases[c]
            ln = float(pattern.crease_lengths[c])
            u = (v[b_] - v[a_]) / ln
            poly = np.asarray(st.polygon, float)
            ax = (poly - v[a_]) @ u
            lo_s, hi_s = float(ax.min()), float(ax.max())
            width = float(np.max(np.abs((poly - v[a_]) @ np.array([-u[1], u[0]]))))
            near_lo = lo_s <= ln - hi_s
            base = float(v[a_] @ u)
            keep = max(width, tol.length)
            d_max = hi_s - lo_s - keep

            def trimmed(d: float, from_lo: bool, lo_s: float = lo_s, hi_s: float = hi_s,
                        poly: np.ndarray = poly, u: np.ndarray = u, base: float = base) -> np.ndarray:
                if from_lo:
                    return _clip_axial(poly, u, base + lo_s + d, None)
                return _clip_axial(poly, u, None, base + hi_s - d)

            def clears(d: float, from_lo: bool, st: Standoff = st, p: int = p, others: list[Any] = others,
                       trimmed: Any = trimmed, slab: Slab = slab) -> bool:
                q = trimmed(d, from_lo)
                pr = replace(slab, polygon=tuple(map(tuple, q)), z0=st.z0, z1=st.z1, standoffs=(), cuts=tuple(
                    cc for cc in slab.cuts if cc.label.startswith("vertex")))
                return penetration(p, slab_pieces(pr, tol=tol), others) <= tol.contact

            # the end nearer a vertex first, then the other end (a panel lying across the hinge line)
            ends = [e for e in (near_lo, not near_lo) if d_max > 0 and clears(d_max, e)]
            if not ends:
                kept = sum(1 for j, o in enumerate(new_st) if o is not None and o.crease == c and j != k)
                what = (
                    f"standoff of {pid(p)} on {cid(c)} ({lo_s:.4g}..{hi_s:.4g} mm along the crease) penetrates "
                    f"another panel and no trim from either end keeping {keep:.3g} mm of it clears"
                )
                if kept:
                    new_st[k] = None
                    notes.append(f"{what}: removed ({pid(p)} keeps {kept} on {cid(c)})")
                else:
                    notes.append(f"{what}; it is the panel's only one there and stays")
                continue
            from_lo = ends[0]
            lo_d, hi_d = 0.0, d_max
            while hi_d - lo_d > tol.setback:
                mid = (lo_d + hi_d) / 2.0
                if clears(mid, from_lo):
                    hi_d = mid
                else:
                    lo_d = mid
            q = trimmed(hi_d, from_lo)
            new_st[k] = replace(st, polygon=tuple((float(x), float(y)) for x, y in q))
            where = "vertex" if from_lo == near_lo else "far"
            notes.append(f"standoff of {pid(p)} on {cid(c)} shortened by {hi_d:.3g} mm at its {where} end")
        out[idx] = replace(slab, standoffs=tuple(o for o in new_st if o is not None))
    return out, notes
