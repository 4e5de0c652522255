"""STEP export through a named XCAF document (ISO 10303-21 file, AP214 or AP242 schema, mm).

The assembly has one top label named after the array and one part + component per panel, pin,
flexure and tape (``P017``, ``PIN-C042``), each component placed by the requested fold state.
Per-part files hold a single named part in its flat machining pose. Pcurves are not written
(``write.surfacecurve.mode = 0``), which halves the file and the time and is accepted by the
readers we check with (OCP's XCAF reader and gmsh).
"""

from __future__ import annotations

import os
import re
import tempfile
from collections.abc import Sequence
from pathlib import Path
from typing import Any

import numpy as np
from OCP.IFSelect import IFSelect_RetDone
from OCP.Interface import Interface_Static
from OCP.Message import Message, Message_Gravity
from OCP.STEPCAFControl import STEPCAFControl_Writer
from OCP.STEPControl import STEPControl_AsIs, STEPControl_Controller
from OCP.TCollection import TCollection_ExtendedString
from OCP.TDataStd import TDataStd_Name
from OCP.TDocStd import TDocStd_Document
from OCP.TopoDS import TopoDS_Shape
from OCP.XCAFDoc import XCAFDoc_DocumentTool

from .. import occ
from ..errors import ExportError
from ..reproducible import pin_step_timestamp
from ..typing import FloatArray

__all__ = ["SCHEMAS", "step_bytes", "part_step_bytes"]

#: Accepted schema names -> the OCCT ``write.step.schema`` value.
SCHEMAS = {"AP214": "AP214IS", "AP242": "AP242DIS", "AP203": "AP203"}


def _quiet() -> None:
    """Keep OCCT's transfer statistics off stdout (only failures are printed)."""
    for p in Message.DefaultMessenger_s().Printers():
        p.SetTraceLevel(Message_Gravity.Message_Fail)


_NAUO = re.compile(rb"NEXT_ASSEMBLY_USAGE_OCCURRENCE\('(\d+)'")


def _renumber(data: bytes) -> bytes:
    """Number the assembly occurrences 1, 2, ... in file order.

    OCCT takes these ids from a per-process counter, so without this the same input written twice
    in one session would differ.
    """
    count = iter(range(1, 1 << 62))
    return _NAUO.sub(lambda m: b"NEXT_ASSEMBLY_USAGE_OCCURRENCE('%d'" % next(count), data)


def _setup(schema: str) -> None:
    if schema not in SCHEMAS:
        raise ExportError(f"STEP schema {schema!r} is not supported; choose one of "
                          f"{', '.join(sorted(SCHEMAS))}")
    STEPControl_Controller.Init_s()  # before any Interface_Static write setting (else ignored)
    _quiet()
    Interface_Static.SetCVal_s("write.step.schema", SCHEMAS[schema])
    Interface_Static.SetCVal_s("write.step.unit", "MM")
    Interface_Static.SetIVal_s("write.surfacecurve.mode", 0)
    Interface_Static.SetIVal_s("write.precision.mode", 0)


def step_bytes(
    items: Sequence[tuple[str, Sequence[tuple[Any, TopoDS_Shape, FloatArray]], FloatArray | None]],
    *,
    name: str = "array",
    schema: str = "AP214",
) -> bytes:
    """A STEP file with one named part per item, its solids written once per shared prototype.

    Parameters
    ----------
    items : sequence of (name, pieces, pose)
        ``pieces`` as in :attr:`thickpanel.solids.Part.pieces`: (key, prototype shape, (4, 4)
        placement in the part's frame); pieces with equal keys share one prototype in the file.
        ``pose`` (4, 4) places the part's component in the assembly (None = identity).
    name : str
        Name of the top assembly label.
    schema : str
        ``AP214`` (default), ``AP242`` or ``AP203``.

    Returns
    -------
    bytes
        Structure: top assembly ``name`` -> one component per part, named like the part, whose
        product carries the part id too. A part of one unique solid refers to that solid
        directly; any other part refers to its own product (named by its id) with one component
        per solid; solids shared between equal parts are written once, named after the first
        part using them (``P000-solid-3``).
    """
    _setup(schema)
    doc = TDocStd_Document(TCollection_ExtendedString("XmlOcaf"))
    tool = XCAFDoc_DocumentTool.ShapeTool_s(doc.Main())
    top = tool.NewShape()
    TDataStd_Name.Set_s(top, TCollection_ExtendedString(name))
    protos: dict[Any, Any] = {}
    eye = np.eye(4)
    for part_name, pieces, pose in items:
        labels = []
        for j, (key, proto, m) in enumerate(pieces):
            lab = protos.get(key)
            if lab is None:
                lab = tool.AddShape(proto, False)
                # a lone unique solid is the part's product itself; shared or several solids are
                # named after the first part that uses them
                lone = len(pieces) == 1 and key[0] == "unique"
                label = part_name if lone else f"{part_name}-solid-{j}"
                TDataStd_Name.Set_s(lab, TCollection_ExtendedString(label))
                protos[key] = lab
            labels.append((lab, m))
        place = eye if pose is None else np.asarray(pose, dtype=float)
        if len(labels) == 1 and pieces[0][0][0] == "unique":  # the part's product is the solid
            lab, m = labels[0]
            comp = tool.AddComponent(top, lab, occ.location(place @ m))
        else:  # the part's own product (named by its id) holding its (maybe shared) solids
            asm = tool.NewShape()
            TDataStd_Name.Set_s(asm, TCollection_ExtendedString(part_name))
            for lab, m in labels:
                tool.AddComponent(asm, lab, occ.location(m))
            comp = tool.AddComponent(top, asm, occ.location(place))
        TDataStd_Name.Set_s(comp, TCollection_ExtendedString(part_name))
    tool.UpdateAssemblies()
    writer = STEPCAFControl_Writer()
    writer.SetNameMode(True)
    writer.SetColorMode(False)
    writer.SetLayerMode(False)
    if not writer.Transfer(doc, STEPControl_AsIs):
        raise ExportError(f"STEP transfer of {name!r} failed")
    fd, tmp = tempfile.mkstemp(suffix=".step")
    os.close(fd)
    try:
        if writer.Write(tmp) != IFSelect_RetDone:
            raise ExportError(f"STEP writer failed for {name!r}")
        return pin_step_timestamp(_renumber(Path(tmp).read_bytes()))
    finally:
        os.unlink(tmp)


def part_step_bytes(part: Any, *, schema: str = "AP214") -> bytes:
    """A STEP file of one part as its shop receives it: one product named by the part id.

    A part of several touching solids (slab, standoffs, barrels) is glue-fused into one solid
    (:func:`thickpanel.export.shop.one_piece`); the part lies in its shop pose
    (:func:`thickpanel.export.shop.shop_location`: panels flat, pins along +x).
    """
    from .shop import one_piece, shop_location

    if len(part.pieces) == 1:  # keep the prototype and its placement apart (a located shape
        _, solid, m = part.pieces[0]  # would add an unnamed product under the part)
    else:
        solid, m = one_piece(part), np.eye(4)
    return step_bytes([(part.name, [(("unique", part.name), solid, m)], shop_location(part))],
                      name=part.name, schema=schema)
