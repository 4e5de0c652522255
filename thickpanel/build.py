"""Orchestration: design -> pattern -> foldability -> fold path -> thickness plan -> clearance ->
solids -> exports -> report.

Each stage calls its module through the agreed public names. A stage whose module is not installed
is recorded as ``not available`` with the reason; no stand-in result is ever produced. A stage that
refuses the design (a method that does not apply, a fold that locks, a clearance below the design's
threshold) makes a failing *check*; input errors (bad design values, an unreadable pattern file, an
unknown hinge or method option) raise :class:`~thickpanel.errors.DesignFileError`.

The public functions return a JSON-ready summary ``dict`` (the command line's ``--json`` output):
``{"design", "source", "command", "ok", "stages": [...], "checks": [...], "metrics": {...},
"outputs": [...], "report"}``.
"""

from __future__ import annotations

import logging
import math
from collections.abc import Callable
from pathlib import Path
from typing import Any

import numpy as np

from .build_figures import export_figures, hardware_for, hinge_reach, resolved_hinge_options
from .build_method import method_stage
from .build_result import (
    ORDER,
    SLACK_MAX_DEG,
    SLACK_STATES,
    BuildResult,
    Progress,
    StageRun,
    default_out_dir,
    degrees_of,
    stage_api,
)
from .build_wrap import (
    clearance_path,
    hub_exemption,
    is_wrap_sheet,
    kawasaki_scope,
    wrap_fold_path_stage,
    wrap_metrics_into,
    wrap_rigidity_stage,
)
from .design import Design, suggest
from .envelope import diameter
from .errors import DesignFileError, HingeError, ThickpanelError
from .figures import array_figures, clearance_figures
from .outputs import prepare_out_dir, remove_outputs

log = logging.getLogger("thickpanel")

__all__ = ["BuildResult", "run_pipeline", "run_check", "run_fold", "run_build", "run_report",
           "default_out_dir", "Progress"]


def run_pipeline(
    design: Design,
    *,
    command: str = "build",
    out_dir: Path | None = None,
    at: float | None = None,
    stages: tuple[str, ...] = ORDER,
    formats: tuple[str, ...] | None = None,
    progress: Progress | None = None,
) -> BuildResult:
    """Run the stages named in ``stages`` (in pipeline order) and collect the results.

    Parameters
    ----------
    design : Design
    command : str
        Label stored in the summary (``check``, ``fold``, ``build``, ``report``).
    out_dir : Path, optional
        Output folder (default :func:`default_out_dir`).
    at : float, optional
        Export only this fold fraction instead of ``[exports] states``.
    stages : tuple of str
        Subset of :data:`ORDER` to run.
    formats : tuple of str, optional
        Override ``[exports] formats``.
    progress : callable, optional
        See :data:`Progress`.
    """
    res = BuildResult(design=design, command=command)
    run = StageRun(res, progress)
    want = set(stages)
    res.out_dir = Path(out_dir) if out_dir else default_out_dir(design)
    writes = command != "check" and bool(want & {"exports", "drawings", "report"})
    created = prepare_out_dir(res.out_dir) if writes else []
    try:
        _stages(run, want, command, at, formats)
    except BaseException:
        if writes:  # all or nothing: remove what this run wrote, then the folders it made
            remove_outputs(res.outputs, created)
            res.outputs = []
        raise
    return res


