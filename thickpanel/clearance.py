"""Clearance sweep: signed minimum distances between slabs over a fold path.

For every sampled fold state the slabs of a :class:`~thickpanel.thickness.plan.ThickPlan` are
posed with :meth:`ThickPlan.poses`, split into convex pieces (:mod:`thickpanel.collide`), paired
by a sort-and-sweep broad phase and measured by an exact convex narrow phase.

Touching policy
---------------
* Pieces of the same panel (its convex parts and standoffs) are never compared; hinge hardware
  (``extra_pieces`` with ``joins``, see :mod:`thickpanel.hardware`) is never compared with the two
  panels its hinge line joins.
* *Neighbour* panels meet along their hinge line or at their vertex by construction: panels joined
  by a hinge line (a mountain, valley or flat crease, or a seam), and panels that share a vertex of
  the pattern and touch in the flat sheet. For them only penetration counts: a pair enters the
  report when its penetration depth exceeds ``tol.contact``; touching or any positive gap is
  allowed. Panels that share only a vertex but stand apart in the flat sheet (corner reliefs,
  vertex clearances) are not neighbours: their distance counts like any other pair's.
* Every other pair counts with its signed distance: positive gap, 0 touching, negative
  penetration depth. ``first_contact`` is the first state where some pair reaches ``<= tol.contact``
  (a non-neighbour touching or any penetration).
* Pairs farther apart than ``margin`` (default: the largest slab thickness) are not measured; a
  report with no pair inside the margin has ``min_clearance = inf``.

The minimum of each state is exact: penetration depth from the separating-axis test, positive
distances refined with the exact polytope distance until no lower bound is smaller. Other pairs'
positive values in ``worst_pairs`` may be SAT lower bounds (never larger than the true distance).
"""

from __future__ import annotations

import io
import math
import os
import tempfile
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np

from .collide import Piece, convex_parts, exact_distance, make_piece, pack_pieces, sat_gaps, sweep_pairs
from .errors import ThicknessError
from .pattern import pid
from .tolerances import DEFAULT_TOL, Tolerances
from .typing import FloatArray, IntArray

if TYPE_CHECKING:
    from .poses import FoldPath, FoldState
    from .thickness.plan import Slab, ThickPlan

__all__ = [
    "StateRow",
    "ClearanceReport",
    "slab_pieces",
    "plan_pieces",
    "clearance",
    "neighbour_keys",
    "hinged_keys",
    "counted_neighbours",
    "contact_stop",
]


@dataclass(frozen=True)
class StateRow:
    """One row of the per-state table.

    Attributes
    ----------
    t : float
        Fold fraction.
    min_clearance : float, mm
    pair : (str, str) or None
        Panel ids of the closest pair.
    candidates : int
        Piece pairs passed to the narrow phase.
    contacts : int
        Panel pairs at or below ``tol.contact`` (counted per the touching policy).
    refined : bool
        True for states inserted by adaptive refinement.
    """

    t: float
    min_clearance: float
    pair: tuple[str, str] | None
    candidates: int
    contacts: int
    refined: bool = False


