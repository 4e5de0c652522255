"""Bill of materials (CSV and JSON) of a part set.

Columns: part id, kind, material, thickness (mm), area (mm^2), volume (mm^3), density (kg/m^3)
and where it comes from, mass (g), hinge count, pin diameters (mm), and for pins their length,
fit and ISO 286-2 limit deviations (``d1.5 g6 -0.002/-0.008``, mm).
"""

from __future__ import annotations

import csv
import io
import json
import math
from typing import Any

from hinges.materials import get_material

from ..solids import PartSet

__all__ = ["CAUTION", "bom_rows", "bom_csv_bytes", "bom_json_bytes"]

CAUTION = (
    "CAUTION: generated geometry for design studies. Parts for machining, printing or flight "
    "hardware need checking against the applicable codes and standards (fits, materials, "
    "fasteners, pinch points, stored energy) and review by a qualified engineer before use."
)

COLUMNS = ("part", "kind", "material", "thickness_mm", "area_mm2", "volume_mm3", "density_kg_m3",
           "density_source", "mass_g", "hinge_count", "pin_diameters_mm", "length_mm", "fit",
           "limits_mm")


def density(part: Any) -> tuple[float | None, str]:
    """(density kg/m^3 or None, its source) of a part: the design's ``[panels] density`` when
    given, else the material table's entry (``hinges.materials``)."""
    given = part.attrs.get("density_kg_m3")
    if given:
        return float(given), str(part.attrs.get("density_source", "design file"))
    m = get_material(part.material, who=part.name)
    if math.isnan(m.density):
        return None, "no material given"
    return m.density * 1000.0, m.sources.split(";")[0]


def _limits(part: Any) -> str:
    fit = str(part.attrs.get("fit", ""))
    if part.kind != "pin" or not fit or not part.pins:
        return ""
    from .profiles import fit_text

    return fit_text(float(part.pins[0]), fit, hole=False)


def bom_rows(partset: PartSet) -> list[dict[str, Any]]:
    """One dict per part (rounded to 1e-4 of the unit, so the files are stable)."""
    rows = []
    for p in partset.parts:
        rho, src = density(p)
        rows.append({
            "part": p.name,
            "kind": p.kind,
            "material": p.material,
            "material_name": get_material(p.material, who=p.name).name,
            "thickness_mm": round(p.thickness, 4),
            "area_mm2": round(p.area, 4),
            "volume_mm3": round(p.volume, 4),
            "density_kg_m3": None if rho is None else round(rho, 4),
            "density_source": src,
            "mass_g": None if p.mass is None else round(p.mass, 4),
            "hinge_count": p.hinge_count,
            "pin_diameters_mm": " ".join(f"{d:g}" for d in p.pins),
            "length_mm": round(float(p.attrs.get("length", 0.0)), 4),
            "fit": str(p.attrs.get("fit", "")),
            "limits_mm": _limits(p),
        })
    return rows


def bom_csv_bytes(partset: PartSet) -> bytes:
    """CSV with a header row; the caution is the first line, as a ``#`` comment."""
    buf = io.StringIO()
    buf.write(f"# {CAUTION}\n")
    w = csv.DictWriter(buf, fieldnames=COLUMNS, extrasaction="ignore", lineterminator="\n")
    w.writeheader()
    for r in bom_rows(partset):
        w.writerow(r)
    return buf.getvalue().encode("utf-8")


def bom_json_bytes(partset: PartSet) -> bytes:
    """JSON: caution, units, part rows and totals per kind."""
    rows = bom_rows(partset)
    totals: dict[str, dict[str, Any]] = {}
    for r in rows:
        t = totals.setdefault(r["kind"], {"count": 0, "mass_g": 0.0})
        t["count"] += 1
        if r["mass_g"] is None or t["mass_g"] is None:
            t["mass_g"] = None  # a part without material: no total
        else:
            t["mass_g"] = round(t["mass_g"] + r["mass_g"], 4)
    doc = {"caution": CAUTION, "units": {"length": "mm", "mass": "g", "density": "kg/m^3"},
           "hinge_style": partset.hinge_style, "parts": rows, "totals": totals}
    return (json.dumps(doc, indent=1, sort_keys=True) + "\n").encode("utf-8")
