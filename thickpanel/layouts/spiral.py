"""Logarithmic-spiral layouts: two-family grids and single-family twist grids around a hub.

Every layout is the image of a log-polar lattice (see :mod:`.spiral_lattice`): vertex ring
``m = 0..rings`` at radius ``r_hub * ring_scale**m``, arm ``j = 0..arms-1``, with straight creases
(chords) along lattice steps. The hub is one flat regular polygon through ring 0; the outer
border is the polygon through the last ring. All cells are similar to each other.

Parameters in the designer's terms (mm and degrees):

* ``arms`` N >= 3, ``rings`` >= 1 (vertex rings outside the hub), ``outer_diameter``;
* the lattice has two parameters (ring scale and twist per ring). They are fixed by the choice of
  variant, by Kawasaki's condition (quad cells, ``flat_foldable=True``) and by what you give:
  ``hub_diameter`` or ``ring_scale`` (the radius ratio of successive rings), and one of ``b``,
  ``pitch_deg`` (tan(pitch) = b) or ``k`` (radial contraction of a spoke curled at constant arc
  length, b = k / sqrt(1 - k^2)) for the reference spiral family.
* Give exactly what is missing; a value that contradicts flat-foldability raises
  :class:`~thickpanel.errors.PatternError` with the nearest feasible value, unless
  ``flat_foldable=False``, which keeps your values and records the Kawasaki deviation in
  :func:`~thickpanel.layouts.assignment.layout_info`.

Triangulated cells (``triangulate="short"``/``"long"``) satisfy Kawasaki for every lattice
(each degree-6 vertex's alternating sum is a constant of the steps, here zero), so they need two
given values. Hub corner vertices cannot satisfy Kawasaki in any of these grids (the two cell
creases leaving a corner enclose a fixed angle, the hub polygon another) and are listed as
``exempt`` in the layout info.
"""

from __future__ import annotations

import logging
import math
import numbers
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..errors import PatternError
from ..pattern import CreasePattern, vid
from ..tolerances import DEFAULT_TOL, Tolerances
from . import register_layout, register_panel_estimate
from .assignment import LayoutInfo, attach_info, choose_assignment, kawasaki_residuals
from .spiral_lattice import (
    RADIAL_STEPS,
    RING_STEPS,
    TWO_FAMILY_STEPS,
    Constraint,
    Step,
    b_from_k,
    b_from_pitch,
    k_from_b,
    kawasaki_residual,
    lattice_creases,
    lattice_points,
    pitch_from_b,
    solution_curve,
    solve_parameter,
)

__all__ = ["log_spiral_grid", "spiral_rings", "spiral_radial", "GridSpec", "TRIANGULATE"]

TRIANGULATE: tuple[str, ...] = ("none", "short", "long")
_LOG = logging.getLogger("thickpanel")
_H_RANGE = (0.0, 4.0)  # ln(ring scale) searched by the solver: ring scale 1..~55


@dataclass(frozen=True)
class GridSpec:
    """One lattice family: its crease steps, labels, fixed twist and cell diagonals."""

    layout: str
    steps: tuple[Step, ...]
    labels: tuple[str, ...]
    ref_step: Step
    diagonals: tuple[Step, Step]
    delta_range: tuple[float, float]  # in units of 2 pi / N


SPECS = {
    "log-spiral": GridSpec(
        "log-spiral", TWO_FAMILY_STEPS, ("family1", "family2"), (1, 0), ((2, -1), (0, 1)), (0.0, 1.0)
    ),
    "spiral-rings": GridSpec("spiral-rings", RING_STEPS, ("spiral", "ring"), (1, 0), ((1, 1), (1, -1)), (0.0, 2.0)),
    "spiral-radial": GridSpec(
        "spiral-radial", RADIAL_STEPS, ("radial", "spiral"), (1, 1), ((2, 1), (0, 1)), (0.0, 0.0)
    ),
}