def _stages(run: StageRun, want: set[str], command: str, at: float | None, formats: tuple[str, ...] | None) -> None:
    res = run.res
    design = res.design
    # -- pattern (input errors propagate as DesignFileError)
    with run.stage("pattern") as rec:
        cp = design.make_pattern()
        res.pattern = cp
        probs = cp.problems()
        rec["note"] = f"{cp.n_panels} panels, {cp.n_creases} creases, {cp.n_vertices} vertices"
        res.metrics.update(panels=cp.n_panels, creases=cp.n_creases, vertices=cp.n_vertices,
                           deployed_area_mm2=float(sum(p.area for p in cp.panels)))
        if probs:
            res.check("pattern valid", "fail", "; ".join(str(p) for p in probs[:5]))
            run.blocked = "the pattern is not valid"
        else:
            res.check("pattern valid", "pass", rec["note"])
    thickness = design.panel_thickness(cp)
    target = design.fold.target

    if "foldability" in want:
        _foldability(run, cp)
    if "rigidity" in want:
        _rigidity(run, cp)
    if "fold path" in want:
        _fold_path(run, cp, target)
    if "method" in want:
        method_stage(run, cp, thickness, target)
    if "clearance" in want:
        _clearance(run)
    if "method" in want:
        hinge_reach(res)
    _envelope(res)
    if "solids" in want:
        _solids(run)
    if "exports" in want:
        states = (at,) if at is not None else design.exports.states
        _exports(run, states, formats or design.exports.formats)
    if "drawings" in want and (design.exports.drawings or command == "report"):
        fn, why = stage_api("export.drawing", "write_drawings")
        if fn is None:
            run.skip("drawings", "not available", why)
        else:
            with run.stage("drawings") as rec:
                paths = fn(res.pattern, res.out_dir, design.name)
                res.outputs += [Path(p) for p in paths]
                rec["note"] = f"{len(paths)} files"
    if "report" in want and (design.exports.report or command == "report"):
        fn, why = stage_api("export.report", "write_report")
        if fn is None:
            run.skip("report", "not available", why)
        else:
            with run.stage("report") as rec:
                res.report = fn(res, Path(str(res.out_dir)) / f"{design.name}-report.html")
                res.outputs.append(res.report)
                rec["note"] = str(res.report)


def _foldability(run: StageRun, cp: Any) -> None:
    res, d = run.res, run.res.design
    fn, why = stage_api("foldability", "check_foldability")
    if fn is None:
        run.skip("foldability", "not available", why)
        res.check("flat-foldable vertices", "could not run", why)
        return
    with run.stage("foldability") as rec:
        subject, scope = kawasaki_scope(cp)
        rep = fn(subject)
        res.foldability = rep
        text = rep.summary() if hasattr(rep, "summary") else str(rep)
        rec["note"] = text.splitlines()[0] if text else ""
        failing = list(getattr(rep, "failing", []) or [])
        exempt = hub_exemption(subject, failing)
        if exempt:  # hub corners of a hub-wrap sheet: Kawasaki does not apply there
            failing = [v for v in failing if v not in exempt]
            rec["note"] += f"; hub corners exempt (Kawasaki does not apply at the hub): {', '.join(exempt)}"
        rec["note"] += scope
        if rep.ok or (exempt and not failing):
            res.check("flat-foldable vertices", "pass", rec["note"])
        else:
            verdict = "fail" if d.checks.require_flat_foldable else "warn"
            ids = ", ".join(str(v) for v in failing[:8]) + (" ..." if len(failing) > 8 else "")
            res.check("flat-foldable vertices", verdict, f"{len(failing)} vertices fail: {ids}. {rec['note']}")


def _rigidity(run: StageRun, cp: Any) -> None:
    res, d = run.res, run.res.design
    if is_wrap_sheet(cp):  # structural verdict; the deployment's compliance replaces joint slack
        with run.stage("rigidity") as rec:
            wrap_rigidity_stage(res, rec, d.checks.require_rigid)
        return
    fn, why = stage_api("kinematics", "rigid_foldability")
    if fn is None:
        run.skip("rigidity", "not available", why)
        res.check("rigid-foldable", "could not run", why)
        return
    with run.stage("rigidity") as rec:
        v = fn(cp)
        res.rigid = v
        where = ", ".join(str(w) for w in list(getattr(v, "where", ()) or ())[:8])
        rec["note"] = f"{v.kind}" + (f", {v.dof} degree(s) of freedom" if v.kind == "rigid" else "")
        detail = rec["note"] + (f"; {v.reason}" if getattr(v, "reason", "") else "") + (f" at {where}" if where else "")
        res.metrics["rigid"] = v.kind
        if v.kind == "rigid":
            res.check("rigid-foldable", "pass", detail)
        else:
            res.check("rigid-foldable", "fail" if d.checks.require_rigid else "warn", detail)
    if v.kind == "locked":
        _slack(run, cp)


