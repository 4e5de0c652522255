"""`make demo`: run the main job on the bundled example (placeholder until the CLI lands)."""

from __future__ import annotations

import sys


def main() -> int:
    """Build a small reference pattern and print its checks."""
    from .pattern import CreasePattern

    cp = CreasePattern(
        [[0, 0], [100, 0], [200, 0], [0, 100], [100, 100], [200, 100]],
        [[0, 1], [1, 2], [2, 5], [5, 4], [4, 3], [3, 0], [1, 4]],
        ["border"] * 6 + ["valley"],
        name="two-panel reference",
    )
    sys.stdout.write(f"{cp!r}: {len(cp.problems())} problems\n")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
