"""Design files: a TOML file checked into a user's repository -> a frozen, validated :class:`Design`.

Millimetres and degrees throughout the file. Every key is declared once in :data:`SCHEMA` (section,
name, type, unit, default, allowed range, meaning); the loader, the error messages and the reference
page ``docs/design-file.md`` (``python -m thickpanel.design_doc --write docs/design-file.md``) all read that
table, so they cannot drift apart.

Three sections are open-ended and validated against the callable they feed: the layout parameters
(checked against the registered layout generator's signature when the file is loaded), the
``[method.options]`` table and the hinge style's options (checked when the build asks the thickness
method or the hinge style for them).

Examples
--------
>>> d = loads_design('[layout]\\nfamily = "miura"\\n[panels]\\nthickness = 3.0\\n', check_layout=False)
>>> d.panels.thickness, d.fold.target_deg, d.method.name
(3.0, 170.0, 'auto')
"""

from __future__ import annotations

import difflib
import inspect
import math
import tomllib
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from types import MappingProxyType
from typing import TYPE_CHECKING, Any

from .errors import DesignFileError, ThickpanelError
from .limits import MAX_NESTING, name_problem, nesting_depth
from .option_checks import option_problems

if TYPE_CHECKING:
    from .pattern import CreasePattern

__all__ = [
    "Key",
    "SCHEMA",
    "SECTIONS",
    "LayoutSpec",
    "PanelOverride",
    "PanelsSpec",
    "MethodSpec",
    "HingeSpec",
    "FoldSpec",
    "ExportSpec",
    "CheckSpec",
    "Design",
    "load_design",
    "loads_design",
    "suggest",
]

from .design_schema import BY_PATH, SCHEMA, SECTIONS, Key


def _key(section: str, name: str) -> Key:
    return BY_PATH[(section, name)]


def suggest(word: str, options: Any) -> str:
    """``"; did you mean 'x'?"`` for the nearest option, or ``""`` when none is close."""
    close = difflib.get_close_matches(str(word), [str(o) for o in options], n=1, cutoff=0.6)
    return f"; did you mean {close[0]!r}?" if close else ""


# --------------------------------------------------------------------------- value types
@dataclass(frozen=True)
class LayoutSpec:
    """``[layout]``: a generated layout (``family`` + ``params``) or an imported ``pattern`` file."""

    family: str | None
    pattern: Path | None
    params: Mapping[str, Any] = field(default_factory=lambda: MappingProxyType({}))
    dxf_layers: Mapping[str, str] | None = None
    pattern_text: str = ""


@dataclass(frozen=True)
class PanelOverride:
    """One ``[[panels.override]]`` entry: panels selected by id or by radial band."""

    panels: tuple[str, ...]
    radius: tuple[float, float] | None
    thickness: float | None
    material: str | None


@dataclass(frozen=True)
class PanelsSpec:
    """``[panels]``: thickness in mm, material key and per-region overrides."""

    thickness: float
    material: str
    overrides: tuple[PanelOverride, ...] = ()
    density: float | None = None
    density_source: str = ""


@dataclass(frozen=True)
class MethodSpec:
    """``[method]``: thickness method name (or ``auto``) and its extra options."""

    name: str
    options: Mapping[str, Any]


@dataclass(frozen=True)
class HingeSpec:
    """``[hinge]``: hinge style and its options (mm, degrees)."""

    style: str
    options: Mapping[str, Any]


@dataclass(frozen=True)
class FoldSpec:
    """``[fold]``: target fold magnitude in degrees and the number of sampled states."""

    target_deg: float
    states: int
    driver: str
    stop_at_contact: bool
    path: str = "assignment"

    @property
    def target(self) -> float:
        """Target fold magnitude in radians."""
        return math.radians(self.target_deg)


@dataclass(frozen=True)
class ExportSpec:
    """``[exports]``: formats, fold fractions, folder (absolute or None), report and drawings."""

    formats: tuple[str, ...]
    states: tuple[float, ...]
    folder: Path | None
    report: bool
    drawings: bool
    plate_mm: tuple[float, float] = (250.0, 250.0)
    prefix: bool = True


@dataclass(frozen=True)
class CheckSpec:
    """``[checks]``: pass/fail thresholds of the design."""

    min_clearance: float
    require_rigid: bool
    require_flat_foldable: bool