@dataclass(frozen=True)
class ClearanceReport:
    """Result of :func:`clearance`.

    Attributes
    ----------
    method : str
    min_clearance : float, mm
        Smallest signed clearance over the path (negative = penetration depth). Pairs are measured
        only within ``margin``: when the closest approach of some state is not within it, the
        value is ``margin`` and ``lower_bound`` is True (the true minimum is at least that);
        ``inf`` only for a path whose states have no pair of slabs at all.
    where : ((str, str), float) or None
        Closest pair ids and the fold fraction where it occurs (None for a lower bound).
    first_contact : (float, (str, str)) or None
        First fold fraction with a contact and the pair concerned.
    worst_pairs : list of ((str, str), float, float)
        Up to ten pairs with the smallest clearance: ids, clearance (mm), fold fraction.
    table : list of StateRow
    margin : float, mm
    tol : Tolerances
    """

    method: str
    min_clearance: float
    where: tuple[tuple[str, str], float] | None
    first_contact: tuple[float, tuple[str, str]] | None
    worst_pairs: list[tuple[tuple[str, str], float, float]]
    table: list[StateRow]
    margin: float
    tol: Tolerances = field(default=DEFAULT_TOL, repr=False)
    lower_bound: bool = False

    @property
    def collides(self) -> bool:
        """True when some pair penetrates by more than ``tol.contact``."""
        return self.min_clearance < -self.tol.contact

    def summary(self) -> str:
        """Plain-text summary naming the pairs and fold fractions."""
        lines = [f"clearance sweep of a {self.method} plan over {len(self.table)} states"]
        if self.where is None:
            lines.append(
                f"minimum clearance at least {self.margin:g} mm: the closest slabs of some state stay "
                f"outside the {self.margin:g} mm search margin"
            )
        else:
            (a, b), t = self.where
            lines.append(f"minimum clearance {self.min_clearance:.4f} mm between {a} and {b} at t = {t:.4f}")
        if self.first_contact is not None:
            t, (a, b) = self.first_contact
            lines.append(f"first contact at t = {t:.4f} between {a} and {b}")
        else:
            lines.append("no contact over the path")
        for (a, b), v, t in self.worst_pairs:
            lines.append(f"  {a}-{b}: {v:.4f} mm at t = {t:.4f}")
        return "\n".join(lines)

    def png_bytes(self, *, dpi: int = 100) -> bytes:
        """PNG plot of the minimum clearance against fold fraction."""
        import matplotlib

        matplotlib.use("Agg", force=False)
        from matplotlib.figure import Figure

        fig = Figure(figsize=(6.0, 3.6), dpi=dpi)
        ax = fig.add_subplot(1, 1, 1)
        ts = np.array([r.t for r in self.table])
        vs = np.array([r.min_clearance for r in self.table])
        meas = vs < self.margin  # measured distances; the rest only prove "at least the margin"
        if meas.any():
            ax.plot(ts[meas], vs[meas], "-", color="black", marker=".", markersize=4,
                    label="measured minimum clearance")
        if (~meas).any():
            ax.plot(ts[~meas], np.full(int((~meas).sum()), self.margin), linestyle="none", marker="^",
                    markerfacecolor="none", markeredgecolor="black", markersize=5,
                    label=f"bound: at least {self.margin:g} mm (nothing within the search margin)")
        ax.axhline(0.0, color="black", linewidth=0.8, linestyle="--")
        if self.first_contact is not None:
            ax.axvline(self.first_contact[0], color="black", linestyle=":", label="first contact")
        ax.set_xlabel("fold fraction t")
        ax.set_ylabel("minimum clearance (mm)")
        ax.set_title(f"{self.method}: minimum clearance over the fold")
        ax.legend(loc="best", fontsize=8)
        fig.tight_layout()
        buf = io.BytesIO()
        fig.savefig(buf, format="png")
        return buf.getvalue()

    def plot_png(self, path: str | os.PathLike[str], *, dpi: int = 100) -> Path:
        """Write the plot to ``path`` (temp file, then rename); returns the path."""
        target = Path(path)
        data = self.png_bytes(dpi=dpi)
        fd, tmp = tempfile.mkstemp(dir=target.parent, prefix=target.name, suffix=".tmp")
        try:
            with os.fdopen(fd, "wb") as fh:
                fh.write(data)
            os.replace(tmp, target)
        except BaseException:
            if os.path.exists(tmp):
                os.unlink(tmp)
            raise
        return target


# ---------------------------------------------------------------------------- pieces
def slab_pieces(slab: Slab, *, tol: Tolerances = DEFAULT_TOL) -> list[Piece]:
    """Convex pieces of one slab (its polygon parts trimmed by its cuts, plus its standoffs)."""
    out: list[Piece] = []
    label = pid(slab.panel)
    cut_n = np.array([c.normal for c in slab.cuts], dtype=float).reshape(-1, 3)
    cut_o = np.array([c.offset for c in slab.cuts], dtype=float)
    vert_cuts = [i for i, c in enumerate(slab.cuts) if c.label.startswith("vertex")]

    def prism(poly: FloatArray, z0: float, z1: float, cn: FloatArray, co: FloatArray, what: str) -> None:
        for part in convex_parts(poly, tol=tol):
            d = np.roll(part, -1, axis=0) - part
            ln = np.linalg.norm(d, axis=1)
            ok = ln > tol.length
            n2 = np.stack([d[ok, 1], -d[ok, 0]], axis=1) / ln[ok, None]
            o2 = np.einsum("ij,ij->i", n2, part[ok])
            normals = np.vstack([np.column_stack([n2, np.zeros(len(n2))]), [[0, 0, 1.0], [0, 0, -1.0]], cn])
            offsets = np.concatenate([o2, [z1, -z0], co])
            out.append(make_piece(slab.panel, normals, offsets, label=f"{what} of {label}", tol=tol))

    prism(slab.polygon_array(), slab.z0, slab.z1, cut_n, cut_o, "slab")
    for s in slab.standoffs:
        prism(np.asarray(s.polygon, float), s.z0, s.z1, cut_n[vert_cuts], cut_o[vert_cuts], "standoff")
    return out