# ---------------------------------------------------------------------------- validation
def real_param(name: str, value: object, unit: str) -> float:
    if isinstance(value, bool) or not isinstance(value, numbers.Real) or not math.isfinite(float(value)):
        raise PatternError(f"{name} must be a finite number in {unit}; got {value!r}")
    return float(value)


def count_param(name: str, value: object, lo: int, hi: int) -> int:
    if isinstance(value, bool) or not isinstance(value, numbers.Integral):
        raise PatternError(f"{name} must be a whole number in {lo}..{hi}; got {value!r}")
    if not lo <= int(value) <= hi:
        raise PatternError(f"{name} = {value} is out of range; allowed: {lo}..{hi}")
    return int(value)


def _user_constraints(
    spec: GridSpec, n: int, rings: int, outer: float, hub: Any, b: Any, pitch_deg: Any, ring_scale: Any, k: Any
) -> list[tuple[str, float, Constraint]]:
    out: list[tuple[str, float, Constraint]] = []
    if hub is not None and ring_scale is not None:
        raise PatternError(
            f"give hub_diameter ({hub!r} mm) or ring_scale ({ring_scale!r}), not both: "
            f"with {rings} rings and outer_diameter {outer:g} mm either fixes the other"
        )
    if hub is not None:
        d = real_param("hub_diameter", hub, "mm")
        if not 0.0 < d < outer:
            raise PatternError(
                f"hub_diameter = {d:g} mm is out of range; allowed: 0 < hub_diameter < outer_diameter = {outer:g} mm"
            )
        out.append(("hub_diameter", d, Constraint("h", math.log(outer / d) / rings)))
    if ring_scale is not None:
        s = real_param("ring_scale", ring_scale, "(ratio)")
        if not 1.0 < s < math.exp(_H_RANGE[1]):
            top = math.exp(_H_RANGE[1])
            raise PatternError(f"ring_scale = {s:g} is out of range; allowed: 1 < ring_scale < {top:.4g}")
        out.append(("ring_scale", s, Constraint("h", math.log(s))))
    spiral = [(nm, v) for nm, v in (("b", b), ("pitch_deg", pitch_deg), ("k", k)) if v is not None]
    if len(spiral) > 1:
        raise PatternError(f"give only one of b, pitch_deg and k (they fix the same spiral); got {dict(spiral)}")
    if spiral:
        nm, v = spiral[0]
        x = real_param(nm, v, "deg" if nm == "pitch_deg" else "(dimensionless)")
        if nm == "b":
            if not x > 0:
                raise PatternError(f"b = {x:g} is out of range; allowed: b > 0")
            bb = x
        elif nm == "pitch_deg":
            if not 0.0 < x < 90.0:
                raise PatternError(f"pitch_deg = {x:g} deg is out of range; allowed: strictly between 0 and 90 deg")
            bb = b_from_pitch(math.radians(x))
        else:
            if not 0.0 < x < 1.0:
                raise PatternError(f"k = {x:g} is out of range; allowed: 0 < k < 1")
            bb = b_from_k(x)
        out.append((nm, x, Constraint("b", bb, spec.ref_step)))
    return out


def _param_value(name: str, h: float, delta: float, spec: GridSpec, n: int, rings: int, outer: float) -> float:
    """The user-facing value of parameter ``name`` for lattice (h, delta)."""
    beta = 2.0 * math.pi / n
    if name == "hub_diameter":
        return outer * math.exp(-rings * h)
    if name == "ring_scale":
        return math.exp(h)
    dm, dj = spec.ref_step
    ang = dm * delta + dj * beta
    bb = h / ang if ang != 0 else math.inf
    if name == "b":
        return bb
    if name == "pitch_deg":
        return math.degrees(pitch_from_b(bb))
    return k_from_b(bb)


