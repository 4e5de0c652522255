"""Write ``lamp-shade-band.json``: the flat band of a ten-sided printed lamp shade.

The band is an annular sector cut into ten trapezoid panels by radial valley creases. Folding each
crease by about 36 degrees curls the band into a ten-sided truncated pyramid (the shade); the two
end edges are joined with a printed clip. The pattern is imported by ``lamp-shade.toml`` through
``[layout] pattern = "lamp-shade-band.json"``.

Run: ``.venv/bin/python examples/make_lamp_band.py``
"""

from __future__ import annotations

import math
from pathlib import Path

from thickpanel import CreasePattern
from thickpanel.io import write_pattern

N_PANELS = 10
R_INNER = 120.0  # mm, top rim radius of the flat band
R_OUTER = 250.0  # mm, bottom rim radius of the flat band
SECTOR_DEG = 15.0  # angle of one panel in the flat band


def band(n: int = N_PANELS, r0: float = R_INNER, r1: float = R_OUTER, step_deg: float = SECTOR_DEG) -> CreasePattern:
    """Annular-sector band of ``n`` trapezoids with radial valley creases (mm, degrees)."""
    verts, creases, kinds = [], [], []
    for k in range(n + 1):
        a = math.radians(k * step_deg)
        verts.append((r0 * math.cos(a), r0 * math.sin(a)))  # inner rim: vertex 2k
        verts.append((r1 * math.cos(a), r1 * math.sin(a)))  # outer rim: vertex 2k + 1
    for k in range(n + 1):
        creases.append((2 * k, 2 * k + 1))
        kinds.append("border" if k in (0, n) else "valley")
    for k in range(n):
        creases.append((2 * k, 2 * k + 2))
        kinds.append("border")
        creases.append((2 * k + 1, 2 * k + 3))
        kinds.append("border")
    return CreasePattern(verts, creases, kinds, name="lamp-shade band")


if __name__ == "__main__":
    here = Path(__file__).resolve().parent
    cp = band()
    write_pattern(cp, here / "lamp-shade-band.json")
    print(f"wrote {here / 'lamp-shade-band.json'}: {cp.n_panels} panels, {cp.n_creases} creases")
