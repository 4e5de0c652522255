"""Generate ``docs/methods.md``: thickness methods, their formulas and sources, and per layout family
which methods apply, the reachable fold and the minimum clearance over the fold path.

Every number in the tables is computed here (``methods_for`` + ``clearance``); nothing is typed in.
Run: ``.venv/bin/python docs/make_methods_doc.py`` (writes the file atomically).
"""

from __future__ import annotations

import math
import os
import sys
import tempfile
import time
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from thickpanel.clearance import clearance  # noqa: E402
from thickpanel.errors import ThickpanelError  # noqa: E402
from thickpanel.layouts import available_layouts, make_layout  # noqa: E402
from thickpanel.thickness import make_plan, methods_for  # noqa: E402

# Small cases of every family (our own choice of sizes); thickness in mm, target fold in degrees.
CASES: dict[str, Any] = {
    "miura": [
        dict(params=dict(a=20.0, b=12.0, gamma_deg=60.0, nx=4, ny=4), thickness=1.0, target_deg=150.0),
        dict(params=dict(a=60.0, b=40.0, gamma_deg=60.0, nx=3, ny=3), thickness=0.3, target_deg=176.0),
    ],
    "square-twist": dict(params=dict(side=40.0, twist_deg=30.0, assignment="two-two"), thickness=1.0,
                         target_deg=150.0),
    "accordion": dict(params=dict(width=40.0, panel_width=30.0, n=4), thickness=2.0, target_deg=175.0),
    "log-spiral": dict(params=dict(arms=8, rings=3, outer_diameter=600.0), thickness=2.0, target_deg=150.0),
    "spiral-rings": dict(params=dict(arms=8, rings=3, outer_diameter=600.0), thickness=2.0, target_deg=150.0),
    "spiral-radial": dict(params=dict(arms=8, rings=3, outer_diameter=600.0), thickness=2.0, target_deg=150.0),
    "kresling": dict(params=dict(sides=6, radius=50.0, height=40.0, twist_deg=40.0), thickness=1.0,
                     target_deg=150.0),
}
N_STATES = 30

METHOD_ROWS = [
    (
        '`tapered`',
        (
            'hinges on the reference surface; each crease bevels the inner side by the plane bisecting the inner '
            'dihedral at its final fold'
        ),
        (
            'bevel `w = t_in tan(rho_max/2)`, `rho_max = 2 atan(w/t_in)`; a flat fold is refused with the '
            'reachable limit `2 atan(r/t_in)` (r = inradius)'
        ),
        'Tachi 2011, "Rigid-foldable thick origami", Origami 5',
    ),
    (
        '`offset-panel`',
        (
            'hinge axes kept on the zero-thickness creases (exact kinematics), each panel moved along its normal '
            'to its own layer of the stowed stack, standoffs alternate along each hinge like knuckles; the stack '
            'is centred on the hinge plane to minimise the longest standoff `(max base - min top)/2`'
        ),
        (
            'layer order from the fold state nearest the final fold; vertex clearance `r = stack / (2 '
            'tan(alpha/2))` for flat targets [derived]; slab edges set back from each axis by the smallest '
            'distance keeping the two slabs\' sections apart over the crease\'s fold range (bisection on exact '
            '2D overlap) [derived]; standoffs the sweep finds inside other panels are shortened at their vertex '
            'ends'
        ),
        (
            'Edmondson, Lang, Magleby & Howell, ASME IDETC 2014; Morgan et al. 2016, Mech. Sci. 7:69, '
            'doi:10.5194/ms-7-69-2016'
        ),
    ),
    (
        '`offset-crease`',
        (
            'flat-foldable degree-4 vertices become Bennett linkages with hinges on panel faces; the face choice '
            'is searched so that every thick vertex loop closes with the zero-thickness angles of the path'
        ),
        (
            'thickness ratio `sin a / sin b` (1 Miura, sqrt 2 square-twist vertex); a hinge on the inner face of '
            'both slabs turns 0..180, on opposite faces 0..90, on the outer face not at all; where the faces '
            'would stop a crease, `bevel="auto"` cuts both slabs by the bisector plane through the hinge axis '
            '(tapered rule)'
        ),
        'Chen, Peng & You 2015, Science 349:396, doi:10.1126/science.aab2870',
    ),
    (
        '`membrane-gap`',
        (
            'rigid panels on a flexible membrane with a gap at every fold; works for patterns that are not '
            'rigidly foldable (approximate kinematics)'
        ),
        (
            'gap `(k+2) t` (panels inside the fold) or `k t` (outside) at 180 deg with k tucked layers; `2 t '
            'sin(rho/2) + k t` inside for smaller folds; hinge axis at mid-gap, height `(g/2) tan(rho/4)` '
            '[derived]'
        ),
        'Zirbel et al. 2013, J. Mech. Des. 135(11):111005, doi:10.1115/1.4025372',
    ),
    (
        '`hinge-shift`',
        'every hinge on the face inside its fold',
        'exact for single or parallel folds only',
        'Lang et al. 2018 (review)',
    ),
    (
        '`plain`',
        'thickening with no accommodation (baseline)',
        'the inner material of every fold meets at once',
        '—',
    ),
]


def method_table() -> str:
    """Markdown table of the methods, formulas and sources."""
    head = "| method | idea | formulas | source |\n| --- | --- | --- | --- |\n"
    return head + "\n".join("| " + " | ".join(r) + " |" for r in METHOD_ROWS)