def _linear_solve(cons: list[Constraint], n: int) -> tuple[float, float] | None:
    beta = 2.0 * math.pi / n
    rows, rhs = [], []
    for c in cons:
        if c.mode == "h":
            rows.append([1.0, 0.0])
            rhs.append(c.value)
        elif c.mode == "delta":
            rows.append([0.0, 1.0])
            rhs.append(c.value)
        else:
            dm, dj = c.ref_step
            rows.append([1.0, -c.value * dm])
            rhs.append(c.value * dj * beta)
    a = np.array(rows)
    if abs(np.linalg.det(a)) < 1e-300:
        return None
    h, d = np.linalg.solve(a, np.array(rhs))
    return float(h), float(d)


def _resolve(
    spec: GridSpec,
    steps: tuple[Step, ...],
    n: int,
    rings: int,
    outer: float,
    builtin: list[Constraint],
    given: list[tuple[str, float, Constraint]],
    kawasaki: bool,
    flat_foldable: bool,
    tol: Tolerances,
) -> tuple[float, float]:
    """Lattice (h, delta) from the fixed and given values plus Kawasaki where it constrains."""
    beta = 2.0 * math.pi / n
    cons = builtin + [c for _, _, c in given]
    use_kaw = kawasaki and flat_foldable
    need = 2 - int(use_kaw)
    names = ", ".join(f"{nm} = {v:g}" for nm, v, _ in given) or "nothing"
    choices = "hub_diameter or ring_scale, and/or one of b, pitch_deg, k"
    if len(cons) < need:
        why = "Kawasaki fixes one lattice parameter, so one value is needed" if use_kaw else (
            "triangulated cells satisfy Kawasaki for every lattice, so two values are needed"
            if flat_foldable else "flat_foldable=False keeps only your values, so two are needed")
        raise PatternError(f"{spec.layout}: too few parameters ({names}); {why}: give {choices}")
    d_lo, d_hi = spec.delta_range[0] * beta, spec.delta_range[1] * beta
    accept = tol.kawasaki
    if len(cons) == 1:  # one value given, Kawasaki solves the other
        c = cons[0]
        if c.mode == "delta":
            root = solve_parameter(steps, n, c, _H_RANGE, xtol=tol.solve, accept=accept)
            sol = None if root is None else (root, c.value)
        else:
            root = solve_parameter(steps, n, c, (d_lo, d_hi), xtol=tol.solve, accept=accept)
            sol = None
            if root is not None:
                h = c.value if c.mode == "h" else c.value * (c.ref_step[0] * root + c.ref_step[1] * beta)
                sol = (h, root)
        if sol is not None:
            return sol
        curve = solution_curve(steps, n, (d_lo, d_hi), _H_RANGE, xtol=tol.solve * 1e3, accept=accept)
        if not given or not len(curve):
            raise PatternError(
                f"{spec.layout} with {spec.labels[0]}/{spec.labels[1]} quadrilateral cells and {n} arms has no "
                f"flat-foldable lattice (given: {names}); use triangulate='short' or 'long', or flat_foldable=False"
            )
        nm, v, _ = given[0]
        vals = np.array([_param_value(nm, h, d, spec, n, rings, outer) for h, d in curve])
        near = float(vals[np.argmin(np.abs(vals - v))])
        raise PatternError(
            f"{spec.layout}: no flat-foldable lattice with {nm} = {v:g} for {n} arms; flat-foldable values span "
            f"{vals.min():.6g}..{vals.max():.6g}, nearest feasible {nm} = {near:.6g} "
            "(or pass flat_foldable=False to keep your value)"
        )
    if len(cons) > 2:
        most = need - len(builtin)
        raise PatternError(f"{spec.layout}: too many parameters ({names}); this variant takes at most {most}")
    sol2 = _linear_solve(cons, n)
    if sol2 is None:
        raise PatternError(f"{spec.layout}: the parameters {names} do not fix the lattice (they repeat one another)")
    h, d = sol2
    if not (h > 0.0):
        raise PatternError(f"{spec.layout}: {names} give a ring scale {math.exp(h):.6g}; allowed: ring scale > 1")
    res = float(kawasaki_residual(steps, n, h, d))
    if use_kaw and abs(res) > tol.kawasaki:  # triangulated grids are checked after the build
        # over-determined: report the nearest value of the last given parameter
        nm, v, _ = given[-1]
        hint = ""
        if use_kaw:
            try:
                sub = _resolve(spec, steps, n, rings, outer, builtin, given[:-1], kawasaki, True, tol)
                hint = f"; nearest feasible {nm} = {_param_value(nm, sub[0], sub[1], spec, n, rings, outer):.6g}"
            except PatternError:
                hint = ""
        raise PatternError(
            f"{spec.layout}: no flat-foldable lattice with {names} for {n} arms (Kawasaki residual "
            f"{math.degrees(res):.3g} deg){hint}; drop {nm}, or pass flat_foldable=False to keep your values"
        )
    return h, d


