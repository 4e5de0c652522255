"""New DXF documents whose bytes do not depend on the process (ezdxf).

``ezdxf.new()`` builds its OBJECTS section in an order that depends on the string-hash seed
(``PYTHONHASHSEED``), so two runs on the same input wrote different DXF files. Documents here
start from a packaged empty R2010 drawing (``r2010-template.dxf``, written once by
``ezdxf.new("R2010", setup=False)``) read back with ``ezdxf.read``, which keeps the file's order,
and are written with ezdxf's fixed meta data (no time stamps or random GUIDs).
"""

from __future__ import annotations

import io
import re
from functools import lru_cache
from pathlib import Path
from typing import Any

import ezdxf

__all__ = ["new_dxf_document", "dxf_document_bytes"]

_TEMPLATE = Path(__file__).resolve().parent / "r2010-template.dxf"
_STAMP = re.compile(r"(\d+\.\d+\.\d+\w*) @ \d{4}-\d\d-\d\dT[\d:.]+[+-]\d\d:\d\d")


@lru_cache(maxsize=1)
def _template_text() -> str:
    return _TEMPLATE.read_text(encoding="utf-8")


def new_dxf_document() -> Any:
    """An empty R2010 drawing (``ezdxf`` Drawing), the same in every process."""
    return ezdxf.read(io.StringIO(_template_text()))


def dxf_document_bytes(doc: Any) -> bytes:
    """UTF-8 bytes of ``doc`` with no time stamps or random GUIDs."""
    buf = io.StringIO()
    old = ezdxf.options.write_fixed_meta_data_for_testing
    ezdxf.options.write_fixed_meta_data_for_testing = True
    try:
        doc.write(buf)
    finally:
        ezdxf.options.write_fixed_meta_data_for_testing = old
    # ezdxf stamps its version with the write time; fix it so equal input gives equal bytes
    return _STAMP.sub(r"\1 @ 2000-01-01T00:00:00+00:00", buf.getvalue()).encode("utf-8")
