"""Wall time of ``thickpanel check`` on every bundled example, each in a fresh process, beside the
time of ``python -c "import thickpanel"`` measured in the same run (issue #14 acceptance).

Run: ``PYTHONPATH=$PWD python bench/bench_check.py [--reps N]``. The box is shared, so compare the
``beyond import`` column and ratios within one run, not absolute times across runs.
"""

from __future__ import annotations

import argparse
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _wall(args: list[str]) -> float:
    t0 = time.perf_counter()
    subprocess.run([sys.executable, *args], cwd=ROOT, check=False, capture_output=True)
    return time.perf_counter() - t0


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--reps", type=int, default=3)
    a = ap.parse_args()
    examples = sorted((ROOT / "examples").glob("*.toml"))
    imp, rows = [], {e.name: [] for e in examples}
    for _ in range(a.reps):  # interleaved: import, then every example, per repetition
        imp.append(_wall(["-c", "import thickpanel"]))
        for e in examples:
            rows[e.name].append(_wall(["-m", "thickpanel.cli", "check", str(e)]))
    base = statistics.median(imp)
    print(f"{'example':28s} {'check s':>8s} {'import s':>9s} {'beyond import s':>16s} {'ratio':>6s}")
    for name, ts in rows.items():
        m = statistics.median(ts)
        print(f"{name:28s} {m:8.2f} {base:9.2f} {m - base:16.2f} {m / base:6.1f}")


if __name__ == "__main__":
    main()
