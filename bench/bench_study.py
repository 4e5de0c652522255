"""Benchmark: one design study in-process (1 worker) and on a 2-worker loopback LocalCluster.

Prints a table of wall times and the speed-up ratio from one run; checks the two tables hold the
same rows apart from timings. The machine may be shared: the ratio is only as good as the free cores.

Run: ``PYTHONPATH=$PWD .venv/bin/python bench/bench_study.py [N]`` (N variants, default 200,
a multiple of 10).
"""

from __future__ import annotations

import sys
import tempfile
import time
from pathlib import Path

from thickpanel.study import run_study, study_from_dict

EX = Path(__file__).resolve().parents[1] / "examples" / "studies"


def main() -> int:
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 200
    study = study_from_dict({
        "base": str(EX / "study-disc-base.toml"),
        "axis": [{"key": "panels.thickness", "start": 1.0, "stop": 3.0, "step": 0.5},
                 {"key": "layout.slits", "values": [2, 4]},
                 {"key": "fold.target_deg", "low": 60.0, "high": 100.0}],
        "sample": {"n": max(1, n // 10), "method": "lhs", "seed": 11},
    })
    times, tables = {}, {}
    with tempfile.TemporaryDirectory() as tmp:
        for w in (1, 2):
            t0 = time.perf_counter()
            res = run_study(study, workers=w, out=Path(tmp) / f"w{w}")
            times[w] = time.perf_counter() - t0
            tables[w] = sorted(({k: v for k, v in r.items() if k != "seconds"} for r in res.rows),
                               key=lambda r: r["id"])
    same = tables[1] == tables[2]
    print(f"{'workers':>7} {'variants':>8} {'failed':>6} {'wall s':>8} {'ratio':>6}")
    for w in (1, 2):
        failed = sum(r["status"] != "ok" for r in tables[w])
        print(f"{w:>7} {len(tables[w]):>8} {failed:>6} {times[w]:>8.1f} {times[1] / times[w]:>6.2f}")
    print(f"identical rows (apart from timings): {same}")
    return 0 if same else 1


if __name__ == "__main__":
    raise SystemExit(main())