@dataclass(frozen=True)
class Design:
    """A validated design file. Lengths mm, angles degrees (``FoldSpec.target`` gives radians)."""

    name: str
    description: str
    source: Path | None
    layout: LayoutSpec
    panels: PanelsSpec
    method: MethodSpec
    hinge: HingeSpec
    fold: FoldSpec
    exports: ExportSpec
    checks: CheckSpec

    def make_pattern(self) -> CreasePattern:
        """Generate or import the crease pattern.

        Raises
        ------
        DesignFileError
            With the ``[layout]`` key path when the generator or the importer refuses the input.
        """
        lay = self.layout
        try:
            if lay.pattern is not None:
                import importlib

                io = importlib.import_module(f"{__package__}.io")
                if not hasattr(io, "read_pattern"):
                    raise DesignFileError(f"{self._where()}[layout] pattern = {lay.pattern_text!r}: pattern "
                                          "import (thickpanel.io.read_pattern) is not available in this installation")
                if lay.pattern.suffix.lower() == ".dxf" and lay.dxf_layers:
                    cp = io.read_dxf(lay.pattern, layers=dict(lay.dxf_layers))
                else:
                    cp = io.read_pattern(lay.pattern)
            else:
                from .layouts import check_layout_size, get_layout

                fn = get_layout(str(lay.family))
                params = dict(lay.params)
                check_layout_size(str(lay.family), params)
                try:
                    sig = inspect.signature(fn).parameters
                except (TypeError, ValueError):
                    sig = {}  # type: ignore[assignment]
                if "name" in sig and "name" not in params:
                    params["name"] = self.name
                # a layout that builds thick panels itself (hub-wrap) takes the thickness stated once
                # in [panels]; only when the generator has the keyword and [layout] does not set it
                if "panel_thickness" in sig and "panel_thickness" not in params:
                    params["panel_thickness"] = self.panels.thickness
                cp = fn(**params)
        except DesignFileError:
            raise
        except ThickpanelError as exc:
            what = f"pattern = {lay.pattern_text or str(lay.pattern)!r}" if lay.pattern else f"family = {lay.family!r}"
            raise DesignFileError(f"{self._where()}[layout] {what}: {exc}") from exc
        except TypeError as exc:  # a parameter the generator's signature does not take
            raise DesignFileError(f"{self._where()}[layout] family = {lay.family!r}: {exc}") from exc
        return cp

    def panel_thickness(self, pattern: CreasePattern) -> float | dict[int, float]:
        """Thickness in mm: one float, or a mapping panel index -> mm when overrides apply."""
        mapping = self._per_panel(pattern, "thickness", self.panels.thickness)
        values = set(mapping.values())
        return self.panels.thickness if values <= {self.panels.thickness} else mapping

    def panel_materials(self, pattern: CreasePattern) -> dict[int, str]:
        """Material key per panel index (empty string where unspecified)."""
        return {int(k): str(v) for k, v in self._per_panel(pattern, "material", self.panels.material).items()}

    def _per_panel(self, pattern: CreasePattern, attr: str, default: Any) -> dict[int, Any]:
        import numpy as np

        from .pattern import pid

        panels = pattern.panels
        out = {p.index: default for p in panels}
        cents = np.array([p.centroid for p in panels]).reshape(-1, 2)
        centre = pattern.vertices.mean(axis=0) if len(pattern.vertices) else np.zeros(2)
        radius = np.linalg.norm(cents - centre, axis=1)
        ids = {pid(p.index): p.index for p in panels}
        for k, ov in enumerate(self.panels.overrides):
            value = getattr(ov, attr)
            if value is None:
                continue
            for name in ov.panels:
                if name not in ids:
                    raise DesignFileError(
                        f"{self._where()}[[panels.override]] #{k + 1} panels: {name!r} is not a panel "
                        f"of this pattern (P000..{pid(len(panels) - 1)})"
                    )
                out[ids[name]] = value
            if ov.radius is not None:
                for p in np.nonzero((radius >= ov.radius[0]) & (radius <= ov.radius[1]))[0]:
                    out[int(p)] = value
        return out

    def _where(self) -> str:
        return f"{self.source}: " if self.source else ""


