"""Manufacturing exports of a part set: a registry of format names, one writer.

Formats (:func:`available_formats`):

- ``step``: named STEP assembly in the requested fold state (``assembly.step``, or
  ``<prefix>-assembly-t1.00.step``);
- ``step-parts``: one STEP per part, fused into one solid, in its shop pose (``step/P017.step``);
- ``stl``: one STL per part, flat machining pose (``stl/P017.stl``), and the whole assembly in
  the fold state (``assembly.stl``);
- ``3mf``: parts packed onto build plates of ``plate_mm`` (``plate.3mf`` or ``plate-1.3mf`` ...);
- ``dxf``: cut profiles per part (``dxf/P017.dxf``);
- ``bom``: ``bom.csv`` and ``bom.json``;
- ``metrics``: ``metrics.json``;
- ``gltf``: ``assembly.glb``, glTF 2.0 binary in metres, one node per part, the fold path as an
  animation (see :mod:`thickpanel.export.gltf`).

Every format function returns ``{relative name: bytes}``; :func:`export_parts` computes them all
first and only then writes, each file through a temp file and a rename, removing what it wrote if
a later write fails. Heavy modules are imported lazily so ``thickpanel.export.drawing`` stays light.
"""

from __future__ import annotations

import math
import os
from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING, Any

from ..errors import ExportError, ThickpanelError

if TYPE_CHECKING:
    from ..poses import FoldState
    from ..solids import PartSet

__all__ = ["ExportOptions", "available_formats", "register_format", "export_parts", "render"]


@dataclass(frozen=True)
class ExportOptions:
    """Settings shared by the format functions.

    Attributes
    ----------
    state : FoldState or None
        Fold state of the assembly files (None: the part set's own state, else flat).
    clearance : object or None
        A clearance report (``.min_clearance`` mm) for ``metrics.json``.
    stl_linear_mm : float
        Chordal mesh deflection, mm.
    stl_angular_deg : float
        Angular mesh deflection, degrees.
    step_schema : str
        ``AP214`` or ``AP242``.
    name : str
        Name of the assembly (STEP top label, 3MF title).
    path : FoldPath or None
        Fold path whose sampled states the glTF animation shows (None: no animation).
    prefix : str
        Prefix of the top-level file names (``<prefix>-assembly-t1.00.step``); empty: the plain
        names (``assembly.step``).
    scope : str
        ``all`` (every file of the formats), ``state`` (only the files that depend on the fold
        state: assembly STEP/STL, metrics) or ``parts`` (only the state-independent ones: per-part
        STEP/STL/DXF, 3MF plates, BOM).
    state_tag : str
        Added to the names of state files when a prefix is given (``t1.00``).
    plate_mm : (float, float)
        Build-plate size of the 3MF plates, mm.
    figures : mapping or None
        Figures a build computed once (:mod:`thickpanel.figures`); ``metrics.json`` writes them
        as given instead of computing its own.
    """

    state: Any = None
    clearance: Any = None
    stl_linear_mm: float = 0.1
    stl_angular_deg: float = 28.6
    step_schema: str = "AP214"
    name: str = "array"
    path: Any = None
    prefix: str = ""
    scope: str = "all"
    state_tag: str = ""
    plate_mm: tuple[float, float] = (250.0, 250.0)
    figures: Any = None

    def top(self, base: str, ext: str, *, state: bool = False) -> str:
        """File name of a top-level output: ``<prefix>-<base>[-<tag>].<ext>`` or ``<base>.<ext>``."""
        if not self.prefix:
            return f"{base}.{ext}"
        tag = f"-{self.state_tag}" if state and self.state_tag else ""
        return f"{self.prefix}-{base}{tag}.{ext}"

    def wants(self, scope: str) -> bool:
        """Whether files of ``scope`` (``state`` or ``parts``) are rendered."""
        return self.scope in ("all", scope)


#: Which formats depend on the fold state (``state``), which not (``parts``), and ``both``.
FORMAT_SCOPES = {"step": "state", "step-parts": "parts", "stl": "both", "3mf": "parts",
                 "dxf": "parts", "bom": "parts", "metrics": "state"}


FormatFn = Callable[["PartSet", ExportOptions], dict[str, bytes]]


def _state(ps: PartSet, opt: ExportOptions) -> Any:
    return opt.state if opt.state is not None else ps.state


