"""Study files: a base design plus axes over design keys -> a deterministic list of variants.

A study file (TOML, mm and degrees like the design file)::

    base = "sun-shade-disc.toml"        # relative to the study file
    output = "studies/disc"             # result folder, relative to the study file

    [[axis]]                            # explicit values
    key = "layout.arms"
    values = [6, 8]

    [[axis]]                            # a range with a step (end included when reached)
    key = "panels.thickness"
    start = 1.0
    stop = 3.0
    step = 0.5

    [[axis]]                            # sampled jointly with the other sampled axes
    key = "fold.target_deg"
    low = 60.0
    high = 100.0

    [sample]                            # how sampled axes are drawn (scipy.stats.qmc)
    n = 20
    method = "lhs"                      # or "random"
    seed = 1

    [compute]
    what = "check"                      # metrics from run_check; "build" exports the best k
    best = 3                            # with what = "build"
    by = "packing_ratio"
    minimize = false

Explicit and range axes form a grid; the sampled axes add ``n`` joint samples crossed with it.
"""

from __future__ import annotations

import hashlib
import inspect
import json
import math
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from ..design import loads_design, suggest
from ..design_schema import BY_PATH, SECTIONS
from ..errors import DesignFileError

__all__ = ["StudyError", "Axis", "Study", "Variant", "load_study", "variants", "to_toml", "toml_value", "variant_id"]

OPEN_SECTIONS = ("layout", "hinge")  # keys passed on to the layout generator / hinge style


class StudyError(DesignFileError):
    """A study file that cannot run: bad axis, empty axis, bad step, unreachable scheduler."""


@dataclass(frozen=True)
class Axis:
    """One axis over a design key (``section.name``): explicit ``values`` or sampled in [low, high]."""

    key: str
    values: tuple[Any, ...] = ()
    low: float | None = None
    high: float | None = None
    integer: bool = False

    @property
    def sampled(self) -> bool:
        return self.low is not None


@dataclass(frozen=True)
class Study:
    """A validated study file. ``base_raw`` is the base design's TOML table."""

    source: Path | None
    base: Path
    base_raw: dict[str, Any]
    axes: tuple[Axis, ...]
    n_samples: int = 0
    sample_method: str = "lhs"
    seed: int = 0
    what: str = "check"
    best: int = 0
    by: str = "packing_ratio"
    minimize: bool = False
    output: Path = field(default_factory=lambda: Path("studies/study"))
    name: str = "study"


@dataclass(frozen=True)
class Variant:
    """One resolved design: stable ``id``, axis values and the design TOML text."""

    id: str
    values: dict[str, Any]
    toml: str


def _fail(where: str, msg: str) -> StudyError:
    return StudyError(f"{where}{msg}")


def _known_keys(base_raw: dict[str, Any]) -> list[str]:
    keys = [f"{s}.{n}" if s else n for (s, n) in BY_PATH if "." not in s]
    fam = base_raw.get("layout", {}).get("family")
    if fam:
        try:
            from ..layouts import get_layout

            ps = inspect.signature(get_layout(str(fam))).parameters
            keys += [f"layout.{n}" for n, p in ps.items() if n not in ("tol", "name")
                     and p.kind in (p.POSITIONAL_OR_KEYWORD, p.KEYWORD_ONLY)]
        except Exception:  # noqa: BLE001 - unknown family: the design loader names it
            pass
    return keys


def _check_key(key: Any, known: list[str], where: str, i: int) -> str:
    if not isinstance(key, str) or not key:
        raise _fail(where, f"[[axis]] #{i + 1} key = {key!r} must be a design key like \"panels.thickness\"")
    sect = key.split(".", 1)[0] if "." in key else ""
    if key in known or (sect == "hinge" and key != "hinge."):
        return key
    if sect and sect not in SECTIONS:
        raise _fail(where, f"[[axis]] #{i + 1} key = {key!r}: unknown section {sect!r}{suggest(sect, SECTIONS)} "
                    f"(sections: {', '.join(SECTIONS)})")
    raise _fail(where, f"[[axis]] #{i + 1} key = {key!r} is not a design key{suggest(key, known)} "
                f"(keys: {', '.join(sorted(known))})")


