"""``offset-crease``: thick degree-4 vertices as spatial linkages with the zero-thickness motion.

Chen, Peng & You 2015 (Science 349:396, doi:10.1126/science.aab2870) show that a thick
flat-foldable degree-4 vertex with hinges on the panel faces is a Bennett linkage that folds with
exactly the zero-thickness fold angles when opposite panels have equal thickness and adjacent
thicknesses are in the ratio ``sin a / sin b`` of their sector angles (1 for Miura-ori, sqrt 2 for
the square-twist vertex); which faces carry the hinges selects the rigid branch. [pub abstract;
ratio derived]

Construction here: every panel gets thickness ``t_p`` proportional to ``sin`` of its sector angle
at each of its vertices (solved in log space over the whole sheet), each panel's creases alternate
between its two faces around the panel, and one bit per panel says which class is on top. The bits
are searched (depth first, vertex by vertex) for assignments whose thick vertex loops close with
the zero-thickness fold angles of the path; among those, the one reaching farthest along the path
before a hinge meets its face limit (:func:`~.common.face_hinge_range`) is kept. The reachable fold
is reported honestly: it may stop before flat.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import TYPE_CHECKING, Any

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from ..errors import ThicknessError
from ..pattern import cid, pid, vid
from ..poses import rotation_about_line
from ..tolerances import DEFAULT_TOL, Tolerances
from .common import (
    check_target,
    edge_cut,
    face_hinge_range,
    inradius,
    make_hinge,
    panel_thicknesses,
    require_folding,
    sector_angles,
)
from .plan import CutPlane, Slab, ThickPlan

if TYPE_CHECKING:
    from ..pattern import CreasePattern
    from ..poses import FoldPath, FoldState

NAME = "offset-crease"
_MAX_SOLUTIONS = 64
_MAX_NODES = 20000


def sine_ratio_thickness(pattern: CreasePattern, thickness: float, *, tol: Tolerances = DEFAULT_TOL) -> np.ndarray:
    """(P,) float, mm: panel thicknesses proportional to the sine of their sector angles at every
    interior vertex, the thickest equal to ``thickness`` (Chen, Peng & You 2015)."""
    n = pattern.n_panels
    verts = [int(v) for v in pattern.interior_vertices]
    # one equation log t_p - log s_v = log sin(sector) per sector: sparse (two entries a row), solved in
    # the least-squares sense; a dense matrix would need (4 V) x (P + V) numbers
    r_idx: list[int] = []
    c_idx: list[int] = []
    vals: list[float] = []
    rhs: list[float] = []
    for k, v in enumerate(verts):
        cs, sec = sector_angles(pattern, v)
        for i in range(len(cs)):
            p = _panel_between(pattern, v, cs[i], cs[(i + 1) % len(cs)])
            row = len(rhs)
            r_idx += [row, row]
            c_idx += [p, n + k]
            vals += [1.0, -1.0]
            rhs.append(math.log(max(math.sin(float(sec[i])), 1e-300)))
    if not rhs:
        return np.full(n, float(thickness))
    n_eq = len(rhs)
    # panels with no interior vertex keep log t free: pin them to 0 softly
    used = np.zeros(n, dtype=bool)
    used[np.asarray(c_idx[0::2], dtype=np.int64)] = True
    free = np.nonzero(~used)[0]
    for fp in free:
        r_idx.append(len(rhs))
        c_idx.append(int(fp))
        vals.append(1.0)
        rhs.append(0.0)
    a = sp.csr_matrix((vals, (r_idx, c_idx)), shape=(len(rhs), n + len(verts)))
    b = np.asarray(rhs, dtype=float)
    x = spla.lsqr(a, b, atol=1e-15, btol=1e-15, conlim=1e12, iter_lim=50 * (n + len(verts)))[0]
    res = a @ x - b
    bad = np.nonzero(np.abs(res[:n_eq]) > 1e3 * tol.angle)[0]
    if len(bad):
        k = 0
        for v in verts:
            k += len(pattern.vertex_creases(v))
            if k > bad[0]:
                raise ThicknessError(
                    f"method {NAME}: the thickness ratio sin(a)/sin(b) cannot hold at vertex {vid(v)} together with "
                    f"its neighbours (log residual {res[bad[0]]:.3g}); the sheet has no consistent set of thicknesses"
                )
    t = np.exp(x[:n])
    for fp in free:  # isolated panels: thickest value
        t[fp] = np.nan
    top = np.nanmax(t)
    t = np.where(np.isnan(t), top, t)
    return t * (float(thickness) / top)


def _panel_between(pattern: CreasePattern, v: int, c_in: int, c_out: int) -> int:
    """The panel in the sector from crease ``c_in`` to ``c_out`` (ccw) at vertex ``v``."""
    cp = pattern.crease_panels
    # crease c_in leaves v; the sector ccw of it is to the left of the ray v -> other end
    left = int(cp[c_in, 0]) if int(pattern.creases[c_in, 0]) == v else int(cp[c_in, 1])
    return left


def _edge_classes(pattern: CreasePattern, p: int) -> dict[int, int]:
    """Class (0/1) of panel ``p``'s folding edges: two folding edges meeting at an interior vertex
    of the panel take different classes (they sit on opposite faces)."""
    loop = pattern.panels[p].loop
    edges = [int(e) for e in pattern.panels[p].edges]
    k = len(edges)
    interior = set(int(x) for x in pattern.interior_vertices)
    adj: dict[int, list[int]] = {e: [] for e in edges if pattern.folding[e]}
    for i in range(k):
        e_prev, e = edges[i - 1], edges[i]
        if e_prev in adj and e in adj and int(loop[i]) in interior and e_prev != e:
            adj[e_prev].append(e)
            adj[e].append(e_prev)
    cls: dict[int, int] = {}
    for start in adj:
        if start in cls:
            continue
        cls[start] = 0
        stack = [start]
        while stack:
            u = stack.pop()
            for w in adj[u]:
                if w not in cls:
                    cls[w] = 1 - cls[u]
                    stack.append(w)
                elif cls[w] == cls[u]:
                    raise ThicknessError(
                        f"method {NAME}: the creases of panel {pid(p)} cannot alternate between its two faces "
                        f"(an odd cycle of {len(adj)} folding edges around the panel)"
                    )
    return cls


def _loop_error(points: np.ndarray, dirs: np.ndarray, angles: np.ndarray) -> float:
    m = np.eye(4)
    for i in range(len(angles)):
        m = m @ rotation_about_line(points[i], dirs[i], angles[i])
    return float(np.abs(m - np.eye(4)).max())


def thick_vertex_residual(plan: ThickPlan, v: int, angles: np.ndarray) -> np.ndarray:
    """(12,) float: entries of (loop product - identity) around vertex ``v`` for crease angles
    ``angles`` (m,) rad, with the plan's hinge axes (rotation rows, then translations in mm)."""
    pat = plan.pattern
    cs, _ = sector_angles(pat, int(v))
    by_c = {h.crease: h for h in plan.hinges}
    pts, dirs, ang = _vertex_axes(pat, int(v), cs, by_c, np.asarray(angles, float))
    m = np.eye(4)
    for i in range(len(ang)):
        m = m @ rotation_about_line(pts[i], dirs[i], ang[i])
    return (m - np.eye(4))[:3, :].reshape(-1)


