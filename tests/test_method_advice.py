"""Method advice without throw-away builds (issues #12 and #14): ``methods_for`` assesses the costly
``offset-panel`` method instead of building it, and the pipeline builds only the chosen plan.

Oracle: the advice, chosen method and plan must equal those of the full-build advice
(``methods_for(..., build_all=True)``, the behaviour before the change), which is this project's own
earlier output; the Miura-ori fold path follows Schenk & Guest 2013 (PNAS 110:3276) through
``tests.thickness_fixtures.miura_path``.
"""

from __future__ import annotations

import math

from tests.thickness_fixtures import miura, miura_path
from thickpanel.build import run_pipeline
from thickpanel.design import loads_design
from thickpanel.kinematics import rigid_foldability
from thickpanel.thickness import methods_for

STAGES = ("pattern", "foldability", "rigidity", "fold path", "method")


def _design(thickness: float, method: str = "auto") -> str:
    # a small Miura-ori sheet of our own; at 4 mm the offset-panel set-backs find no clearance
    return (f'name = "advice"\n[layout]\nfamily = "miura"\na = 10.0\nb = 10.0\ngamma_deg = 70.0\nnx = 2\nny = 2\n'
            f'[panels]\nthickness = {thickness}\n[method]\nname = "{method}"\n[fold]\ntarget_deg = 120.0\n'
            f'states = 8\n')


def test_advice_assesses_offset_panel_without_building_it():
    cp = miura(nx=3, ny=3)
    path = miura_path(cp, 60.0, math.radians(50), 8)
    built: dict = {}
    quick = methods_for(cp, math.radians(100), thickness=1.0, path=path, plans=built,
                        verdict=rigid_foldability(cp))
    full = methods_for(cp, math.radians(100), thickness=1.0, path=path, build_all=True)
    by = {a.method: a for a in quick}
    assert "offset-panel" not in built and not by["offset-panel"].built
    assert "tapered" in built and by["tapered"].built
    # same verdicts, reasons, reachable folds and order as the full build
    assert [(a.method, a.applies, a.reason, a.reachable) for a in quick] == \
        [(a.method, a.applies, a.reason, a.reachable) for a in full]


def test_auto_falls_back_when_the_assessed_method_refuses_to_build():
    d = loads_design(_design(4.0))
    res = run_pipeline(d, command="check", stages=STAGES)
    full = methods_for(res.pattern, d.fold.target, thickness=d.panel_thickness(res.pattern), path=res.path,
                       build_all=True)
    assert not {a.method: a for a in full}["offset-panel"].applies  # the set-backs refuse
    assert [(a.method, a.applies, a.reason) for a in res.advice] == [(a.method, a.applies, a.reason) for a in full]
    first = next(a.method for a in full if a.applies)
    assert res.metrics["method"] == first != "offset-panel"
    assert res.plan.method == first


def test_named_method_that_refuses_to_build_does_not_apply():
    res = run_pipeline(loads_design(_design(4.0, "offset-panel")), command="check", stages=STAGES)
    got = {c["check"]: c for c in res.checks}
    assert got["thickness method"]["verdict"] == "fail"
    assert "offset-panel does not apply" in got["thickness method"]["detail"]
    assert "no set-back" in got["thickness method"]["detail"]
    assert res.plan is None
