"""A cut-short or copied fold path keeps solving exact states between its samples.

Regression for the stop-at-contact defect: the build rebuilt the ``FoldPath`` without its solver
hook, so ``FoldPath.at`` fell back to linear interpolation of crease angles. On a 4 x 4 Miura-ori
(interior degree-4 vertices) interpolated angles do not close the vertex loops. Oracle: loop
closure of a rigid origami state must vanish at every interior vertex (Tachi 2009, "Simulation
of rigid origami", Origami 4; Belcastro & Hull 2002, "Modelling the folding of paper into three
dimensions using affine transformations", Linear Algebra Appl. 348), and the Miura-ori's
degree-4 vertices follow Huffman's relations (Huffman 1976, IEEE Trans. Computers C-25(10)), which
linear interpolation between samples does not satisfy.
"""

from dataclasses import replace

import numpy as np
import pytest

from thickpanel.kinematics import fold_path
from thickpanel.layouts import make_layout
from thickpanel.poses import fold_state_from_angles


@pytest.fixture(scope="module")
def miura_4x4_path():
    cp = make_layout("miura", a=20.0, b=10.0, gamma_deg=60.0, nx=4, ny=4)
    return fold_path(cp, target=np.deg2rad(160.0), n_states=9)


def test_interpolation_would_not_close(miura_4x4_path):
    # the defect's symptom, so the test below can fail: interpolated angles leave a closure gap
    p = miura_4x4_path
    s0, s1 = p.states[3], p.states[4]
    mid = 0.5 * (s0.t + s1.t)
    lin = fold_state_from_angles(s0.pattern, 0.5 * (s0.angles + s1.angles), base=s0.base_panel, t=mid)
    assert lin.closure_error > 1e-6


@pytest.mark.parametrize("how", ["with_states", "replace", "replace-without-meta"])
def test_cut_path_solves_exactly(miura_4x4_path, how):
    p = miura_4x4_path
    kept = p.states[:6]
    if how == "with_states":
        cut = p.with_states(kept, stop_reason="contact")
    elif how == "replace":
        cut = replace(p, states=kept, stop_reason="contact")
    else:  # metadata dropped by a copy: the hook still refuses to silently pretend
        cut = replace(p, states=kept, meta={})
    assert cut.stop_reason in ("contact", p.stop_reason)
    mid = 0.5 * (kept[3].t + kept[4].t)
    st = cut.at(mid)
    if how == "replace-without-meta":
        assert st.closure_error > 1e-6  # interpolated, as documented; no recursion, no claim of exactness
        return
    assert st.closure_error < 1e-9  # limit of the kinematics contract (tol.closure)
    assert np.abs(st.angles).max() == pytest.approx(mid * np.deg2rad(160.0), abs=1e-9)


def test_build_stop_at_contact_keeps_the_hook():
    # the build's stop-at-contact path is the one later stages sample with .at(t)
    pytest.importorskip("thickpanel.clearance")
    from pathlib import Path

    from thickpanel.build import run_pipeline
    from thickpanel.design import loads_design

    ex = Path(__file__).resolve().parents[1] / "examples" / "lamp-shade.toml"
    text = ex.read_text().replace("target_deg = 32.0", "target_deg = 40.0").replace(
        "states = 12", "states = 12\nstop_at_contact = true")
    res = run_pipeline(loads_design(text, source=ex), stages=("pattern", "fold path", "method", "clearance"))
    assert res.path.stop_reason == "contact"
    assert res.path.refine is not None
    ts = res.path.fractions
    st = res.path.at(0.5 * (ts[-2] + ts[-1]))
    assert st.closure_error < 1e-9
