"""Design files: a TOML file checked into a user's repository -> a frozen, validated :class:`Design`.

Millimetres and degrees throughout the file. Every key is declared once in :data:`SCHEMA` (section,
name, type, unit, default, allowed range, meaning); the loader, the error messages and the reference
page ``docs/design-file.md`` (``python -m thickpanel.design --write docs/design-file.md``) all read that
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
import sys
import tomllib
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from pathlib import Path
from types import MappingProxyType
from typing import TYPE_CHECKING, Any

from .errors import DesignFileError, ThickpanelError

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
    "schema_markdown",
]

INF = math.inf


@dataclass(frozen=True)
class Key:
    """One design-file key.

    Attributes
    ----------
    section : str
        ``""`` for top-level keys, else the table name (``panels``, ``panels.override`` ...).
    name : str
    type : str
        ``float``, ``int``, ``str``, ``bool``, ``list[str]``, ``list[float]``, ``list[float, 2]``.
    unit : str
        ``mm``, ``deg``, ``-`` (dimensionless) or ``""`` for text.
    default : Any
        ``None`` when the key has no default (see ``required``).
    lo, hi : float
        Allowed closed range for numbers (and for each item of a number list).
    choices : tuple of str
        Allowed values for strings (empty: any string).
    required : bool
    doc : str
    lo_open : bool
        When True the lower bound is excluded (``lo < value``).
    """

    section: str
    name: str
    type: str
    unit: str
    default: Any
    doc: str
    lo: float = -INF
    hi: float = INF
    choices: tuple[str, ...] = ()
    required: bool = False
    lo_open: bool = False

    @property
    def path(self) -> str:
        """Key path as messages print it, e.g. ``[hinge] pin_diameter``."""
        return f"[{self.section}] {self.name}" if self.section else self.name

    def range_text(self) -> str:
        """Human-readable allowed range."""
        if self.choices:
            return "one of " + ", ".join(repr(c) for c in self.choices)
        if self.type in ("str", "list[str]", "bool"):
            return {"str": "text", "list[str]": "list of text", "bool": "true or false"}[self.type]
        lo = "" if self.lo == -INF else f"{self.lo:g}"
        hi = "" if self.hi == INF else f"{self.hi:g}"
        u = f" {self.unit}" if self.unit not in ("", "-") else ""
        if lo and hi:
            return f"{lo} {'<' if self.lo_open else '<='} value <= {hi}{u}"
        if lo:
            return f"value {'>' if self.lo_open else '>='} {lo}{u}"
        if hi:
            return f"value <= {hi}{u}"
        return "any number"


# fmt: off
SCHEMA: tuple[Key, ...] = (
    Key("", "name", "str", "", None, "Design name used in export folder and file names (default: the file's stem)."),
    Key("", "description", "str", "", "", "Free text shown at the top of the report."),
    Key("layout", "family", "str", "", None, "Registered layout generator (`thickpanel.layouts.available_layouts()`); "
        "every other key of `[layout]` is passed to it as a parameter (mm and degrees, names as the generator "
        "documents them). Give either `family` or `pattern`."),
    Key("layout", "pattern", "str", "", None, "Path of an existing crease pattern (`.json` in thickpanel's schema, or "
        "`.dxf` with one layer per crease kind), relative to the design file. Replaces `family`."),
    Key("layout", "dxf_layers", "table", "", None, "Only with a `.dxf` pattern: crease kind -> layer name "
        "(e.g. `{ valley = \"FOLD-V\", mountain = \"FOLD-M\" }`); default layer names are the kind words."),
    Key("panels", "thickness", "float", "mm", None, "Panel thickness.", lo=0.0, hi=1000.0, required=True, lo_open=True),
    Key("panels", "material", "str", "", "", "Material key of the hinge materials table "
        "(`hinges.materials.MATERIALS`); empty for unspecified (no masses in the bill of materials)."),
    Key("panels.override", "panels", "list[str]", "", [], "Panel ids this override applies to (`P003`)."),
    Key("panels.override", "radius", "list[float, 2]", "mm", None, "Radial band [inner, outer] of panel "
        "centroids, measured from the pattern's centre, that this override applies to.", lo=0.0),
    Key("panels.override", "thickness", "float", "mm", None, "Thickness of the selected panels.",
        lo=0.0, hi=1000.0, lo_open=True),
    Key("panels.override", "material", "str", "", None, "Material of the selected panels."),
    Key("method", "name", "str", "", "auto", "Thickness method (`thickpanel.thickness.available_methods()`), or "
        "`auto` for the first method that applies in the recommendation order."),
    Key("method", "options", "table", "", {}, "Extra keyword options passed to the thickness method."),
    Key("hinge", "style", "str", "", "none", "Hinge style (`hinges.available_hinge_styles()`); every other key "
        "of `[hinge]` except `min_wall` is passed to the style as an option (mm and degrees)."),
    Key("hinge", "min_wall", "float", "mm", 0.4, "Least wall left around a hinge pin inside a panel; the design "
        "check refuses `pin_diameter > thickness - 2 * min_wall` (0.4 mm: one 0.4 mm-nozzle printed "
        "extrusion width, common practice).", lo=0.0, hi=100.0),
    Key("fold", "target_deg", "float", "deg", 170.0, "Largest crease fold magnitude of the stowed state.",
        lo=0.0, hi=180.0, lo_open=True),
    Key("fold", "states", "int", "-", 60, "Number of sampled fold states from deployed to stowed.", lo=2, hi=2000),
    Key("fold", "driver", "str", "", "", "Crease id driving the fold (`C012`); empty: fold fraction of the "
        "largest fold."),
    Key("fold", "stop_at_contact", "bool", "", False, "End the fold path at the first panel contact."),
    Key("exports", "formats", "list[str]", "", ["step", "stl", "bom"], "Export formats "
        "(`thickpanel.export.available_formats()`)."),
    Key("exports", "states", "list[float]", "-", [0.0, 1.0], "Fold fractions t to export the assembly at "
        "(0 deployed, 1 stowed).", lo=0.0, hi=1.0),
    Key("exports", "folder", "str", "", "", "Output folder, relative to the design file; empty: "
        "`exports/<name>` in the current directory. The command line's `-o` wins."),
    Key("exports", "report", "bool", "", True, "Write the HTML report with the exports."),
    Key("exports", "drawings", "bool", "", True, "Write SVG and PNG crease drawings with the exports."),
    Key("checks", "min_clearance", "float", "mm", 0.0, "Least clearance between non-adjacent parts over the "
        "whole fold for the design to pass.", lo=-1000.0, hi=1000.0),
    Key("checks", "require_rigid", "bool", "", False, "Fail the design when the pattern is not rigidly foldable "
        "(leave false for membrane or slack-hinge designs)."),
    Key("checks", "require_flat_foldable", "bool", "", False, "Fail the design when a vertex violates Kawasaki, "
        "Maekawa or big-little-big."),
)
# fmt: on

SECTIONS: tuple[str, ...] = ("layout", "panels", "method", "hinge", "fold", "exports", "checks")
_BY_PATH: dict[tuple[str, str], Key] = {(k.section, k.name): k for k in SCHEMA}
_OPEN_SECTIONS = ("layout", "hinge")  # extra keys go to the generator / hinge style


def _key(section: str, name: str) -> Key:
    return _BY_PATH[(section, name)]


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
    min_wall: float = 0.4


@dataclass(frozen=True)
class FoldSpec:
    """``[fold]``: target fold magnitude in degrees and the number of sampled states."""

    target_deg: float
    states: int
    driver: str
    stop_at_contact: bool

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
                    raise DesignFileError(f"{self._where()}[layout] pattern = {str(lay.pattern)!r}: pattern "
                                          "import (thickpanel.io.read_pattern) is not available in this installation")
                if lay.pattern.suffix.lower() == ".dxf" and lay.dxf_layers:
                    cp = io.read_dxf(lay.pattern, layers=dict(lay.dxf_layers))
                else:
                    cp = io.read_pattern(lay.pattern)
            else:
                from .layouts import get_layout

                fn = get_layout(str(lay.family))
                params = dict(lay.params)
                try:
                    if "name" in inspect.signature(fn).parameters and "name" not in params:
                        params["name"] = self.name
                except (TypeError, ValueError):
                    pass
                cp = fn(**params)
        except DesignFileError:
            raise
        except ThickpanelError as exc:
            what = f"pattern = {str(lay.pattern)!r}" if lay.pattern else f"family = {lay.family!r}"
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
        Check the layout family and its parameter names against the layout registry.

    Raises
    ------
    DesignFileError
        Missing file, TOML syntax error (line and column), unknown key (nearest valid key
        suggested), wrong type, value out of range or missing required key.
    """
    p = Path(path)
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
        if not name.strip() or any(ch in name for ch in '/\\:*?"<>|'):
            raise self.fail(f"name = {name!r} must be non-empty and usable as a folder name (no / \\ : * ? \" < > |)")
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
            raise self.fail("[layout] needs exactly one of 'family' (a layout name) or 'pattern' (a file)"
                            + (f"; got both family = {fam!r} and pattern = {pat!r}" if fam else ""))
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
                        raise self.fail(f"[layout] dxf_layers.{k} = {v!r} must be a layer name (text)")
            return LayoutSpec(None, path, MappingProxyType({}),
                              MappingProxyType(dict(layers)) if layers else None)
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
        return PanelsSpec(thick, mat, tuple(out))

    def method(self) -> MethodSpec:
        t = self.section("method")
        self.unknown(t, "method")
        name = self.value(_key("method", "name"), t)
        opts = self.value(_key("method", "options"), t)
        return MethodSpec(name, MappingProxyType(dict(opts)))

    def hinge(self, panels: PanelsSpec) -> HingeSpec:
        t = self.section("hinge")
        style = self.value(_key("hinge", "style"), t)
        wall = self.value(_key("hinge", "min_wall"), t)
        opts = {k: v for k, v in t.items() if k not in ("style", "min_wall")}
        pin = opts.get("pin_diameter")
        if pin is not None:
            if isinstance(pin, bool) or not isinstance(pin, int | float) or not pin > 0:
                raise self.fail(f"[hinge] pin_diameter = {pin!r} must be a positive number in mm")
            thin = min([panels.thickness] + [o.thickness for o in panels.overrides if o.thickness])
            largest = thin - 2 * wall
            if pin > largest:
                raise self.fail(f"[hinge] pin_diameter = {pin:g} mm does not fit panels {thin:g} mm thick "
                                f"(largest: {max(largest, 0.0):g} mm with min_wall = {wall:g} mm)")
        return HingeSpec(style, MappingProxyType(opts), wall)

    def fold(self) -> FoldSpec:
        t = self.section("fold")
        self.unknown(t, "fold")
        v = {k.name: self.value(k, t) for k in SCHEMA if k.section == "fold"}
        drv = v["driver"]
        if drv and (drv[0] != "C" or not drv[1:].isdigit()):
            raise self.fail(f"[fold] driver = {drv!r} is not a crease id (like \"C012\")")
        return FoldSpec(v["target_deg"], v["states"], drv, v["stop_at_contact"])

    def exports(self) -> ExportSpec:
        t = self.section("exports")
        self.unknown(t, "exports")
        v = {k.name: self.value(k, t) for k in SCHEMA if k.section == "exports"}
        folder = (self.base / v["folder"]).resolve() if v["folder"] else None
        return ExportSpec(tuple(v["formats"]), tuple(sorted(set(v["states"]))), folder, v["report"],
                          v["drawings"])

    def checks(self) -> CheckSpec:
        t = self.section("checks")
        self.unknown(t, "checks")
        v = {k.name: self.value(k, t) for k in SCHEMA if k.section == "checks"}
        return CheckSpec(v["min_clearance"], v["require_rigid"], v["require_flat_foldable"])


