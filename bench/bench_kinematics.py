"""Benchmark: Miura-ori fold paths from flat to 170 deg in 90 states (prints a table).

Run: ``.venv/bin/python bench/bench_kinematics.py [--general]``. The default path uses the
closed-form degree-4 relations as predictor (Newton corrector confirms every state); ``--general``
also times the general sparse predictor-corrector on the same sheets. Acceptance target: the
50 x 50 sheet under 5 s on a 2-core machine, cost roughly linear in panel count.
"""

from __future__ import annotations

import sys
import time

import numpy as np

from thickpanel.kinematics import fold_path
from thickpanel.layouts import make_layout


def run(n: int, closed_form: bool) -> tuple[int, float, float]:
    cp = make_layout("miura", a=20.0, b=10.0, gamma_deg=60.0, nx=n, ny=n)
    t0 = time.perf_counter()
    path = fold_path(cp, target=np.deg2rad(170.0), n_states=90, closed_form=closed_form)
    dt = time.perf_counter() - t0
    assert path.stop_reason == "target" and len(path.states) == 90
    return cp.n_panels, dt, max(s.closure_error for s in path.states)


def main() -> None:
    modes = [True, False] if "--general" in sys.argv else [True]
    print("solver        grid     panels   time s   us/panel/state   max closure error")
    for cf in modes:
        for n in (10, 25, 50):
            panels, dt, err = run(n, cf)
            name = "closed-form" if cf else "general"
            print(f"{name:12s} {n:2d}x{n:<2d}  {panels:8d} {dt:8.3f} {1e6 * dt / panels / 90:16.2f} {err:19.2e}")


if __name__ == "__main__":
    main()