def _slack(run: StageRun, cp: Any) -> None:
    """Hinge play a locked pattern needs to fold with rigid panels (least-squares fold)."""
    res, d = run.res, run.res.design
    fn, why = stage_api("kinematics", "joint_slack")
    if fn is None:
        run.skip("joint slack", "not available", why)
        return
    target = min(d.fold.target, math.radians(SLACK_MAX_DEG))
    with run.stage("joint slack") as rec:
        try:
            rep = fn(cp, target=target, n_states=SLACK_STATES)
        except ThickpanelError as exc:
            rec["status"] = "failed"
            rec["note"] = str(exc)
            return
        res.slack = rep
        worst = ", ".join(f"{h} {mm:.3g} mm" for h, mm in rep.worst(3))
        rec["note"] = (f"largest hinge play {rep.max_play_mm:.3g} mm to fold {degrees_of(target):.0f} deg with rigid "
                       f"panels (worst: {worst})")
        res.metrics["slack_max_play_mm"] = rep.max_play_mm
        res.check("joint slack (locked pattern)", "warn", rec["note"] + "; choose hinge clearances, compliant "
                  "hinges or slits accordingly")


def _fold_path(run: StageRun, cp: Any, target: float) -> None:
    res, d = run.res, run.res.design
    if run.blocked:
        run.skip("fold path", "blocked", run.blocked)
        return
    if is_wrap_sheet(cp):  # the stowed state is the construction's, not the rigid solver's
        with run.stage("fold path") as rec:
            wrap_fold_path_stage(res, rec, d.fold.states)
        return
    fn, why = stage_api("kinematics", "fold_path")
    if fn is None:
        run.skip("fold path", "not available", why)
        res.check("fold path", "could not run", why)
        return
    kw: dict[str, Any] = {"target": target, "n_states": d.fold.states}
    if run.progress is not None:  # the solver calls stop_when on every sampled state: a progress tick
        prog, total, seen = run.progress, d.fold.states, [0]

        def tick(_state: Any) -> bool:
            seen[0] += 1
            prog("fold path", min(seen[0], total - 1), total)
            return False

        kw["stop_when"] = tick
    if d.fold.driver:
        n = cp.n_creases
        k = int(d.fold.driver[1:])
        if k >= n:
            raise DesignFileError(f"[fold] driver = {d.fold.driver!r}: no such crease (C000..C{n - 1:03d})")
        kw["driver"] = k
    if d.fold.path != "assignment":  # a chosen path among several freedoms (thickpanel.path_choice)
        fn, why = stage_api("path_choice", "chosen_path")
        kw = {"target": target, "n_states": d.fold.states, "choose": d.fold.path, "keep_symmetry": "auto"}
    with run.stage("fold path") as rec:
        try:
            path = fn(cp, **kw)
        except ThickpanelError as exc:
            rec["status"] = "failed"
            rec["note"] = str(exc)
            # a locked pattern is already a verdict; its designs (membrane, slack hinges) still get a
            # plan and flat parts unless the design asks for rigid folding
            locked = res.rigid is not None and res.rigid.kind == "locked" and not d.checks.require_rigid
            res.check("fold path", "warn" if locked else "fail", str(exc))
            return
        res.path = path
        reach = max(float(np.abs(s.angles).max()) if len(s.angles) else 0.0 for s in path.states)
        err = max(float(s.closure_error) for s in path.states)
        res.metrics.update(fold_states=len(path.states), reached_fold_deg=degrees_of(reach),
                           closure_error=err, stop_reason=path.stop_reason)
        rec["note"] = (f"{len(path.states)} states, reached {degrees_of(reach):.1f} of {d.fold.target_deg:g} deg, "
                       f"stop: {path.stop_reason}")
        if path.meta.get("choice", "assignment") != "assignment":
            hit = path.meta.get("first_contact")
            rec["note"] += f", path {path.meta['choice']} ({path.meta.get('subspace')})" + (
                f", zero-thickness panels {hit} would cross next" if hit else "")
        short = reach < target * (1 - 1e-3)
        res.check("fold reaches target", "warn" if short else "pass", rec["note"])