# --------------------------------------------------------------------------- loading
def load_design(path: str | Path, *, check_layout: bool = True) -> Design:
    """Read and validate a design file.

    Parameters
    ----------
    path : str or Path
        TOML design file.
    check_layout : bool
        Check against the registries: the layout family and its parameter names, the hinge style
        and its options, the material keys. False checks the file on its own (types, ranges).

    Raises
    ------
    DesignFileError
        Missing file, TOML syntax error (line and column), unknown key (nearest valid key
        suggested), wrong type, value out of range or missing required key.
    """
    p = Path(path)
    try:
        str(p).encode("utf-8")
    except UnicodeEncodeError:
        raise DesignFileError(f"design file path {str(p)!r} is not valid UTF-8; rename the file or folder") from None
    try:
        text = p.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise DesignFileError(f"design file {str(p)!r} not found") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise DesignFileError(f"design file {str(p)!r} cannot be read: {exc}") from None
    return loads_design(text, source=p, check_layout=check_layout)


def loads_design(text: str, *, source: Path | None = None, check_layout: bool = True) -> Design:
    """Validate design-file text; relative paths resolve against ``source``'s folder (or cwd)."""
    where = f"{source}: " if source else ""
    try:
        raw = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise DesignFileError(f"{where}TOML syntax error: {exc}") from None
    except RecursionError:
        raise DesignFileError(
            f"{where}arrays or tables nest too deeply to read; at most {MAX_NESTING} levels"
        ) from None
    if nesting_depth(raw) > MAX_NESTING:
        raise DesignFileError(f"{where}arrays or tables nest more than {MAX_NESTING} levels deep")
    return _Validator(raw, source, where, check_layout).design()


