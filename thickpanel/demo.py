"""`make demo`: run ``thickpanel build`` on the flagship example and say where everything went.

The flagship is ``examples/field-shade-mast.toml``, a 2 m field sun-shade of 3 mm plates on a
polyimide backing that furls round a hexagonal mast collar (``hub-wrap`` layout, ``wrap-backing``
method): its report shows the deployed and the stowed state side by side with the stowed
diameter, height, diameter ratio, packaging efficiency and the volume bound (the bundled starter of
the same name when the examples folder is not there, e.g. in an installed copy).
Exports go to ``exports/<name>/`` in the current directory.
"""

from __future__ import annotations

import sys
from pathlib import Path

FLAGSHIP = "field-shade-mast"


def flagship_file() -> Path:
    """The flagship design file: the repository's example, else the packaged starter."""
    repo = Path(__file__).resolve().parents[1] / "examples" / f"{FLAGSHIP}.toml"
    if repo.is_file():
        return repo
    return Path(__file__).resolve().parent / "starters" / f"{FLAGSHIP}.toml"


def main(argv: list[str] | None = None) -> int:
    """Build the flagship example; returns the command line's exit code."""
    from .cli import main as cli_main

    design = flagship_file()
    out = Path.cwd() / "exports" / FLAGSHIP
    args = ["build", str(design), "-o", str(out)] + list(argv if argv is not None else sys.argv[1:])
    sys.stdout.write(f"thickpanel {' '.join(args)}\n")
    sys.stdout.flush()
    code = cli_main(args)
    if code in (0, 1):
        report = out / f"{FLAGSHIP}-report.html"
        sys.stdout.write(f"\nexports: {out}\n")
        if report.is_file():
            sys.stdout.write(f"report:  {report}\n")
    return code


if __name__ == "__main__":
    raise SystemExit(main())
