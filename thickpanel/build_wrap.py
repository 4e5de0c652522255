"""Pipeline stages for ``hub-wrap`` sheets (called by :mod:`thickpanel.build`).

A wrapped-hub sheet is locked for rigid panels with ideal hinges; its stowed state comes from its
construction. So for these sheets the build uses:

* rigidity: the structural verdict (:func:`thickpanel.wrap.verdict.wrap_rigidity`), no solver run;
* fold path: :func:`thickpanel.wrap.deploy.stowed_fold_path` (deployed -> stowed poses, with the
  compliance the hinges must provide);
* clearance: the end states only (deployed and stowed, both exact); the intermediate states of the
  least-misfit deployment are not rigid-panel states and are reported as compliance instead;
* metrics: :func:`thickpanel.wrap.metrics.wrap_metrics` for the stowed state.
"""

from __future__ import annotations

from typing import Any

from .build_result import BuildResult
from .pattern import cid, vid
from .wrap.check import backing_strain
from .wrap.deploy import WRAP_CAUTION, stowed_fold_path
from .wrap.metrics import wrap_metrics
from .wrap.sheet import wrap_info
from .wrap.verdict import wrap_rigidity

__all__ = ["is_wrap_sheet", "hub_exemption", "kawasaki_scope", "wrap_rigidity_stage", "wrap_fold_path_stage",
           "clearance_path", "wrap_metrics_into", "PATH_STATES"]

PATH_STATES = 9  # sampled states of the hub-wrap deployment (each one least-squares relaxation)


def is_wrap_sheet(pattern: Any) -> bool:
    """Whether ``pattern`` was made by the ``hub-wrap`` layout."""
    return pattern is not None and wrap_info(pattern) is not None


def hub_exemption(pattern: Any, failing: list[Any]) -> list[str]:
    """Ids of the hub corners among the ``failing`` vertex ids of a hub-wrap sheet (else empty)."""
    info = wrap_info(pattern) if pattern is not None else None
    if info is None:
        return []
    hub = {vid(v) for v in info.hub_vertices}
    return sorted(str(v) for v in failing if str(v) in hub)


def kawasaki_scope(pattern: Any) -> tuple[Any, str]:
    """The sheet whose flat-foldability is checked, and a note saying so.

    A thick hub-wrap sheet's creases bound bare backing strips, so Kawasaki's and Maekawa's conditions
    (zero-thickness properties) are checked on its zero-thickness reference sheet (same hub, rings,
    ring height), whose development it is; any other pattern is checked as it is.
    """
    info = wrap_info(pattern) if pattern is not None else None
    if info is None or float(info.params.get("panel_thickness", 0.0)) <= 0:
        return pattern, ""
    from .layouts.hub_wrap import reference_sheet

    return reference_sheet(pattern), ("; checked on the zero-thickness reference sheet of the same hub, rings and "
                                      "ring height (this thick sheet is its development: its creases bound bare "
                                      "backing strips, where Kawasaki's condition does not apply)")


def wrap_rigidity_stage(res: BuildResult, rec: dict[str, Any], require_rigid: bool) -> None:
    """Structural rigidity verdict into ``res.rigid``, the ``rigid`` metric and a check."""
    v = wrap_rigidity(res.pattern)
    res.rigid = v
    res.metrics["rigid"] = v.kind
    where = ", ".join(v.where[:8])
    rec["note"] = f"{v.kind} (structural verdict of the hub-wrap construction)"
    detail = f"{rec['note']}; {v.reason}" + (f" at {where}" if where else "")
    res.check("rigid-foldable", "fail" if require_rigid and v.kind != "rigid" else "warn", detail)


