"""Wall time of ``thickpanel check`` on every bundled example, each in a fresh process, beside the
time of ``python -c "import thickpanel"`` measured in the same run (issue #14 acceptance), and the
method stage's own seconds from ``check --json`` (issue #12 acceptance: under 1 s on the Miura
reference).

Run: ``PYTHONPATH=$PWD python bench/bench_check.py [--reps N]``. The box is shared, so compare the
``beyond import`` column and ratios within one run, not absolute times across runs.
"""

from __future__ import annotations

import argparse
import json
import math
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _wall(args: list[str]) -> tuple[float, float]:
    """(wall s, method-stage s or NaN) of one fresh process."""
    t0 = time.perf_counter()
    out = subprocess.run([sys.executable, *args], cwd=ROOT, check=False, capture_output=True, text=True)
    wall = time.perf_counter() - t0
    try:
        stages = json.loads(out.stdout)["stages"]
        method = next(float(s["seconds"]) for s in stages if s["stage"] == "method")
    except (ValueError, KeyError, StopIteration):
        method = math.nan
    return wall, method


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--reps", type=int, default=3)
    a = ap.parse_args()
    examples = sorted((ROOT / "examples").glob("*.toml"))
    imp: list[float] = []
    rows: dict[str, list[tuple[float, float]]] = {e.name: [] for e in examples}
    for _ in range(a.reps):  # interleaved: import, then every example, per repetition
        imp.append(_wall(["-c", "import thickpanel"])[0])
        for e in examples:
            rows[e.name].append(_wall(["-m", "thickpanel.cli", "check", str(e), "--json"]))
    base = statistics.median(imp)
    print(f"{'example':28s} {'check s':>8s} {'import s':>9s} {'beyond import s':>16s} {'ratio':>6s} "
          f"{'method stage s':>15s}")
    for name, ts in rows.items():
        m = statistics.median(t for t, _ in ts)
        ms = statistics.median(x for _, x in ts)
        print(f"{name:28s} {m:8.2f} {base:9.2f} {m - base:16.2f} {m / base:6.1f} {ms:15.2f}")


if __name__ == "__main__":
    main()
