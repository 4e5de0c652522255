"""``offset-panel``: hinge axes on the zero-thickness creases, panels offset to their own layers.

The offset panel technique (Edmondson, Lang, Magleby & Howell, ASME IDETC 2014; Morgan et al.
2016, Mech. Sci. 7:69, doi:10.5194/ms-7-69-2016) keeps every hinge axis on its zero-thickness
crease, so the thick sheet moves exactly like the zero-thickness one, and moves each panel along
its normal to its own layer of the folded stack; standoff blocks join panels to their hinge axes.

Here the layer order comes from the fold state at the end of the path (:mod:`.layers`); the one free
parameter, the height of the reference surface within the stack, is chosen to minimise the longest
standoff. Standoffs are split into knuckle-like slots along each hinge; hinges whose lines coincide
in the stowed state share the line with disjoint slots. For flat-folding targets every interior
vertex gets a clearance cut (no vertex whose panels keep full thickness to the vertex folds
completely flat).

Each slab edge along a folding crease stands back from the axis by the smallest set-back that keeps
the two slabs' sections apart over the crease's fold range (:mod:`.setback`, our own derivation);
given a fold path, standoffs that the clearance sweep finds inside other panels near the vertices
are shortened from their vertex ends, and for partial folds vertex clearances are added when that
is not enough and they fit.

Known limit: where a stowed hinge line crosses the interior of panels lying between its panel and
the hinge plane (as in a many-layer Miura-ori stack), the standoffs pass through those panels;
windows in them are not generated, the plan's notes name the standoffs no trim clears and the
clearance sweep reports the contact.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import replace
from typing import TYPE_CHECKING, Any

import numpy as np

from ..collide import sweep_pairs
from ..errors import ThicknessError
from ..geometry2d import polygon_area
from ..limits import OFFSET_PANEL_CREASE_SECONDS, OFFSET_PANEL_PAIR_SECONDS
from ..pattern import cid
from ..poses import fold_state_from_angles
from ..tolerances import DEFAULT_TOL, Tolerances
from .common import (
    check_target,
    final_angles,
    inset_polygon,
    make_hinge,
    panel_thicknesses,
    require_folding,
    sector_angles,
    vertex_clearance_radius,
    vertex_cuts,
)
from .layers import LayerOrder, check_stack_work, clip_convex, layer_order
from .plan import Slab, Standoff, ThickPlan
from .setback import SETBACK_SAMPLES, crease_setbacks, trim_standoffs

if TYPE_CHECKING:
    from ..pattern import CreasePattern
    from ..poses import FoldPath

NAME = "offset-panel"
FLAT_FRACTION = 0.97
"""Targets at or above this fraction of pi count as flat-folding designs (vertex clearances on)."""
TRIM_ROUNDS = 4
"""Rounds of sweep-then-trim (each sweep names at most ten colliding pairs)."""


def reference_height(base: np.ndarray, t: np.ndarray) -> tuple[float, float]:
    """Shift of the stack (mm) that minimises the longest standoff, and that standoff length.

    Layer ``p`` occupies ``[base_p + h, base_p + t_p + h]``; its standoff reaches the hinge plane 0.
    The longest standoff ``max(max_p base_p + h, -(min_p (base_p + t_p) + h), 0)`` is smallest for
    ``h = -(max base + min(base + t)) / 2``.
    """
    hi = float(np.max(base))
    lo = float(np.min(base + t))
    h = -(hi + lo) / 2.0
    return h, max(0.0, (hi - lo) / 2.0)


def _clip_half_plane(poly: np.ndarray, n: np.ndarray, off: float) -> np.ndarray:
    """Part of a convex polygon with ``n . x <= off`` (Sutherland & Hodgman 1974), (k, 2)."""
    if len(poly) == 0:
        return poly
    side = off - poly @ n
    out = []
    for k in range(len(poly)):
        p, q = poly[k], poly[(k + 1) % len(poly)]
        sp, sq = side[k], side[(k + 1) % len(poly)]
        if sp >= 0:
            out.append(p)
        if (sp >= 0) != (sq >= 0):
            out.append(p + (sp / (sp - sq)) * (q - p))
    return np.array(out).reshape(-1, 2)


def knuckle_slots(
    pattern: CreasePattern,
    stowed: Any,
    creases: list[int],
    clears: dict[int, tuple[float, float]],
    *,
    knuckles: int,
    stack_tol: float,
    tol: Tolerances = DEFAULT_TOL,
) -> dict[int, list[tuple[int, float, float]]]:
    """Axial slots of the standoffs of every hinge: ``{crease: [(side, s0, s1), ...]}``.

    ``side`` 0 is the crease's left panel, 1 its right; ``s0, s1`` (mm) run along the crease from
    its first vertex. Hinge lines that lie on one line in the stowed state (within ``stack_tol``)
    share the axial positions there, so they get disjoint slots, two per hinge (left, right) across
    the common usable interval; a hinge alone on its line alternates ``knuckles`` segments.

    Raises
    ------
    ThicknessError
        When a hinge's slot falls outside its own usable length (names the crease).
    """
    cp = pattern.crease_panels
    v = pattern.vertices
    seg = {}
    for c in creases:
        pose = np.asarray(stowed.poses[int(cp[c, 0])]) if stowed is not None else np.eye(4)
        ends = np.column_stack([v[pattern.creases[c]], np.zeros(2), np.ones(2)]) @ pose.T
        seg[c] = ends[:, :3]
    parent = {c: c for c in creases}

    def find(x: int) -> int:
        while parent[x] != x:
            parent[x] = parent[parent[x]]
            x = parent[x]
        return x

    cs = list(creases)
    if stowed is not None and len(cs) > 1:
        lo = np.array([seg[c].min(axis=0) for c in cs])
        hi = np.array([seg[c].max(axis=0) for c in cs])
        for i, j in sweep_pairs(lo, hi, pad=stack_tol / 2.0).tolist():
            a, b = cs[i], cs[j]
            pa, da = seg[a][0], seg[a][1] - seg[a][0]
            la = float(np.linalg.norm(da))
            da = da / la
            off = [seg[b][k] - pa for k in range(2)]
            dist = max(float(np.linalg.norm(o - (o @ da) * da)) for o in off)
            sb = sorted(float(o @ da) for o in off)
            overlap = min(la, sb[1]) - max(0.0, sb[0])
            if dist <= stack_tol and overlap > tol.length:
                parent[find(a)] = find(b)
    groups: dict[int, list[int]] = {}
    for c in cs:
        groups.setdefault(find(c), []).append(c)
    out: dict[int, list[tuple[int, float, float]]] = {}
    for members in groups.values():
        if len(members) == 1:
            c = members[0]
            c0, c1 = clears[c]
            ln = float(pattern.crease_lengths[c])
            cuts = np.linspace(c0, ln - c1, knuckles + 1)
            out[c] = [(k % 2, float(cuts[k]), float(cuts[k + 1])) for k in range(knuckles)]
            continue
        members = sorted(members)
        ref = members[0]
        o = seg[ref][0]
        d = seg[ref][1] - seg[ref][0]
        d = d / np.linalg.norm(d)
        spans = {}
        for c in members:
            c0, c1 = clears[c]
            ln = float(pattern.crease_lengths[c])
            s_a, s_b = float((seg[c][0] - o) @ d), float((seg[c][1] - o) @ d)
            sign = 1.0 if s_b >= s_a else -1.0
            spans[c] = (s_a, sign, s_a + sign * c0, s_a + sign * (ln - c1))
        lo_u = max(min(sp[2], sp[3]) for sp in spans.values())
        hi_u = min(max(sp[2], sp[3]) for sp in spans.values())
        if hi_u - lo_u <= tol.length:
            lo_u = min(min(sp[2], sp[3]) for sp in spans.values())
            hi_u = max(max(sp[2], sp[3]) for sp in spans.values())
        edges = np.linspace(lo_u, hi_u, 2 * len(members) + 1)
        for k, c in enumerate(members):
            s_a, sign, u0, u1 = spans[c]
            lo_c, hi_c = min(u0, u1), max(u0, u1)
            out[c] = []
            for side in (0, 1):
                w0, w1 = edges[2 * k + side], edges[2 * k + side + 1]
                w0, w1 = max(w0, lo_c), min(w1, hi_c)
                if w1 - w0 <= tol.length:
                    raise ThicknessError(
                        f"the stowed hinge stack of crease {cid(c)} leaves it no knuckle slot inside its usable "
                        f"length ({len(members)} hinges share one line)"
                    )
                l0, l1 = sorted(((w0 - s_a) * sign, (w1 - s_a) * sign))
                out[c].append((side, l0, l1))
    return out


def build(
    pattern: CreasePattern,
    *,
    thickness: Any,
    target_fold: float,
    path: FoldPath | None = None,
    standoff_width: float | None = None,
    vertex_clearance: bool | None = None,
    order: LayerOrder | None = None,
    knuckles: int = 3,
    stack_tol: float | None = None,
    setbacks: Mapping[int, tuple[float, float]] | None = None,
    setback_samples: int = SETBACK_SAMPLES,
    hinge_plane: float | None = None,
    tol: Tolerances = DEFAULT_TOL,
) -> ThickPlan:
    """Offset-panel slabs with standoffs.

    Parameters
    ----------
    path : FoldPath, optional
        Its last state gives the layer order; without it a state is composed from the final fold
        angles (exact only for patterns whose target angles close).
    standoff_width : float, mm, optional
        Smallest width of each standoff strip into its panel (the floor of the hinge set-backs);
        default the panel thickness.
    vertex_clearance : bool, optional
        Cut corners at interior vertices. Default: on for flat-folding targets
        (``target_fold >= FLAT_FRACTION * pi``) whose panels need standoffs; for smaller targets
        with a ``path``, on when the clearance sweep of the plan without them shows penetration
        and the plan with them is clearer (the choice is named in the plan's notes).
    order : LayerOrder, optional
        A precomputed layer order.
    knuckles : int
        Standoff segments per hinge, alternating between its two panels (odd numbers put the
        first and last on the left panel) for a hinge whose line no other hinge shares in the
        stowed state.
    stack_tol : float, mm, optional
        Hinge lines closer than this in the stowed state share one stack and interleave their
        knuckles; default the largest slab thickness.
    setbacks : mapping crease -> (left, right) mm, optional
        Set-backs of the two slab edges from the axis imposed instead of computed ones (used as
        given; the clearance sweep judges them).
    setback_samples : int
        Fold angles sampled over each crease's fold range for the set-back computation
        (:func:`.setback.crease_setbacks`), refined around the worst ones.
    hinge_plane : float, mm, optional
        Height of the hinge plane above the bottom face of the stowed stack; default the height
        that minimises the longest standoff (:func:`reference_height`).

    Each slab edge along a folding crease is set back from the axis by the smallest distance for
    which the two slabs' sections never overlap over the crease's fold range
    (:func:`.setback.hinge_setbacks`); the standoff fills the strip between axis and edge, the two
    set-backs are recorded on ``HingeLine.setback`` (``gap`` stays 0: the standoffs reach the
    axis, so hinge hardware spans no empty gap).

    Raises
    ------
    ThicknessError
        Bad parameters, no layer order, no hinge length left, or a crease no set-back clears
        (each naming the crease, panel or parameter and the allowed range).
    """
    kw: dict[str, Any] = dict(
        thickness=thickness, target_fold=target_fold, path=path, standoff_width=standoff_width, order=order,
        knuckles=knuckles, stack_tol=stack_tol, setbacks=setbacks, setback_samples=setback_samples,
        hinge_plane=hinge_plane, tol=tol,
    )
    target = check_target(target_fold, method=NAME)
    auto = vertex_clearance is None and path is not None and target < math.pi * FLAT_FRACTION
    first = _build_plan(pattern, vertex_clearance=False if auto else vertex_clearance, **kw)
    if path is None:
        return first
    plan, rep = _trimmed(first, path, tol=tol)
    if not auto or not rep.collides:
        return plan
    try:
        kw["order"] = first.meta["layers"]  # the same stack: read its order once
        cut, rep_cut = _trimmed(_build_plan(pattern, vertex_clearance=True, **kw), path, tol=tol)
    except ThicknessError as err:
        return replace(plan, notes=plan.notes + (f"vertex clearances not applied: {err}",))
    if rep_cut.min_clearance > rep.min_clearance:
        why = (
            f"vertex clearances added: without them {'-'.join(rep.where[0])} penetrate by "
            f"{-rep.min_clearance:.4g} mm at t = {rep.where[1]:.3f}"
            if rep.where is not None else "vertex clearances added: the plan without them collides"
        )
        return replace(cut, notes=cut.notes + (why,))
    return plan


def _fresh_meta(plan: ThickPlan) -> dict:
    """The plan's meta without the clearance sweep's cached pieces."""
    return {k: val for k, val in plan.meta.items() if not (isinstance(k, tuple) and k and k[0] == "pieces")}


def _trimmed(plan: ThickPlan, path: FoldPath, *, tol: Tolerances) -> tuple[ThickPlan, Any]:
    """``plan`` with standoffs that penetrate other panels shortened (:func:`.setback.trim_standoffs`),
    and its clearance report; the hinge's usable length shrinks to its remaining standoffs."""
    from ..clearance import clearance

    rep = clearance(plan, path, tol=tol)
    if not rep.collides or plan.meta["longest_standoff"] <= tol.length:
        return plan, rep
    pattern = plan.pattern
    slabs, notes = list(plan.slabs), []
    tried: set[tuple[int, float]] = set()
    extra: set[float] = set()
    for _ in range(TRIM_ROUNDS):  # worst_pairs names at most ten pairs: trim, sweep again, trim the newly named
        bad = [(int(x[1:]), float(t)) for ids, val, t in rep.worst_pairs if val < -tol.contact for x in ids]
        new = {b for b in bad if b not in tried}
        if not new:
            break
        tried |= new
        extra |= {t for _, t in new if not any(abs(t - float(st.t)) <= tol.angle for st in path.states)}
        slabs, more = trim_standoffs(
            pattern, slabs, path, panels={p for p, _ in new}, extra_t=tuple(sorted(extra)), tol=tol
        )
        notes += more
        rep = clearance(replace(plan, slabs=tuple(slabs), meta=_fresh_meta(plan)), path, tol=tol)
        if not rep.collides:
            break
    v = pattern.vertices
    span: dict[int, list[float]] = {}
    for slab in slabs:
        for st in slab.standoffs:
            a_, b_ = pattern.creases[st.crease]
            u = (v[b_] - v[a_]) / float(pattern.crease_lengths[st.crease])
            ax = (np.asarray(st.polygon, float) - v[a_]) @ u
            sp = span.setdefault(st.crease, [math.inf, -math.inf])
            sp[0], sp[1] = min(sp[0], float(ax.min())), max(sp[1], float(ax.max()))
    hinges = []
    for h in plan.hinges:
        got = span.get(h.crease)
        if got is not None and got[1] > got[0]:
            lo_u, hi_u = max(h.usable[0], got[0]), min(h.usable[1], got[1])
            if hi_u > lo_u:
                h = replace(h, usable=(lo_u, hi_u))
        hinges.append(h)
    out = replace(plan, slabs=tuple(slabs), hinges=tuple(hinges), notes=plan.notes + tuple(notes),
                  meta=_fresh_meta(plan))
    return out, clearance(out, path, tol=tol)


def _stack_order(
    pattern: CreasePattern, t: np.ndarray, target: float, path: FoldPath | None, tol: Tolerances
) -> tuple[LayerOrder, Any]:
    """Layer order of the stowed stack and the fold state it was read from."""
    if path is not None and len(path.states):
        # at an exact flat fold all reference planes coincide and no order can be read:
        # use the last state that is not yet flat
        state = path.states[-1]
        for st in reversed(path.states):
            state = st
            if float(np.max(np.abs(st.angles))) < math.pi - 1e-6:
                break
    else:
        state = fold_state_from_angles(pattern, final_angles(pattern, target, None))
        if state.closure_error > 1e3 * tol.closure:
            raise ThicknessError(
                f"method {NAME} needs a fold path to find the layer order: the final fold angles "
                f"do not close (closure error {state.closure_error:.3g})"
            )
    # the whole method's work against the time bound, before any of it
    work = len(require_folding(pattern, NAME)) * OFFSET_PANEL_CREASE_SECONDS
    check_stack_work(pattern, state, method=NAME, pair_seconds=OFFSET_PANEL_PAIR_SECONDS, other_s=work, tol=tol)
    return layer_order(pattern, state, thickness=t, tol=tol), state


def _layers_note(order: LayerOrder, longest: float) -> str:
    return f"{int(order.level.max()) + 1} layers; longest standoff {longest:.4g} mm"


def assess(
    pattern: CreasePattern,
    *,
    thickness: Any,
    target_fold: float,
    path: FoldPath | None = None,
    tol: Tolerances = DEFAULT_TOL,
) -> tuple[str, float]:
    """Whether the method applies with default options, without building the plan.

    Runs the checks of :func:`build` that come before the set-backs (target, thicknesses, folding
    creases, the layer order of the stowed stack) and returns the first note :func:`build` would
    give and the reachable fold (rad; the hinge axes stay on the creases, so the target). The
    set-back, slot and trim steps are not run: a plan whose set-backs find no clearance (or whose
    clearances leave no hinge length) still raises in :func:`build`.

    Raises
    ------
    ThicknessError
        As :func:`build` for the checks named above.
    """
    target = check_target(target_fold, method=NAME)
    t = panel_thicknesses(pattern, thickness)
    require_folding(pattern, NAME)
    order, _ = _stack_order(pattern, t, target, path, tol)
    return _layers_note(order, reference_height(order.base, t)[1]), target


def _build_plan(
    pattern: CreasePattern,
    *,
    thickness: Any,
    target_fold: float,
    path: FoldPath | None = None,
    standoff_width: float | None = None,
    vertex_clearance: bool | None = None,
    order: LayerOrder | None = None,
    knuckles: int = 3,
    stack_tol: float | None = None,
    setbacks: Mapping[int, tuple[float, float]] | None = None,
    setback_samples: int = SETBACK_SAMPLES,
    hinge_plane: float | None = None,
    tol: Tolerances = DEFAULT_TOL,
) -> ThickPlan:
    """Build the plan with vertex clearances decided (see :func:`build`)."""
    target = check_target(target_fold, method=NAME)
    t = panel_thicknesses(pattern, thickness)
    fc = require_folding(pattern, NAME)
    state_for_order = None
    if order is None:
        order, state_for_order = _stack_order(pattern, t, target, path, tol)
    shift, longest = reference_height(order.base, t)
    if hinge_plane is not None:
        top = float(np.max(order.base + t))
        try:
            hp = math.nan if isinstance(hinge_plane, bool) else float(hinge_plane)
        except (TypeError, ValueError):
            hp = math.nan
        if not (math.isfinite(hp) and 0.0 <= hp <= top):
            raise ThicknessError(
                f"hinge_plane = {hinge_plane!r} mm is out of range; allowed: 0..{top:.4g} mm above the stack bottom"
            )
        shift = -hp
        longest = max(0.0, float(np.max(order.base)) - hp, hp - float(np.min(order.base + t)))
    if vertex_clearance is None:
        # a flat-folding design needs them: no vertex whose panels keep full thickness to the
        # vertex folds completely flat (for partial folds, ask with vertex_clearance=True when the
        # sweep shows standoffs meeting at vertices)
        vertex_clearance = target >= math.pi * FLAT_FRACTION and longest > tol.length
    radii: dict[int, float] = {}
    if vertex_clearance:
        for v in pattern.interior_vertices:
            cs, sec = sector_angles(pattern, int(v))
            panels_at = {int(p) for c in cs for p in pattern.crease_panels[c] if p >= 0}
            lo = min(order.base[p] for p in panels_at)
            hi = max(order.base[p] + t[p] for p in panels_at)
            radii[int(v)] = vertex_clearance_radius(float(sec.min()), float(hi - lo))
    slabs = []
    z_of = []
    for p in range(pattern.n_panels):
        b0 = float(order.base[p] + shift)
        b1 = b0 + float(t[p])
        z0, z1 = (b0, b1) if order.facing[p] > 0 else (-b1, -b0)
        z_of.append((z0, z1))
    cp = pattern.crease_panels
    standoffs: list[list[Standoff]] = [[] for _ in range(pattern.n_panels)]
    inset: dict[tuple[int, int], float] = {}
    hinges = []
    v = pattern.vertices
    n_k = int(knuckles)
    if n_k < 1:
        raise ThicknessError(f"knuckles = {knuckles!r} is out of range; allowed: a whole number >= 1")
    setback_of = crease_setbacks(
        pattern, fc, z_of, t, target=target, path=path, standoff_width=standoff_width,
        setbacks=setbacks, samples=setback_samples, tol=tol,
    )
    for c in fc:
        for side, p in enumerate((int(cp[c, 0]), int(cp[c, 1]))):
            inset[(p, c)] = setback_of[c][side]
    inset_polys = [inset_polygon(pattern, p, inset, tol=tol) for p in range(pattern.n_panels)]
    clears: dict[int, tuple[float, float]] = {}
    for c in fc:
        a_, b_ = pattern.creases[c]
        ln = float(pattern.crease_lengths[c])
        clear0 = clear1 = 0.0
        for end, vv in ((0, int(a_)), (1, int(b_))):
            r = radii.get(vv, 0.0)
            if r <= 0:
                continue
            _, sec = sector_angles(pattern, vv)
            need = r / max(math.cos(float(sec.min()) / 2.0), 1e-6)
            if end == 0:
                clear0 = max(clear0, need)
            else:
                clear1 = max(clear1, need)
        # the slabs' own edges along this hinge end where the neighbouring hinges' insets begin
        for p in (int(cp[c, 0]), int(cp[c, 1])):
            k = list(pattern.panels[p].edges).index(c)
            e0, e1 = inset_polys[p][k], inset_polys[p][(k + 1) % len(inset_polys[p])]
            u_c = (v[b_] - v[a_]) / ln
            s_a, s_b = sorted((float((e0 - v[a_]) @ u_c), float((e1 - v[a_]) @ u_c)))
            clear0 = max(clear0, s_a)
            clear1 = max(clear1, ln - s_b)
        if clear0 + clear1 >= ln:
            raise ThicknessError(
                f"vertex clearances ({clear0:.3g} + {clear1:.3g} mm) leave no hinge length on crease {cid(c)} "
                f"of length {ln:.4g} mm; allowed: total < crease length (thinner panels or larger panels)"
            )
        clears[c] = (clear0, clear1)
    stowed = path.states[-1] if path is not None and len(path.states) else state_for_order
    gap = float(stack_tol) if stack_tol is not None else float(np.max(t))
    slots = knuckle_slots(pattern, stowed, fc, clears, knuckles=n_k, stack_tol=gap, tol=tol)
    corner_cuts = [vertex_cuts(pattern, p, radii, tol=tol) if radii else [] for p in range(pattern.n_panels)]
    for c in fc:
        a_, b_ = pattern.creases[c]
        pa, pb = v[a_], v[b_]
        u = (pb - pa) / np.linalg.norm(pb - pa)
        clear0, clear1 = clears[c]
        for side, p in enumerate((int(cp[c, 0]), int(cp[c, 1]))):
            z0, z1 = z_of[p]
            w = inset[(p, c)]
            inward = np.array([-u[1], u[0]]) * (1.0 if side == 0 else -1.0)
            for k_side, lo_s, hi_s in slots[c]:
                if k_side != side:
                    continue
                s0 = pa + u * lo_s
                s1 = pa + u * hi_s
                qa = np.array([s0, s1, s1 + inward * w, s0 + inward * w])
                e1, e2 = qa[1] - qa[0], qa[2] - qa[0]
                if float(e1[0] * e2[1] - e1[1] * e2[0]) < 0:
                    qa = qa[::-1]
                if pattern.panels[p].convex:  # keep the strip inside its panel at acute corners
                    qa = clip_convex(qa, pattern.panel_polygon(p))
                for cut in corner_cuts[p]:  # and outside the vertex clearances
                    qa = _clip_half_plane(qa, np.array(cut.normal[:2]), cut.offset)
                if len(qa) < 3 or abs(polygon_area(qa)) <= tol.area:
                    continue
                standoffs[p].append(
                    Standoff(c, tuple((float(x), float(y)) for x, y in qa), float(min(z0, 0.0)), float(max(z1, 0.0)))
                )
        kind = pattern.kinds[c]
        rng = (0.0, math.pi) if kind == "valley" else (-math.pi, 0.0)
        hinges.append(
            make_hinge(
                pattern, c, z=0.0, face="reference", gap=0.0, fold_range=rng, clear=(clear0, clear1),
                setback=setback_of[c],
            )
        )
    for p in range(pattern.n_panels):
        poly = tuple((float(x), float(y)) for x, y in inset_polys[p])
        cuts = tuple(corner_cuts[p])
        slabs.append(Slab(p, poly, z_of[p][0], z_of[p][1], cuts=cuts, standoffs=tuple(standoffs[p])))
    return ThickPlan(
        pattern, NAME, tuple(slabs), tuple(hinges), target,
        notes=(
            _layers_note(order, longest),
            "hinge axes on the zero-thickness creases: fold angles equal the zero-thickness ones",
        ),
        meta={"layers": order, "longest_standoff": longest, "vertex_radii": radii, "setbacks": setback_of},
    )

