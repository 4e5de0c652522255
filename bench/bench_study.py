"""Benchmark: one design study in-process (1 worker) and on a 2-worker loopback LocalCluster.

Runs the 200-variant spiral disc study ``examples/studies/study-disc-200.toml`` twice in one go,
prints a table of wall times, start-up (cluster start and the per-worker imports), compute time,
CPU seconds per variant and the speed-up, and checks that the two tables hold the same rows apart
from timings. Both runs use one BLAS/OpenMP thread per process (Dask sets the same in its
workers), so "1 worker" means one core.

The machine may be shared: the ratio is only as good as the free cores. The load average before
and after each run is printed beside it; CPU seconds per variant show whether a slower run was
starved of CPU or did more work.

Run: ``PYTHONPATH=$PWD .venv/bin/python bench/bench_study.py [STUDY.toml] [--limit N] [--workers 1,2]
[--blocks K]``
"""

from __future__ import annotations

import os

for _v in ("OMP_NUM_THREADS", "OPENBLAS_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_v, "1")

import argparse  # noqa: E402 - the thread limits above must be set before numpy is imported
import resource  # noqa: E402
import tempfile  # noqa: E402
import time  # noqa: E402
from pathlib import Path  # noqa: E402
from typing import Any  # noqa: E402

from thickpanel.study import TIMING_COLUMNS, load_study, run_study, variants  # noqa: E402

EX = Path(__file__).resolve().parents[1] / "examples" / "studies"


def _cpu() -> float:
    """CPU seconds of this process and of its finished children (the cluster's workers count once
    the cluster is closed)."""
    s, c = resource.getrusage(resource.RUSAGE_SELF), resource.getrusage(resource.RUSAGE_CHILDREN)
    return s.ru_utime + s.ru_stime + c.ru_utime + c.ru_stime


def _stripped(rows: list[dict[str, Any]]) -> list[dict[str, Any]]:
    return sorted(({k: v for k, v in r.items() if k not in TIMING_COLUMNS} for r in rows), key=lambda r: r["id"])


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("study", nargs="?", type=Path, default=EX / "study-disc-200.toml")
    ap.add_argument("--limit", type=int, default=None, help="only the first N variants (a quick look)")
    ap.add_argument("--workers", default="1,2", help="comma-separated worker counts, run in this order")
    ap.add_argument("--blocks", type=int, default=1,
                    help="split the study into this many blocks and run the worker counts in turn on each "
                    "(1, 2, 1, 2, ...) so that a load that drifts during the bench hits both alike; every "
                    "block starts its own cluster, so start-up is counted once per block")
    args = ap.parse_args(argv)
    study = load_study(args.study)
    counts = [int(x) for x in args.workers.split(",")]
    total = len(variants(study)) if args.limit is None else min(args.limit, len(variants(study)))
    size = -(-total // max(1, args.blocks))
    res: dict[int, dict[str, Any]] = {w: {"wall": 0.0, "cpu": 0.0, "start": 0.0, "compute": 0.0, "load": []}
                                      for w in counts}
    with tempfile.TemporaryDirectory() as tmp:
        for b in range(0, total, size):
            for w in counts:
                load0 = os.getloadavg()[0]
                c0, t0 = _cpu(), time.perf_counter()
                run = run_study(study, workers=w, out=Path(tmp) / f"w{w}", limit=min(size, total - b))
                r = res[w]
                r["wall"] += time.perf_counter() - t0
                r["cpu"] += _cpu() - c0
                r["start"] += run.timings.get("start_s", 0.0)
                r["compute"] += run.timings.get("compute_s", 0.0)
                r["load"] += [load0, os.getloadavg()[0]]
                r["run"] = run
    for w in counts:
        run = res[w].pop("run")
        ok = [r for r in run.rows if r["status"] == "ok"]
        res[w].update(rows=_stripped(run.rows), failed=run.failed, load=(res[w]["load"][0], res[w]["load"][-1]),
                      cpu_var=sum(r["cpu_seconds"] for r in ok) / max(1, len(ok)),
                      wall_var=sum(r["seconds"] for r in ok) / max(1, len(ok)))
    base = counts[0]
    print(f"study {args.study.name}: {len(res[base]['rows'])} variants in {-(-total // size)} block(s); "
          f"{os.cpu_count()} cores; uptime load average (1 min) at the first start -> last end")
    print(f"{'workers':>7} {'variants':>8} {'failed':>6} {'wall s':>8} {'start s':>7} {'compute s':>9} "
          f"{'CPU s':>7} {'CPU s/var':>9} {'wall s/var':>10} {'speed-up':>8} {'compute x':>9} {'vs CPU':>6} "
          f"{'load':>11}")
    for w in counts:
        r = res[w]
        print(f"{w:>7} {len(r['rows']):>8} {r['failed']:>6} {r['wall']:>8.1f} {r['start']:>7.1f} {r['compute']:>9.1f} "
              f"{r['cpu']:>7.1f} {r['cpu_var']:>9.3f} {r['wall_var']:>10.3f} {res[base]['wall'] / r['wall']:>8.2f} "
              f"{res[base]['compute'] / r['compute']:>9.2f} {res[base]['cpu'] / r['wall']:>6.2f} "
              f"{r['load'][0]:>5.2f}->{r['load'][1]:<5.2f}")
    same = all(res[w]["rows"] == res[base]["rows"] for w in counts)
    print("speed-up: wall of the first row over wall of this row (start-up included); compute x: the same "
          "without start-up;\nvs CPU: CPU seconds of the first row over wall of this row. A one-worker run takes at "
          "least its CPU seconds even on an idle machine,\nso on a shared one this is a lower bound of the speed-up "
          "(unless the second run was starved too)")
    print(f"identical rows (apart from {', '.join(TIMING_COLUMNS)}): {same}")
    return 0 if same else 1


if __name__ == "__main__":
    raise SystemExit(main())
