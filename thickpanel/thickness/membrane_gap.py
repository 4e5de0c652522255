"""``membrane-gap``: rigid panels bonded to a flexible membrane with a gap at every fold.

Zirbel et al. 2013 (J. Mech. Des. 135(11):111005, doi:10.1115/1.4025372) carry thick panels on a
membrane that bends in gaps left between them; any pattern works, including ones that are not
rigidly foldable, at the price of approximate kinematics. For a 180 deg fold with ``k`` layers
tucked inside, the straight span of membrane across the gap must equal the stack it wraps:
``(k + 2) t`` when the panels sit on the inner side of the membrane and ``k t`` when they sit on
the outer side. For a fold ``rho < 180 deg`` with nothing tucked inside, panels on the inner side
need ``2 t sin(rho / 2)`` (their inner corners meet) and panels outside need none. [derived from
the published idea]

Kinematics: the membrane span turns by rho/2 at each panel edge; the relative motion of the two
panels between the flat and the final state is one rotation by rho about the line at mid-gap and
height ``(g / 2) tan(rho_final / 4)`` on the inner side, which this plan uses as its hinge axis
(exact at both ends of the fold, approximate in between). [derived]
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from typing import TYPE_CHECKING, Any

from ..errors import ThicknessError
from ..tolerances import DEFAULT_TOL, Tolerances
from .common import check_target, final_angles, inset_polygon, make_hinge, panel_thicknesses, require_folding
from .plan import Slab, ThickPlan

if TYPE_CHECKING:
    from ..pattern import CreasePattern
    from ..poses import FoldPath

NAME = "membrane-gap"
SIDES = ("inside", "outside")


def gap_width(t: float, rho: float, k: int, side: str) -> float:
    """Flat gap (mm) across a fold of ``rho`` (rad) with ``k`` layers of thickness ``t`` tucked in.

    ``side`` is where the panels sit relative to the membrane at this fold: ``inside`` or ``outside``.
    At rho = pi: ``(k + 2) t`` inside, ``k t`` outside (Zirbel et al. 2013).
    """
    if side not in SIDES:
        raise ThicknessError(f"side = {side!r} is not one of {', '.join(SIDES)}")
    if k < 0:
        raise ThicknessError(f"tucked layer count k = {k} is out of range; allowed: k >= 0")
    r = abs(rho)
    if side == "inside":
        return 2.0 * t * math.sin(r / 2.0) + k * t
    return k * t


def tucked_layers(pattern: CreasePattern, path: FoldPath | None, *, tol: Tolerances = DEFAULT_TOL) -> dict[int, int]:
    """Layers tucked inside each crease's fold at the end of ``path`` (empty without a path).

    Counts the panels whose stack level at the final state lies strictly between the two panels of
    the crease, among the panels that cover the crease's midpoint (see :mod:`.layers`).
    """
    if path is None or not len(path.states):
        return {}
    from ..limits import STACK_PAIR_SECONDS
    from .layers import check_stack_work, layer_order

    # one layer-order pass: refused before it starts beyond the time bound
    check_stack_work(pattern, path.states[-1], method=NAME, pair_seconds=STACK_PAIR_SECONDS, tol=tol)
    try:
        order = layer_order(pattern, path.states[-1], tol=tol)
    except ThicknessError:
        return {}
    return order.tucked


def build(
    pattern: CreasePattern,
    *,
    thickness: Any,
    target_fold: float,
    path: FoldPath | None = None,
    side: str = "inside",
    layers: Mapping[int, int] | None = None,
    tol: Tolerances = DEFAULT_TOL,
) -> ThickPlan:
    """Panels on one side of a membrane at z = 0, inset from every fold by half its gap.

    Parameters
    ----------
    side : {"inside", "outside"}
        ``inside``: panels on top of the membrane (z in [0, t]), inside valley folds;
        ``outside``: panels under it (z in [-t, 0]).
    layers : mapping crease -> int, optional
        Tucked layer count per crease; default from the layer order of the path's final state.
    """
    target = check_target(target_fold, method=NAME)
    t = panel_thicknesses(pattern, thickness)
    fc = require_folding(pattern, NAME)
    if side not in SIDES:
        raise ThicknessError(f"side = {side!r} is not one of {', '.join(SIDES)}")
    ang = final_angles(pattern, target, path)
    k_of = dict(layers) if layers is not None else tucked_layers(pattern, path, tol=tol)
    cp = pattern.crease_panels
    inset: dict[tuple[int, int], float] = {}
    hinges = []
    for c in fc:
        a, b = int(cp[c, 0]), int(cp[c, 1])
        rho = float(ang[c]) or (target if pattern.kinds[c] == "valley" else -target)
        tt = float(max(t[a], t[b]))
        k = int(k_of.get(c, 0))
        # panels sit on the inner side of the membrane for valleys when side == inside
        local = side if rho > 0 else ("outside" if side == "inside" else "inside")
        g = gap_width(tt, rho if abs(rho) < math.pi - tol.angle else math.pi, k, local)
        inset[(a, c)] = inset[(b, c)] = g / 2.0
        h = (g / 2.0) * math.tan(abs(rho) / 4.0) * (1.0 if rho > 0 else -1.0)
        hinges.append(
            make_hinge(
                pattern, c, z=h, face="membrane", gap=g,
                fold_range=(0.0, abs(rho)) if rho > 0 else (-abs(rho), 0.0),
            )
        )
    slabs = []
    for p in range(pattern.n_panels):
        poly = inset_polygon(pattern, p, inset, tol=tol)
        z0, z1 = (0.0, float(t[p])) if side == "inside" else (-float(t[p]), 0.0)
        slabs.append(Slab(p, tuple((float(x), float(y)) for x, y in poly), z0, z1))
    return ThickPlan(
        pattern, NAME, tuple(slabs), tuple(hinges), target,
        notes=(f"panels {side} the membrane; gaps per crease from the fold side and tucked layers",),
        meta={"layers": k_of},
    )
