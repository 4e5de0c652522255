"""The design-file schema: every key once, with its type, unit, default, range and meaning.

:mod:`thickpanel.design` validates against this table and :mod:`thickpanel.design_doc` renders
``docs/design-file.md`` from it, so the loader, its messages and the reference cannot drift apart.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Any

__all__ = ["Key", "SCHEMA", "SECTIONS", "BY_PATH", "INF"]

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
    Key("layout", "dxf_layers", "table", "", None, "Only with a `.dxf` pattern: layer name -> crease kind "
        "(e.g. `{ FOLD-V = \"valley\", FOLD-M = \"mountain\" }`); by default the layers named after the kinds "
        "(`mountain`, `valley`, `border`, `cut`, `flat`) are read."),
    Key("panels", "thickness", "float", "mm", None, "Panel thickness.", lo=0.0, hi=1000.0, required=True, lo_open=True),
    Key("panels", "material", "str", "", "", "Material key of the hinge materials table "
        "(`hinges.materials.MATERIALS`); empty for unspecified (no masses in the bill of materials)."),
    Key("panels", "density", "float", "kg/m^3", None, "Density of the panel material, for materials outside the "
        "table (or to replace its value); the bill of materials lists it with source `design file`. Unset: the "
        "material table's density.", lo=0.0, hi=30000.0, lo_open=True),
    Key("panels", "density_source", "str", "", "design file [panels] density", "Where `density` comes from "
        "(data sheet, measurement); printed in the bill of materials."),
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
        "of `[hinge]` is passed to the style as an option (names and units as the style documents them, "
        "e.g. `pin_diameter_mm`); the options are checked against the style when the file is loaded."),
    Key("fold", "target_deg", "float", "deg", 170.0, "Largest crease fold magnitude of the stowed state.",
        lo=0.0, hi=180.0, lo_open=True),
    Key("fold", "states", "int", "-", 60, "Number of sampled fold states from deployed to stowed.", lo=2, hi=2000),
    Key("fold", "driver", "str", "", "", "Crease id driving the fold (`C012`); empty: fold fraction of the "
        "largest fold."),
    Key("fold", "stop_at_contact", "bool", "", False, "End the fold path at the first panel contact."),
    Key("fold", "path", "str", "", "assignment", "How the fold path chooses among several degrees of freedom: "
        "`assignment` (the direction the crease signs give), `symmetric` (keep the rotational symmetry) or "
        "`clearance` (keep panels not joined by a crease furthest apart, never unfolding a crease; inside the "
        "symmetric subspace when the pattern has a rotational symmetry); the chosen paths stop where "
        "zero-thickness panels would cross.", choices=("assignment", "symmetric", "clearance")),
    Key("exports", "formats", "list[str]", "", ["step", "stl", "bom"], "Export formats "
        "(`thickpanel.export.available_formats()`)."),
    Key("exports", "states", "list[float]", "-", [0.0, 1.0], "Fold fractions t to export the assembly at "
        "(0 deployed, 1 stowed); with more than one, each goes to its own sub-folder `t0.50/`.", lo=0.0, hi=1.0),
    Key("exports", "folder", "str", "", "", "Output folder, relative to the design file; empty: "
        "`exports/<name>` in the current directory. The command line's `-o` wins."),
    Key("exports", "plate_mm", "list[float]", "mm", [250.0, 250.0], "Build plate [width, depth] of the 3MF plates; "
        "parts are packed onto as many plates as needed, a part larger than the plate is an error.",
        lo=0.0, hi=10000.0, lo_open=True),
    Key("exports", "prefix", "bool", "", True, "Put the design name in front of the top-level output names "
        "(`<name>-assembly-t1.00.step`, `<name>-bom.csv`, `<name>-plate.3mf`)."),
    Key("exports", "report", "bool", "", True, "Write the HTML report with the exports."),
    Key("exports", "drawings", "bool", "", True, "Write SVG and PNG crease drawings with the exports."),
    Key("checks", "min_clearance", "float", "mm", 0.0, "Least clearance between non-adjacent parts over the "
        "whole fold for the design to pass (slabs and hinge hardware; panels joined by a hinge line, or touching "
        "at a shared vertex in the flat sheet, count only when they overlap). The sweep measures out to five "
        "thicknesses or twice this value, whichever is larger, so a requirement is always checked against a "
        "measured distance or a bound above it.", lo=-1000.0, hi=1000.0),
    Key("checks", "require_rigid", "bool", "", False, "Fail the design when the pattern is not rigidly foldable "
        "(leave false for membrane or slack-hinge designs)."),
    Key("checks", "require_flat_foldable", "bool", "", False, "Fail the design when a vertex violates Kawasaki, "
        "Maekawa or big-little-big."),
)
# fmt: on

SECTIONS: tuple[str, ...] = ("layout", "panels", "method", "hinge", "fold", "exports", "checks")
BY_PATH: dict[tuple[str, str], Key] = {(k.section, k.name): k for k in SCHEMA}