def _step(ps: PartSet, opt: ExportOptions) -> dict[str, bytes]:
    from .step import step_bytes

    st = _state(ps, opt)
    poses = ps.poses(st)
    items = [(p.name, p.pieces, poses[p.panel]) for p in ps.in_state(st)]
    return {opt.top("assembly", "step", state=True): step_bytes(items, name=opt.name,
                                                                 schema=opt.step_schema)}


def _step_parts(ps: PartSet, opt: ExportOptions) -> dict[str, bytes]:
    from .step import part_step_bytes

    return {f"step/{p.name}.step": part_step_bytes(p, schema=opt.step_schema) for p in ps.parts}


def _meshes(ps: PartSet, opt: ExportOptions) -> list:
    from .mesh import mesh_parts

    if not (opt.stl_linear_mm > 0 and 0 < opt.stl_angular_deg < 180):
        raise ExportError(
            f"mesh tolerance stl_linear_mm = {opt.stl_linear_mm!r}, stl_angular_deg = "
            f"{opt.stl_angular_deg!r} out of range; allowed: linear > 0 mm, 0 < angular < 180 deg"
        )
    return mesh_parts(ps.parts, linear=opt.stl_linear_mm,
                      angular=math.radians(opt.stl_angular_deg), tol=ps.tol)


def _stl(ps: PartSet, opt: ExportOptions) -> dict[str, bytes]:
    from .mesh import stl_bytes, transform
    from .shop import shop_location

    meshes = _meshes(ps, opt)
    out = {}
    if opt.wants("parts"):
        out = {f"stl/{p.name}.stl": stl_bytes([transform(m, shop_location(p))], name=p.name)
               for p, m in zip(ps.parts, meshes, strict=True)}
    if opt.wants("state"):
        st = _state(ps, opt)
        poses = ps.poses(st)
        shown = {id(p) for p in ps.in_state(st)}  # a flat-only backing is left out of folded states
        out[opt.top("assembly", "stl", state=True)] = stl_bytes(
            [transform(m, poses[p.panel]) for p, m in zip(ps.parts, meshes, strict=True) if id(p) in shown],
            name=opt.name)
    return out


def _3mf(ps: PartSet, opt: ExportOptions) -> dict[str, bytes]:
    from .plates import plate_files

    return plate_files(ps, _meshes(ps, opt), opt.plate_mm, title=opt.name,
                       name=lambda k, n: opt.top("plate" if n == 1 else f"plate-{k}", "3mf"))


def _dxf(ps: PartSet, opt: ExportOptions) -> dict[str, bytes]:
    from .profiles import pin_fits, profile_dxf_bytes

    slabs = {sl.panel: sl for sl in ps.plan.slabs}
    fits = pin_fits(ps.parts)
    out = {}
    for p in ps.parts:
        data = profile_dxf_bytes(p, slabs.get(p.panel) if p.kind == "panel" else None, fits)
        if data is not None:
            out[f"dxf/{p.name}.dxf"] = data
    return out


def _bom(ps: PartSet, opt: ExportOptions) -> dict[str, bytes]:
    from .bom import bom_csv_bytes, bom_json_bytes

    return {opt.top("bom", "csv"): bom_csv_bytes(ps), opt.top("bom", "json"): bom_json_bytes(ps)}


def _metrics(ps: PartSet, opt: ExportOptions) -> dict[str, bytes]:
    from .metrics import metrics_json_bytes

    return {"metrics.json": metrics_json_bytes(ps, _state(ps, opt), opt.clearance, figures=opt.figures)}


def _gltf(ps: PartSet, opt: ExportOptions) -> dict[str, bytes]:
    from .gltf import partset_glb

    return {"assembly.glb": partset_glb(ps, _state(ps, opt), opt.path, title=opt.name)}


_FORMATS: dict[str, FormatFn] = {
    "step": _step,
    "step-parts": _step_parts,
    "stl": _stl,
    "3mf": _3mf,
    "dxf": _dxf,
    "bom": _bom,
    "metrics": _metrics,
    "gltf": _gltf,
}


def available_formats() -> list[str]:
    """Sorted names of the registered export formats."""
    return sorted(_FORMATS)


def register_format(name: str, fn: FormatFn) -> None:
    """Register ``fn(partset, options) -> {relative name: bytes}`` under a new ``name``."""
    if name in _FORMATS:
        raise ExportError(f"export format {name!r} is already registered")
    _FORMATS[name] = fn


