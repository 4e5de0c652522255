"""The value a pipeline run produces and the stage bookkeeping shared by :mod:`thickpanel.build`.

``BuildResult`` collects what every stage made; ``StageRun`` records stage status, timing and
progress; ``stage_api`` resolves a stage's module through the agreed public names (a missing module is
"not available", never a stand-in).
"""

from __future__ import annotations

import importlib
import logging
import math
import time
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from .design import Design
from .errors import DesignFileError, ExportError, PatternError, ThickpanelError

__all__ = ["BuildResult", "Progress", "default_out_dir", "ORDER", "VERDICTS", "overall_verdict", "api"]

log = logging.getLogger("thickpanel")

Progress = Callable[[str, int, int], None]
"""Progress callback ``(label, done, total)``; called at the start (0) and end of long steps."""

SLACK_MAX_DEG = 179.0  # joint_slack needs a target below 180 deg
SLACK_STATES = 6  # few fractions: the slack figure is a sizing hint, not a path

VERDICTS = ("pass", "fail", "not proven", "could not run", "does not apply", "warn", "info")
"""Check verdicts. ``not proven``: the check ran but cannot show the requirement holds (a stage
it needs was blocked, or a bound does not reach the requirement); ``could not run``: the module it
needs is not installed; ``does not apply``: the check has no meaning for this design (a thickness
method that does not fit the pattern); ``warn``: holds with a caution; ``info``: a fact, no test."""


def overall_verdict(checks: list[dict[str, Any]]) -> str:
    """``FAIL`` when a check fails; else ``NOT PROVEN`` when a check is not proven or could not
    run; else ``PASS``. A summary is never PASS beside a failing or unproven row."""
    vs = {c["verdict"] for c in checks}
    if "fail" in vs:
        return "FAIL"
    if vs & {"not proven", "could not run"}:
        return "NOT PROVEN"
    return "PASS"


ORDER = ("pattern", "foldability", "rigidity", "fold path", "method", "clearance", "solids",
         "exports", "drawings", "report")


@dataclass
class BuildResult:
    """Everything a pipeline run produced; ``None`` for stages not run or not available."""

    design: Design
    command: str
    pattern: Any = None
    foldability: Any = None
    rigid: Any = None
    path: Any = None
    advice: list[Any] = field(default_factory=list)
    plan: Any = None
    clearance: Any = None
    parts: Any = None
    slack: Any = None
    stages: list[dict[str, Any]] = field(default_factory=list)
    checks: list[dict[str, Any]] = field(default_factory=list)
    metrics: dict[str, Any] = field(default_factory=dict)
    outputs: list[Path] = field(default_factory=list)
    report: Path | None = None
    out_dir: Path | None = None
    hardware: list[Any] = field(default_factory=list)
    hinge_rows: list[dict[str, Any]] = field(default_factory=list)
    _figures: dict[float, dict[str, Any]] = field(default_factory=dict, repr=False)

    def poses_at(self, t: float) -> tuple[np.ndarray, str] | None:
        """``((P, 4, 4) slab poses, source)`` at fold fraction ``t``, or None without any fold.

        The source is ``fold path`` (rigid kinematics) or, for a locked pattern, ``least-squares
        fold`` (the joint-slack solution, panels rigid, hinges with play).
        """
        if self.path is not None and self.path.states:
            last = float(self.path.states[-1].t)
            st = self.path.at(min(float(t), last if math.isfinite(last) else 1.0))
            return (self.plan.poses(st) if self.plan is not None else np.asarray(st.poses)), "fold path"
        if self.slack is not None and len(self.slack.fractions):
            k = int(np.argmin(np.abs(np.asarray(self.slack.fractions) - t)))
            return np.asarray(self.slack.poses[k]), "least-squares fold"
        return None

    def stowed_t(self) -> float | None:
        """Fold fraction of the stowed state: the last state of the fold path (or of a locked
        pattern's least-squares fold); None without either."""
        if self.path is not None and self.path.states:
            last = float(self.path.states[-1].t)
            return last if math.isfinite(last) else 1.0
        if self.slack is not None and len(self.slack.fractions):
            return float(np.asarray(self.slack.fractions)[-1])
        return None

    def state_figures(self, t: float) -> dict[str, Any] | None:
        """Figures of the fold state at ``t`` (:func:`thickpanel.figures.state_figures`), computed
        once per fraction and read by the summary, ``metrics.json`` and the report."""
        key = round(float(t), 9)
        if key in self._figures:
            return self._figures[key]
        got = self.poses_at(t)
        if got is None:
            return None
        from .figures import array_points, hub_axis, state_figures

        poses = got[0]
        pts = array_points(self.pattern, poses, plan=self.plan, hardware=self.hardware)
        out = state_figures(pts, t=min(float(t), self.stowed_t() or 1.0), fold_deg=self._fold_deg(t),
                            poses=poses, hub=hub_axis(self.pattern))
        self._figures[key] = out
        return out

    def _fold_deg(self, t: float) -> float:
        if self.path is not None and self.path.states:
            last = self.stowed_t() or 1.0
            st = self.path.at(min(float(t), last))
            return float(np.degrees(np.abs(np.asarray(st.angles)).max())) if len(st.angles) else 0.0
        if self.slack is not None and len(self.slack.fractions):
            k = int(np.argmin(np.abs(np.asarray(self.slack.fractions) - t)))
            row = np.abs(np.asarray(self.slack.fold_deg)[k])
            return float(row.max()) if row.size else 0.0
        return math.nan

    @property
    def ok(self) -> bool:
        """True when no check failed."""
        return not any(c["verdict"] == "fail" for c in self.checks)

    @property
    def verdict(self) -> str:
        """Overall verdict (:func:`overall_verdict` of the checks)."""
        return overall_verdict(self.checks)

    def check(self, name: str, verdict: str, detail: str) -> None:
        """Record a check; ``verdict`` is one of :data:`VERDICTS`."""
        if verdict not in VERDICTS:
            raise ValueError(f"check {name!r}: verdict {verdict!r} is not one of {', '.join(VERDICTS)}")
        self.checks.append({"check": name, "verdict": verdict, "detail": detail})

    def summary(self) -> dict[str, Any]:
        """JSON-ready summary (paths as strings)."""
        return {
            "design": self.design.name,
            "source": str(self.design.source) if self.design.source else None,
            "command": self.command,
            "ok": self.ok,
            "verdict": self.verdict,
            "stages": self.stages,
            "checks": self.checks,
            "metrics": _jsonable(self.metrics),
            "outputs": [str(p) for p in self.outputs],
            "report": str(self.report) if self.report else None,
            "out_dir": str(self.out_dir) if self.out_dir else None,
        }