# ---------------------------------------------------------------------------- geometry
def _slit_paths(n: int, rings: int, h: float, delta: float, out_steps: list[Step], count: int) -> list[tuple[int, int]]:
    """Creases of ``count`` evenly spaced hub-to-border chains, each keeping close to its radius."""
    beta = 2.0 * math.pi / n
    path: list[Step] = []
    m, jj, off = 0, 0, 0.0
    while m < rings:
        best = min(out_steps, key=lambda s: (abs(off + s[0] * delta + s[1] * beta), s))
        if m + best[0] > rings:
            best = min((s for s in out_steps if m + s[0] <= rings), key=lambda s: abs(off + s[0] * delta + s[1] * beta))
        path.append(best)
        off += best[0] * delta + best[1] * beta
        m += best[0]
        jj += best[1]
    pairs = []
    for s in range(count):
        j0 = (s * n) // count
        m, j = 0, j0
        for dm, dj in path:
            pairs.append((m * n + j % n, (m + dm) * n + (j + dj) % n))
            m, j = m + dm, j + dj
    return pairs


def _build(
    spec: GridSpec,
    n: int,
    rings: int,
    outer: float,
    h: float,
    delta: float,
    diag: Step | None,
    slits: int,
    name: str,
    tol: Tolerances,
) -> tuple[CreasePattern, list[str], list[int]]:
    r0 = 0.5 * outer * math.exp(-rings * h)
    v = lattice_points(n, rings, h, delta, r0)
    cre: list[np.ndarray] = []
    lab: list[str] = []

    def add(c: np.ndarray, label: str | list[str]) -> None:
        cre.append(c)
        lab.extend([label] * len(c) if isinstance(label, str) else label)

    for step, label in zip(spec.steps, spec.labels, strict=True):
        if step[0] == 0:
            continue
        add(lattice_creases(n, rings, step), label)
    has_ring = any(s[0] == 0 for s in spec.steps)
    add(lattice_creases(n, rings, (0, 1), np.array([0])), "hub")
    if has_ring and rings > 1:
        add(lattice_creases(n, rings, (0, 1), np.arange(1, rings)), spec.labels[spec.steps.index((0, 1))])
    if diag is not None:
        if diag[0] == 0:
            add(lattice_creases(n, rings, diag, np.arange(1, rings)), "diagonal")
        else:
            add(lattice_creases(n, rings, diag), "diagonal")
    add(lattice_creases(n, rings, (0, 1), np.array([rings])), "border")
    creases = np.concatenate(cre, axis=0)
    labels = lab
    if slits:
        out_steps = [s for s in spec.steps + ((diag,) if diag else ()) if s[0] == 1]
        cut = set()
        for a, b in _slit_paths(n, rings, h, delta, out_steps, slits):
            cut.add((min(a, b), max(a, b)))
        key = [(min(a, b), max(a, b)) for a, b in creases.tolist()]
        labels = ["cut" if kk in cut else lb for kk, lb in zip(key, labels, strict=True)]
    default = {"family1": "mountain", "family2": "valley", "spiral": "mountain", "ring": "valley",
               "radial": "valley", "hub": "valley", "diagonal": "valley", "border": "border", "cut": "cut"}
    kinds = [default[lb] for lb in labels]
    lengths = np.linalg.norm(v[creases[:, 1]] - v[creases[:, 0]], axis=1)
    if lengths.min() < tol.length:
        raise PatternError(
            f"{spec.layout}: shortest crease {lengths.min():.3g} mm is below the length tolerance {tol.length} mm; "
            f"increase outer_diameter ({outer:g} mm) or decrease rings ({rings})"
        )
    try:
        cp = CreasePattern(v, creases, kinds, name=name, tol=tol)
    except PatternError as exc:
        raise PatternError(
            f"{spec.layout}: the lattice (ring scale {math.exp(h):.6g}, twist {math.degrees(delta):.6g} deg per ring) "
            f"gives an invalid pattern: {exc}"
        ) from None
    return cp, labels, list(range(n))