def _names(formats: str | Iterable[str]) -> list[str]:
    if isinstance(formats, str):
        formats = available_formats() if formats == "all" else [formats]
    names = list(dict.fromkeys(formats))
    bad = [f for f in names if f not in _FORMATS]
    if bad:
        raise ExportError(
            f"unknown export format {', '.join(map(repr, bad))}; available: "
            f"{', '.join(available_formats())} (or 'all')"
        )
    return names


def render(partset: PartSet, formats: str | Iterable[str], options: ExportOptions) -> dict[str,
                                                                                          bytes]:
    """All files of ``formats`` as ``{relative name: bytes}``, nothing written."""
    from .shop import clear_cache

    files: dict[str, bytes] = {}
    try:
        _render(partset, _names(formats), options, files)
    finally:
        clear_cache()
    return files


def _render(partset: PartSet, names: list[str], options: ExportOptions,
            files: dict[str, bytes]) -> None:
    for name in names:
        scope = FORMAT_SCOPES.get(name, "state")
        if scope != "both" and not options.wants(scope):
            continue
        try:
            files.update(_FORMATS[name](partset, options))
        except ThickpanelError:
            raise
        except Exception as exc:
            raise ExportError(f"export format {name!r} failed: {exc}") from exc


def export_parts(
    partset: PartSet,
    out_dir: str | os.PathLike[str],
    formats: str | Iterable[str] = "all",
    *,
    state: FoldState | None = None,
    clearance: Any = None,
    stl_linear_mm: float = 0.1,
    stl_angular_deg: float = 28.6,
    step_schema: str = "AP214",
    name: str | None = None,
    path: Any = None,
    prefix: str = "",
    scope: str = "all",
    plate_mm: tuple[float, float] = (250.0, 250.0),
    figures: Mapping[str, Any] | None = None,
) -> list[Path]:
    """Write the chosen formats of a part set under ``out_dir``; return the written paths.

    Parameters
    ----------
    partset : PartSet
    out_dir : path-like
        Created when missing; an unwritable folder raises :class:`ExportError`.
    formats : str or iterable of str
        Format names (see the module docstring) or ``"all"``.
    state : FoldState, optional
        Fold state of ``assembly.step`` / ``assembly.stl`` / the stowed envelope.
    clearance : ClearanceReport, optional
        Its ``min_clearance`` goes into ``metrics.json``.
    stl_linear_mm, stl_angular_deg : float
        Mesh tolerance of STL and 3MF.
    step_schema : str
        ``AP214`` (default) or ``AP242``.
    name : str, optional
        Assembly name; defaults to the pattern name or ``array``.
    path : FoldPath, optional
        Fold path of the glTF animation.
    prefix : str
        Design name put in front of the top-level file names (``<prefix>-assembly-t1.00.step``,
        ``<prefix>-bom.csv``, ``<prefix>-plate.3mf``); empty keeps the plain names.
    scope : str
        ``all``, ``state`` (fold-state files only) or ``parts`` (state-independent files only).
    plate_mm : (float, float)
        Build plate of the 3MF plates, mm; a part whose footprint does not fit raises
        :class:`ExportError` before anything is written.
    figures : mapping, optional
        The build's figures for ``metrics.json`` (see :mod:`thickpanel.figures`): written as
        given, so ``metrics.json`` repeats the summary's numbers.

    Returns
    -------
    list of Path
        Sorted by relative name. Nothing is left behind when an error is raised.
    """
    from .writer import write_all

    root = Path(out_dir)
    if root.exists() and not root.is_dir():
        raise ExportError(f"output folder {root} exists and is not a folder")
    nm = name or getattr(partset.plan.pattern, "name", "") or "array"
    if scope not in ("all", "state", "parts"):
        raise ExportError(f"export scope {scope!r} is not one of 'all', 'state', 'parts'")
    t = getattr(state if state is not None else partset.state, "t", None)
    tag = f"t{float(t):.2f}" if t is not None else "t0.00"
    opt = ExportOptions(state, clearance, stl_linear_mm, stl_angular_deg, step_schema, nm,
                        path, prefix, scope, tag, (float(plate_mm[0]), float(plate_mm[1])),
                        None if figures is None else dict(figures))
    files = render(partset, formats, opt)  # before the folder is made: a refusal writes nothing
    try:
        root.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise ExportError(f"cannot create output folder {root}: {exc}") from None
    if not os.access(root, os.W_OK | os.X_OK):
        raise ExportError(f"output folder {root} is not writable")
    return write_all(root, files)