def wrap_fold_path_stage(res: BuildResult, rec: dict[str, Any], states: int) -> None:
    """The direct deployed -> stowed path and its compliance into ``res`` (metrics and checks)."""
    n = max(2, min(int(states), PATH_STATES))
    path = stowed_fold_path(res.pattern, n_states=n)
    info = wrap_info(res.pattern)
    thick = info is not None and float(info.params.get("panel_thickness", 0.0)) > 0
    closure = float(path.states[-1].closure_error)
    if thick:
        # the thick sheet's stowed panels include bare backing strips that bend, so loop closure and hinge
        # play of its panels measure the strips, not hinges; the hinge compliance of the deployment is that
        # of its zero-thickness reference sheet (same hub, rings and ring height, exact stowed state)
        from dataclasses import replace

        from .layouts.hub_wrap import reference_sheet

        ref = reference_sheet(res.pattern)
        assert ref is not None
        ref_path = stowed_fold_path(ref, n_states=n)
        path = replace(path, meta={**path.meta, "compliance": ref_path.meta["compliance"],
                                   "compliance_sheet": "zero-thickness reference sheet"})
        closure = float(ref_path.states[-1].closure_error)
    res.path = path
    comp = path.meta["compliance"]
    reach = float(path.meta.get("target", 0.0))
    res.metrics.update(fold_states=len(path.states), reached_fold_deg=float(_deg(reach)), stop_reason="target",
                       closure_error=closure, stowed_from="construction",
                       compliance_max_misfit_deg=comp.max_misfit_deg, compliance_max_play_mm=comp.max_play_mm,
                       compliance_method=comp.method + (" (on the zero-thickness reference sheet of the same hub, "
                                                        "rings and ring height; vertex and crease ids are that "
                                                        "sheet's)" if thick else ""))
    rec["note"] = (f"stowed state from the construction (largest fold {_deg(reach):.1f} deg); {len(path.states)} "
                   "states of the least-misfit deployment")
    if thick:
        strain = backing_strain(res.pattern)
        res.metrics["backing_stretch_mm"] = float(strain.stretch)
        bent = "bend without stretching" if strain.stretch <= 1e-6 else \
            f"would have to stretch by up to {strain.stretch:.3g} mm (at crease {cid(strain.crease)})"
        end = (f"; the stowed plates are placed exactly by the construction and the bare backing strips between "
               f"them {bent} (largest stowed gap minus flat strip width {strain.stretch:.3g} mm); hinge compliance "
               "of the deployment measured on the zero-thickness reference sheet")
    else:
        end = f"; stowed loop closure {_deg(closure):.2g} deg (ideal hinges)"
    stretched = thick and res.metrics.get("backing_stretch_mm", 0.0) > 1e-6
    res.check("fold reaches target", "warn" if stretched else "pass", rec["note"] + end)
    res.check("hinge compliance (deployment)", "warn", f"{comp.summary()}; method: {res.metrics['compliance_method']}. "
              f"{WRAP_CAUTION}")


def clearance_path(path: Any) -> Any:
    """The path cut to its two exact end states (deployed, stowed) for the clearance proof."""
    return path.with_states((path.states[0], path.states[-1]))


def wrap_metrics_into(res: BuildResult) -> None:
    """Stowed-state figures (:data:`thickpanel.wrap.metrics.WRAP_METRIC_KEYS`) into ``res.metrics``."""
    t = None
    if res.plan is None:
        th = res.design.panels.thickness
        t = float(th)
    m = res.metrics
    cyl = (m["stowed_diameter_mm"], m["stowed_height_mm"]) if "stowed_diameter_mm" in m and \
        "stowed_height_mm" in m and m.get("stowed_state_t") == 1.0 else None
    # the stowed cylinder is the build's own figure (thickpanel.figures); derived ones computed from it
    figs = wrap_metrics(res.pattern, res.plan, thickness=t, cylinder=cyl)
    if cyl is not None:
        figs = {k: v for k, v in figs.items() if k not in ("stowed_diameter_mm", "stowed_height_mm")}
    res.metrics.update(figs)
    res.metrics["safety_caution"] = WRAP_CAUTION
    comp = (getattr(res.path, "meta", None) or {}).get("compliance") if res.path is not None else None
    if comp is not None:
        res.metrics["compliance"] = comp.rows()  # per sampled state: t, misfit (deg), play (mm)
    sheets = res.plan.meta.get("sheet_parts", ()) if res.plan is not None else ()
    for sp in sheets:
        if sp.attrs.get("flat_only"):
            res.check(f"{sp.name} membrane", "info", f"{sp.name} ({sp.z1 - sp.z0:g} mm {sp.material}) is exported "
                      "flat with a DXF cut sheet marking where each plate is bonded; it is flexible, not rigid, so "
                      "it is left out of the stowed (folded) assemblies")


def _deg(x: float) -> float:
    import math

    return math.degrees(x)