def _clearance(run: StageRun) -> None:
    res, d = run.res, run.res.design
    if run.blocked or res.plan is None or res.path is None:
        why = run.blocked or ("no fold path" if res.path is None else "no thickness plan")
        run.skip("clearance", "blocked", why)
        res.check("clearance over the fold", "not proven", f"the sweep did not run: {why}")
        return
    fn, why = stage_api("clearance", "clearance")
    if fn is None:
        run.skip("clearance", "not available", why)
        res.check("clearance over the fold", "could not run", why)
        return
    with run.stage("clearance") as rec:
        # measure pairs out to a few slab thicknesses so the report quotes real distances, not only
        # the bound "at least the margin" (the sweep's own default margin is one thickness)
        margin = max(5.0 * max(sl.thickness for sl in res.plan.slabs), 2.0 * d.checks.min_clearance)
        extra = hardware_for(res)
        if is_wrap_sheet(res.pattern):  # exact end states only (deployed, stowed); see build_wrap
            rep = fn(res.plan, clearance_path(res.path), margin=margin, extra_pieces=extra or None, refine=False)
        else:
            rep = fn(res.plan, res.path, margin=margin, extra_pieces=extra or None)
        first = getattr(rep, "first_contact", None)
        if d.fold.stop_at_contact and first:
            rep = _stop_at_contact(res, fn, rep, float(first[0]))
        res.clearance = rep
        fig = clearance_figures(rep)
        res.metrics.update(fig)
        rec["note"] = "minimum " + fig["min_clearance_text"]
        first = getattr(rep, "first_contact", None)
        if first:
            res.metrics["first_contact"] = {"t": float(first[0]), "pair": list(first[1])}
        mc, need = float(rep.min_clearance), d.checks.min_clearance
        what = "slabs and hinge hardware" if extra else "slabs"
        detail = rec["note"] + f" ({what}; required >= {need:g} mm)"
        if mc >= need:
            res.check("clearance over the fold", "pass", detail)
        elif fig["min_clearance_lower_bound"]:  # a bound below the requirement proves nothing
            res.check("clearance over the fold", "not proven", detail)
        else:
            res.check("clearance over the fold", "fail", detail)


def _stop_at_contact(res: BuildResult, sweep: Callable[..., Any], rep: Any, tc: float) -> Any:
    """Cut the fold path before the first contact at ``tc`` and sweep the shorter path again."""
    kept = tuple(s for s in res.path.states if s.t < tc)
    if len(kept) < 2:  # the stowed state is then the flat one: every figure says so, not "target"
        res.path = res.path.with_states(res.path.states[:1], stop_reason="contact")
        res.metrics.update(fold_states=1, reached_fold_deg=0.0, stop_reason="contact")
        for rec in res.stages:
            if rec.get("stage") == "fold path":
                rec["note"] = f"1 state, reached 0.0 deg: first contact at t = {tc:.3f}, before any state off flat"
        for chk in res.checks:
            if chk.get("check") == "fold reaches target":
                chk.update(verdict="warn", detail=f"reached 0.0 of {res.design.fold.target_deg:g} deg: stopped at the "
                           "first contact")  # fmt: skip
        res.check("fold stops at first contact", "fail", f"first contact at t = {tc:.3f}, before the first "
                  "sampled state off flat; the fold path ends at the flat state (0.0 deg)")
        return sweep(res.plan, res.path, margin=rep.margin)
    res.path = res.path.with_states(kept, stop_reason="contact")  # keeps the exact-state hook
    reach = float(np.abs(kept[-1].angles).max())
    res.metrics.update(fold_states=len(kept), reached_fold_deg=degrees_of(reach), stop_reason="contact")
    res.check("fold stops at first contact", "info", f"first contact at t = {tc:.3f}; the fold path ends at "
              f"t = {kept[-1].t:.3f} ({degrees_of(reach):.1f} deg)")
    return sweep(res.plan, res.path, margin=rep.margin, extra_pieces=hardware_for(res) or None)