INTRO = """# Thickness methods

Generated by `docs/make_methods_doc.py`; do not edit by hand. Lengths in mm, angles in degrees.

A thickness method turns the zero-thickness crease pattern into a `ThickPlan`: one `Slab` per
panel (polygon, z-range about the reference surface, cut planes, standoffs) and one `HingeLine`
per folding crease (axis, face, gap, usable length, fold range). The clearance sweep
(`thickpanel.clearance.clearance`) then poses the slabs along the fold path and reports the signed
minimum distance between slabs (negative = penetration depth). Review of the techniques:
Lang, Tolman, Crampton, Magleby & Howell 2018, Appl. Mech. Rev. 70(1):010805,
doi:10.1115/1.4039314.

{method_table}

Touching policy of the sweep: pieces of one panel are never compared; panels sharing a crease or a
vertex may touch (only penetration deeper than `tol.contact` counts for them); every other pair
counts with its signed distance. Narrow phase: separating-axis test (exact penetration depth,
distance lower bound) refined by the exact polytope distance (Ericson 2005, *Real-Time Collision
Detection*); broad phase: sort-and-sweep of bounding boxes.

Reading the tables: rows, *applies* and *why* come from `methods_for(..., sweep=True)` (methods
that clear the path first); *reachable* is the largest fold the
method reaches on that pattern; *min clearance* is the sweep's minimum over the path
(`inf` = no two slabs came within the margin of one slab thickness), with the pair and fold
fraction; *first contact* is the first fold fraction where a pair touches (non-neighbours) or
penetrates. These are engineering aids: designs for flight hardware or load-bearing use need the
applicable standards and qualified engineering review.
"""


def _path(pattern, target: float):
    from thickpanel.kinematics import fold_path

    return fold_path(pattern, target=target, n_states=N_STATES)


def _fmt_deg(x: float) -> str:
    return f"{math.degrees(x):.1f}" if x > 0 else "0"


def family_section(name: str, case: dict[str, Any], index: int = 0) -> list[str]:
    lines = [f"## {name}" + (f" (case {index + 1})" if index else ""), ""]
    try:
        cp = make_layout(name, **case["params"])
    except ThickpanelError as exc:
        return lines + [f"Layout could not be built: {exc}", ""]
    target = math.radians(case["target_deg"])
    t = case["thickness"]
    params = ", ".join(f"{k}={v}" for k, v in case["params"].items())
    lines.append(
        f"`{name}({params})`: {cp.n_panels} panels, {cp.n_creases} creases; thickness {t:g} mm, "
        f"target fold {case['target_deg']:g} deg."
    )
    try:
        path = _path(cp, target)
        reach = float(path.meta.get("reachable", target)) if path.stop_reason == "lock" else target
        lines.append(
            f"Zero-thickness fold path: {len(path.states)} states, stop reason `{path.stop_reason}`"
            f" (rigid fold reaches {math.degrees(reach):.1f} deg)."
        )
    except ThickpanelError as exc:
        path = None
        lines.append(f"No rigid fold path: {exc}")
    lines += ["", "| method | applies | why | reachable (deg) | min clearance (mm) | where | first contact t |",
              "| --- | --- | --- | --- | --- | --- | --- |"]
    try:
        advice = methods_for(cp, target, thickness=t, path=path, sweep=True)
    except ThickpanelError as exc:
        return lines + [f"| all | no | {exc} | | | | |", ""]
    for adv in advice:
        row_min = row_where = row_first = "—"
        if adv.applies and path is not None:
            try:
                plan = make_plan(cp, adv.method, thickness=t, target_fold=target, path=path)
                rep = clearance(plan, path)
                row_min = "inf" if math.isinf(rep.min_clearance) else f"{rep.min_clearance:.3f}"
                if rep.lower_bound:
                    row_min = f">= {rep.min_clearance:.3f}"
                if rep.where is not None:
                    (a, b), tt = rep.where
                    row_where = f"{a}-{b} at t={tt:.3f}"
                row_first = "none" if rep.first_contact is None else f"{rep.first_contact[0]:.3f}"
            except ThickpanelError as exc:
                row_min = f"not swept: {exc}"
        why = adv.reason.replace("|", "/")
        lines.append(
            f"| `{adv.method}` | {'yes' if adv.applies else 'no'} | {why} | {_fmt_deg(adv.reachable)} | "
            f"{row_min} | {row_where} | {row_first} |"
        )
    lines.append("")
    return lines


def main() -> int:
    t0 = time.perf_counter()
    out = [INTRO.replace("{method_table}", method_table())]
    names = available_layouts()
    order = ["miura"] + [n for n in names if n != "miura"]
    for name in order:
        case = CASES.get(name)
        if case is None:
            out += [f"## {name}", "", "No sample case configured in docs/make_methods_doc.py.", ""]
            continue
        for k, one in enumerate(case if isinstance(case, list) else [case]):
            out += family_section(name, one, k)
    text = "\n".join(out).rstrip() + "\n"
    target = ROOT / "docs" / "methods.md"
    fd, tmp = tempfile.mkstemp(dir=target.parent, prefix="methods", suffix=".tmp")
    with os.fdopen(fd, "w", encoding="utf-8") as fh:
        fh.write(text)
    os.replace(tmp, target)
    sys.stdout.write(f"wrote {target} in {time.perf_counter() - t0:.1f} s\n")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
