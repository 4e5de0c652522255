"""Benchmark: build, validate and check a 100 x 100 Miura-ori (10,000 panels).

Prints a table of stage times (median of several repetitions, seconds). Target: the whole job
under 2 s on a 2-core machine. Run with ``.venv/bin/python bench/bench_pattern.py``.
"""

from __future__ import annotations

import statistics
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from thickpanel.foldability import check_foldability  # noqa: E402
from thickpanel.layouts.classic import miura_ori  # noqa: E402
from thickpanel.pattern import CreasePattern  # noqa: E402

REPEAT = 5


def _one(n: int) -> dict[str, float]:
    t: dict[str, float] = {}
    t0 = time.perf_counter()
    cp0 = miura_ori(20.0, 10.0, 60.0, n, n)
    t["build + validate (miura_ori)"] = time.perf_counter() - t0
    # the same arrays again without validation, to split generation from checking
    t1 = time.perf_counter()
    cp = CreasePattern(cp0.vertices, cp0.creases, cp0.kinds, validate=False)
    t["  construct only (validate=False)"] = time.perf_counter() - t1
    t2 = time.perf_counter()
    found = cp.problems()
    t["  problems() (faces + all checks)"] = time.perf_counter() - t2
    assert not found
    t3 = time.perf_counter()
    rep = check_foldability(cp0)
    t["check_foldability"] = time.perf_counter() - t3
    assert rep.ok and len(rep.vertices) == (n - 1) ** 2
    t4 = time.perf_counter()
    _ = cp0.panels, cp0.crease_panels
    g = cp0.panel_graph
    t["panel_graph (networkx)"] = time.perf_counter() - t4
    assert g.number_of_nodes() == n * n
    t["TOTAL build + validate + foldability"] = t["build + validate (miura_ori)"] + t["check_foldability"]
    t["TOTAL incl. Panel objects + panel_graph"] = (
        t["TOTAL build + validate + foldability"] + t["panel_graph (networkx)"]
    )
    return t


def main() -> int:
    sizes = [10, 50, 100]
    rows: dict[int, dict[str, float]] = {}
    for n in sizes:
        runs = [_one(n) for _ in range(REPEAT)]
        rows[n] = {k: statistics.median(r[k] for r in runs) for k in runs[0]}
    names = list(rows[sizes[0]])
    width = max(len(x) for x in names)
    print(f"Miura-ori n x n panels, median of {REPEAT} runs, seconds")
    print(f"| {'stage':<{width}} | " + " | ".join(f"{n}x{n} ({n * n} panels)" for n in sizes) + " |")
    print(f"| {'-' * width} | " + " | ".join("-" * len(f"{n}x{n} ({n * n} panels)") for n in sizes) + " |")
    for k in names:
        cells = " | ".join(f"{rows[n][k]:>{len(f'{n}x{n} ({n * n} panels)')}.3f}" for n in sizes)
        print(f"| {k:<{width}} | {cells} |")
    total = rows[100]["TOTAL build + validate + foldability"]
    print(f"\n100 x 100 total {total:.3f} s (target < 2 s): {'OK' if total < 2.0 else 'SLOW'}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