def _grid(
    layout: str,
    arms: Any,
    rings: Any,
    outer_diameter: Any,
    hub_diameter: Any,
    b: Any,
    pitch_deg: Any,
    ring_scale: Any,
    k: Any,
    slits: Any,
    triangulate: Any,
    flat_foldable: bool,
    assign: Any,
    name: str,
    tol: Tolerances,
    builtin_delta: float | None,
    defaults: dict[str, float | None],
) -> CreasePattern:
    spec = SPECS[layout]
    n = count_param("arms", arms, 3, 720)
    m = count_param("rings", rings, 1, 500)
    outer = real_param("outer_diameter", outer_diameter, "mm")
    if not outer > 0:
        raise PatternError(f"outer_diameter = {outer:g} mm is out of range; allowed: > 0 mm")
    ns = count_param("slits", slits, 0, n)
    if triangulate not in TRIANGULATE:
        raise PatternError(f"triangulate = {triangulate!r}; allowed: {', '.join(TRIANGULATE)}")
    given = _user_constraints(spec, n, m, outer, hub_diameter, b, pitch_deg, ring_scale, k)
    builtin = [] if builtin_delta is None else [Constraint("delta", builtin_delta)]
    tri = triangulate != "none"
    if not given and defaults:
        need = 2 - len(builtin) - int(flat_foldable and not tri)
        extra = dict(list(defaults.items())[: max(need, 0)])
        given = _user_constraints(
            spec, n, m, outer, extra.get("hub_diameter"), None, extra.get("pitch_deg"), None, None
        )
    # Kawasaki is one equation for quads, an identity for the triangulated cells
    h, d = _resolve(spec, spec.steps, n, m, outer, builtin, given, not tri, flat_foldable, tol)
    beta_n = 2.0 * math.pi / n
    if layout == "log-spiral" and not 0.0 < d < beta_n:
        raise PatternError(
            f"log-spiral: the given values give a twist of {math.degrees(d):.6g} deg per ring; the two spiral "
            f"families wind in opposite senses only for 0 < twist < 360/N = {360.0 / n:.6g} deg, i.e. "
            f"b > {h / beta_n:.6g} at ring scale {math.exp(h):.6g}"
        )
    diag: Step | None = None
    if tri:
        w = [abs(complex(math.exp(s[0] * h) * math.cos(s[0] * d + s[1] * 2 * math.pi / n) - 1.0,
                         math.exp(s[0] * h) * math.sin(s[0] * d + s[1] * 2 * math.pi / n))) for s in spec.diagonals]
        short, long_ = (spec.diagonals if w[0] <= w[1] else spec.diagonals[::-1])
        diag = short if triangulate == "short" else long_
        if flat_foldable and diag[0] >= 2 and m >= 2:
            raise PatternError(
                f"{spec.layout}: triangulate={triangulate!r} uses diagonals spanning two rings; the vertices of "
                f"the first and last ring then have odd degree and cannot fold flat; use triangulate="
                f"{'short' if triangulate == 'long' else 'long'!r} or flat_foldable=False"
            )
    label = name or f"{layout} N={n} rings={m} D={outer:g}mm"
    cp, labels, hub = _build(spec, n, m, outer, h, d, diag, ns, label, tol)
    steps = spec.steps + ((diag,) if diag else ())
    interior = cp.interior_vertices
    hub_set = set(hub)
    lattice_v = np.array([x for x in interior.tolist() if x not in hub_set], dtype=np.int64)
    res = kawasaki_residuals(cp, lattice_v)
    dev = float(np.max(np.abs(np.nan_to_num(res, nan=np.inf)))) if len(res) else 0.0
    if flat_foldable and dev > tol.kawasaki:
        worst = int(lattice_v[int(np.argmax(np.abs(np.nan_to_num(res, nan=np.inf))))])
        raise PatternError(
            f"{spec.layout}: vertex {vid(worst)} misses Kawasaki by {dev:.3g} rad (tolerance {tol.kawasaki:g}); "
            "the lattice step order changed for these parameters; pass flat_foldable=False to keep them"
        )
    if not flat_foldable and dev > tol.kawasaki:
        _LOG.info("%s: kept the given parameters; largest Kawasaki deviation %.3g rad", label, dev)
    beta = 2 * math.pi / n
    dm, dj = spec.ref_step
    bb = h / (dm * d + dj * beta)
    params = {
        "arms": float(n), "rings": float(m), "outer_diameter": outer,
        "hub_diameter": outer * math.exp(-m * h), "ring_scale": math.exp(h),
        "twist_deg": math.degrees(d), "b": bb, "pitch_deg": math.degrees(math.atan(bb)), "k": k_from_b(abs(bb)),
        "lattice_residual": float(kawasaki_residual(steps, n, h, d)),
    }
    if layout == "log-spiral":
        params["b2"] = h / (d - beta)
    info = LayoutInfo(
        tuple(labels), np.asarray(cp.creases[:, 0] % n), n, params, dev,
        tuple(int(x) for x in interior if x in hub_set),
    )
    attach_info(cp, info)
    return choose_assignment(cp, assign, require_ok=flat_foldable, tol=tol)