# --------------------------------------------------------------------------- reference page
DOC_BEGIN = "<!-- schema:begin (generated by `python -m thickpanel.design`; do not edit) -->"
DOC_END = "<!-- schema:end -->"


def _fmt_default(k: Key) -> str:
    if k.required:
        return "required"
    if k.default is None:
        return "-"
    if isinstance(k.default, bool):
        return "true" if k.default else "false"
    if isinstance(k.default, str):
        return f'`"{k.default}"`'
    if isinstance(k.default, list):
        inner = ", ".join(f'"{x}"' if isinstance(x, str) else f"{x:g}" for x in k.default)
        return f"`[{inner}]`"
    if isinstance(k.default, dict):
        return "`{}`"
    return f"`{k.default:g}`"


def schema_markdown() -> str:
    """The key tables of ``docs/design-file.md``, generated from :data:`SCHEMA`."""
    lines = [DOC_BEGIN, ""]
    for sect in ("",) + SECTIONS[:2] + ("panels.override",) + SECTIONS[2:]:
        keys = [k for k in SCHEMA if k.section == sect]
        title = "Top level" if not sect else ("`[[panels.override]]` (repeatable)" if sect == "panels.override"
                                              else f"`[{sect}]`")
        lines += [f"### {title}", "", "| key | type | unit | default | allowed | meaning |",
                  "| --- | --- | --- | --- | --- | --- |"]
        for k in keys:
            unit = k.unit if k.unit else "-"
            rng = k.range_text() if k.type != "table" else "table"
            lines.append(f"| `{k.name}` | {k.type} | {unit} | {_fmt_default(k)} | {rng} | {k.doc} |")
        lines.append("")
    lines.append(DOC_END)
    return "\n".join(lines) + "\n"


