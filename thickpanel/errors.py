"""Exception tree of thickpanel.

Every error raised for bad input is a :class:`ThickpanelError` subclass whose message names the
offending id (vertex ``V012``, crease ``C042``, panel ``P017``), key or parameter together with the
value and the allowed range. Plain argument misuse (a wrong Python type passed by a programmer) may
still raise ``TypeError``.
"""

from __future__ import annotations

__all__ = [
    "ThickpanelError",
    "PatternError",
    "FoldError",
    "ThicknessError",
    "GeometryError",
    "HingeError",
    "DesignFileError",
    "ExportError",
]


class ThickpanelError(Exception):
    """Base class of every error thickpanel raises on purpose."""


class PatternError(ThickpanelError, ValueError):
    """Raised when a crease pattern, a pattern file or a layout parameter is malformed.

    Examples: coincident vertices, crossing creases, an open border, a layout parameter out of
    range, a corrupt pattern JSON file or a DXF drawing with no usable layers.
    """


class FoldError(ThickpanelError, ValueError):
    """Raised when a fold cannot be computed as asked.

    Examples: a driver crease that is a border, a target beyond the reachable range, a fold
    fraction outside [0, 1], or a pattern with no interior vertex where one is needed. A pattern
    that is simply not rigidly foldable is a verdict, not this error.
    """


class ThicknessError(ThickpanelError, ValueError):
    """Raised when a thickness method cannot be applied.

    Examples: non-positive thickness, a thickness larger than a panel's inradius, a method that
    does not apply to the pattern, a target fold the method cannot reach, no layer order found.
    """


class GeometryError(ThickpanelError):
    """Raised when the CAD kernel produced an invalid solid; names the panel or part."""


class HingeError(ThickpanelError, ValueError):
    """Raised when a hinge style does not fit a hinge line (pin too large, strain too high...)."""


class DesignFileError(ThickpanelError, ValueError):
    """Raised for a bad design file: syntax error, unknown key, wrong type, value out of range.

    The message carries the key path (``[hinge] pin_diameter``), the value and the allowed range.
    """


class ExportError(ThickpanelError):
    """Raised when an export cannot be written: unknown format, unwritable folder, failed writer.

    No partial file is left behind when this is raised.
    """
