"""Benchmark: 1,000-panel plans with knuckle hinges, built and exported to STEP, against the
floor: the same number of plain polygon prisms made with raw OCP and written to one STEP file.

Cases (one table): a Miura plan (translated copies), the same Miura with jittered inner vertices
(no two panels congruent) and a log-spiral plan, ``tapered`` (bevel cuts on every panel) and
``plain`` (the panels of a ring are rotated copies). Routes: ``build_parts(share="rigid")`` (default),
``share="translation"`` (prototype sharing by translation only); a route may add ``+profile``
(``validate="profile"``: plain panel prisms checked through their outline face and the volume
identity instead of a whole-solid BRepCheck, the dominant cost when no two panels are alike).

Run: ``.venv/bin/python bench/bench_solids.py [--reps 3 --cases miura,jittered,spiral]``. Prints
median times and the ratio to the floor (target: at most 3x). Not part of the test suite.
"""

from __future__ import annotations

import argparse
import math
import statistics
import sys
import tempfile
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import numpy as np  # noqa: E402
from OCP.BRep import BRep_Builder  # noqa: E402
from OCP.BRepBuilderAPI import BRepBuilderAPI_MakeFace, BRepBuilderAPI_MakePolygon  # noqa: E402
from OCP.BRepPrimAPI import BRepPrimAPI_MakePrism  # noqa: E402
from OCP.gp import gp_Ax3, gp_Dir, gp_Pln, gp_Pnt, gp_Vec  # noqa: E402
from OCP.Interface import Interface_Static  # noqa: E402
from OCP.STEPControl import STEPControl_AsIs, STEPControl_Controller, STEPControl_Writer  # noqa: E402
from OCP.TopoDS import TopoDS_Compound  # noqa: E402

from tests.test_solids_plans import plain_plan  # noqa: E402
from thickpanel.export.step import _quiet, step_bytes  # noqa: E402
from thickpanel.export.writer import write_atomic  # noqa: E402
from thickpanel.layouts import make_layout  # noqa: E402
from thickpanel.solids import build_parts  # noqa: E402
from thickpanel.thickness import make_plan  # noqa: E402


def floor(plan, path: Path) -> float:
    """Raw OCP prisms (plane given, Copy=False) in one compound, plain STEP writer, no pcurves."""
    t0 = time.perf_counter()
    comp = TopoDS_Compound()
    b = BRep_Builder()
    b.MakeCompound(comp)
    for s in plan.slabs:
        mk = BRepBuilderAPI_MakePolygon()
        for x, y in s.polygon:
            mk.Add(gp_Pnt(x, y, s.z0))
        mk.Close()
        pln = gp_Pln(gp_Ax3(gp_Pnt(0, 0, s.z0), gp_Dir(0, 0, 1)))
        f = BRepBuilderAPI_MakeFace(pln, mk.Wire(), True).Face()
        b.Add(comp, BRepPrimAPI_MakePrism(f, gp_Vec(0, 0, s.z1 - s.z0), False).Shape())
    STEPControl_Controller.Init_s()
    _quiet()
    Interface_Static.SetCVal_s("write.step.unit", "MM")
    Interface_Static.SetIVal_s("write.surfacecurve.mode", 0)
    w = STEPControl_Writer()
    w.Transfer(comp, STEPControl_AsIs)
    w.Write(str(path))
    return time.perf_counter() - t0


def ours(plan, path: Path, share: str, options: dict) -> tuple[float, float, float, float, int,
                                                                 int]:
    """build_parts(knuckle) (validated) + named XCAF STEP of every part, written atomically.

    Returns total s, build s, STEP s, MB, parts, distinct panel prototypes.
    """
    t0 = time.perf_counter()
    share, _, validate = share.partition("+")  # e.g. "rigid+profile": validate plain prisms by profile
    ps = build_parts(plan, hinge_style="knuckle", hinge_options=options, share=share,
                     validate=validate or "full")
    t1 = time.perf_counter()
    data = step_bytes([(p.name, p.pieces, None) for p in ps.parts], name="bench")
    write_atomic(path, data)
    t2 = time.perf_counter()
    protos = len({p.attrs.get("prototype", p.name) for p in ps.parts if p.kind == "panel"})
    if share == "translation":  # translation-shared panels carry one body key per class
        protos = len({p.pieces[0][0] for p in ps.parts if p.kind == "panel"})
    return t2 - t0, t1 - t0, t2 - t1, len(data) / 1e6, len(ps.parts), protos


