"""Thickness methods: turn a zero-thickness crease pattern into a :class:`ThickPlan`.

Registry of methods (one module each, formulas and sources in their docstrings and in
``docs/methods.md``): ``tapered``, ``offset-panel``, ``offset-crease``, ``membrane-gap``,
``hinge-shift``, ``wrap-backing`` (hub-wrap sheets only) and the ``plain`` baseline.
:func:`make_plan` builds one by name;
:func:`methods_for` says which apply to a pattern and why, in recommendation order.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

from ..errors import ThicknessError, ThickpanelError
from ..tolerances import DEFAULT_TOL, Tolerances
from . import hinge_shift, membrane_gap, offset_crease, offset_panel, plain, tapered, wrap_backing
from .plan import CutPlane, HingeLine, Slab, Standoff, ThickPlan

if TYPE_CHECKING:
    from ..pattern import CreasePattern
    from ..poses import FoldPath

__all__ = [
    "make_plan",
    "available_methods",
    "methods_for",
    "MethodAdvice",
    "rank_advice",
    "refuted",
    "register_method",
    "method_function",
    "ThickPlan",
    "Slab",
    "HingeLine",
    "CutPlane",
    "Standoff",
]

MethodFn = Callable[..., ThickPlan]
AssessFn = Callable[..., tuple[str, float]]
"""Applicability without building: ``(pattern, *, thickness, target_fold, path, tol) -> (reason, reachable
rad)``, raising :class:`~thickpanel.errors.ThicknessError` when the method does not apply."""
_REGISTRY: dict[str, MethodFn] = {}
_ASSESS: dict[str, AssessFn] = {}
# recommendation order: exact full-range methods first, the baseline last
_ORDER = ("wrap-backing", "offset-panel", "offset-crease", "tapered", "hinge-shift", "membrane-gap", "plain")
_RIGID = frozenset({"offset-panel", "offset-crease", "tapered", "hinge-shift"})


def register_method(name: str, fn: MethodFn, *, assess: AssessFn | None = None) -> MethodFn:
    """Register a thickness method under ``name``; a duplicate name is refused.

    ``assess`` (optional) answers "does it apply, why, how far" without building the plan; give it
    for methods whose build is expensive, so :func:`methods_for` need not build them for advice.
    """
    if name in _REGISTRY and _REGISTRY[name] is not fn:
        raise ValueError(f"thickness method {name!r} is already registered")
    _REGISTRY[name] = fn
    if assess is not None:
        _ASSESS[name] = assess
    return fn


for _mod in (tapered, offset_panel, offset_crease, membrane_gap, hinge_shift, plain, wrap_backing):
    register_method(_mod.NAME, _mod.build, assess=getattr(_mod, "assess", None))


def method_function(name: str) -> MethodFn | None:
    """The callable registered as thickness method ``name`` (None when unknown)."""
    return _REGISTRY.get(name)


def available_methods() -> list[str]:
    """Names of the registered thickness methods, sorted."""
    return sorted(_REGISTRY)


def make_plan(
    pattern: CreasePattern,
    method: str,
    *,
    thickness: float | Any,
    target_fold: float,
    path: FoldPath | None = None,
    tol: Tolerances = DEFAULT_TOL,
    **options: Any,
) -> ThickPlan:
    """Build the thick plan of ``pattern`` with ``method``.

    Parameters
    ----------
    pattern : CreasePattern
    method : str
        One of :func:`available_methods`.
    thickness : float or mapping panel -> float, mm
    target_fold : float, rad
        Largest fold magnitude the plan must reach.
    path : FoldPath, optional
        Zero-thickness fold path; its last state gives final crease angles and layer orders.
    **options
        Method options (see each module's ``build``).

    Raises
    ------
    ThicknessError
        Unknown method, bad thickness, a method that does not apply, an unreachable target.
    """
    fn = _REGISTRY.get(method)
    if fn is None:
        names = ", ".join(available_methods())
        raise ThicknessError(f"unknown thickness method {method!r}; available methods: {names}")
    try:
        return fn(pattern, thickness=thickness, target_fold=target_fold, path=path, tol=tol, **options)
    except TypeError as exc:
        if "unexpected keyword" in str(exc):
            raise ThicknessError(f"method {method}: {exc}") from None
        raise


@dataclass(frozen=True)
class MethodAdvice:
    """Whether a method applies to a pattern.

    Attributes
    ----------
    method : str
    applies : bool
    reason : str
        Why it does or does not apply.
    reachable : float, rad
        Largest fold the method reaches on this pattern (0 when it does not apply).
    min_clearance : float, mm
        Minimum clearance over the path when ``methods_for(..., sweep=True)`` ran the clearance
        sweep (negative = penetration), NaN otherwise.
    built : bool
        Whether the verdict comes from building the plan (False: from the method's applicability
        checks alone; building it may still refuse, see :func:`refuted`).
    """

    method: str
    applies: bool
    reason: str
    reachable: float
    min_clearance: float = float("nan")
    built: bool = True


def _rigid_verdict(pattern: CreasePattern, verdict: Any) -> tuple[str, str]:
    if verdict is not None:
        return str(verdict.kind), str(getattr(verdict, "reason", ""))
    from ..wrap.sheet import wrap_info

    if wrap_info(pattern) is not None:  # structural verdict, no solver run on thousands of panels
        from ..wrap.verdict import wrap_rigidity

        v = wrap_rigidity(pattern)
        return str(v.kind), str(v.reason)
    try:
        from ..kinematics import rigid_foldability  # type: ignore[attr-defined]
    except ImportError:
        return "unknown", "rigid-foldability check not available"
    try:
        v = rigid_foldability(pattern)
    except ThickpanelError as exc:
        return "unknown", str(exc)
    return str(v.kind), str(getattr(v, "reason", ""))


def _order() -> list[str]:
    return [n for n in _ORDER if n in _REGISTRY] + [n for n in available_methods() if n not in _ORDER]


def rank_advice(advice: list[MethodAdvice], target_fold: float, *, tol: Tolerances = DEFAULT_TOL) -> list[MethodAdvice]:
    """``advice`` in recommendation order (see :func:`methods_for`), as a new list."""
    rank = {n: i for i, n in enumerate(_order())}

    def key(a: MethodAdvice) -> tuple[bool, bool, bool, bool, float, int]:
        partial = a.reachable < target_fold - tol.angle
        collides = bool(a.min_clearance < -tol.contact)  # NaN (not swept) compares False
        return (not a.applies, a.method == "plain", collides, partial, -a.reachable if partial else 0.0,
                rank.get(a.method, len(rank)))

    return sorted(advice, key=key)


def refuted(
    advice: list[MethodAdvice], method: str, reason: str, target_fold: float, *, tol: Tolerances = DEFAULT_TOL
) -> list[MethodAdvice]:
    """``advice`` re-ranked after building ``method`` (assessed, not built) refused with ``reason``."""
    out = [MethodAdvice(a.method, False, reason, 0.0) if a.method == method else a for a in advice]
    return rank_advice(out, target_fold, tol=tol)


def _advise_one(
    pattern: CreasePattern, name: str, target_fold: float, thickness: Any, path: FoldPath | None,
    tol: Tolerances, plans: dict[str, ThickPlan] | None, build: bool,
) -> tuple[MethodAdvice, ThickPlan | None]:
    assess = _ASSESS.get(name)
    if assess is not None and not build:
        try:
            reason, reach = assess(pattern, thickness=thickness, target_fold=target_fold, path=path, tol=tol)
        except ThicknessError as exc:
            return MethodAdvice(name, False, str(exc), 0.0, built=False), None
        if reach < target_fold - tol.angle:
            reason = f"applies up to {math.degrees(reach):.4g} deg of the {math.degrees(target_fold):.4g} deg target"
        return MethodAdvice(name, True, reason, reach, built=False), None
    try:
        plan = make_plan(pattern, name, thickness=thickness, target_fold=target_fold, path=path, tol=tol)
    except ThicknessError as exc:
        reach = 0.0
        if name == "tapered" and target_fold >= math.pi - tol.angle:
            try:
                t = tapered.panel_thicknesses(pattern, thickness)
                reach = tapered.reachable_limit(pattern, t, "mid")[0]
            except ThicknessError:
                reach = 0.0
        return MethodAdvice(name, False, str(exc), reach), None
    if plans is not None:
        plans[name] = plan
    reach = float(plan.meta.get("reachable", plan.target_fold))
    if name == "plain":
        reason = "baseline only: slabs meet on the inner side of every fold"
        reach = 0.0
    elif reach < plan.target_fold - tol.angle:
        reason = f"applies up to {math.degrees(reach):.4g} deg of the {math.degrees(target_fold):.4g} deg target"
    else:
        reason = plan.notes[0] if plan.notes else "applies"
    return MethodAdvice(name, True, reason, reach), plan


def methods_for(
    pattern: CreasePattern,
    target_fold: float,
    *,
    thickness: float | Any,
    path: FoldPath | None = None,
    sweep: bool = False,
    tol: Tolerances = DEFAULT_TOL,
    plans: dict[str, ThickPlan] | None = None,
    verdict: Any = None,
    build_all: bool = False,
) -> list[MethodAdvice]:
    """Every registered method with applies / does not apply, the reason and the reachable fold.

    Applicable methods come first in recommendation order: those reaching the target (exact
    full-range methods before approximate ones), then partial ones by reachable fold, the
    ``plain`` baseline last; then the methods that do not apply. With ``sweep=True`` and a path,
    every applicable plan is also swept (:func:`thickpanel.clearance.clearance`) and methods that
    clear the whole path come before those that collide. A ``plans`` dict given receives every
    plan built here (default options), keyed by method name, so a caller can reuse the chosen one.

    Methods registered with an ``assess`` callable (``offset-panel``, whose set-backs cost about a
    second per dozen panels) are only assessed, not built, unless ``sweep`` or ``build_all`` is
    true; their advice has ``built=False`` and no plan in ``plans``. A caller that then builds one
    and gets a :class:`~thickpanel.errors.ThicknessError` re-ranks with :func:`refuted`.
    ``verdict`` is the pattern's rigid-foldability verdict when the caller already has it
    (otherwise it is computed here).
    """
    kind, why = _rigid_verdict(pattern, verdict)
    out: list[MethodAdvice] = []
    build = build_all or (sweep and path is not None)
    wrap_sheet, wrap_why = wrap_backing.applies(pattern)
    for name in _order():
        if name == wrap_backing.NAME and not wrap_sheet:
            out.append(MethodAdvice(name, False, wrap_why, 0.0))
            continue
        if wrap_sheet and name != wrap_backing.NAME:
            out.append(MethodAdvice(name, False, "a hub-wrap sheet's stowed state is given by its construction, not "
                                    "by fold angles about hinge axes; use wrap-backing", 0.0))
            continue
        if name in _RIGID and kind == "locked":
            out.append(MethodAdvice(name, False, f"the pattern is not rigidly foldable: {why}", 0.0))
            continue
        adv, plan = _advise_one(pattern, name, target_fold, thickness, path, tol, plans, build)
        if plan is not None and sweep and path is not None:
            from ..clearance import clearance

            rep = clearance(plan, path, tol=tol)
            reason = adv.reason
            if rep.collides and rep.where is not None:
                (a, b), tt = rep.where
                reason += f"; collides: {a}-{b} by {-rep.min_clearance:.3g} mm at t = {tt:.3f}"
            adv = MethodAdvice(name, True, reason, adv.reachable, rep.min_clearance)
        out.append(adv)
    return rank_advice(out, target_fold, tol=tol)