def plan_pieces(plan: ThickPlan, *, tol: Tolerances = DEFAULT_TOL) -> list[Piece]:
    """Convex pieces of every slab of ``plan``, cached on the plan's ``meta``."""
    key = ("pieces", tol)
    cached = plan.meta.get(key)
    if cached is None:
        cached = [p for s in plan.slabs for p in slab_pieces(s, tol=tol)]
        plan.meta[key] = cached
    return list(cached)


def neighbour_keys(plan: ThickPlan) -> IntArray:
    """Sorted keys ``a * P + b`` (a < b) of panel pairs sharing a vertex of the pattern."""
    cached = plan.meta.get("neighbours")
    if cached is not None:
        return cached
    pat = plan.pattern
    n = pat.n_panels
    by_vertex: dict[int, list[int]] = {}
    for p in pat.panels:
        for v in p.loop:
            by_vertex.setdefault(int(v), []).append(p.index)
    for s in pat.seams:  # seams join the panels across them too
        cp = pat.crease_panels
        pa, pb = int(max(cp[s.a])), int(max(cp[s.b]))
        for va, vb in zip(pat.creases[s.a], pat.creases[s.b], strict=True):
            merged = by_vertex.get(int(va), []) + by_vertex.get(int(vb), [])
            by_vertex[int(va)] = merged
            by_vertex[int(vb)] = merged
        by_vertex.setdefault(-1 - s.a, []).extend([pa, pb])
    keys = set()
    for ps in by_vertex.values():
        for i in ps:
            for j in ps:
                if i < j:
                    keys.add(i * n + j)
    arr = np.array(sorted(keys), dtype=np.int64)
    plan.meta["neighbours"] = arr
    return arr


def hinged_keys(plan: ThickPlan) -> IntArray:
    """Sorted keys ``a * P + b`` (a < b) of panel pairs joined by a hinge line (mountain, valley or
    flat crease, or a seam): the edges of the pattern's panel graph."""
    n = plan.pattern.n_panels
    keys = {min(a, b) * n + max(a, b) for a, b in plan.pattern.panel_graph.edges()}
    return np.array(sorted(keys), dtype=np.int64)


def counted_neighbours(plan: ThickPlan, arrays: Any, tol: Tolerances = DEFAULT_TOL) -> IntArray:
    """Keys of the neighbour pairs for which only penetration counts (see the touching policy).

    Pairs sharing a vertex (:func:`neighbour_keys`) that are joined by a hinge line
    (:func:`hinged_keys`) or whose pieces (``arrays``, from :func:`pack_pieces`) come within
    ``tol.contact`` of each other in the flat sheet.
    """
    nkeys = neighbour_keys(plan)
    n = plan.pattern.n_panels
    flat = np.broadcast_to(np.eye(4), (n, 4, 4))
    r = _measure(arrays, list(arrays.pieces), flat, np.zeros(0, np.int64), n, 4.0 * max(tol.contact, tol.length),
                 tol)
    touching = r.keys[r.values <= tol.contact]
    close = np.union1d(hinged_keys(plan), touching)
    return np.asarray(nkeys[np.isin(nkeys, close)], dtype=np.int64)


# ---------------------------------------------------------------------------- one state
def _plan_poses(plan: ThickPlan, state: FoldState, on_reference: bool) -> FloatArray:
    if on_reference and not plan.explicit_poses and not plan.follow_state:
        return np.asarray(state.poses)
    return plan.poses(state)


def _hinges_on_reference(plan: ThickPlan, tol: Tolerances) -> bool:
    v = plan.pattern.vertices
    c = plan.pattern.creases
    for h in plan.hinges:
        p0 = v[c[h.crease, 0]]
        if abs(h.point[2]) > tol.length or np.hypot(h.point[0] - p0[0], h.point[1] - p0[1]) > tol.length:
            return False
    return True


@dataclass
class _StateResult:
    keys: IntArray
    values: FloatArray
    candidates: int


