"""The pipeline's thickness-method stage: advice, the chosen method's options and its plan.

Split from :mod:`thickpanel.build` (same behaviour): :func:`method_stage` records the advice checks,
picks the method (``auto``: the first that applies, again after an assessed method refuses to build),
checks its option names against the method's signature and stores the plan in the result.
"""

from __future__ import annotations

import inspect
from collections.abc import Callable
from typing import Any

from .build_result import BuildResult, StageRun, stage_api
from .design import suggest
from .errors import DesignFileError, ThicknessError, ThickpanelError

__all__ = ["method_stage", "chosen_advice", "advice_checks", "check_options"]


def method_stage(run: StageRun, cp: Any, thickness: Any, target: float) -> None:
    res, d = run.res, run.res.design
    if run.blocked:
        run.skip("method", "blocked", run.blocked)
        return
    advise, why = stage_api("thickness", "methods_for")
    make, why2 = stage_api("thickness", "make_plan")
    if make is None or advise is None:
        run.skip("method", "not available", why or why2)
        res.check("thickness method", "could not run", why or why2)
        return
    from .thickness import method_function, refuted

    with run.stage("method") as rec:
        built: dict[str, Any] = {}  # plans advice built with default options, reused below
        advice = list(advise(cp, target, thickness=thickness, path=res.path, plans=built, verdict=res.rigid))
        names = [a.method for a in advice]
        name = d.method.name
        if name != "auto" and name not in names:
            raise DesignFileError(f"[method] name = {name!r} is not a thickness method{suggest(name, names)} "
                                  f"(available: auto, {', '.join(names)})")
        opts = dict(d.method.options)
        fixed = ("pattern", "method", "thickness", "target_fold", "path", "tol")
        check_options(make, opts, "[method] options", fixed=fixed)
        plan: Any = None
        while plan is None:
            chosen = chosen_advice(advice, name)
            if chosen is None or not chosen.applies:
                advice_checks(res, advice)
                rec["status"] = "failed"
                if chosen is None:
                    rec["note"] = "no thickness method applies"
                    res.check("thickness method", "fail", "no method applies: " +
                              "; ".join(f"{a.method}: {a.reason}" for a in advice))
                    run.blocked = "no thickness method applies"
                else:
                    rec["note"] = f"{name} does not apply: {chosen.reason}"
                    res.check("thickness method", "fail", rec["note"])
                    run.blocked = rec["note"]
                return
            fn = method_function(chosen.method)  # the method's own signature
            if fn is not None:
                check_options(fn, opts, f"[method] options (method {chosen.method!r})", fixed=fixed)
            try:
                plan = built[chosen.method] if not opts and chosen.method in built else \
                    make(cp, chosen.method, thickness=thickness, target_fold=target, path=res.path, **opts)
            except TypeError as exc:
                raise DesignFileError(f"[method] options for {chosen.method!r}: {exc}") from exc
            except ThickpanelError as exc:
                if not opts and not chosen.built and isinstance(exc, ThicknessError):
                    # assessed, not built, for advice: building is the test; rank again without it
                    advice = refuted(advice, chosen.method, str(exc), target)
                    continue
                advice_checks(res, advice)
                rec["status"] = "failed"
                rec["note"] = str(exc)
                res.check("thickness method", "fail", f"{chosen.method}: {exc}")
                run.blocked = f"{chosen.method} failed"
                return
        advice_checks(res, advice)
        name = chosen.method
        if any(o.material for o in d.panels.overrides):  # per-region materials go on the slabs
            import dataclasses

            mats = d.panel_materials(cp)
            plan = dataclasses.replace(plan, slabs=tuple(
                dataclasses.replace(sl, material=mats.get(sl.panel) or sl.material) for sl in plan.slabs))
        res.plan = plan
        res.metrics["method"] = name
        rec["note"] = name + (f" ({'; '.join(plan.notes)})" if plan.notes else "")
        res.check("thickness method", "pass", rec["note"])


def chosen_advice(advice: list[Any], name: str) -> Any:
    """The advice entry of method ``name`` (``auto``: the first that applies, None when none does)."""
    if name == "auto":
        return next((a for a in advice if a.applies), None)
    return next(a for a in advice if a.method == name)


def advice_checks(res: BuildResult, advice: list[Any]) -> None:
    res.advice = advice
    for a in advice:
        res.check(f"method {a.method}", "info" if a.applies else "does not apply",
                  ("applies" if a.applies else "does not apply") + (f": {a.reason}" if a.reason else ""))


def check_options(fn: Callable[..., Any], opts: dict[str, Any], where: str, fixed: tuple[str, ...]) -> None:
    """Unknown option names -> DesignFileError with the nearest valid one (when the signature says)."""
    try:
        ps = inspect.signature(fn).parameters
    except (TypeError, ValueError):
        return
    if any(p.kind is inspect.Parameter.VAR_KEYWORD for p in ps.values()):
        return
    valid = [n for n, p in ps.items() if n not in fixed and p.kind in (p.KEYWORD_ONLY, p.POSITIONAL_OR_KEYWORD)]
    for k in opts:
        if k not in valid:
            raise DesignFileError(f"unknown key {where} {k}{suggest(k, valid)} (valid: {', '.join(valid) or 'none'})")
