"""The thickness methods' time bound (issue #18: no hang past the stated bound).

A stacked accordion strip is the worst case: folded flat, all of its ``n`` panels lie on top of each
other, so every two of them overlap and the stack has ``n (n - 1) / 2`` footprint pairs
(combinatorics; the accordion's flat-folded state is the textbook pleat stack, e.g. Lang 2018,
*Twists, Tilings, and Tessellations*, ch. 2 [from memory]). The rates and the bound are this
project's measurements and choice (``thickpanel.limits``, common practice, no published source).
"""

from __future__ import annotations

import math
import time

import pytest

from thickpanel import limits
from thickpanel.errors import ThicknessError
from thickpanel.kinematics import fold_path
from thickpanel.layouts import make_layout
from thickpanel.thickness import make_plan, offset_panel
from thickpanel.thickness.layers import check_stack_work, stack_pair_count


def _strip(n: int):
    cp = make_layout("accordion", width=100.0, panel_width=30.0, n=n)
    return cp, fold_path(cp, target=math.radians(170.0), n_states=4)


def test_stacked_strip_has_every_pair_and_the_estimate_is_rate_times_count():
    cp, path = _strip(30)
    assert stack_pair_count(cp, path.states[-1]) == 30 * 29 // 2
    est = check_stack_work(cp, path.states[-1], method="probe", pair_seconds=1e-3, other_s=2.0)
    assert est == pytest.approx(435 * 1e-3 + 2.0)


def test_offset_panel_refuses_a_long_strip_before_any_work_and_auto_moves_on():
    cp, path = _strip(1000)
    pairs = stack_pair_count(cp, path.states[-1])  # at 170 deg a long strip fans out: fewer than all pairs
    assert 0 < pairs < 1000 * 999 // 2
    est = pairs * limits.OFFSET_PANEL_PAIR_SECONDS + 999 * limits.OFFSET_PANEL_CREASE_SECONDS
    assert est > limits.METHOD_TIME_BOUND_S
    t0 = time.perf_counter()
    with pytest.raises(ThicknessError, match=rf"offset-panel: about {est:,.0f} s of work .*1,000 panels "
                                             rf"\({pairs:,} overlapping footprint pairs.*time bound is 60 s"):
        make_plan(cp, "offset-panel", thickness=2.0, target_fold=math.radians(170.0), path=path)
    refused_in = time.perf_counter() - t0
    assert refused_in < limits.METHOD_TIME_BOUND_S  # refused up front, not after the work
    with pytest.raises(ThicknessError, match="time bound"):  # advice asks the same question
        offset_panel.assess(cp, thickness=2.0, target_fold=math.radians(170.0), path=path)


def test_membrane_gap_refuses_a_strip_whose_layer_order_is_beyond_the_bound():
    cp, path = _strip(2000)
    pairs = stack_pair_count(cp, path.states[-1])
    est = pairs * limits.STACK_PAIR_SECONDS
    assert est > limits.METHOD_TIME_BOUND_S
    with pytest.raises(ThicknessError, match=rf"membrane-gap: about {est:,.0f} s .*\({pairs:,} overlapping"):
        make_plan(cp, "membrane-gap", thickness=2.0, target_fold=math.radians(170.0), path=path)


def test_offset_panel_inside_the_bound_still_builds():
    cp, path = _strip(6)
    plan = make_plan(cp, "offset-panel", thickness=2.0, target_fold=math.radians(170.0), path=path)
    assert len(plan.slabs) == 6 and plan.notes[0].startswith("6 layers")