# ---------------------------------------------------------------------------- public generators
def log_spiral_grid(
    arms: int = 12,
    rings: int = 6,
    outer_diameter: float = 1200.0,
    hub_diameter: float | None = None,
    *,
    symmetric: bool = True,
    b: float | None = None,
    pitch_deg: float | None = None,
    ring_scale: float | None = None,
    k: float | None = None,
    slits: int = 0,
    triangulate: str = "none",
    flat_foldable: bool = True,
    assign: Any = "auto",
    name: str = "",
    tol: Tolerances = DEFAULT_TOL,
) -> CreasePattern:
    """Two-family logarithmic-spiral grid: N spirals of each handedness crossing in cells.

    Parameters
    ----------
    arms : int, N >= 3
    rings : int >= 1, vertex rings outside the hub: rings - 1 rows of full cells, plus one row of
        triangles at the hub and one at the border
    outer_diameter : float, mm, circumdiameter of the border polygon
    hub_diameter : float, mm, optional; circumdiameter of the hub polygon
    symmetric : bool
        True: mirror-symmetric kite cells (twist pi/N per ring); Kawasaki then fixes the ring
        scale, ``ring_scale = sin(pi/4 + pi/2N) / sin(pi/4 - pi/2N)``, and nothing else may be
        given for quad cells. False: chiral grid, two families of different pitch; give one of
        ``hub_diameter``, ``ring_scale``, ``b``, ``pitch_deg``, ``k`` (quads) and Kawasaki solves
        the twist.
    b, pitch_deg, k : float, optional
        Spiral constant of family 1 (b > 0), its pitch angle in degrees (0 < pitch < 90,
        tan(pitch) = b), or the curl contraction 0 < k < 1 (b = k / sqrt(1 - k^2)).
    ring_scale : float, optional, > 1; radius ratio of successive vertex rings.
    slits : int, 0..N; evenly spaced radial cuts from the hub to the border (kind ``cut``).
    triangulate : ``none``, ``short`` or ``long`` diagonal of each cell.
    flat_foldable : bool
        True: solve / check Kawasaki at every lattice vertex; False: keep the given values.
    assign : see :func:`~thickpanel.layouts.assignment.choose_assignment`.
    name : str
    tol : Tolerances

    Returns
    -------
    CreasePattern
        Centred at the origin; ``layout_info(pattern)`` holds the solved parameters.

    Examples
    --------
    >>> cp = log_spiral_grid(12, 3, 600.0, assign=0)
    >>> cp.n_panels  # 12 (3 - 1) kites + 2 x 12 triangles + the hub
    49
    """
    n = count_param("arms", arms, 3, 720)
    return _grid("log-spiral", n, rings, outer_diameter, hub_diameter, b, pitch_deg, ring_scale, k, slits,
                 triangulate, flat_foldable, assign, name, tol, math.pi / n if symmetric else None, {})