def cases(which: list[str], nx: int, ny: int, arms: int, rings: int) -> list[tuple]:
    """(label, plan, knuckle options) per requested case."""
    out = []
    miura = make_layout("miura", a=40.0, b=35.0, gamma_deg=70.0, nx=nx, ny=ny)
    if "miura" in which:
        out.append(("Miura (translated copies)", plain_plan(miura, 4.0, 0.6, face="mid",
                                                           clear=8.0), {}))
    if "jittered" in which:
        rng = np.random.default_rng(1)
        v = miura.vertices.copy()
        inner = miura.interior_vertices
        v[inner] += rng.uniform(-1.0, 1.0, (len(inner), 2))
        cp = type(miura)(v, miura.creases, miura.kinds, miura.target_angles, name="jittered")
        out.append(("Miura jittered 1 mm (all differ)", plain_plan(cp, 4.0, 0.6, face="mid",
                                                                  clear=8.0), {}))
    spirals = [c for c in ("spiral", "spiral-plain") if c in which]
    if spirals:
        cp = make_layout("log-spiral", arms=arms, rings=rings, outer_diameter=6000.0)
        for c in spirals:
            method = "tapered" if c == "spiral" else "plain"
            plan = make_plan(cp, method, thickness=3.0, target_fold=math.radians(90))
            # fixed knuckle length: filling the usable length leaves the hub corners too tight
            out.append((f"log-spiral {arms} arms x {rings} rings, {method} (rotated copies)",
                        plan, {"knuckle_length_mm": 6.0}))
    return out


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--nx", type=int, default=40)
    ap.add_argument("--ny", type=int, default=25)
    ap.add_argument("--arms", type=int, default=48)
    ap.add_argument("--rings", type=int, default=20)
    ap.add_argument("--reps", type=int, default=3)
    ap.add_argument("--cases", default="miura,jittered,spiral,spiral-plain")
    ap.add_argument("--routes", default="rigid,translation",
                    help="share modes, each optionally +profile (validate='profile'), e.g. rigid+profile")
    args = ap.parse_args()
    routes = args.routes.split(",")
    rows = []
    with tempfile.TemporaryDirectory() as d:
        for label, plan, opts in cases(args.cases.split(","), args.nx, args.ny, args.arms,
                                       args.rings):
            fl: list[float] = []
            runs: dict[str, list] = {r: [] for r in routes}
            for _ in range(args.reps):  # interleaved A B C A B C
                fl.append(floor(plan, Path(d) / "floor.step"))
                for r in routes:
                    runs[r].append(ours(plan, Path(d) / "ours.step", r, opts))
            fmb = (Path(d) / "floor.step").stat().st_size / 1e6
            rows.append((label, len(plan.slabs), fl, fmb, runs))
    med = statistics.median
    print(f"median of {args.reps}; knuckle hinges; named XCAF STEP without pcurves")
    print("| case | panels | route | panel prototypes | parts | total s | build s | STEP s | MB "
          "| ratio to floor |")
    print("| --- | --- | --- | --- | --- | --- | --- | --- | --- | --- |")
    for label, n, fl, fmb, runs in rows:
        print(f"| {label} | {n} | floor: raw OCP prisms + one STEP | | {n} | {med(fl):.2f} | | | "
              f"{fmb:.1f} | 1.00 |")
        for r, rr in runs.items():
            tot = med([x[0] for x in rr])
            print(f"| | | share={r} | {rr[0][5]} | {rr[0][4]} | {tot:.2f} | "
                  f"{med([x[1] for x in rr]):.2f} | {med([x[2] for x in rr]):.2f} | "
                  f"{rr[0][3]:.1f} | {tot / med(fl):.2f} |")


if __name__ == "__main__":
    main()
