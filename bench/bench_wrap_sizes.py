"""Hub-wrap sheets of every hub size at 30 rings: generate, check and build (solids in memory).

Prints one row per hub (sides m = 3, 4, 5, 6, 8, 12; 30 rings of 100 mm round a hub of circumradius
100 mm; 1 mm plates): panels, seconds for ``thickpanel check`` (which builds and validates every
solid), the verdict, the stowed clearance and the stowed figures. Run:
``.venv/bin/python bench/bench_wrap_sizes.py [--rings 30]``.
"""

from __future__ import annotations

import argparse
import tempfile
import time
from pathlib import Path

from thickpanel.build import run_check
from thickpanel.design import load_design

DESIGN = """name = "hub-wrap-{m}-{r}"
[layout]
family = "hub-wrap"
sides = {m}
rings = {r}
ring_height = 100.0
hub_circumradius = 100.0
[panels]
thickness = 1.0
material = "pp"
[method]
name = "wrap-backing"
[hinge]
style = "none"
[fold]
target_deg = 180.0
states = 3
[checks]
min_clearance = 0.0
"""


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--rings", type=int, default=30)
    ap.add_argument("--sides", type=int, nargs="*", default=[3, 4, 5, 6, 8, 12])
    args = ap.parse_args()
    print(f"{'m':>3} {'r':>3} {'panels':>7} {'check s':>8} {'verdict':>8} {'clear mm':>9} {'ratio':>6} {'effic.':>7}")
    with tempfile.TemporaryDirectory() as tmp:
        for m in args.sides:
            path = Path(tmp) / f"hw-{m}.toml"
            path.write_text(DESIGN.format(m=m, r=args.rings), encoding="utf-8")
            t0 = time.perf_counter()
            s = run_check(load_design(path))
            dt = time.perf_counter() - t0
            mt = s["metrics"]
            print(f"{m:>3} {args.rings:>3} {mt.get('panels', 0):>7} {dt:>8.1f} {s.get('verdict', ''):>8} "
                  f"{mt.get('min_clearance_mm', float('nan')):>9.3f} {mt.get('diameter_ratio', float('nan')):>6.2f} "
                  f"{mt.get('packaging_efficiency', float('nan')):>7.3f}")


if __name__ == "__main__":
    main()
