"""Benchmark: generate 24-arm x 20-ring spiral grids (~500 and ~1,000 panels) with the Kawasaki solve.

Prints a table of stage times (median of several repetitions, seconds). Target: a 24 x 20 grid
including the Kawasaki solve under 1 s on a 2-core machine. Run with
``.venv/bin/python bench/bench_layouts.py``.
"""

from __future__ import annotations

import math
import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from thickpanel.foldability import check_foldability  # noqa: E402
from thickpanel.layouts.assignment import assignments, layout_info  # noqa: E402
from thickpanel.layouts.spiral import log_spiral_grid  # noqa: E402
from thickpanel.layouts.spiral_lattice import TWO_FAMILY_STEPS, Constraint, solve_parameter  # noqa: E402
from thickpanel.pattern import CreasePattern  # noqa: E402
from thickpanel.tolerances import DEFAULT_TOL  # noqa: E402

REPEAT = 5
N, RINGS, D = 24, 20, 2000.0


def _time(fn, repeat=REPEAT):
    ts = []
    out = None
    for _ in range(repeat):
        t0 = time.perf_counter()
        out = fn()
        ts.append(time.perf_counter() - t0)
    return statistics.median(ts), out


def main() -> int:
    log_spiral_grid(6, 2, 100.0, assign=0)  # warm imports
    rows = []
    t, _ = _time(lambda: solve_parameter(TWO_FAMILY_STEPS, N, Constraint("b", 2.0), (0.0, 2 * math.pi / N),
                                         xtol=DEFAULT_TOL.solve, accept=DEFAULT_TOL.kawasaki))
    rows.append(("Kawasaki solve of the lattice (chiral, b = 2)", "-", t))
    cases = [
        ("symmetric quads, assign=0", dict()),
        ("chiral quads b=2, assign=0", dict(symmetric=False, b=2.0)),
        ("chiral quads b=2, 1 slit, assign=0", dict(symmetric=False, b=2.0, slits=1)),
        ("symmetric, short diagonals b=3, assign=0", dict(triangulate="short", b=3.0)),
    ]
    for label, kw in cases:
        t, cp = _time(lambda kw=kw: log_spiral_grid(N, RINGS, D, assign=0, **kw))
        rows.append((f"log_spiral_grid {label}", str(cp.n_panels), t))
        dev = layout_info(cp).kawasaki_deviation
        assert dev < 1e-10, dev
    # split the triangulated case: validation (pattern checks) vs the rest
    cp = log_spiral_grid(N, RINGS, D, triangulate="short", b=3.0, assign=0)
    t, _ = _time(lambda: CreasePattern(cp.vertices, cp.creases, cp.kinds))
    rows.append(("  of which CreasePattern validation", str(cp.n_panels), t))
    t, ranked = _time(lambda: assignments(cp))
    rows.append((f"  of which assignments() ({len(ranked)} candidates)", str(cp.n_panels), t))
    fresh = [log_spiral_grid(N, RINGS, D, triangulate="short", b=3.0, assign=0) for _ in range(REPEAT)]
    t, rep = _time(lambda: check_foldability(fresh.pop()))
    rows.append(("check_foldability (fresh pattern, after generation)", str(cp.n_panels), t))
    t, cp_auto = _time(lambda: log_spiral_grid(N, RINGS, D, symmetric=False, b=2.0, slits=1, assign="auto"), 1)
    rows.append(("log_spiral_grid chiral, 1 slit, assign='auto' (+ rigid verdicts)", str(cp_auto.n_panels), t))
    w = max(len(r[0]) for r in rows)
    print(f"bench_layouts: {N} arms x {RINGS} rings, outer diameter {D:g} mm, median of {REPEAT} runs")
    print(f"{'stage':<{w}}  {'panels':>6}  {'seconds':>8}")
    for name, panels, sec in rows:
        print(f"{name:<{w}}  {panels:>6}  {sec:8.3f}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