def _measure(
    arrays: Any,
    pieces: list[Piece],
    poses: FloatArray,
    nkeys: IntArray,
    n_panels: int,
    margin: float,
    tol: Tolerances,
) -> _StateResult:
    owner = arrays.owner
    rot = poses[owner, :3, :3]
    trans = poses[owner, :3, 3]
    rt = rot.transpose(0, 2, 1)
    w = np.matmul(arrays.verts, rt) + trans[:, None, :]
    fn = np.matmul(arrays.normals, rt)
    ed = np.matmul(arrays.edges, rt)
    lo = w.min(axis=1)
    hi = w.max(axis=1)
    pairs = sweep_pairs(lo, hi, pad=margin / 2.0)
    oi, oj = owner[pairs[:, 0]], owner[pairs[:, 1]]
    keep = ~arrays.skipped(pairs[:, 0], pairs[:, 1])
    pairs, oi, oj = pairs[keep], oi[keep], oj[keep]
    gaps = sat_gaps(pairs, w, fn, ed)
    a, b = np.minimum(oi, oj), np.maximum(oi, oj)
    pkey = a * n_panels + b
    is_nb = np.isin(pkey, nkeys, assume_unique=False)
    use = ~is_nb | (gaps < -tol.contact)
    pairs, gaps, pkey, is_nb = pairs[use], gaps[use], pkey[use], is_nb[use]
    # exact refinement of the smallest positive non-neighbour gaps
    pos = np.nonzero((gaps > tol.contact) & ~is_nb)[0]
    if len(pos):
        neg_or_touch = gaps[gaps <= tol.contact]
        best = float(neg_or_touch.min()) if len(neg_or_touch) else math.inf
        order = pos[np.argsort(gaps[pos], kind="stable")]
        for k in order:
            if gaps[k] >= best:
                break
            i, j = pairs[k]
            pi, pj = pieces[i], pieces[j]
            va = w[i, : len(pi.vertices)]
            vb = w[j, : len(pj.vertices)]
            d = exact_distance(va, pi.triangles, vb, pj.triangles)
            gaps[k] = max(d, gaps[k])
            best = min(best, gaps[k])
    if len(pkey) == 0:
        return _StateResult(np.zeros(0, np.int64), np.zeros(0), int(len(keep)))
    order = np.argsort(pkey, kind="stable")
    pk = pkey[order]
    gv = gaps[order]
    starts = np.concatenate([[0], np.nonzero(np.diff(pk))[0] + 1])
    return _StateResult(pk[starts], np.minimum.reduceat(gv, starts), int(len(keep)))