LAYOUTS_BEGIN = "<!-- layouts:begin (generated from the layout registry; do not edit) -->"
LAYOUTS_END = "<!-- layouts:end -->"


def layouts_markdown() -> str:
    """Every registered layout with its parameters and defaults, from the generators' signatures."""
    from .layouts import available_layouts, get_layout

    lines = [LAYOUTS_BEGIN, ""]
    names = available_layouts()
    if not names:
        lines.append("(no layout registered in this installation)")
    for name in names:
        fn = get_layout(name)
        lines += [f"- `family = \"{name}\"` ({fn.__module__}.{fn.__name__}):"]
        parts = []
        for pn, p in inspect.signature(fn).parameters.items():
            if pn in ("tol", "name") or p.kind in (p.VAR_KEYWORD, p.VAR_POSITIONAL):
                continue
            parts.append(f"`{pn}`" + ("" if p.default is p.empty else f" = `{p.default!r}`"))
        lines[-1] += " " + (", ".join(parts) or "no parameters")
        doc = inspect.getdoc(fn)
        if doc:
            lines.append(f"  {doc.splitlines()[0]}")
    lines += ["", LAYOUTS_END]
    return "\n".join(lines) + "\n"


def update_reference(path: str | Path) -> None:
    """Rewrite the generated blocks of the reference page ``path`` in place."""
    p = Path(path)
    text = p.read_text(encoding="utf-8")
    for begin, end, block in ((DOC_BEGIN, DOC_END, schema_markdown()),
                              (LAYOUTS_BEGIN, LAYOUTS_END, layouts_markdown())):
        i, j = text.find(begin), text.find(end)
        if i < 0 or j < 0:
            raise DesignFileError(f"{p}: markers {begin!r} ... {end!r} not found")
        text = text[:i] + block.rstrip("\n") + text[j + len(end):]
    tmp = p.with_suffix(p.suffix + ".tmp")
    tmp.write_text(text, encoding="utf-8")
    tmp.replace(p)


if __name__ == "__main__":
    if len(sys.argv) == 3 and sys.argv[1] == "--write":
        update_reference(sys.argv[2])
    else:
        sys.stdout.write(schema_markdown())
