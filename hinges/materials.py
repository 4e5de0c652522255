"""A small materials table for panels, pins, printed hinges, flexures and tapes.

Every value names where it comes from. "common practice" marks shop-floor starting values that a
designer must calibrate; "from memory" marks handbook values quoted without the book at hand.
Units: density g/cm^3, strains dimensionless, lengths mm.

The allowable strain of a flexure is the yield strain divided by a factor of 1.5-2 (common
practice, see ``../shared/REFERENCES.md`` section 7); materials without a meaningful value
(metals used as rigid panels, fibre composites) have ``allowable_strain = None`` and cannot carry a
flexure hinge.
"""

from __future__ import annotations

from dataclasses import dataclass

from thickpanel.errors import HingeError

__all__ = ["Material", "MATERIALS", "UNSPECIFIED", "get_material"]


@dataclass(frozen=True)
class Material:
    """One material.

    Attributes
    ----------
    key : str
    name : str
    density : float, g/cm^3
    allowable_strain : float or None
        Largest outer-fibre strain a living hinge may see (dimensionless).
    printed_clearance : float or None, mm
        Radial clearance a print-in-place pin starts from on FDM printers.
    process : str
        ``machined``, ``printed`` or ``sheet`` (tapes and membranes).
    sources : str
        Where the numbers come from.
    """

    key: str
    name: str
    density: float
    allowable_strain: float | None
    printed_clearance: float | None
    process: str
    sources: str


MATERIALS: dict[str, Material] = {
    m.key: m
    for m in (
        Material(
            "al-6061-t6", "aluminium 6061-T6", 2.70, None, None, "machined",
            "density 2.70 g/cm3: ASM Handbook Vol. 2 (1990), 6061 data sheet (from memory)",
        ),
        Material(
            "stainless-304", "stainless steel 304 (pins)", 8.00, None, None, "machined",
            "density 8.00 g/cm3: ASM Handbook Vol. 1 (1990), 304 data sheet (from memory)",
        ),
        Material(
            "cfrp", "carbon-fibre laminate, quasi-isotropic", 1.55, None, None, "machined",
            "density 1.55 g/cm3: common practice for 60 % fibre volume epoxy laminates",
        ),
        Material(
            "pla", "PLA (FDM)", 1.24, None, 0.3, "printed",
            "density 1.24 g/cm3: resin supplier data sheets (from memory); "
            "clearance 0.3 mm: common practice for FDM print-in-place pins (REFERENCES 7)",
        ),
        Material(
            "petg", "PETG copolyester (FDM)", 1.27, 0.02, 0.3, "printed",
            "density 1.27 g/cm3: supplier data sheets (from memory); yield strain ~4 % "
            "(data sheets, REFERENCES 7) / 2 = 0.02 allowable (common practice); clearance 0.3 mm "
            "common practice",
        ),
        Material(
            "pp", "polypropylene homopolymer", 0.905, 0.06, 0.3, "printed",
            "density 0.90-0.91 g/cm3: supplier data sheets (from memory); yield strain ~12 % "
            "(grade dependent, REFERENCES 7) / 2 = 0.06 allowable (common practice); clearance "
            "0.3 mm common practice",
        ),
        Material(
            "nylon-12", "nylon 12 (PA12)", 1.01, 0.03, 0.3, "printed",
            "density 1.01 g/cm3: supplier data sheets (from memory); yield strain ~6 % "
            "(REFERENCES 7) / 2 = 0.03 allowable (common practice); clearance 0.3 mm common practice",
        ),
        Material(
            "polyimide-film", "polyimide film tape", 1.42, None, None, "sheet",
            "density 1.42 g/cm3: film supplier data sheets (from memory)",
        ),
    )
}  # fmt: skip


#: Stand-in for "no material given" (key ""): no density, so masses are left blank.
UNSPECIFIED = Material("", "unspecified", float("nan"), None, None, "machined",
                       "no material given in the design")


def get_material(key: str, *, who: str = "") -> Material:
    """The material ``key`` (``""`` gives :data:`UNSPECIFIED`); an unknown key raises
    :class:`HingeError` listing the known keys.

    Parameters
    ----------
    key : str
    who : str
        Part or hinge id for the message (``P017``, ``C042``).
    """
    if key == "":
        return UNSPECIFIED
    try:
        return MATERIALS[key]
    except KeyError:
        where = f" for {who}" if who else ""
        raise HingeError(
            f"unknown material {key!r}{where}; known materials: {', '.join(sorted(MATERIALS))}"
        ) from None
