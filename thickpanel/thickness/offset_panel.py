"""``offset-panel``: hinge axes on the zero-thickness creases, panels offset to their own layers.

The offset panel technique (Edmondson, Lang, Magleby & Howell, ASME IDETC 2014; Morgan et al.
2016, Mech. Sci. 7:69, doi:10.5194/ms-7-69-2016) keeps every hinge axis on its zero-thickness
crease, so the thick sheet moves exactly like the zero-thickness one, and moves each panel along
its normal to its own layer of the folded stack; standoff blocks join panels to their hinge axes.

Here the layer order comes from the fold state at the end of the path (:mod:`.layers`); the one free
parameter, the height of the reference surface within the stack, is chosen to minimise the longest
standoff. For flat-folding targets every interior vertex gets a clearance cut (no vertex whose
panels keep full thickness to the vertex folds completely flat).
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING, Any

import numpy as np

from ..errors import ThicknessError
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
from .layers import LayerOrder, clip_convex, layer_order
from .plan import Slab, Standoff, ThickPlan

if TYPE_CHECKING:
    from ..pattern import CreasePattern
    from ..poses import FoldPath

NAME = "offset-panel"


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
    tol: Tolerances = DEFAULT_TOL,
) -> ThickPlan:
    """Offset-panel slabs with standoffs.

    Parameters
    ----------
    path : FoldPath, optional
        Its last state gives the layer order; without it a state is composed from the final fold
        angles (exact only for patterns whose target angles close).
    standoff_width : float, mm, optional
        Width of each standoff strip into its panel; default the panel thickness.
    vertex_clearance : bool, optional
        Cut corners at interior vertices; default on when the target is a flat fold.
    order : LayerOrder, optional
        A precomputed layer order.
    knuckles : int
        Standoff segments per hinge, alternating between its two panels (odd numbers put the
        first and last on the left panel).
    """
    target = check_target(target_fold, method=NAME)
    t = panel_thicknesses(pattern, thickness)
    fc = require_folding(pattern, NAME)
    if order is None:
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
        order = layer_order(pattern, state, thickness=t, tol=tol)
    shift, longest = reference_height(order.base, t)
    flat = target >= math.pi - 1e-3
    if vertex_clearance is None:
        vertex_clearance = flat
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
    for c in fc:
        a_, b_ = pattern.creases[c]
        pa, pb = v[a_], v[b_]
        u = (pb - pa) / np.linalg.norm(pb - pa)
        ln = float(np.linalg.norm(pb - pa))
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
        if clear0 + clear1 >= ln:
            raise ThicknessError(
                f"vertex clearances ({clear0:.3g} + {clear1:.3g} mm) leave no hinge length on crease {cid(c)} "
                f"of length {ln:.4g} mm; allowed: total < crease length (thinner panels or larger panels)"
            )
        # knuckle segments alternate between the two panels along the usable length, so the
        # standoffs of the two sides never share an axial position (as the knuckles of a hinge)
        cuts_at = np.linspace(clear0, ln - clear1, n_k + 1)
        for side, p in enumerate((int(cp[c, 0]), int(cp[c, 1]))):
            z0, z1 = z_of[p]
            w = float(standoff_width) if standoff_width is not None else float(t[p])
            inset[(p, c)] = w
            inward = np.array([-u[1], u[0]]) * (1.0 if side == 0 else -1.0)
            for k in range(side, n_k, 2):
                s0 = pa + u * cuts_at[k]
                s1 = pa + u * cuts_at[k + 1]
                qa = np.array([s0, s1, s1 + inward * w, s0 + inward * w])
                e1, e2 = qa[1] - qa[0], qa[2] - qa[0]
                if float(e1[0] * e2[1] - e1[1] * e2[0]) < 0:
                    qa = qa[::-1]
                if pattern.panels[p].convex:  # keep the strip inside its panel at acute corners
                    qa = clip_convex(qa, pattern.panel_polygon(p))
                if len(qa) < 3:
                    continue
                standoffs[p].append(
                    Standoff(c, tuple((float(x), float(y)) for x, y in qa), float(min(z0, 0.0)), float(max(z1, 0.0)))
                )
        kind = pattern.kinds[c]
        rng = (0.0, math.pi) if kind == "valley" else (-math.pi, 0.0)
        hinges.append(
            make_hinge(pattern, c, z=0.0, face="reference", gap=0.0, fold_range=rng, clear=(clear0, clear1))
        )
    for p in range(pattern.n_panels):
        poly = tuple((float(x), float(y)) for x, y in inset_polygon(pattern, p, inset, tol=tol))
        cuts = tuple(vertex_cuts(pattern, p, radii, tol=tol)) if radii else ()
        slabs.append(Slab(p, poly, z_of[p][0], z_of[p][1], cuts=cuts, standoffs=tuple(standoffs[p])))
    return ThickPlan(
        pattern, NAME, tuple(slabs), tuple(hinges), target,
        notes=(
            f"{int(order.level.max()) + 1} layers; longest standoff {longest:.4g} mm",
            "hinge axes on the zero-thickness creases: fold angles equal the zero-thickness ones",
        ),
        meta={"layers": order, "longest_standoff": longest, "vertex_radii": radii},
    )