def _envelope(res: BuildResult) -> None:
    """Deployed (t = 0) and stowed (last state of the fold) figures, once, for every output."""
    if res.plan is not None:
        res.hardware = hardware_for(res)
    res.metrics["deployed_diameter_mm"] = diameter(res.pattern.vertices)
    ts = res.stowed_t()
    if ts is None:
        return
    got = res.poses_at(ts)
    res.metrics.update(array_figures(res.state_figures(0.0), res.state_figures(ts), res.metrics["deployed_area_mm2"]))
    res.metrics["envelope_from"] = got[1] if got else None
    if is_wrap_sheet(res.pattern):  # deployed diameter about the hub axis, ratio, packaging, volume bound
        wrap_metrics_into(res)


def _solids(run: StageRun) -> None:
    res, d = run.res, run.res.design
    if run.blocked or res.plan is None:
        run.skip("solids", "blocked", run.blocked or "no thickness plan")
        return
    fn, why = stage_api("solids", "build_parts")
    if fn is None:
        run.skip("solids", "not available", why)
        return
    opts = resolved_hinge_options(res)  # play_mm = "slack": each hinge's joint-slack play
    styles_fn, _ = stage_api("hinges", "available_hinge_styles")
    if styles_fn is not None:
        styles = list(styles_fn())
        if d.hinge.style not in styles:
            raise DesignFileError(f"[hinge] style = {d.hinge.style!r} is not a hinge style"
                                  f"{suggest(d.hinge.style, styles)} (available: {', '.join(styles)})")
        get_style, _ = stage_api("hinges", "get_hinge_style")
        if get_style is not None:
            try:
                get_style(d.hinge.style, **opts)
            except TypeError as exc:
                raise DesignFileError(f"[hinge] options for style {d.hinge.style!r}: {exc}") from exc
            except HingeError as exc:
                raise DesignFileError(f"[hinge] {exc}") from exc
    with run.stage("solids") as rec:
        try:
            parts = fn(res.plan, hinge_style=d.hinge.style, hinge_options=opts or None,
                       material=d.panels.material or None)
        except HingeError as exc:
            raise DesignFileError(f"[hinge] style = {d.hinge.style!r}: {exc}") from exc
        except ThickpanelError as exc:  # the kernel could not make a valid part: a failed check
            rec["status"] = "failed"
            rec["note"] = str(exc)
            res.check("solids valid", "fail", str(exc))
            run.blocked = "no valid solids"
            return
        res.parts = parts
        _given_density(parts, d)
        plist = list(parts.parts)
        rec["note"] = f"{len(plist)} parts"
        res.metrics["parts"] = len(plist)
        vols = [float(getattr(p, "volume", 0.0) or 0.0) for p in plist]
        res.metrics["total_volume_mm3"] = float(sum(vols))
        masses: list[Any] = [_mass(p) for p in plist]
        if masses and all(m is not None for m in masses):
            res.metrics["total_mass_g"] = round(float(np.sum(np.asarray(masses, dtype=float))), 4)
        res.check("solids valid", "pass", rec["note"])


def _mass(part: Any) -> float | None:
    """Part mass in g, or None when its material has no density (or parts carry no mass)."""
    try:
        m = getattr(part, "mass", None)
    except ThickpanelError:
        return None
    return None if m is None else float(m)


