"""Import cost (issue #14): the package, the command line and a check load no CAD kernel they do not use.

Each case runs in a fresh interpreter, because the test session itself has usually imported OCP.
Which modules count as heavy is common practice on this project (PERF-NOTES section 6: cadquery
costs 0.6-1.7 s on top of OCP, mostly VTK), not a published figure.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
HEAVY = ("cadquery", "OCP", "vtk", "matplotlib")


def _loaded(code: str) -> dict[str, bool]:
    probe = code + f"\nimport sys, json\nprint(json.dumps({{m: m in sys.modules for m in {HEAVY!r}}}))\n"
    env = dict(os.environ, PYTHONPATH=str(ROOT))
    out = subprocess.run([sys.executable, "-c", probe], cwd=ROOT, env=env, capture_output=True, text=True,
                         check=True)
    return json.loads(out.stdout.strip().splitlines()[-1])


def test_import_package_and_cli_load_no_cad_kernel() -> None:
    got = _loaded("import thickpanel, thickpanel.cli, thickpanel.build")
    assert got == {m: False for m in HEAVY}


def test_check_of_miura_reference_loads_no_cadquery() -> None:
    # The check's solids stage builds the parts in memory with raw OCP (so OCP is loaded); cadquery,
    # VTK and matplotlib are not needed by any stage of a check.
    got = _loaded("from thickpanel.design import load_design\nfrom thickpanel.build import run_check\n"
                  "s = run_check(load_design('examples/miura-reference.toml'))\nassert s['ok'], s")
    assert got["OCP"] is True
    assert {m: got[m] for m in ("cadquery", "vtk", "matplotlib")} == {"cadquery": False, "vtk": False,
                                                                      "matplotlib": False}


def test_loading_a_design_and_planning_load_no_numba() -> None:
    # numba (the clearance sweep's SAT kernel, thickpanel.sat_kernel) loads with the first sweep only:
    # loading a design, the fold path and a thickness plan do not need it.
    got = _loaded("from thickpanel.design import load_design\nfrom thickpanel.build import run_pipeline\n"
                  "r = run_pipeline(load_design('examples/miura-reference.toml'), command='check', "
                  "stages=('pattern', 'foldability', 'rigidity', 'fold path', 'method'))\n"
                  "assert r.plan is not None\nimport sys\nassert 'numba' not in sys.modules, 'numba loaded'")
    assert got == {m: False for m in HEAVY}
