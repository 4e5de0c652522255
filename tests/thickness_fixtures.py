"""Shared fixtures for the thickness and clearance tests, the benchmark and the methods doc.

Miura-ori fold states in closed form (Schenk & Guest 2013, PNAS 110(9):3276,
doi:10.1073/pnas.1217998110): with facet tilt theta the zigzag creases fold by 2 theta and the
straight creases by 2 atan(cos(gamma) tan(theta)); valleys positive, mountains negative.
These stand in for ``thickpanel.kinematics.fold_path`` where a closed form is wanted.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from thickpanel.pattern import CreasePattern
from thickpanel.poses import FoldPath, FoldState, fold_state_from_angles


def miura(a: float = 20.0, b: float = 10.0, gamma_deg: float = 60.0, nx: int = 4, ny: int = 4) -> CreasePattern:
    """A Miura-ori sheet from the layout registry."""
    from thickpanel.layouts import make_layout

    return make_layout("miura", a=a, b=b, gamma_deg=gamma_deg, nx=nx, ny=ny)


def miura_angles(cp: CreasePattern, gamma: float, theta: float) -> np.ndarray:
    """(m,) signed crease angles of a Miura sheet at facet tilt ``theta`` (rad)."""
    c = cp.creases
    v = cp.vertices
    d = v[c[:, 1]] - v[c[:, 0]]
    straight = np.abs(d[:, 1]) < 1e-9 * max(1.0, float(np.abs(d).max()))
    small = 2.0 * math.atan(math.cos(gamma) * math.tan(theta))
    ang = np.where(straight, small, 2.0 * theta)
    sign = np.array([1.0 if k == "valley" else -1.0 if k == "mountain" else 0.0 for k in cp.kinds])
    return ang * sign


@dataclass(frozen=True)
class MiuraPath(FoldPath):
    """A FoldPath whose in-between states are exact closed-form Miura states."""

    gamma: float = 1.0
    theta_max: float = 1.0

    def at(self, t: float) -> FoldState:  # noqa: D102
        cp = self.states[0].pattern
        return fold_state_from_angles(
            cp, miura_angles(cp, self.gamma, t * self.theta_max), base=self.states[0].base_panel, t=t
        )


def miura_path(cp: CreasePattern, gamma_deg: float, theta_max: float, n: int = 30) -> MiuraPath:
    """Closed-form fold path from flat to facet tilt ``theta_max`` (rad), ``t = theta / theta_max``."""
    g = math.radians(gamma_deg)
    states = tuple(
        fold_state_from_angles(cp, miura_angles(cp, g, t * theta_max), t=float(t)) for t in np.linspace(0, 1, n)
    )
    return MiuraPath(states=states, stop_reason="target", driver="t", gamma=g, theta_max=theta_max)


def single_crease(width: float = 40.0, depth: float = 30.0, kind: str = "valley") -> CreasePattern:
    """Two rectangular panels joined by one crease along x = 0."""
    v = [[-width, 0], [0, 0], [width, 0], [width, depth], [0, depth], [-width, depth]]
    e = [[0, 1], [1, 2], [2, 3], [3, 4], [4, 5], [5, 0], [1, 4]]
    return CreasePattern(v, e, ["border"] * 6 + [kind])


def hinge_path(cp: CreasePattern, rho_max: float, n: int = 37) -> FoldPath:
    """Fold path of a one-crease pattern from 0 to ``rho_max`` (signed rad), base panel P000."""
    m = cp.n_creases
    fold = [c for c in range(m) if cp.kinds[c] in ("mountain", "valley")][0]
    states = []
    for t in np.linspace(0.0, 1.0, n):
        ang = np.zeros(m)
        ang[fold] = t * rho_max
        states.append(fold_state_from_angles(cp, ang, base=0, t=float(t)))
    return FoldPath(states=tuple(states))


def degree4_vertex(a_deg: float, b_deg: float, radius: float = 50.0, kinds: tuple[str, ...] | None = None):
    """Single flat-foldable degree-4 vertex at the origin, sectors (a, b, 180 - a, 180 - b) deg ccw.

    Creases 0..3 run outwards along directions 0, a, a + b, 180 + b deg (c1..c4 of
    Huffman 1976 / REFERENCES section 2); creases 4..7 are the border chords.
    Default kinds select branch A: c1 valley, c2 mountain, c3 and c4 valley.
    """
    a, b = math.radians(a_deg), math.radians(b_deg)
    dirs = [0.0, a, a + b, math.pi + b]
    v = [[0.0, 0.0]] + [[radius * math.cos(d), radius * math.sin(d)] for d in dirs]
    e = [[0, 1], [0, 2], [0, 3], [0, 4], [1, 2], [2, 3], [3, 4], [4, 1]]
    k = list(kinds or ("valley", "mountain", "valley", "valley")) + ["border"] * 4
    return CreasePattern(v, e, k)


def degree4_branch_a(a_deg: float, b_deg: float, rho1: float) -> tuple[float, float, float, float]:
    """Branch A of a flat-foldable degree-4 vertex (Huffman 1976; restated in Evans et al. 2015,
    R. Soc. Open Sci. 2:150067): rho3 = rho1, rho4 = -rho2,
    tan(rho2/2) = -p tan(rho1/2), p = cos((a+b)/2) / cos((a-b)/2)."""
    a, b = math.radians(a_deg), math.radians(b_deg)
    p = math.cos((a + b) / 2) / math.cos((a - b) / 2)
    rho2 = 2 * math.atan(-p * math.tan(rho1 / 2))
    return rho1, rho2, rho1, -rho2


def degree4_path(cp: CreasePattern, a_deg: float, b_deg: float, rho1_max: float, n: int = 25) -> FoldPath:
    """Branch-A fold path of :func:`degree4_vertex`, driven by crease 0 up to ``rho1_max`` (rad)."""
    states = []
    for t in np.linspace(0.0, 1.0, n):
        ang = np.zeros(cp.n_creases)
        ang[:4] = degree4_branch_a(a_deg, b_deg, t * rho1_max)
        states.append(fold_state_from_angles(cp, ang, t=float(t)))
    return FoldPath(states=tuple(states))


def ocp_slab_solid(slab, pose):
    """OpenCascade solid of a slab (prism trimmed by its cut planes, plus standoffs) placed by a
    4x4 pose; used only by tests and benchmarks to cross-check the numpy narrow phase."""
    from OCP.BRep import BRep_Builder
    from OCP.BRepAlgoAPI import BRepAlgoAPI_Cut
    from OCP.BRepBuilderAPI import BRepBuilderAPI_MakeFace, BRepBuilderAPI_MakePolygon, BRepBuilderAPI_Transform
    from OCP.BRepPrimAPI import BRepPrimAPI_MakeHalfSpace, BRepPrimAPI_MakePrism
    from OCP.gp import gp_Dir, gp_Pln, gp_Pnt, gp_Trsf, gp_Vec
    from OCP.TopoDS import TopoDS_Compound

    def prism(poly, z0, z1):
        mp = BRepBuilderAPI_MakePolygon()
        for x, y in poly:
            mp.Add(gp_Pnt(float(x), float(y), float(z0)))
        mp.Close()
        face = BRepBuilderAPI_MakeFace(mp.Wire(), True).Face()
        return BRepPrimAPI_MakePrism(face, gp_Vec(0, 0, float(z1 - z0))).Shape()

    shape = prism(slab.polygon, slab.z0, slab.z1)
    for cut in slab.cuts:
        n = np.asarray(cut.normal, float)
        p0 = n * cut.offset
        pln = gp_Pln(gp_Pnt(*p0), gp_Dir(*n))
        face = BRepBuilderAPI_MakeFace(pln, -1e4, 1e4, -1e4, 1e4).Face()
        ref = p0 + n * 1.0
        half = BRepPrimAPI_MakeHalfSpace(face, gp_Pnt(*ref)).Solid()
        shape = BRepAlgoAPI_Cut(shape, half).Shape()
    if slab.standoffs:
        comp = TopoDS_Compound()
        bb = BRep_Builder()
        bb.MakeCompound(comp)
        bb.Add(comp, shape)
        for s in slab.standoffs:
            bb.Add(comp, prism(s.polygon, s.z0, s.z1))
        shape = comp
    tr = gp_Trsf()
    m = np.asarray(pose, float)
    tr.SetValues(*m[0, :4], *m[1, :4], *m[2, :4])
    return BRepBuilderAPI_Transform(shape, tr, True).Shape()


def ocp_common_volume(a, b) -> float:
    """Volume (mm^3) of the boolean common of two OCP shapes."""
    from OCP.BRepAlgoAPI import BRepAlgoAPI_Common
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps

    common = BRepAlgoAPI_Common(a, b).Shape()
    props = GProp_GProps()
    BRepGProp.VolumeProperties_s(common, props)
    return float(props.Mass())