def spiral_rings(
    arms: int = 12,
    rings: int = 6,
    outer_diameter: float = 1200.0,
    hub_diameter: float | None = None,
    *,
    b: float | None = None,
    pitch_deg: float | None = None,
    ring_scale: float | None = None,
    k: float | None = None,
    slits: int = 0,
    triangulate: str = "short",
    flat_foldable: bool = True,
    assign: Any = "auto",
    name: str = "",
    tol: Tolerances = DEFAULT_TOL,
) -> CreasePattern:
    """Single-family twist grid: one spiral family crossed by concentric polygon rings.

    Quad cells are never flat-foldable unless the spiral is radial (Kawasaki at a vertex forces
    zero twist), so the default is triangulated cells, which need ``hub_diameter`` or
    ``ring_scale`` and one of ``b``/``pitch_deg``/``k``. With none given, hub = outer / 4 and
    pitch 60 deg. Other parameters as :func:`log_spiral_grid`.
    """
    return _grid("spiral-rings", arms, rings, outer_diameter, hub_diameter, b, pitch_deg, ring_scale, k, slits,
                 triangulate, flat_foldable, assign, name, tol, None,
                 {"hub_diameter": _default_hub(outer_diameter), "pitch_deg": 60.0})


def spiral_radial(
    arms: int = 12,
    rings: int = 6,
    outer_diameter: float = 1200.0,
    hub_diameter: float | None = None,
    *,
    b: float | None = None,
    pitch_deg: float | None = None,
    ring_scale: float | None = None,
    k: float | None = None,
    slits: int = 0,
    triangulate: str = "short",
    flat_foldable: bool = True,
    assign: Any = "auto",
    name: str = "",
    tol: Tolerances = DEFAULT_TOL,
) -> CreasePattern:
    """Single-family twist grid: radial lines crossed by one spiral family.

    The spiral advances one arm per ring, so one value fixes the lattice: ``hub_diameter``,
    ``ring_scale`` or one of ``b``/``pitch_deg``/``k`` (with none given, hub = outer / 4). Quad
    cells are not flat-foldable (Kawasaki forces ring scale 1); the default triangulates them.
    """
    return _grid("spiral-radial", arms, rings, outer_diameter, hub_diameter, b, pitch_deg, ring_scale, k, slits,
                 triangulate, flat_foldable, assign, name, tol, 0.0, {"hub_diameter": _default_hub(outer_diameter)})


def _default_hub(outer: Any) -> float | None:
    return float(outer) / 4.0 if isinstance(outer, numbers.Real) and not isinstance(outer, bool) else None


register_layout("log-spiral", log_spiral_grid)
register_layout("spiral-rings", spiral_rings)
register_layout("spiral-radial", spiral_radial)


def _spiral_panels(*, arms: int = 12, rings: int = 6, triangulate: str = "none", **_: Any) -> int:
    """Cells arms x rings, doubled when triangulated, plus the hub (an estimate for the size limit)."""
    return int(arms) * int(rings) * (1 if triangulate == "none" else 2) + 1


register_panel_estimate("log-spiral", _spiral_panels)
register_panel_estimate("spiral-rings", lambda **p: _spiral_panels(**{"triangulate": "short", **p}))
register_panel_estimate("spiral-radial", lambda **p: _spiral_panels(**{"triangulate": "short", **p}))
