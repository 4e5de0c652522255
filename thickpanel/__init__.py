"""thickpanel: geometry kernel for deployable arrays of thick rigid panels.

The pure-geometry core (pattern, layouts, foldability, kinematics, thickness, clearance) imports
numpy, scipy and networkx only; cadquery is imported lazily by the solid and export modules.
"""

from __future__ import annotations

import logging

from .errors import (
    DesignFileError,
    ExportError,
    FoldError,
    GeometryError,
    HingeError,
    PatternError,
    ThicknessError,
    ThickpanelError,
)
from .pattern import CreasePattern, Finding, Panel, Seam, cid, pid, vid
from .tolerances import DEFAULT_TOL, Tolerances

__version__ = "0.1.0"

logging.getLogger("thickpanel").addHandler(logging.NullHandler())

__all__ = [
    "__version__",
    "CreasePattern",
    "Finding",
    "Panel",
    "Seam",
    "cid",
    "pid",
    "vid",
    "Tolerances",
    "DEFAULT_TOL",
    "ThickpanelError",
    "PatternError",
    "FoldError",
    "ThicknessError",
    "GeometryError",
    "HingeError",
    "DesignFileError",
    "ExportError",
]
