"""Offset panel technique on a thick spiral grid: exact kinematics and clearance over the path.

Source of the method: Edmondson, Lang, Magleby & Howell, "An offset panel technique for thick
rigidly foldable origami", ASME IDETC 2014; Morgan et al. 2016, Mech. Sci. 7:69,
doi:10.5194/ms-7-69-2016. The technique keeps every hinge axis on its zero-thickness crease, so the
thick array moves with exactly the zero-thickness fold angles and its panels, each on its own
layer, do not collide. The spiral grid (our own layout, triangulated twist grid with four slits)
folds rigidly to 100 deg at zero thickness; that fold is the full path checked here.
"""

import math

import numpy as np
import pytest

from thickpanel.clearance import clearance
from thickpanel.kinematics import fold_path
from thickpanel.layouts import make_layout
from thickpanel.thickness import make_plan


@pytest.fixture(scope="module")
def spiral_case():
    cp = make_layout("spiral-rings", arms=8, rings=2, outer_diameter=1200.0, triangulate="long", slits=4)
    target = math.radians(100.0)
    path = fold_path(cp, target=target, n_states=30)
    plan = make_plan(cp, "offset-panel", thickness=2.0, target_fold=target, path=path)
    return cp, path, plan


def test_offset_panel_spiral_hinges_stay_on_the_creases(spiral_case):
    cp, path, plan = spiral_case
    assert path.stop_reason == "target"
    for st in path.states[:: max(1, len(path.states) // 6)]:
        # slab poses about the plan's hinge axes equal the zero-thickness poses (Edmondson et al. 2014)
        assert np.allclose(plan.poses(st), st.poses, atol=1e-9)
    for h in plan.hinges:
        v0 = cp.vertices[cp.creases[h.crease, 0]]
        assert np.allclose(h.point, [v0[0], v0[1], 0.0], atol=1e-9)


def test_offset_panel_spiral_clears_over_the_full_path(spiral_case):
    _, path, plan = spiral_case
    # panels on their own layers: no penetration anywhere on the path (Morgan et al. 2016)
    rep = clearance(plan, path, margin=10.0)
    assert rep.first_contact is None
    assert rep.min_clearance >= 0.0
    # the plain baseline of the same sheet does collide, so the check can fail (Lang, Tolman, Crampton,
    # Magleby & Howell 2018, Appl. Mech. Rev. 70(1):010805: unaccommodated thickness collides)
    plain = make_plan(path.states[0].pattern, "plain", thickness=2.0, target_fold=math.radians(100.0))
    assert clearance(plain, path, margin=10.0).collides