def _given_density(parts: Any, d: Design) -> None:
    """Put the design's ``[panels] density`` (kg/m^3) and its source on every panel part."""
    rho = getattr(d.panels, "density", None)
    if rho is None:
        return
    for p in parts.parts:
        if p.kind == "panel":
            p.attrs["density_kg_m3"] = float(rho)
            p.attrs["density_source"] = d.panels.density_source or "design file [panels] density"


def _exports(run: StageRun, states: tuple[float, ...], formats: tuple[str, ...]) -> None:
    res = run.res
    if res.parts is None:
        run.skip("exports", "blocked", run.blocked or "no solids")
        return
    fn, why = stage_api("export", "export_parts")
    if fn is None:
        run.skip("exports", "not available", why)
        return
    avail, _ = stage_api("export", "available_formats")
    if avail is not None:
        names = list(avail())
        for f in formats:
            if f not in names:
                raise DesignFileError(f"[exports] formats: {f!r} is not an export format{suggest(f, names)} "
                                      f"(available: {', '.join(names)})")
    note = ""
    if res.path is None and any(t > 0 for t in states):
        states, note = (0.0,), "; no fold path: deployed (flat) state only"
    ex = res.design.exports
    shop = {"prefix": res.design.name if ex.prefix else "", "plate_mm": ex.plate_mm}
    with run.stage("exports") as rec:
        # state-independent files (per-part STEP/STL/DXF, 3MF plates, BOM) once, in the root
        paths = fn(res.parts, res.out_dir, list(formats), state=None, clearance=res.clearance,
                   scope="parts", **shop)
        res.outputs += [Path(p) for p in paths]
        n = len(paths)
        for i, t in enumerate(states):
            if run.progress:
                run.progress("exports", i, len(states))
            last = res.stowed_t()
            state = res.path.at(min(float(t), last if last is not None else 1.0)) if res.path is not None else None
            sub = res.out_dir if len(states) == 1 else res.out_dir / f"t{t:.2f}"  # type: ignore[operator]
            paths = fn(res.parts, sub, list(formats), state=state, clearance=res.clearance,
                       path=res.path, scope="state", figures=export_figures(res, float(t)), **shop)
            res.outputs += [Path(p) for p in paths]
            n += len(paths)
        rec["note"] = f"{n} files in {res.out_dir}{note}"


def run_check(design: Design, *, progress: Progress | None = None) -> dict[str, Any]:
    """Validation, foldability, rigidity, fold path, method applicability, clearance and the hinge
    and solid checks (parts are built in memory so a hinge that does not fit fails here); no files."""
    return run_pipeline(design, command="check", progress=progress,
                        stages=("pattern", "foldability", "rigidity", "fold path", "method", "clearance",
                                "solids")).summary()


def run_fold(design: Design, t: float, out_dir: Path | None = None, *, progress: Progress | None = None,
             formats: tuple[str, ...] | None = None) -> dict[str, Any]:
    """Export the array at fold fraction ``t`` (0 deployed .. 1 stowed)."""
    if not (isinstance(t, int | float) and 0.0 <= t <= 1.0):
        raise DesignFileError(f"--at {t!r} is outside the fold fraction range 0..1")
    return run_pipeline(design, command="fold", out_dir=out_dir, at=float(t), formats=formats, progress=progress,
                        stages=("pattern", "fold path", "method", "solids", "exports")).summary()


def run_build(design: Design, out_dir: Path | None = None, *, progress: Progress | None = None,
              formats: tuple[str, ...] | None = None) -> dict[str, Any]:
    """Every stage: checks, solids, exports at ``[exports] states``, drawings and the report."""
    return run_pipeline(design, command="build", out_dir=out_dir, formats=formats, progress=progress).summary()


def run_report(design: Design, out_dir: Path | None = None, *, progress: Progress | None = None) -> dict[str, Any]:
    """All checks and the solids (for the bill of materials), then only the HTML report."""
    return run_pipeline(design, command="report", out_dir=out_dir, progress=progress,
                        stages=("pattern", "foldability", "rigidity", "fold path", "method", "clearance",
                                "solids", "report")).summary()
