"""The hinge recipes of a whole thick plan, without building any solid.

:func:`design_hinges` runs a hinge style over every hinge line of a plan. The solid builder
(:mod:`thickpanel.solids`) and the clearance sweep's hardware pieces
(:mod:`thickpanel.hardware`) both read these recipes, so the hardware the sweep measures is the
hardware that gets built.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

from thickpanel.errors import GeometryError
from thickpanel.pattern import cid, pid
from thickpanel.tolerances import DEFAULT_TOL, Tolerances

from .base import HingeContext, HingeDesign, HingeStyle
from .materials import get_material

if TYPE_CHECKING:
    from thickpanel.thickness.plan import ThickPlan

__all__ = ["design_hinges", "stowed_fold"]


def stowed_fold(plan: ThickPlan, crease: int) -> float:
    """Fold angle magnitude of ``crease`` in the plan's stowed state, rad (the pattern's target
    angle of that crease, else the plan's target fold)."""
    ta = plan.pattern.target_angles
    v = float(ta[crease]) if crease < len(ta) else float("nan")
    return abs(v) if math.isfinite(v) else abs(plan.target_fold)


def design_hinges(
    plan: ThickPlan, style: HingeStyle, *, material: str | None = None, tol: Tolerances = DEFAULT_TOL
) -> tuple[HingeDesign, ...]:
    """One :class:`~hinges.base.HingeDesign` per hinge line of ``plan``, in ``plan.hinges`` order.

    Parameters
    ----------
    plan : ThickPlan
    style : HingeStyle
    material : str, optional
        Material key for slabs that name none.
    tol : Tolerances

    Raises
    ------
    GeometryError
        A hinge line joins a panel without a slab.
    HingeError
        The style refuses a hinge line, or a material key is unknown.
    """
    slabs = {s.panel: s for s in plan.slabs}
    mats = {s.panel: s.material or material or "" for s in plan.slabs}
    for s in plan.slabs:
        get_material(mats[s.panel], who=pid(s.panel))
    out = []
    for h in plan.hinges:
        a, b = h.panels
        if a not in slabs or b not in slabs:
            raise GeometryError(f"hinge line {cid(h.crease)} joins panels {a}, {b} without slabs")
        ctx = HingeContext(
            h, (slabs[a], slabs[b]),
            (get_material(mats[a], who=pid(a)), get_material(mats[b], who=pid(b))),
            stowed_fold(plan, h.crease), tol,
        )
        out.append(style.design(ctx))
    return tuple(out)
