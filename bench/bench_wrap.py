"""Benchmark: a hub-wrap design of about 1,000 panels, pattern + stowed state + clearance proof.

Design: ``hub-wrap`` with 12 hub sides, 18 rings, ring height 60 mm, hub circumradius 150 mm,
plates 2 mm on a 0.05 mm backing with a 0.1 mm layer gap (the thick construction, layers nested).

Timed, each the median of ``REPEAT`` runs (the box is shared; ratios matter more than absolutes):

* pattern: the layout's thick construction and the crease pattern (``make_layout``);
* stowed state: the ``wrap-backing`` plan with its explicit stowed poses and the stowed figures
  (``wrap_metrics``), plus the structural rigidity verdict;
* clearance proof: the clearance engine on the stowed state with a margin of 5 plate thicknesses
  (real distances measured, not a bound);
* (not in the target) the least-misfit deployment path with its compliance, 5 states.

Target: pattern + stowed state + clearance proof under 10 s on a 2-core machine.
Run: ``.venv/bin/python bench/bench_wrap.py``.
"""

from __future__ import annotations

import math
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from thickpanel.clearance import clearance  # noqa: E402
from thickpanel.layouts import make_layout  # noqa: E402
from thickpanel.poses import FoldPath, FoldState  # noqa: E402
from thickpanel.thickness import make_plan  # noqa: E402
from thickpanel.wrap.deploy import stowed_fold_path  # noqa: E402
from thickpanel.wrap.metrics import wrap_metrics  # noqa: E402
from thickpanel.wrap.verdict import wrap_rigidity  # noqa: E402

PARAMS = {"sides": 12, "rings": 18, "ring_height": 60.0, "hub_circumradius": 150.0, "panel_thickness": 2.0,
          "backing_thickness": 0.05, "layer_gap": 0.1}
REPEAT = 3
TARGET_S = 10.0


def once() -> tuple[dict[str, float], dict]:
    t = {}
    t0 = time.perf_counter()
    cp = make_layout("hub-wrap", **PARAMS)
    t["pattern"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    plan = make_plan(cp, "wrap-backing", thickness=PARAMS["panel_thickness"], target_fold=math.pi)
    met = wrap_metrics(cp, plan)
    verdict = wrap_rigidity(cp)
    t["stowed state"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    stowed = plan.explicit_at(1.0)
    state = FoldState(cp, cp.target_angles, stowed, t=1.0, base_panel=0)
    rep = clearance(plan, FoldPath((state,)), margin=5 * PARAMS["panel_thickness"], refine=False)
    t["clearance proof"] = time.perf_counter() - t0
    t0 = time.perf_counter()
    path = stowed_fold_path(cp, n_states=5)
    t["deployment path (not in target)"] = time.perf_counter() - t0
    info = {"panels": cp.n_panels, "slabs": len(plan.slabs), "metrics": met, "verdict": verdict.kind,
            "min_clearance": rep.min_clearance, "lower_bound": rep.lower_bound, "where": rep.where,
            "compliance": path.meta["compliance"].summary()}
    return t, info


def main() -> int:
    runs = []
    info: dict = {}
    for _ in range(REPEAT):
        t, info = once()
        runs.append(t)
    med = {k: statistics.median(r[k] for r in runs) for k in runs[0]}
    total = med["pattern"] + med["stowed state"] + med["clearance proof"]
    print(f"hub-wrap {PARAMS}: {info['panels']} panels, {info['slabs']} plates; verdict {info['verdict']}")
    m = info["metrics"]
    print(f"stowed: {m['stowed_diameter_mm']:.1f} mm across, {m['stowed_height_mm']:.1f} mm tall; deployed "
          f"{m['deployed_diameter_mm']:.1f} mm; ratio {m['diameter_ratio']:.2f}; packaging efficiency "
          f"{m['packaging_efficiency']:.3f}; volume bound on the radius {m['stowed_radius_bound_mm']:.1f} mm")
    print(f"clearance: minimum {info['min_clearance']:.4f} mm at {info['where']} (lower bound only: "
          f"{info['lower_bound']})")
    print(f"deployment compliance: {info['compliance']}")
    print("")
    print(f"| step (median of {REPEAT}) | time (s) | share of the {TARGET_S:g} s target |")
    print("| --- | --- | --- |")
    for k, v in med.items():
        print(f"| {k} | {v:.2f} | {v / TARGET_S:.2f} |")
    print(f"| pattern + stowed state + clearance proof | {total:.2f} | {total / TARGET_S:.2f} |")
    print("target (< 10 s):", "met" if total < TARGET_S else "NOT met")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
