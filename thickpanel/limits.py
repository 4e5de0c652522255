"""Input limits: what thickpanel accepts before it starts any work.

Each limit is a plain constant with the reason for its value, so messages, docs and tests quote
the same number. Inputs beyond a limit are refused with the project's own error naming the key,
item or path; nothing is computed or written first.

These are limits of this program on a workstation-sized machine, not of any standard: none of the
values has a published source (common engineering practice at most, stated per constant).
"""

from __future__ import annotations

import math
from typing import Any

__all__ = [
    "MAX_COORDINATE_MM",
    "MAX_INDEX",
    "MAX_NESTING",
    "MAX_NAME_LENGTH",
    "MAX_PANELS",
    "METHOD_TIME_BOUND_S",
    "STACK_PAIR_SECONDS",
    "OFFSET_PANEL_PAIR_SECONDS",
    "OFFSET_PANEL_CREASE_SECONDS",
    "nesting_depth",
    "name_problem",
    "coordinate_problem",
]

#: Largest absolute coordinate of a vertex or segment end, mm (100 km). No deployable panel array
#: comes near it, and squared distances of such coordinates stay far inside float range, which the
#: spatial searches need (near 1e300 they overflow).
MAX_COORDINATE_MM = 1.0e8

#: Largest vertex or crease index in a pattern file (2**31 - 1): far above any pattern the machine
#: can hold, and small enough that every index fits a 64-bit integer array.
MAX_INDEX = 2**31 - 1

#: Deepest nesting of arrays/tables in a design file or objects/arrays in a pattern file. The
#: deepest legitimate structure is 3 (a list of [x, y] rows inside an object).
MAX_NESTING = 32

#: Longest design name, characters. Output file names add the name to a suffix of up to about 40
#: characters, and common file systems allow 255 bytes per name.
MAX_NAME_LENGTH = 100

#: Most panels a generated layout may have. A 10,000-panel pattern builds and checks in well
#: under a second here, a 50,000-panel one in seconds; beyond that the fold and clearance stages
#: take minutes to hours on a 2-core machine (measured on round-1 benchmarks, extrapolated).
MAX_PANELS = 50_000

_NAME_FORBIDDEN = set('/\\:*?"<>|')


def nesting_depth(obj: Any, *, limit: int = MAX_NESTING) -> int:
    """Depth of nested lists/dicts in ``obj`` (a scalar is 0), counted without recursion.

    Stops counting once ``limit + 1`` is reached, so the cost is bounded by the size of ``obj``.
    """
    deepest = 0
    stack: list[tuple[Any, int]] = [(obj, 0)]
    while stack:
        item, depth = stack.pop()
        if isinstance(item, dict):
            children = list(item.values())
        elif isinstance(item, list | tuple):
            children = list(item)
        else:
            continue
        depth += 1
        deepest = max(deepest, depth)
        if deepest > limit:
            return deepest
        stack.extend((c, depth) for c in children)
    return deepest


def name_problem(name: str) -> str | None:
    """Why ``name`` cannot be a design name (and so a folder and file-name prefix), or None.

    Names must be 1..:data:`MAX_NAME_LENGTH` characters, must not be ``.`` or ``..``, start with
    a dot or a dash, or hold path separators, characters that common file systems refuse
    (``: * ? " < > |``) or control characters (NUL included).
    """
    if not name.strip():
        return "it is empty"
    if len(name) > MAX_NAME_LENGTH:
        return f"it has {len(name)} characters; at most {MAX_NAME_LENGTH} are allowed"
    if name in (".", "..") or name.startswith((".", "-")):
        return "it must not start with '.' or '-'"
    bad = sorted({ch for ch in name if ch in _NAME_FORBIDDEN or ord(ch) < 32 or ord(ch) == 127})
    if bad:
        shown = ", ".join(repr(ch) for ch in bad)
        return f"it holds {shown}; names may not hold / \\ : * ? \" < > | or control characters"
    try:
        name.encode("utf-8")
    except UnicodeEncodeError:
        return "it is not valid UTF-8 text"
    return None


def coordinate_problem(x: Any) -> str | None:
    """Why ``x`` cannot be a coordinate in mm, or None (numbers only; bool is not a number)."""
    if isinstance(x, bool) or not isinstance(x, int | float):
        return f"{x!r} is not a number"
    try:
        f = float(x)
    except OverflowError:
        return f"{x!r} is beyond the coordinate limit of {MAX_COORDINATE_MM:g} mm"
    if not math.isfinite(f):
        return f"{x!r} is not finite"
    if abs(f) > MAX_COORDINATE_MM:
        return f"{f:g} is beyond the coordinate limit of +-{MAX_COORDINATE_MM:g} mm"
    return None

#: Time bound of one thickness method's own work, s, on a 2-core machine. A method whose work
#: estimate exceeds it refuses before starting, naming the estimate (so ``auto`` moves on to the next
#: method, and no design inside the panel limit runs for hours). Two methods have work that grows
#: with the square of a stacked strip (``offset-panel`` and ``membrane-gap``, both bounded), so the
#: method stage of a check stays within about twice this. A minute is this project's choice for an
#: interactive check (common practice, no published source).
METHOD_TIME_BOUND_S = 60.0

#: Cost of one overlapping pair of footprint parts in a stowed stack when its layer order is read,
#: s (intersection, centroid and vote), measured on the 2-core box with ``bench/bench_method_bound.py``
#: (accordion strips of 50-300 panels: 0.9-1.4e-4 s on a quiet box, 1.8-2.0e-4 s with the box
#: shared by other jobs; rounded up).
STACK_PAIR_SECONDS = 3.0e-4

#: Cost of the offset-panel method per overlapping pair of the stowed stack, s: two layer-order
#: passes (advice and build), the standoff trims and the clearance sweeps of the plan, all of which
#: grow with the stack; fitted with :data:`OFFSET_PANEL_CREASE_SECONDS` to the same measurements.
OFFSET_PANEL_PAIR_SECONDS = 8.0e-4

#: Cost of the offset-panel method per folding crease, s (set-backs of both vertex-clearance
#: variants and the per-crease share of the sweeps), measured as above: with the pair term the model
#: gives 5.4 / 11.9 / 26.9 s for strips of 50 / 100 / 200 panels measured at 3.9 / 9.2 / 23.7 s on a
#: quiet box; on a shared box (load 5 on 2 cores) 18.1 / 34.0 / 53.8 s for 100 / 200 / 300 panels.
OFFSET_PANEL_CREASE_SECONDS = 0.12
