"""The one tolerance object of thickpanel.

Every function that compares lengths or angles takes ``tol: Tolerances = DEFAULT_TOL`` as a
keyword-only argument instead of using literals in its body.
"""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["Tolerances", "DEFAULT_TOL"]


@dataclass(frozen=True)
class Tolerances:
    """Tolerances used throughout thickpanel (lengths in mm, angles in radians).

    Attributes
    ----------
    merge : float, mm
        Two points closer than this are the same vertex. 1e-6 mm is far below any machining or
        printing resolution yet well above float round-off for sheets up to tens of metres.
    length : float, mm
        A crease shorter than this is "zero length". Same reasoning as ``merge``.
    area : float, mm^2
        A panel with smaller absolute area is "zero area".
    angle : float, rad
        Angles closer than this are equal (sector comparisons in big-little-big, parallel tests).
    kawasaki : float, rad
        Largest Kawasaki alternating-sum residual that still counts as flat-foldable. 1e-9 rad
        accepts float round-off on patterns with thousands of vertices.
    closure : float
        Largest loop-closure residual (rotation-matrix entries, dimensionless, and mm for
        translations) of a fold state that counts as closed.
    contact : float, mm
        Clearance at or below which two parts count as touching.
    solve : float
        Absolute tolerance of scalar root solves of layout parameters (rad, or dimensionless for
        log-ratios). 1e-14 leaves Kawasaki residuals of solved spiral lattices near 1e-15 rad,
        well inside ``kawasaki``.
    setback : float, mm
        Extra set-back added to each computed hinge set-back of the offset-panel method beyond
        the bisected minimum (covers bisection resolution and round-off; 1 um, below machining
        resolution).
    """

    merge: float = 1e-6
    length: float = 1e-6
    area: float = 1e-9
    angle: float = 1e-9
    kawasaki: float = 1e-9
    closure: float = 1e-9
    contact: float = 1e-6
    solve: float = 1e-14
    setback: float = 1e-3

    def __post_init__(self) -> None:
        for name, value in self.__dict__.items():
            if not (value > 0 and value < float("inf")):
                raise ValueError(f"tolerance {name} = {value!r} must be a positive finite number")


DEFAULT_TOL = Tolerances()