def thick_closure_error(plan: ThickPlan, state: FoldState) -> float:
    """Largest loop mismatch of the plan's hinge axes with the state's angles, over all interior
    vertices (dimensionless rotation entries and mm translations)."""
    pat = plan.pattern
    worst = 0.0
    by_c = {h.crease: h for h in plan.hinges}
    for v in pat.interior_vertices:
        cs, _ = sector_angles(pat, int(v))
        pts, dirs, ang = _vertex_axes(pat, int(v), cs, by_c, state.angles)
        worst = max(worst, _loop_error(pts, dirs, ang))
    return worst


def _vertex_axes(
    pat: CreasePattern, v: int, cs: tuple[int, ...], by_c: Mapping[int, Any], angles: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Axes (outward from ``v``) and angles for the ccw loop around ``v``; crossing ray i from the
    sector before it to the sector after it turns by +rho about the outward ray."""
    pts, dirs, ang = [], [], []
    for c in list(cs[1:]) + [cs[0]]:
        h = by_c[c]
        out = pat.vertices[pat.creases[c, 1]] - pat.vertices[pat.creases[c, 0]]
        if int(pat.creases[c, 0]) != v:
            out = -out
        d = np.array([out[0], out[1], 0.0]) / np.linalg.norm(out)
        pts.append(np.array([pat.vertices[v, 0], pat.vertices[v, 1], h.point[2]]))
        dirs.append(d)
        ang.append(float(angles[c]))
    return np.array(pts), np.array(dirs), np.array(ang)


class _Heights:
    """Crease heights for a choice of panel bits (z0 of each panel by propagation)."""

    def __init__(self, pattern: CreasePattern, t: np.ndarray, classes: list[dict[int, int]]) -> None:
        self.pattern = pattern
        self.t = t
        self.classes = classes

    def on_top(self, p: int, c: int, bit: int) -> int:
        return self.classes[p][c] ^ bit

    def heights(self, bits: np.ndarray, tol: Tolerances) -> tuple[np.ndarray, np.ndarray] | None:
        pat = self.pattern
        from ..poses import default_base_panel, spanning_tree

        base = default_base_panel(pat)
        z0 = np.full(pat.n_panels, np.nan)
        z0[base] = 0.0
        for a, b, c in spanning_tree(pat, base):
            h = z0[a] + self.t[a] * self.on_top(a, c, int(bits[a]))
            z0[b] = h - self.t[b] * self.on_top(b, c, int(bits[b]))
        hc = np.full(pat.n_creases, np.nan)
        cp = pat.crease_panels
        for c in range(pat.n_creases):
            if not pat.folding[c] or cp[c, 0] < 0 or cp[c, 1] < 0:
                continue
            a, b = int(cp[c, 0]), int(cp[c, 1])
            ha = z0[a] + self.t[a] * self.on_top(a, c, int(bits[a]))
            hb = z0[b] + self.t[b] * self.on_top(b, c, int(bits[b]))
            if abs(ha - hb) > 1e3 * tol.length:
                return None
            hc[c] = ha
        return z0, hc


def build(
    pattern: CreasePattern,
    *,
    thickness: Any,
    target_fold: float,
    path: FoldPath | None = None,
    enforce_ratio: bool = True,
    bits: Any = None,
    bevel: bool | str = "auto",
    tol: Tolerances = DEFAULT_TOL,
) -> ThickPlan:
    """Offset-crease slabs for a pattern of flat-foldable degree-4 vertices.

    Parameters
    ----------
    thickness : float, mm
        Thickness of the thickest panel; the others follow the sine ratio. A mapping is accepted
        only with ``enforce_ratio=False`` (to study wrong ratios).
    path : FoldPath
        Zero-thickness path; required, its angles select the branch and give the reachable fold.
    bits : sequence of int, optional
        Force the per-panel face choice instead of searching.
    bevel : bool or "auto"
        Hybrid with the tapered rule: bevel the slabs of creases whose hinge faces would stop them
        before their final fold. ``"auto"`` (default) bevels where a bevel fits and leaves the
        other creases to limit the reachable fold; True raises when a bevel does not fit
        (flat folds, bevels wider than the panel); False keeps the pure face-hinge design.
    """
    target = check_target(target_fold, method=NAME)
    fc = require_folding(pattern, NAME)
    if path is None or len(path.states) < 2:
        raise ThicknessError(f"method {NAME} needs a fold path (two or more states) to select the branch")
    for v in pattern.interior_vertices:
        cs, sec = sector_angles(pattern, int(v))
        if len(cs) != 4:
            raise ThicknessError(f"method {NAME} needs degree-4 vertices; vertex {vid(int(v))} has degree {len(cs)}")
        alt = float(sec[0] - sec[1] + sec[2] - sec[3])
        if abs(alt) > 1e3 * tol.kawasaki:
            raise ThicknessError(
                f"method {NAME} needs flat-foldable vertices; vertex {vid(int(v))} has Kawasaki sum "
                f"{math.degrees(alt):.4g} deg (allowed 0)"
            )
    if isinstance(thickness, Mapping):
        if enforce_ratio:
            raise ThicknessError(
                f"method {NAME} sets panel thicknesses by the ratio sin(a)/sin(b); give one thickness in mm "
                "(or enforce_ratio=False)"
            )
        t = panel_thicknesses(pattern, thickness)
    else:
        t0 = panel_thicknesses(pattern, thickness)[0] if pattern.n_panels else float(thickness)
        t = sine_ratio_thickness(pattern, float(t0), tol=tol)
        panel_thicknesses(pattern, {p: float(t[p]) for p in range(pattern.n_panels)})
    classes = [_edge_classes(pattern, p) for p in range(pattern.n_panels)]
    hs = _Heights(pattern, t, classes)
    states = [path.states[len(path.states) // 2], path.states[-1]]
    candidates = [np.asarray(bits, dtype=np.int64)] if bits is not None else _search_bits(pattern, hs, states, tol)
    best = None
    for b in candidates:
        res = hs.heights(b, tol)
        if res is None:
            continue
        z0, hc = res
        reach, ranges, faces = _reach(pattern, t, b, hs, hc, fc, path, target)
        if best is None or reach > best[0] + tol.angle:
            best = (reach, b, z0, hc, ranges, faces)
    if best is None:
        raise ThicknessError(
            f"method {NAME}: no choice of hinge faces closes every vertex loop with this path's fold angles "
            f"(thickness ratio sin(a)/sin(b) {'enforced' if enforce_ratio else 'not enforced'})"
        )
    reach, b, z0, hc, ranges, faces = best
    shift = -float(np.median(z0 + t / 2.0))
    cuts: list[list[CutPlane]] = [[] for _ in range(pattern.n_panels)]
    final = path.states[-1].angles
    n_bevels = 0
    if bevel:
        # hybrid with the tapered rule (Tachi 2011; hybrids in Lang et al. 2018): where the hinge
        # faces stop a crease before its final fold, bevel both slabs by the bisector plane through
        # the hinge axis at that fold
        cp = pattern.crease_panels
        for c in fc:
            rho = float(final[c])
            lo, hi = ranges[c]
            if lo - 1e-12 <= rho <= hi + 1e-12 or abs(rho) <= tol.angle:
                continue
            why = ""
            if abs(rho) >= math.pi - tol.angle:
                why = f"crease {cid(c)} folds flat; a bevel cannot reach a flat fold (Tachi 2011)"
            side = 1 if rho > 0 else -1
            zh = float(hc[c] + shift)
            new: list[tuple[int, CutPlane]] = []
            for p in (int(cp[c, 0]), int(cp[c, 1])):
                far = (z0[p] + t[p] + shift - zh) if side > 0 else (zh - z0[p] - shift)
                if far <= tol.length or why:
                    continue  # all of this slab lies on the outer side of the axis
                w = far * math.tan(abs(rho) / 2.0)
                r = inradius(pattern.panel_polygon(p))
                if w > r:
                    why = (
                        f"bevel of {w:.4g} mm on panel {pid(p)} along crease {cid(c)} exceeds the panel's inradius "
                        f"{r:.4g} mm (fold {math.degrees(abs(rho)):.4g} deg)"
                    )
                    continue
                new.append((p, edge_cut(pattern, p, c, angle=rho, z_ref=zh, side=side, label=f"bevel {cid(c)}")))
            if why:
                if bevel is True:
                    raise ThicknessError(f"method {NAME}: {why}")
                continue  # "auto": leave the crease unbevelled; it limits the reachable fold
            for p, cut in new:
                cuts[p].append(cut)
            ranges[c] = (0.0, abs(rho)) if rho > 0 else (-abs(rho), 0.0)
            n_bevels += 1
        reach = _reach_from_ranges(path, ranges, target)
    slabs = []
    for p in range(pattern.n_panels):
        poly = tuple((float(x), float(y)) for x, y in pattern.panel_polygon(p))
        slabs.append(Slab(p, poly, float(z0[p] + shift), float(z0[p] + t[p] + shift), cuts=tuple(cuts[p])))
    hinges = []
    for c in fc:
        hinges.append(
            make_hinge(pattern, c, z=float(hc[c] + shift), face=faces[c], gap=0.0, fold_range=ranges[c])
        )
    plan = ThickPlan(
        pattern, NAME, tuple(slabs), tuple(hinges), target,
        notes=(
            f"reachable fold {math.degrees(reach):.4g} deg of {math.degrees(target):.4g} deg"
            + (f"; {n_bevels} creases bevelled where their hinge faces would stop them" if n_bevels else ""),
            "thicknesses in the ratio sin(a)/sin(b); hinges on panel faces",
        ),
        meta={"reachable": reach, "bits": b, "thickness": t, "bevels": n_bevels},
    )
    err = max(thick_closure_error(plan, s) for s in states)
    plan.meta["closure_error"] = err
    if bits is None and err > 1e6 * tol.closure:
        raise ThicknessError(f"method {NAME}: thick vertex loops do not close (error {err:.3g})")
    return plan


def _reach_from_ranges(path: FoldPath, ranges: dict[int, tuple[float, float]], target: float) -> float:
    """Fold (rad) reached along ``path`` before some crease leaves its fold range."""
    for st in path.states:
        for c, (lo, hi) in ranges.items():
            a = float(st.angles[c])
            if a < lo - 1e-12 or a > hi + 1e-12:
                return (float(st.t) if math.isfinite(st.t) else 0.0) * target
    return target


def _search_bits(
    pattern: CreasePattern, hs: _Heights, states: list[FoldState], tol: Tolerances
) -> list[np.ndarray]:
    """Depth-first search of panel bits whose thick vertex loops close with the states' angles."""
    n = pattern.n_panels
    verts = [int(v) for v in pattern.interior_vertices]
    vpanels: dict[int, list[int]] = {}
    for v in verts:
        cs, _ = sector_angles(pattern, v)
        vpanels[v] = [_panel_between(pattern, v, cs[i], cs[(i + 1) % 4]) for i in range(4)]
    by_panel: dict[int, list[int]] = {p: [] for p in range(n)}
    for v, ps in vpanels.items():
        for p in ps:
            by_panel[p].append(v)
    order = sorted(range(n), key=lambda p: (-len(by_panel[p]), p))
    # breadth-first from the busiest panel so constraints bite early
    import collections

    seen = [order[0]]
    q = collections.deque([order[0]])
    g = pattern.panel_graph
    while q:
        u = q.popleft()
        for w in sorted(g.adj[u]):
            if w not in seen:
                seen.append(w)
                q.append(w)
    order = seen + [p for p in range(n) if p not in seen]
    pos = {p: i for i, p in enumerate(order)}
    ready: dict[int, list[int]] = {}
    for v, ps in vpanels.items():
        ready.setdefault(max(pos[p] for p in ps), []).append(v)

    def vertex_ok(v: int, bits: np.ndarray) -> bool:
        cs, _ = sector_angles(pattern, v)
        ps = vpanels[v]
        h = [0.0]
        for i in range(4):
            p = ps[i]
            top_in = hs.on_top(p, cs[i], int(bits[p]))
            top_out = hs.on_top(p, cs[(i + 1) % 4], int(bits[p]))
            if top_in == top_out:
                return False
            h.append(h[-1] + hs.t[p] * (top_out - top_in))
        if abs(h[-1]) > 1e3 * tol.length:
            return False
        fake = {cs[i]: _Pt(h[i]) for i in range(4)}
        for st in states:
            pts, dirs, ang = _vertex_axes(pattern, v, cs, fake, st.angles)
            if _loop_error(pts, dirs, ang) > 1e6 * tol.closure:
                return False
        return True

    out: list[np.ndarray] = []
    bits = np.zeros(n, dtype=np.int64)
    budget = [_MAX_NODES]

    def dfs(k: int) -> None:
        if len(out) >= _MAX_SOLUTIONS:
            return
        budget[0] -= 1
        if budget[0] < 0:
            raise ThicknessError(
                f"method {NAME}: the search for hinge faces gave up after {_MAX_NODES} steps "
                f"({n} panels); give the face choice with bits="
            )
        if k == n:
            out.append(bits.copy())
            return
        p = order[k]
        for b in (0, 1):
            bits[p] = b
            if all(vertex_ok(v, bits) for v in ready.get(k, [])):
                dfs(k + 1)

    import sys

    old = sys.getrecursionlimit()
    sys.setrecursionlimit(max(old, 4 * n + 100))
    try:
        dfs(0)
    finally:
        sys.setrecursionlimit(old)
    return out


class _Pt:
    """Minimal stand-in for a HingeLine carrying only a height."""

    def __init__(self, z: float) -> None:
        self.point = (0.0, 0.0, z)


def _reach(
    pattern: CreasePattern,
    t: np.ndarray,
    bits: np.ndarray,
    hs: _Heights,
    hc: np.ndarray,
    fc: list[int],
    path: FoldPath,
    target: float,
) -> tuple[float, dict[int, tuple[float, float]], dict[int, str]]:
    """Reachable fold (rad) along ``path`` before some hinge passes its face limit."""
    cp = pattern.crease_panels
    ranges: dict[int, tuple[float, float]] = {}
    faces: dict[int, str] = {}
    lim = np.full(pattern.n_creases, np.inf)
    for c in fc:
        a, b = int(cp[c, 0]), int(cp[c, 1])
        fa = "top" if hs.on_top(a, c, int(bits[a])) else "bottom"
        fb = "top" if hs.on_top(b, c, int(bits[b])) else "bottom"
        valley = float(path.states[-1].angles[c]) >= 0
        r = face_hinge_range(fa, fb, "top" if valley else "bottom")
        ranges[c] = (0.0, r) if valley else (-r, 0.0)
        faces[c] = fa if fa == fb else f"{fa}/{fb}"
        lim[c] = r
    reach_t = 1.0
    for st in path.states:
        over = np.abs(st.angles) > lim + 1e-12
        if np.any(over):
            reach_t = float(st.t) if math.isfinite(st.t) else 0.0
            break
    return reach_t * target, ranges, faces