# ---------------------------------------------------------------------------- sweep
def clearance(
    plan: ThickPlan,
    path: FoldPath,
    *,
    refine: bool = True,
    extra_pieces: list[Piece] | None = None,
    margin: float | None = None,
    refine_levels: int = 6,
    tol: Tolerances = DEFAULT_TOL,
) -> ClearanceReport:
    """Signed minimum clearance between the slabs of ``plan`` over the states of ``path``.

    Parameters
    ----------
    plan : ThickPlan
    path : FoldPath
        States of the zero-thickness pattern; slab poses come from :meth:`ThickPlan.poses`.
    refine : bool
        Insert states (``path.at``) by bisection around the first contact and midway in intervals
        whose clearance comes within a quarter of the margin.
    extra_pieces : list of Piece, optional
        More convex parts (hinge hardware ...) owned by panels; see
        :func:`thickpanel.collide.piece_from_points`.
    margin : float, mm, optional
        Pairs farther apart are not measured; default the largest slab thickness.
    refine_levels : int
        Bisection depth for the first contact (each level halves the interval).
    tol : Tolerances
        ``tol.contact`` is the touching threshold.

    Returns
    -------
    ClearanceReport
    """
    if not len(path.states):
        raise ThicknessError("the fold path has no states to check")
    if plan.pattern is not path.states[0].pattern and plan.pattern.n_panels != path.states[0].pattern.n_panels:
        raise ThicknessError(
            f"plan has {plan.pattern.n_panels} panels but the path's pattern has "
            f"{path.states[0].pattern.n_panels}"
        )
    if margin is None:
        margin = float(max(s.thickness for s in plan.slabs))
    elif not (math.isfinite(margin) and margin > 0):
        raise ThicknessError(f"margin = {margin!r} mm is out of range; allowed: a finite length > 0 mm")
    pieces = plan_pieces(plan, tol=tol) + list(extra_pieces or [])
    n_panels = plan.pattern.n_panels
    for p in pieces:
        if not (0 <= p.owner < n_panels):
            raise ThicknessError(f"extra piece {p.label!r} names owner {p.owner}; panels are P000..{pid(n_panels - 1)}")
    arrays = pack_pieces(pieces)
    nkeys = counted_neighbours(plan, arrays, tol)
    on_ref = _hinges_on_reference(plan, tol)

    results: dict[float, tuple[_StateResult, bool]] = {}

    def run(state: FoldState, t: float, refined: bool) -> _StateResult:
        r = _measure(arrays, pieces, _plan_poses(plan, state, on_ref), nkeys, n_panels, margin, tol)
        results[t] = (r, refined)
        return r

    def smin(r: _StateResult) -> float:
        return float(r.values.min()) if len(r.values) else math.inf

    ts = []
    for k, st in enumerate(path.states):
        t = float(st.t) if math.isfinite(st.t) else k / max(len(path.states) - 1, 1)
        ts.append(t)
        run(st, t, False)
    if refine and len(ts) > 1:
        near = margin / 4.0
        for k in range(len(ts) - 1):
            t0, t1 = ts[k], ts[k + 1]
            m0, m1 = smin(results[t0][0]), smin(results[t1][0])
            if m0 > tol.contact >= m1 and refine_levels > 0:
                lo_t, hi_t = t0, t1
                for _ in range(refine_levels):
                    mid = 0.5 * (lo_t + hi_t)
                    mm = smin(run(path.at(mid), mid, True))
                    if mm <= tol.contact:
                        hi_t = mid
                    else:
                        lo_t = mid
                break  # bisect the first contact only
        for k in range(len(ts) - 1):
            t0, t1 = ts[k], ts[k + 1]
            if min(smin(results[t0][0]), smin(results[t1][0])) < near:
                mid = 0.5 * (t0 + t1)
                if mid not in results:
                    run(path.at(mid), mid, True)

    def ids(key: int) -> tuple[str, str]:
        return (pid(key // n_panels), pid(key % n_panels))

    table: list[StateRow] = []
    best_by_pair: dict[int, tuple[float, float]] = {}
    first_contact: tuple[float, tuple[str, str]] | None = None
    overall = (math.inf, None, math.nan)
    for t in sorted(results):
        r, refined = results[t]
        if len(r.values):
            k = int(np.argmin(r.values))
            m = float(r.values[k])
            pair: tuple[str, str] | None = ids(int(r.keys[k]))
            contacts = int(np.count_nonzero(r.values <= tol.contact))
            if contacts and first_contact is None:
                first_contact = (t, pair)  # type: ignore[assignment]
        else:
            m, pair, contacts = math.inf, None, 0
        # pairs outside the margin are not measured, so a state whose closest measured pair is
        # farther than the margin only proves "at least margin"
        if m >= margin:
            if margin < overall[0]:
                overall = (float(margin), None, t)  # type: ignore[assignment]
        elif m < overall[0]:
            overall = (m, pair, t)  # type: ignore[assignment]
        if len(r.values):
            for key, val in zip(r.keys.tolist(), r.values.tolist(), strict=True):
                old = best_by_pair.get(key)
                if old is None or val < old[0]:
                    best_by_pair[key] = (val, t)
        table.append(StateRow(t, m, pair, r.candidates, contacts, refined))
    within = {k: v for k, v in best_by_pair.items() if v[0] < margin}
    worst = sorted(within.items(), key=lambda kv: (kv[1][0], kv[0]))[:10]
    where = None if overall[1] is None else (overall[1], overall[2])
    # pairs that count at all: every panel pair except hinge/vertex neighbours (which may touch)
    n_pairs = n_panels * (n_panels - 1) // 2 - len(np.unique(nkeys))
    bounded = overall[1] is None and n_pairs > 0
    if not bounded and overall[1] is None:
        overall = (math.inf, None, math.nan)
    return ClearanceReport(
        method=plan.method,
        min_clearance=float(overall[0]),
        where=where,  # type: ignore[arg-type]
        first_contact=first_contact,
        worst_pairs=[(ids(k), v, t) for k, (v, t) in worst],
        table=table,
        margin=float(margin),
        tol=tol,
        lower_bound=bool(bounded),
    )


def contact_stop(
    plan: ThickPlan, *, margin: float | None = None, extra_pieces: list[Piece] | None = None,
    tol: Tolerances = DEFAULT_TOL,
) -> Callable[[FoldState], bool]:
    """A ``stop_when`` callable for :func:`thickpanel.kinematics.fold_path`: True at the first
    state where two slabs of ``plan`` (or ``extra_pieces``) touch or penetrate (same touching policy
    as :func:`clearance`).
    """
    pieces = plan_pieces(plan, tol=tol) + list(extra_pieces or [])
    arrays = pack_pieces(pieces)
    nkeys = counted_neighbours(plan, arrays, tol)
    on_ref = _hinges_on_reference(plan, tol)
    m = float(max(s.thickness for s in plan.slabs)) if margin is None else float(margin)
    n_panels = plan.pattern.n_panels

    def stop(state: FoldState) -> bool:
        r = _measure(arrays, pieces, _plan_poses(plan, state, on_ref), nkeys, n_panels, m, tol)
        return bool(len(r.values) and float(r.values.min()) <= tol.contact)

    return stop