def _jsonable(x: Any) -> Any:
    if isinstance(x, dict):
        return {str(k): _jsonable(v) for k, v in x.items()}
    if isinstance(x, list | tuple):
        return [_jsonable(v) for v in x]
    if isinstance(x, np.generic):
        return _jsonable(x.item())
    if isinstance(x, np.ndarray):
        return _jsonable(x.tolist())
    if isinstance(x, float) and not math.isfinite(x):
        return None
    if isinstance(x, Path):
        return str(x)
    return x


def api(module: str, name: str) -> tuple[Any, str]:
    """``(callable, "")`` or ``(None, reason)`` when ``thickpanel.<module>.<name>`` is missing
    (``hinges...`` modules are looked up as they are named)."""
    full = module if module.startswith("hinges") else f"thickpanel.{module}"
    try:
        mod = importlib.import_module(full)
    except ModuleNotFoundError as exc:
        if exc.name and (full == exc.name or full.startswith(exc.name + ".")):
            return None, f"module {full} is not available in this installation"
        return None, f"module {full} cannot be imported ({exc})"
    except ImportError as exc:
        return None, f"module {full} cannot be imported ({exc})"
    fn = getattr(mod, name, None)
    if fn is None:
        return None, f"{full}.{name} is not available in this installation"
    return fn, ""


stage_api = api  # the name build.py has always used


def default_out_dir(design: Design) -> Path:
    """``[exports] folder`` when given, else ``exports/<name>`` in the current directory."""
    return design.exports.folder or (Path.cwd() / "exports" / design.name)


class StageRun:
    def __init__(self, res: BuildResult, progress: Progress | None):
        self.res = res
        self.progress = progress
        self.blocked: str | None = None

    @contextmanager
    def stage(self, name: str) -> Iterator[dict[str, Any]]:
        rec: dict[str, Any] = {"stage": name, "status": "ok", "note": ""}
        self.res.stages.append(rec)
        if self.progress:
            self.progress(name, 0, 1)
        t0 = time.perf_counter()
        try:
            yield rec
        except (DesignFileError, ExportError, PatternError):
            raise  # bad input: exit code 2
        except ThickpanelError as exc:  # the stage refused the design: a failed check, later stages blocked
            rec["status"] = "failed"
            rec["note"] = str(exc)
            self.res.check(name, "fail", f"{type(exc).__name__}: {exc}")
            if name in ("pattern", "method", "solids"):  # the stages later ones build on
                self.blocked = f"{name} failed"
        finally:
            rec["seconds"] = round(time.perf_counter() - t0, 3)
            if self.progress:
                self.progress(name, 1, 1)

    def skip(self, name: str, status: str, note: str) -> None:
        self.res.stages.append({"stage": name, "status": status, "note": note, "seconds": 0.0})


def degrees_of(x: float) -> float:
    return float(np.degrees(x))
