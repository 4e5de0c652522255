"""Cost model behind the thickness methods' time bound (issue #18: no hang past the stated bound).

For accordion strips of growing size (every panel in one stowed stack, the worst case for layer
order) prints the seconds of ``layer_order``, of a full ``offset-panel`` build and of
``membrane-gap``, beside the overlapping footprint pairs and folding creases, the per-pair and
per-crease rates (``thickpanel.limits.STACK_PAIR_SECONDS`` and ``OFFSET_PANEL_CREASE_SECONDS`` must
stay above them) and the offset-panel estimate against the measured time.

Run: ``PYTHONPATH=$PWD python bench/bench_method_bound.py [--sizes 50 100 200]``.
"""

from __future__ import annotations

import argparse
import math
import time
from collections.abc import Callable
from typing import Any

from thickpanel import limits
from thickpanel.errors import ThicknessError
from thickpanel.kinematics import fold_path  # type: ignore[attr-defined]
from thickpanel.layouts import make_layout
from thickpanel.thickness import make_plan
from thickpanel.thickness.common import folding_creases
from thickpanel.thickness.layers import layer_order, stack_pair_count


def _timed(fn: Callable[..., Any], *a: Any, **k: Any) -> tuple[float, str]:
    t0 = time.perf_counter()
    try:
        fn(*a, **k)
        out = "ok"
    except ThicknessError as exc:
        out = f"refused: {exc}"[:60]
    return time.perf_counter() - t0, out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--sizes", type=int, nargs="*", default=[50, 100, 200])
    a = ap.parse_args()
    target = math.radians(170.0)
    print(f"{'panels':>6s} {'pairs':>7s} {'creases':>7s} {'order s':>8s} {'offset-panel s':>14s} "
          f"{'membrane s':>10s} {'s/pair':>8s} {'s/crease':>8s} {'estimate s':>10s}")
    for n in a.sizes:
        cp = make_layout("accordion", width=100.0, panel_width=30.0, n=n)
        path = fold_path(cp, target=target, n_states=24)
        pairs = stack_pair_count(cp, path.states[-1])
        creases = len(folding_creases(cp))
        t_order, _ = _timed(layer_order, cp, path.states[-1])
        t_op, why = _timed(make_plan, cp, "offset-panel", thickness=2.0, target_fold=target, path=path)
        t_mg, _ = _timed(make_plan, cp, "membrane-gap", thickness=2.0, target_fold=target, path=path)
        per_pair = t_order / max(pairs, 1)
        per_crease = t_op / max(creases, 1)
        est = pairs * limits.OFFSET_PANEL_PAIR_SECONDS + creases * limits.OFFSET_PANEL_CREASE_SECONDS
        print(f"{n:6d} {pairs:7d} {creases:7d} {t_order:8.2f} {t_op:14.2f} {t_mg:10.2f} {per_pair:8.1e} "
              f"{per_crease:8.3f} {est:10.1f}  {why if why != 'ok' else ''}")


if __name__ == "__main__":
    main()
