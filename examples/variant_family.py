"""Build a family of variants of one design in a loop and print a comparison table.

A designer choosing the panel angle and thickness of a Miura sheet runs the checks over a grid of
candidates, from the same design file, without writing a design file per variant. Every variant is
a frozen :class:`thickpanel.design.Design` made with ``dataclasses.replace``.

Run: ``.venv/bin/python examples/variant_family.py [--build OUT_DIR] [--json]``
(``--build`` also writes each variant's exports and report into ``OUT_DIR/<variant>/``.)
"""

from __future__ import annotations

import argparse
import dataclasses
import json
from pathlib import Path
from types import MappingProxyType

from thickpanel.build import run_build, run_check
from thickpanel.design import Design, load_design

HERE = Path(__file__).resolve().parent
GAMMAS_DEG = (60.0, 70.0, 80.0)
THICKNESSES_MM = (1.5, 3.0)


def variant(base: Design, gamma_deg: float, thickness: float) -> Design:
    """``base`` with another panel angle and thickness."""
    params = dict(base.layout.params, gamma_deg=gamma_deg)
    return dataclasses.replace(
        base,
        name=f"{base.name}-g{gamma_deg:g}-t{thickness:g}",
        layout=dataclasses.replace(base.layout, params=MappingProxyType(params)),
        panels=dataclasses.replace(base.panels, thickness=thickness),
    )


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--build", type=Path, help="also write exports and reports into this folder")
    ap.add_argument("--json", action="store_true", help="print the summaries as JSON")
    args = ap.parse_args()
    base = load_design(HERE / "miura-reference.toml")
    rows = []
    for g in GAMMAS_DEG:
        for t in THICKNESSES_MM:
            d = variant(base, g, t)
            s = run_build(d, args.build / d.name) if args.build else run_check(d)
            m = s["metrics"]
            rows.append({"variant": d.name, "gamma_deg": g, "thickness_mm": t, "method": m.get("method"),
                         "min_clearance_mm": m.get("min_clearance_mm"),
                         "stowed_envelope_mm": m.get("stowed_envelope_mm"),
                         "packing_ratio": m.get("packing_ratio"), "ok": s["ok"]})
    if args.json:
        print(json.dumps(rows, indent=2))
        return 0
    print(f"{'variant':<34} {'method':<13} {'min clear mm':>12} {'stowed envelope mm':>26} {'pack':>6}  verdict")
    for r in rows:
        env = " x ".join(f"{x:.1f}" for x in r["stowed_envelope_mm"]) if r["stowed_envelope_mm"] else "-"
        mc = f"{r['min_clearance_mm']:.2f}" if isinstance(r["min_clearance_mm"], float) else "no contact"
        pr = f"{r['packing_ratio']:.2f}" if isinstance(r["packing_ratio"], float) else "-"
        print(f"{r['variant']:<34} {str(r['method']):<13} {mc:>12} {env:>26} {pr:>6}  {'PASS' if r['ok'] else 'FAIL'}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