def _range(t: dict[str, Any], where: str) -> tuple[Any, ...]:
    start: Any = t.get("start")
    stop: Any = t.get("stop")
    step: Any = t.get("step")
    for label, v in (("start", start), ("stop", stop), ("step", step)):
        if isinstance(v, bool) or not isinstance(v, int | float) or not math.isfinite(v):
            raise _fail(where, f"{label} = {v!r} must be a finite number")
    if step == 0:
        raise _fail(where, f"step = 0 never reaches stop = {stop:g} from start = {start:g}")
    if (stop - start) * step < 0:
        raise _fail(where, f"step = {step:g} has the wrong sign: it goes away from stop = {stop:g} "
                    f"(start = {start:g}); use step {'>' if stop > start else '<'} 0")
    n = int(math.floor((stop - start) / step + 1e-9)) + 1
    if n > 100000:
        raise _fail(where, f"{n} values from start = {start:g} to stop = {stop:g} by step = {step:g}; at most 100000")
    ints = all(isinstance(v, int) for v in (start, stop, step))
    return tuple(int(start + k * step) if ints else round(start + k * step, 12) for k in range(n))


def load_study(path: str | Path) -> Study:
    """Read and validate a study file (see the module docstring); the base design is checked too."""
    p = Path(path)
    try:
        raw = tomllib.loads(p.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise StudyError(f"study file {str(p)!r} not found") from None
    except tomllib.TOMLDecodeError as exc:
        raise StudyError(f"{p}: TOML syntax error: {exc}") from None
    return study_from_dict(raw, source=p)


def study_from_dict(raw: dict[str, Any], *, source: Path | None = None) -> Study:
    """Validate a study table (``source`` resolves relative paths)."""
    where = f"{source}: " if source else ""
    here = source.parent if source else Path.cwd()
    allowed = ("base", "output", "name", "axis", "sample", "compute")
    for k in raw:
        if k not in allowed:
            raise _fail(where, f"unknown key {k!r}{suggest(k, allowed)} (keys: {', '.join(allowed)})")
    if not isinstance(raw.get("base"), str):
        raise _fail(where, "base = \"DESIGN.toml\" (the base design file) is missing")
    base = (here / raw["base"]).resolve()
    try:
        base_text = base.read_text(encoding="utf-8")
    except OSError:
        raise _fail(where, f"base = {raw['base']!r}: design file not found (looked for {base})") from None
    base_raw = tomllib.loads(base_text)
    loads_design(base_text, source=base)  # the base itself must be a valid design
    known = _known_keys(base_raw)
    axes_raw = raw.get("axis", [])
    if not isinstance(axes_raw, list) or not axes_raw:
        raise _fail(where, "no [[axis]] tables: a study needs at least one axis (key = \"section.name\")")
    axes, seen = [], set()
    for i, t in enumerate(axes_raw):
        key = _check_key(t.get("key"), known, where, i)
        if key in seen:
            raise _fail(where, f"[[axis]] #{i + 1} key = {key!r} appears twice")
        seen.add(key)
        w = f"{where}[[axis]] #{i + 1} ({key}) "
        kinds = [n for n in ("values", "start", "low") if n in t]
        if len(kinds) != 1:
            raise StudyError(f"{w}needs exactly one of values = [...], start/stop/step or low/high")
        if "values" in t:
            vals = t["values"]
            if not isinstance(vals, list) or not vals:
                raise StudyError(f"{w}values is empty: give at least one value")
            axes.append(Axis(key, tuple(vals)))
        elif "start" in t:
            axes.append(Axis(key, _range(t, w)))
        else:
            lo, hi = t.get("low"), t.get("high")
            if not all(isinstance(v, int | float) and not isinstance(v, bool) for v in (lo, hi)) or not lo < hi:
                raise StudyError(f"{w}low = {lo!r}, high = {hi!r} must be numbers with low < high")
            axes.append(Axis(key, (), float(lo), float(hi), bool(t.get("integer", False))))
    smp = raw.get("sample", {})
    n = int(smp.get("n", 0))
    method = smp.get("method", "lhs")
    if method not in ("lhs", "random"):
        raise _fail(where, f"[sample] method = {method!r} is not allowed; one of 'lhs', 'random'"
                    f"{suggest(method, ['lhs', 'random'])}")
    if any(a.sampled for a in axes) and n < 1:
        raise _fail(where, "[sample] n must be at least 1 when an axis gives low/high")
    comp = raw.get("compute", {})
    what = comp.get("what", "check")
    if what not in ("check", "build"):
        raise _fail(where, f"[compute] what = {what!r} is not allowed; one of 'check', 'build'"
                    f"{suggest(what, ['check', 'build'])}")
    out = (here / raw.get("output", f"studies/{source.stem if source else 'study'}")).resolve()
    return Study(source, base, base_raw, tuple(axes), n, method, int(smp.get("seed", 0)), what,
                 int(comp.get("best", 3 if what == "build" else 0)), str(comp.get("by", "packing_ratio")),
                 bool(comp.get("minimize", False)), out, str(raw.get("name", source.stem if source else "study")))


def _samples(study: Study) -> list[dict[str, Any]]:
    axes = [a for a in study.axes if a.sampled]
    if not axes:
        return [{}]
    from scipy.stats import qmc

    if study.sample_method == "lhs":
        u = qmc.LatinHypercube(d=len(axes), seed=study.seed).random(study.n_samples)
    else:
        u = np.random.default_rng(study.seed).random((study.n_samples, len(axes)))
    out = []
    for row in u:
        d: dict[str, Any] = {}
        for a, x in zip(axes, row, strict=True):
            v = a.low + float(x) * (a.high - a.low)  # type: ignore[operator]
            d[a.key] = int(round(v)) if a.integer else round(v, 9)
        out.append(d)
    return out


def _set(raw: dict[str, Any], key: str, value: Any) -> None:
    parts = key.split(".")
    t = raw
    for p in parts[:-1]:
        t = t.setdefault(p, {})
    t[parts[-1]] = value


def variant_id(raw: dict[str, Any]) -> str:
    """Stable id of a resolved design table: 12 hex digits of its SHA-256 (keys sorted, name left out)."""
    body = {k: v for k, v in raw.items() if k not in ("name", "description")}
    return hashlib.sha256(json.dumps(body, sort_keys=True, default=str).encode()).hexdigest()[:12]


def variants(study: Study) -> list[Variant]:
    """Every variant in a deterministic order (grid axes in file order, then samples)."""
    import copy
    import itertools

    grid = [a for a in study.axes if not a.sampled]
    out, seen = [], set()
    for combo in itertools.product(*[a.values for a in grid]):
        for smp in _samples(study):
            vals = {a.key: v for a, v in zip(grid, combo, strict=True)} | smp
            raw = copy.deepcopy(study.base_raw)
            for k, v in vals.items():
                _set(raw, k, v)
            vid = variant_id(raw)
            if vid in seen:
                continue
            seen.add(vid)
            raw["name"] = f"{study.base_raw.get('name', study.base.stem)}-{vid}"
            out.append(Variant(vid, vals, to_toml(raw)))
    return out


# --------------------------------------------------------------------------- a small TOML writer
def toml_value(v: Any) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if not math.isfinite(v):
            return ("-" if v < 0 else "") + ("inf" if math.isinf(v) else "nan")
        return repr(v)
    if isinstance(v, str):
        return json.dumps(v)
    if isinstance(v, list | tuple):
        return "[" + ", ".join(toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{ " + ", ".join(f"{json.dumps(str(k))} = {toml_value(x)}" for k, x in v.items()) + " }"
    raise TypeError(f"cannot write {v!r} to TOML")


def to_toml(raw: dict[str, Any]) -> str:
    """TOML text of a design table (scalars, lists, inline sub-tables, arrays of tables one level down)."""
    lines = [f"{json.dumps(k)} = {toml_value(v)}" for k, v in raw.items() if not isinstance(v, dict)]
    for sect, t in raw.items():
        if not isinstance(t, dict):
            continue
        lines.append(f"\n[{sect}]")
        arrays = []
        for k, v in t.items():
            if isinstance(v, list) and v and all(isinstance(x, dict) for x in v):
                arrays.append((k, v))
            else:
                lines.append(f"{json.dumps(k)} = {toml_value(v)}")
        for k, items in arrays:
            for item in items:
                lines.append(f"\n[[{sect}.{k}]]")
                lines += [f"{json.dumps(kk)} = {toml_value(vv)}" for kk, vv in item.items()]
    return "\n".join(lines) + "\n"
