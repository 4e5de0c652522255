"""Write SVG and PNG drawings of spiral and twist designs (scenarios of our own invention).

Usage::

    python examples/spiral_drawings.py [OUT_DIR]      # default exports/drawings/

Designs:

* ``sun-shade-disc``: a 1.2 m patio sun-shade disc of 16 arms and 6 rings around a solved hub,
  mirror-symmetric kite cells, one radial slit so the ring can open while it wraps.
* ``antenna-backing``: a 500 mm backing disc for a small satellite antenna, 12 arms, chiral grid
  with a 65 deg pitch on the leading family (Kawasaki solves the twist), two slits.
* ``lantern-band``: a spiral-ring twist band (triangulated) for a 300 mm paper lantern.
* ``storage-tube``: a Kresling-type strip for a collapsible 3-story storage tube, hexagonal ends.

Prints one table row per design: panels, hub diameter, ring scale, spiral constant and the
largest Kawasaki residual over the lattice vertices.

Caution: these are geometry drawings. Anything meant for flight hardware, outdoor structures or
products for the public needs qualified engineering review under the codes and standards that
apply to it.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from thickpanel.export.drawing import write_drawings
from thickpanel.layouts import get_layout
from thickpanel.layouts.assignment import layout_info

DESIGNS = [
    ("sun-shade-disc", "log-spiral", dict(arms=16, rings=6, outer_diameter=1200.0, slits=1, assign=0)),
    (
        "antenna-backing",
        "log-spiral",
        dict(arms=12, rings=5, outer_diameter=500.0, symmetric=False, pitch_deg=65.0, slits=2, assign=0),
    ),
    (
        "lantern-band",
        "spiral-rings",
        dict(arms=10, rings=4, outer_diameter=300.0, hub_diameter=90.0, pitch_deg=55.0, assign=0),
    ),
    ("storage-tube", "kresling", dict(sides=6, radius=60.0, height=45.0, twist_deg=38.0, stories=3)),
]


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("out_dir", nargs="?", default="exports/drawings", help="folder for the drawings")
    ap.add_argument("--labels", action="store_true", help="write panel and crease ids")
    args = ap.parse_args(argv)
    out = Path(args.out_dir)
    print(f"{'design':<16} {'layout':<13} {'panels':>6} {'hub mm':>8} {'scale':>7} {'b':>7} {'Kawasaki rad':>12}")
    for stem, layout, params in DESIGNS:
        cp = get_layout(layout)(name=stem, **params)
        info = layout_info(cp)
        p = info.params if info else {}
        hub = f"{p['hub_diameter']:8.1f}" if "hub_diameter" in p else f"{'-':>8}"
        scale = f"{p['ring_scale']:7.4f}" if "ring_scale" in p else f"{'-':>7}"
        b = f"{p['b']:7.4f}" if "b" in p else f"{'-':>7}"
        dev = info.kawasaki_deviation if info else float("nan")
        print(f"{stem:<16} {layout:<13} {cp.n_panels:>6} {hub} {scale} {b} {dev:12.2e}")
        for path in write_drawings(cp, out, stem, labels=args.labels):
            print(f"  wrote {path}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
