"""cadquery entry points: drop a thickpanel array into your own cadquery model.

Usage (in the repository folder)::

    from thickpanel import cq_plugin
    arr = cq_plugin.model("examples/miura-reference.toml")   # solve once ...
    half = arr.assembly(0.5)                                 # ... place at any fold fraction
    stowed = cq_plugin.compound("examples/miura-reference.toml", t=1.0)

Nothing is added to ``cq.Workplane`` on import. Call :func:`register` to get the fluent method
``Workplane.thickpanel_array(design, t=1.0)``, which places the array (as one compound) at every
point on the stack, or at the workplane origin; :func:`unregister` removes it again.

Lengths are millimetres; ``t`` is the fold fraction (0 deployed, 1 stowed).
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

from .build import BuildResult, run_pipeline
from .design import Design, load_design
from .errors import FoldError, ThickpanelError

if TYPE_CHECKING:
    import cadquery as cq

__all__ = ["ArrayModel", "model", "shapes", "compound", "assembly", "register", "unregister"]

_METHOD = "thickpanel_array"
_STAGES = ("pattern", "fold path", "method", "solids")


@dataclass
class ArrayModel:
    """A solved array: fold path, thickness plan and parts; places them at any fold fraction."""

    result: BuildResult

    @property
    def design(self) -> Design:
        """The design it was built from."""
        return self.result.design

    @property
    def part_names(self) -> list[str]:
        """Part names (``P017``, ``PIN-C042`` ...) in build order."""
        return [p.name for p in self.result.parts.parts]

    def state(self, t: float) -> Any:
        """The :class:`~thickpanel.poses.FoldState` at fold fraction ``t`` in [0, 1]."""
        if not (isinstance(t, int | float) and 0.0 <= float(t) <= 1.0):
            raise FoldError(f"fold fraction t = {t!r} is outside 0 (deployed) .. 1 (stowed)")
        return self.result.path.at(float(t))

    def shapes(self, t: float = 1.0) -> list[tuple[str, cq.Shape]]:
        """``(name, cq.Shape)`` of every part placed at fold fraction ``t`` (a flexible backing only
        in the flat state, see :meth:`thickpanel.solids.PartSet.in_state`)."""
        import cadquery as cq

        st = self.state(t)
        ps = self.result.parts
        shown = {id(p) for p in ps.in_state(st)}
        placed = ps.placed(st)
        return [(p.name, cq.Shape.cast(s)) for p, s in zip(ps.parts, placed, strict=True) if id(p) in shown]

    def compound(self, t: float = 1.0) -> cq.Compound:
        """All parts at fold fraction ``t`` as one ``cq.Compound``."""
        import cadquery as cq

        return cq.Compound.makeCompound([s for _, s in self.shapes(t)])

    def assembly(self, t: float = 1.0, *, name: str | None = None) -> cq.Assembly:
        """A ``cq.Assembly`` with one named child per part, placed at fold fraction ``t``."""
        import cadquery as cq

        asm = cq.Assembly(name=name or self.design.name)
        for part_name, shape in self.shapes(t):
            asm.add(shape, name=part_name)
        return asm


def model(design: Design | str | Path) -> ArrayModel:
    """Solve a design (object or design-file path) for use in cadquery.

    Raises
    ------
    DesignFileError
        Bad design file.
    ThickpanelError
        A stage is not available in this installation, or the design cannot be built (the
        message gives the failing check).
    """
    d = design if isinstance(design, Design) else load_design(design)
    res = run_pipeline(d, command="cadquery", stages=_STAGES)
    for st in res.stages:
        if st["status"] != "ok":
            fails = "; ".join(f"{c['check']}: {c['detail']}" for c in res.checks if c["verdict"] == "fail")
            raise ThickpanelError(f"design {d.name!r}: stage {st['stage']} {st['status']}: {st['note']}"
                                  + (f" ({fails})" if fails else ""))
    return ArrayModel(res)


def shapes(design: Design | str | Path, t: float = 1.0) -> list[tuple[str, cq.Shape]]:
    """``(name, cq.Shape)`` of every part of ``design`` at fold fraction ``t``."""
    return model(design).shapes(t)


def compound(design: Design | str | Path, t: float = 1.0) -> cq.Compound:
    """Every part of ``design`` at fold fraction ``t`` as one ``cq.Compound``."""
    return model(design).compound(t)


def assembly(design: Design | str | Path, t: float = 1.0, *, name: str | None = None) -> cq.Assembly:
    """A named ``cq.Assembly`` of ``design`` at fold fraction ``t``."""
    return model(design).assembly(t, name=name)


def _workplane_method(self: cq.Workplane, design: Design | str | Path | ArrayModel, t: float = 1.0) -> cq.Workplane:
    """Place the array at fold fraction ``t`` on every stack point (or the workplane origin)."""
    arr = design if isinstance(design, ArrayModel) else model(design)
    comp = arr.compound(t)
    return self.eachpoint(lambda loc: comp.moved(loc), useLocalCoordinates=True)


def register() -> None:
    """Add ``cq.Workplane.thickpanel_array(design, t=1.0)``; refuses to replace a foreign attribute."""
    import cadquery as cq

    current = getattr(cq.Workplane, _METHOD, None)
    if current is not None and current is not _workplane_method:
        raise ThickpanelError(f"cq.Workplane already has an attribute {_METHOD!r} that thickpanel did not add")
    setattr(cq.Workplane, _METHOD, _workplane_method)


def unregister() -> None:
    """Remove the method :func:`register` added (no-op when absent)."""
    import cadquery as cq

    if getattr(cq.Workplane, _METHOD, None) is _workplane_method:
        delattr(cq.Workplane, _METHOD)
