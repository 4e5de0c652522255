"""ISO 286 limits and fits for pin hinges (hole basis: reamed holes, ground pins).

Limit deviations in micrometres from ISO 286-2:2010 tables for the tolerance classes a pin hinge
uses. Size ranges follow the standard: "over a up to and including b" mm. The rows up to 10 mm are
the ones quoted in ``../shared/REFERENCES.md`` section 7 for H7, g6 and h6; the 10-18 and 18-30 mm
rows, and the H8 and f7 classes, are quoted from memory of the same tables and should be checked
against the standard before use.
"""

from __future__ import annotations

from dataclasses import dataclass

from thickpanel.errors import HingeError

__all__ = ["DEVIATIONS_UM", "SIZE_RANGES_MM", "Fit", "limit_deviations", "fit", "fit_for_play", "PLAY_FITS"]

#: Upper limits of the size ranges, mm ("over previous up to and including this").
SIZE_RANGES_MM: tuple[float, ...] = (3.0, 6.0, 10.0, 18.0, 30.0)

#: (upper, lower) limit deviations in micrometres per tolerance class and size range.
DEVIATIONS_UM: dict[str, tuple[tuple[int, int], ...]] = {
    "H7": ((10, 0), (12, 0), (15, 0), (18, 0), (21, 0)),
    "H8": ((14, 0), (18, 0), (22, 0), (27, 0), (33, 0)),
    "g6": ((-2, -8), (-4, -12), (-5, -14), (-6, -17), (-7, -20)),
    "h6": ((0, -6), (0, -8), (0, -9), (0, -11), (0, -13)),
    "f7": ((-6, -16), (-10, -22), (-13, -28), (-16, -34), (-20, -41)),
}


def limit_deviations(tolerance_class: str, size_mm: float) -> tuple[float, float]:
    """(upper, lower) limit deviations in mm for a tolerance class at a nominal size.

    Parameters
    ----------
    tolerance_class : str
        ``H7``, ``H8``, ``g6``, ``h6`` or ``f7``.
    size_mm : float
        Nominal size, 0 < size <= 30 mm.
    """
    if tolerance_class not in DEVIATIONS_UM:
        raise HingeError(
            f"tolerance class {tolerance_class!r} is not in the table; "
            f"known: {', '.join(sorted(DEVIATIONS_UM))}"
        )
    if not (0.0 < size_mm <= SIZE_RANGES_MM[-1]):
        raise HingeError(
            f"nominal size {size_mm!r} mm is outside the fit table; allowed: 0 < size <= "
            f"{SIZE_RANGES_MM[-1]:g} mm"
        )
    k = next(i for i, top in enumerate(SIZE_RANGES_MM) if size_mm <= top)
    up, lo = DEVIATIONS_UM[tolerance_class][k]
    return up / 1000.0, lo / 1000.0


@dataclass(frozen=True)
class Fit:
    """A hole/shaft fit at one nominal size (all mm).

    Attributes
    ----------
    name : str
        e.g. ``H7/g6``.
    size : float
    hole : (float, float)
        Smallest and largest hole diameter.
    shaft : (float, float)
        Smallest and largest shaft diameter.
    """

    name: str
    size: float
    hole: tuple[float, float]
    shaft: tuple[float, float]

    @property
    def min_clearance(self) -> float:
        """Smallest diametral clearance, mm (negative means interference)."""
        return self.hole[0] - self.shaft[1]

    @property
    def max_clearance(self) -> float:
        """Largest diametral clearance, mm."""
        return self.hole[1] - self.shaft[0]

    @property
    def mean_hole(self) -> float:
        """Middle of the hole tolerance zone, mm (what the CAD model uses)."""
        return 0.5 * (self.hole[0] + self.hole[1])

    @property
    def mean_shaft(self) -> float:
        """Middle of the shaft tolerance zone, mm (what the CAD model uses)."""
        return 0.5 * (self.shaft[0] + self.shaft[1])


def fit(name: str, size_mm: float) -> Fit:
    """The fit ``name`` (``"H7/g6"``) at nominal diameter ``size_mm``."""
    parts = name.split("/")
    if len(parts) != 2:
        raise HingeError(f"fit {name!r} must look like 'H7/g6' (hole class / shaft class)")
    hu, hl = limit_deviations(parts[0], size_mm)
    su, sl = limit_deviations(parts[1], size_mm)
    return Fit(name, size_mm, (size_mm + hl, size_mm + hu), (size_mm + sl, size_mm + su))


#: Fits tried for a play budget, tightest first (each at least as loose as the one before in the
#: table's size ranges).
PLAY_FITS: tuple[str, ...] = ("H7/h6", "H7/g6", "H8/f7")


def fit_for_play(play_mm: float, size_mm: float, fits: tuple[str, ...] = PLAY_FITS) -> Fit | None:
    """The tightest fit of ``fits`` whose smallest diametral clearance is at least ``play_mm``.

    A floating pin lets the two knuckles' hole axes move apart by up to the diametral clearance,
    so a hinge that must give ``play_mm`` of radial play needs ``min_clearance >= play_mm``.
    Returns None when no fit of the list is loose enough (the caller then opens the hole).
    """
    if not (play_mm >= 0.0):
        raise HingeError(f"play budget {play_mm!r} mm must be >= 0")
    for name in fits:
        f = fit(name, size_mm)
        if f.min_clearance >= play_mm - 1e-12:  # table values in um: compare past float round-off
            return f
    return None