class _Validator:
    def __init__(self, raw: dict[str, Any], source: Path | None, where: str, check_layout: bool):
        self.raw = raw
        self.source = source
        self.where = where
        self.base = source.parent if source else Path.cwd()
        self.check_layout = check_layout

    def fail(self, msg: str) -> DesignFileError:
        return DesignFileError(self.where + msg)

    # -- generic value check
    def value(self, key: Key, table: Mapping[str, Any], prefix: str | None = None) -> Any:
        path = prefix or key.path
        if key.name not in table:
            if key.required:
                sect = f"section [{key.section}]" if key.section else "the top level"
                raise self.fail(f"{path} is missing: {sect} needs key {key.name!r} ({key.doc})")
            return key.default
        v = table[key.name]
        t = key.type
        if t == "float":
            if isinstance(v, bool) or not isinstance(v, int | float):
                raise self.fail(f"{path} = {v!r} must be a number in {key.unit or 'units'} ({key.range_text()})")
            v = float(v)
            self._range(key, path, v)
        elif t == "int":
            if isinstance(v, bool) or not isinstance(v, int):
                raise self.fail(f"{path} = {v!r} must be a whole number ({key.range_text()})")
            self._range(key, path, v)
        elif t == "bool":
            if not isinstance(v, bool):
                raise self.fail(f"{path} = {v!r} must be true or false")
        elif t == "str":
            if not isinstance(v, str):
                raise self.fail(f"{path} = {v!r} must be text (in double quotes)")
            if key.choices and v not in key.choices:
                raise self.fail(f"{path} = {v!r} is not allowed; {key.range_text()}{suggest(v, key.choices)}")
        elif t == "table":
            if not isinstance(v, dict):
                raise self.fail(f"{path} = {v!r} must be a table ({{ key = value, ... }})")
        elif t.startswith("list["):
            if not isinstance(v, list):
                raise self.fail(f"{path} = {v!r} must be a list ([ ... ])")
            if t == "list[str]":
                for item in v:
                    if not isinstance(item, str):
                        raise self.fail(f"{path}: item {item!r} must be text")
            else:
                for item in v:
                    if isinstance(item, bool) or not isinstance(item, int | float):
                        raise self.fail(f"{path}: item {item!r} must be a number ({key.range_text()})")
                    self._range(key, f"{path}: item", float(item))
                v = [float(x) for x in v]
                if t == "list[float, 2]":
                    if len(v) != 2 or v[0] > v[1]:
                        raise self.fail(f"{path} = {v!r} must be [low, high] with low <= high, in {key.unit}")
        return v

    def _range(self, key: Key, path: str, v: float) -> None:
        if not math.isfinite(v):
            raise self.fail(f"{path} = {v!r} must be finite ({key.range_text()})")
        below = v <= key.lo if key.lo_open else v < key.lo
        if below or v > key.hi:
            unit = f" {key.unit}" if key.unit not in ("", "-") else ""
            sep = " " if path.endswith(": item") else " = "
            raise self.fail(f"{path}{sep}{v:g}{unit} is out of range; allowed: {key.range_text()}")

    def unknown(self, table: Mapping[str, Any], section: str, extra: tuple[str, ...] = ()) -> None:
        names = [k.name for k in SCHEMA if k.section == section] + list(extra)
        for name in table:
            if name not in names:
                label = f"[{section}] {name}" if section else name
                raise self.fail(f"unknown key {label}{suggest(name, names)} (valid keys: {', '.join(names)})")

    def section(self, name: str) -> dict[str, Any]:
        t = self.raw.get(name, {})
        if not isinstance(t, dict):
            raise self.fail(f"[{name}] must be a table (a [{name}] header), not {t!r}")
        return t

    # -- sections
    def design(self) -> Design:
        top_keys = [k.name for k in SCHEMA if k.section == ""]
        for name, v in self.raw.items():
            if isinstance(v, dict) and name not in SECTIONS:
                raise self.fail(f"unknown section [{name}]{suggest(name, SECTIONS)} (sections: {', '.join(SECTIONS)})")
            if not isinstance(v, dict) and name not in top_keys:
                hint = suggest(name, top_keys + list(SECTIONS))
                raise self.fail(f"unknown top-level key {name!r}{hint} (top-level keys: {', '.join(top_keys)}; "
                                f"sections: {', '.join(SECTIONS)})")
        name = self.value(_key("", "name"), self.raw)
        if name is None:
            name = self.source.stem if self.source else "design"
        problem = name_problem(name)
        if problem:
            raise self.fail(f"name = {name!r} cannot name the export folder and files: {problem}")
        layout = self.layout()
        panels = self.panels()
        hinge = self.hinge(panels)
        return Design(
            name=name,
            description=self.value(_key("", "description"), self.raw),
            source=self.source,
            layout=layout,
            panels=panels,
            method=self.method(),
            hinge=hinge,
            fold=self.fold(),
            exports=self.exports(),
            checks=self.checks(),
        )

    def layout(self) -> LayoutSpec:
        if "layout" not in self.raw:
            raise self.fail("section [layout] is missing: it needs key 'family' (a layout name) or "
                            "'pattern' (a .json or .dxf crease pattern file)")
        t = self.section("layout")
        fam = self.value(_key("layout", "family"), t)
        pat = self.value(_key("layout", "pattern"), t)
        layers = self.value(_key("layout", "dxf_layers"), t)
        if (fam is None) == (pat is None):
            hint = ""
            if fam is None:
                for k in t:
                    near = suggest(k, ("family", "pattern"))
                    if near:
                        hint = f"; unknown key [layout] {k}{near}"
                        break
            raise self.fail("[layout] needs exactly one of 'family' (a layout name) or 'pattern' (a file)"
                            + (f"; got both family = {fam!r} and pattern = {pat!r}" if fam else hint))
        if pat is not None:
            self.unknown(t, "layout")
            path = (self.base / pat).resolve()
            if path.suffix.lower() not in (".json", ".dxf"):
                raise self.fail(f"[layout] pattern = {pat!r}: suffix {path.suffix!r} is not supported; "
                                "allowed: .json, .dxf")
            if not path.is_file():
                raise self.fail(f"[layout] pattern = {pat!r}: file not found (looked for {path})")
            if layers is not None and path.suffix.lower() != ".dxf":
                raise self.fail("[layout] dxf_layers is only allowed with a .dxf pattern")
            if layers is not None:
                for k, v in layers.items():
                    if not isinstance(v, str):
                        raise self.fail(f"[layout] dxf_layers.{k} = {v!r} must be a crease kind (text)")
            return LayoutSpec(None, path, MappingProxyType({}),
                              MappingProxyType(dict(layers)) if layers else None, pattern_text=pat)
        if layers is not None:
            raise self.fail("[layout] dxf_layers is only allowed with a .dxf pattern")
        params = {k: v for k, v in t.items() if k not in ("family", "pattern", "dxf_layers")}
        if self.check_layout:
            self._check_layout_params(fam, params)
        return LayoutSpec(fam, None, MappingProxyType(params), None)

    def _check_layout_params(self, fam: str, params: dict[str, Any]) -> None:
        from .layouts import available_layouts, get_layout

        names = available_layouts()
        if fam not in names:
            raise self.fail(f"[layout] family = {fam!r} is not a registered layout{suggest(fam, names)} "
                            f"(available: {', '.join(names) or 'none yet'})")
        fn: Callable[..., Any] = get_layout(fam)
        try:
            sig = inspect.signature(fn)
        except (TypeError, ValueError):  # builtins without a signature: nothing to check
            return
        ps = sig.parameters
        if any(p.kind is inspect.Parameter.VAR_KEYWORD for p in ps.values()):
            return
        valid = [n for n, p in ps.items() if p.kind in (p.POSITIONAL_OR_KEYWORD, p.KEYWORD_ONLY)
                 and n not in ("tol", "name")]
        for k in params:
            if k not in valid:
                raise self.fail(f"unknown key [layout] {k} for family {fam!r}{suggest(k, valid)} "
                                f"(its parameters: {', '.join(valid)})")
        for n, p in ps.items():
            if p.default is inspect.Parameter.empty and p.kind in (p.POSITIONAL_OR_KEYWORD, p.KEYWORD_ONLY):
                if n not in params:
                    raise self.fail(f"[layout] {n} is missing: family {fam!r} needs key {n!r}")
        problems = option_problems(fn, params, "[layout] ")
        if problems:
            raise self.fail(problems[0])
        from .layouts import check_layout_size

        try:
            check_layout_size(fam, params)
        except ThickpanelError as exc:
            raise self.fail(f"[layout] {exc}") from None

    def panels(self) -> PanelsSpec:
        if "panels" not in self.raw:
            raise self.fail("section [panels] is missing: it needs key 'thickness' (panel thickness in mm)")
        t = self.section("panels")
        self.unknown(t, "panels", extra=("override",))
        thick = self.value(_key("panels", "thickness"), t)
        mat = self.value(_key("panels", "material"), t)
        ovs = t.get("override", [])
        if isinstance(ovs, dict):
            ovs = [ovs]
        if not isinstance(ovs, list) or not all(isinstance(o, dict) for o in ovs):
            raise self.fail("[panels] override must be written as [[panels.override]] tables")
        out = []
        for i, o in enumerate(ovs):
            pre = f"[[panels.override]] #{i + 1}"
            self.unknown(o, "panels.override")
            vals = {k.name: self.value(k, o, f"{pre} {k.name}") for k in SCHEMA if k.section == "panels.override"}
            if not vals["panels"] and vals["radius"] is None:
                raise self.fail(f"{pre} needs 'panels' (ids like \"P003\") or 'radius' ([inner, outer] mm)")
            if vals["thickness"] is None and vals["material"] is None:
                raise self.fail(f"{pre} changes nothing: give 'thickness' (mm) or 'material'")
            for pname in vals["panels"]:
                if len(pname) < 2 or pname[0] != "P" or not pname[1:].isdigit():
                    raise self.fail(f"{pre} panels: {pname!r} is not a panel id (like \"P003\")")
            out.append(PanelOverride(tuple(vals["panels"]),
                                     tuple(vals["radius"]) if vals["radius"] else None,  # type: ignore[arg-type]
                                     vals["thickness"], vals["material"]))
        if self.check_layout:
            self._check_materials([("[panels] material", mat)] + [
                (f"[[panels.override]] #{i + 1} material", o.material) for i, o in enumerate(out)])
        rho = self.value(_key("panels", "density"), t)
        return PanelsSpec(thick, mat, tuple(out), rho, self.value(_key("panels", "density_source"), t))

    def _check_materials(self, items: list[tuple[str, str | None]]) -> None:
        try:
            from hinges.materials import MATERIALS
        except ImportError:  # materials table not installed: the build reports it
            return
        known = sorted(MATERIALS)
        for path, m in items:
            if m and m not in MATERIALS:
                raise self.fail(f"{path} = {m!r} is not a known material{suggest(m, known)} "
                                f"(known: {', '.join(known)}; empty for unspecified)")

    def method(self) -> MethodSpec:
        t = self.section("method")
        self.unknown(t, "method")
        name = self.value(_key("method", "name"), t)
        opts = self.value(_key("method", "options"), t)
        if self.check_layout and name != "auto":
            from .thickness import method_function

            fn = method_function(name)
            if fn is not None:
                problems = option_problems(fn, opts, "[method] options.")
                if problems:
                    raise self.fail(problems[0])
        return MethodSpec(name, MappingProxyType(dict(opts)))

    def hinge(self, panels: PanelsSpec) -> HingeSpec:
        t = self.section("hinge")
        style = self.value(_key("hinge", "style"), t)
        opts = {k: v for k, v in t.items() if k != "style"}
        if self.check_layout:
            self._check_hinge(style, opts)
        return HingeSpec(style, MappingProxyType(opts))

    def _check_hinge(self, style: str, opts: dict[str, Any]) -> None:
        import dataclasses

        try:
            import hinges
        except ImportError:  # hinge styles not installed: the build reports it
            return
        styles = list(hinges.available_hinge_styles())
        if style not in styles:
            raise self.fail(f"[hinge] style = {style!r} is not a hinge style{suggest(style, styles)} "
                            f"(available: {', '.join(styles)})")
        try:
            plain = hinges.get_hinge_style(style)
        except ThickpanelError:
            return
        if dataclasses.is_dataclass(plain):
            known = [f.name for f in dataclasses.fields(plain) if f.name != "name"]
            for k in opts:
                if k not in known:
                    raise self.fail(f"unknown key [hinge] {k} for style {style!r}{suggest(k, known)} "
                                    f"(its options: {', '.join(known) or 'none'})")
        factory = plain if isinstance(plain, type) else type(plain)
        problems = option_problems(factory, opts, "[hinge] ")
        if problems:
            raise self.fail(problems[0])
        try:
            hinges.get_hinge_style(style, **opts)
        except ThickpanelError as exc:
            raise self.fail(f"[hinge] {exc}") from None
        except (TypeError, ValueError, AttributeError) as exc:  # a value the style's own checks cannot take
            raise self.fail(f"[hinge] options of style {style!r} are not usable: {exc}") from None

    def fold(self) -> FoldSpec:
        t = self.section("fold")
        self.unknown(t, "fold")
        v = {k.name: self.value(k, t) for k in SCHEMA if k.section == "fold"}
        drv = v["driver"]
        if drv and (drv[0] != "C" or not drv[1:].isdigit()):
            raise self.fail(f"[fold] driver = {drv!r} is not a crease id (like \"C012\")")
        if drv and v["path"] != "assignment":
            raise self.fail(f"[fold] driver = {drv!r} and path = {v['path']!r} exclude each other; the chosen paths "
                            "are driven by the largest fold")  # fmt: skip
        return FoldSpec(v["target_deg"], v["states"], drv, v["stop_at_contact"], v["path"])

    def exports(self) -> ExportSpec:
        t = self.section("exports")
        self.unknown(t, "exports")
        v = {k.name: self.value(k, t) for k in SCHEMA if k.section == "exports"}
        if self.check_layout:
            try:
                from .export import available_formats
            except ImportError:  # exporters not installed: the build reports it
                available_formats = None  # type: ignore[assignment]
            if available_formats is not None:
                names = list(available_formats())
                for f in v["formats"]:
                    if f not in names:
                        raise self.fail(f"[exports] formats: {f!r} is not an export format{suggest(f, names)} "
                                        f"(available: {', '.join(names)})")
        folder = (self.base / v["folder"]).resolve() if v["folder"] else None
        if len(v["plate_mm"]) != 2:
            raise self.fail(f"[exports] plate_mm = {v['plate_mm']!r} must be [width, depth] in mm, each > 0")
        return ExportSpec(tuple(v["formats"]), tuple(sorted(set(v["states"]))), folder, v["report"],
                          v["drawings"], (v["plate_mm"][0], v["plate_mm"][1]), v["prefix"])

    def checks(self) -> CheckSpec:
        t = self.section("checks")
        self.unknown(t, "checks")
        v = {k.name: self.value(k, t) for k in SCHEMA if k.section == "checks"}
        return CheckSpec(v["min_clearance"], v["require_rigid"], v["require_flat_foldable"])


