"""Benchmark: a 1,000-panel Miura plan with knuckle hinges, built and exported to STEP, against
the floor: the same number of plain polygon prisms made with raw OCP and written to one STEP file.

Run: ``.venv/bin/python bench/bench_solids.py [--nx 40 --ny 25 --reps 3]``. Prints a table of
median times and the ratio (target: at most 3x). Not part of the test suite.
"""

from __future__ import annotations

import argparse
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
from thickpanel import occ  # noqa: E402
from thickpanel.export.step import _quiet, step_bytes  # noqa: E402
from thickpanel.export.writer import write_atomic  # noqa: E402
from thickpanel.layouts import make_layout  # noqa: E402
from thickpanel.solids import build_parts  # noqa: E402


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


def ours(plan, path: Path, validate: str = "full") -> tuple[float, float, float, float, int]:
    """build_parts(knuckle) (validated) + named XCAF STEP of every part, written atomically."""
    t0 = time.perf_counter()
    ps = build_parts(plan, hinge_style="knuckle", validate=validate)
    t1 = time.perf_counter()
    data = step_bytes([(p.name, p.pieces, None) for p in ps.parts], name="bench")
    write_atomic(path, data)
    t2 = time.perf_counter()
    return t2 - t0, t1 - t0, t2 - t1, len(data) / 1e6, len(ps.parts)


def check_cost(plan, sample: int = 100) -> tuple[float, float, int]:
    """BRepCheck_Analyzer cost: ms per notched panel body (fresh, unshared copies of a sample),
    the extrapolated seconds for every panel, and the number of distinct prototypes checked."""
    ps = build_parts(plan, hinge_style="knuckle")
    panels = [p for p in ps.parts if p.kind == "panel"]
    bodies = [occ.prism(p.outline, 0.0, p.thickness) for p in panels[:sample]]
    t0 = time.perf_counter()
    ok = all(occ.check_shape(s) for s in bodies)
    assert ok
    per = (time.perf_counter() - t0) / len(bodies)
    protos = {k for p in ps.parts for k, _, _ in p.pieces}
    return per * 1e3, per * len(panels), len(protos)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--nx", type=int, default=40)
    ap.add_argument("--ny", type=int, default=25)
    ap.add_argument("--reps", type=int, default=3)
    ap.add_argument("--jitter", type=float, default=0.0,
                    help="move inner vertices by up to this many mm so no two panels are congruent")
    args = ap.parse_args()
    cp = make_layout("miura", a=40.0, b=35.0, gamma_deg=70.0, nx=args.nx, ny=args.ny)
    if args.jitter > 0:
        rng = np.random.default_rng(1)
        v = cp.vertices.copy()
        inner = cp.interior_vertices
        v[inner] += rng.uniform(-args.jitter, args.jitter, (len(inner), 2))
        cp = type(cp)(v, cp.creases, cp.kinds, cp.target_angles, name="jittered miura")
    plan = plain_plan(cp, 4.0, 0.6, face="mid", clear=8.0)
    n = len(plan.slabs)
    fl: list[float] = []
    runs: dict[str, list[tuple[float, float, float, float, int]]] = {"full": [], "profile": []}
    with tempfile.TemporaryDirectory() as d:
        for _ in range(args.reps):  # interleaved A B C A B C
            fl.append(floor(plan, Path(d) / "floor.step"))
            for mode in runs:
                runs[mode].append(ours(plan, Path(d) / "ours.step", mode))
        fmb = (Path(d) / "floor.step").stat().st_size / 1e6
    chk_ms, chk_all, n_protos = check_cost(plan)
    med = statistics.median
    nparts = runs["full"][0][4]
    print(f"{cp.name}: panels {n}, hinge lines {len(plan.hinges)}, parts written {nparts}, "
          f"median of {args.reps}")
    print("| route | total s | build s | STEP s | MB | ratio to floor |")
    print("| --- | --- | --- | --- | --- | --- |")
    print(f"| floor: raw OCP prisms + one STEP | {med(fl):.2f} | | | {fmb:.1f} | 1.00 |")
    for mode, rr in runs.items():
        tot = med([r[0] for r in rr])
        print(f"| build_parts(knuckle, validate={mode}) + named STEP | {tot:.2f} | "
              f"{med([r[1] for r in rr]):.2f} | {med([r[2] for r in rr]):.2f} | {rr[0][3]:.1f} | "
              f"{tot / med(fl):.2f} |")
    print(f"BRepCheck of one fresh notched panel body: {chk_ms:.1f} ms (x {n} = {chk_all:.1f} s if "
          f"every body were checked); distinct validated prototypes: {n_protos}")


if __name__ == "__main__":
    main()
