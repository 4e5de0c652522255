"""The ``thickpanel`` command line: parse, call the API, exit. Heavy imports happen inside ``main``.

Commands::

    thickpanel new NAME [--scenario S] [--force]   write a commented starter design file NAME.toml
    thickpanel check FILE                          validation, foldability, methods, clearance, hinges
    thickpanel fold FILE --at T [-o DIR] [--force] export one fold state (0 deployed .. 1 stowed)
    thickpanel build FILE [-o DIR]                 everything: checks, solids, exports, report
    thickpanel report FILE [-o DIR]                the HTML report only
    thickpanel study STUDY.toml [--workers N] [--scheduler tcp://HOST:PORT]   variant sweep

Exit codes: 0 ok, 1 the design fails its checks, 2 bad input, 3 internal error.
``--json`` prints a machine-readable summary on stdout; ``--quiet`` prints nothing but errors;
``--debug`` shows tracebacks. Progress bars go to stderr only when it is a terminal.
"""

from __future__ import annotations

import argparse
import json
import sys
import traceback
from pathlib import Path
from typing import Any, TextIO

__all__ = ["main", "EXIT_OK", "EXIT_FAIL", "EXIT_INPUT", "EXIT_INTERNAL", "scenarios"]

EXIT_OK, EXIT_FAIL, EXIT_INPUT, EXIT_INTERNAL = 0, 1, 2, 3
STARTERS = Path(__file__).resolve().parent / "starters"


def scenarios() -> list[str]:
    """Names of the bundled starter scenarios (``thickpanel new --scenario``)."""
    return sorted(p.stem for p in STARTERS.glob("*.toml"))


class TerminalProgress:
    """A one-line progress bar on ``stream``; silent unless the stream is a terminal."""

    WIDTH = 24

    def __init__(self, stream: TextIO, enabled: bool):
        self.stream = stream
        self.enabled = enabled and bool(getattr(stream, "isatty", lambda: False)())
        self.steps = 0

    def __call__(self, label: str, done: int, total: int) -> None:
        if not self.enabled:
            return
        if done == 0:
            self.steps += 1
        frac = done / total if total else 1.0
        n = int(round(frac * self.WIDTH))
        self.stream.write(f"\r[{'#' * n}{'.' * (self.WIDTH - n)}] {self.steps:2d} {label:<14}")
        if done >= total:
            self.stream.write("\r" + " " * (self.WIDTH + 22) + "\r")
        self.stream.flush()


def _parser() -> argparse.ArgumentParser:
    common = argparse.ArgumentParser(add_help=False)
    common.add_argument("--json", action="store_true", help="print a machine-readable summary on stdout")
    common.add_argument("-q", "--quiet", action="store_true", help="print nothing but errors")
    common.add_argument("--debug", action="store_true", help="show tracebacks")
    p = argparse.ArgumentParser(
        prog="thickpanel",
        description="Deployable arrays of thick rigid panels: check a design file, fold it, build exports.",
        epilog="exit codes: 0 ok, 1 design fails its checks, 2 bad input, 3 internal error",
    )
    from . import __version__

    p.add_argument("--version", action="version", version=f"thickpanel {__version__}")
    sub = p.add_subparsers(dest="command", required=True, metavar="COMMAND")
    n = sub.add_parser("new", parents=[common], help="write a commented starter design file")
    n.add_argument("name", nargs="?", help="file to write (.toml added when missing); its stem names the design")
    n.add_argument("--scenario", default=None,
                   help="bundled scenario to start from (see --list); default: the scenario named NAME "
                   "if there is one, else miura-reference")
    n.add_argument("--list", action="store_true", help="list the bundled scenarios and exit")
    n.add_argument("--force", action="store_true", help="overwrite an existing file")
    c = sub.add_parser("check", parents=[common], help="validate and check a design; no files written")
    c.add_argument("file", type=Path, help="design file (TOML, mm and degrees; see docs/design-file.md)")
    f = sub.add_parser("fold", parents=[common], help="export one fold state")
    f.add_argument("file", type=Path, help="design file (TOML, mm and degrees; see docs/design-file.md)")
    f.add_argument("--at", type=float, required=True, metavar="T", help="fold fraction, 0 deployed .. 1 stowed")
    f.add_argument("-o", "--out", type=Path,
                   help="output folder (default: fold-tT.TT inside the [exports] folder or exports/NAME)")
    f.add_argument("--force", action="store_true", help="write into an output folder that already exists")
    f.add_argument("--formats", help="comma-separated export formats (default: [exports] formats)")
    b = sub.add_parser("build", parents=[common], help="checks, solids, exports, drawings and report")
    b.add_argument("file", type=Path, help="design file (TOML, mm and degrees; see docs/design-file.md)")
    b.add_argument("-o", "--out", type=Path, help="output folder (default: [exports] folder or exports/NAME)")
    b.add_argument("--formats", help="comma-separated export formats (default: [exports] formats)")
    for sp in (f, b):
        sp.add_argument("--reproducible", action="store_true",
                        help="same bytes for the same input: pin file time stamps to SOURCE_DATE_EPOCH "
                        "(0 when not set) and leave run times out of the report")
    r = sub.add_parser("report", parents=[common], help="write the HTML report only")
    r.add_argument("file", type=Path, help="design file (TOML, mm and degrees; see docs/design-file.md)")
    r.add_argument("-o", "--out", type=Path, help="output folder (default: [exports] folder or exports/NAME)")
    st = sub.add_parser("study", parents=[common], help="variant sweep of a base design (resumable table, Pareto view)")
    st.add_argument("file", type=Path, help="study file (TOML: base design, [[axis]] tables; see docs/studies.md)")
    st.add_argument("--workers", type=int, default=None, help="1 runs in-process; more starts a local Dask cluster "
                    "(default: all cores)")
    st.add_argument("--scheduler", default=None, metavar="tcp://HOST:PORT", help="run on this Dask scheduler")
    st.add_argument("--limit", type=int, default=None, help="compute at most this many new variants")
    st.add_argument("--connect-timeout", type=float, default=10.0, help="seconds to reach --scheduler (default 10)")
    st.add_argument("-o", "--out", type=Path, help="result folder (default: the study file's output)")
    return p


def _study(args: argparse.Namespace) -> int:
    from .study import load_study, run_study

    study = load_study(args.file)
    if args.workers is not None and args.workers < 1:
        raise _InputError(f"--workers {args.workers} must be at least 1")
    res = run_study(study, workers=args.workers, scheduler=args.scheduler, limit=args.limit, out=args.out,
                    progress=None if args.quiet else sys.stderr, connect_timeout=args.connect_timeout)
    s = {"ok": True, "command": "study", "variants": len(res.rows), "computed": len(res.computed),
         "skipped": res.skipped, "failed": res.failed, "files": [str(f) for f in res.files], "exit_code": EXIT_OK}
    if args.json:
        _emit_json(s)
    elif not args.quiet:
        sys.stdout.write(f"{study.name}: {len(res.rows)} variants in the table ({len(res.computed)} computed now, "
                         f"{res.skipped} already there, {res.failed} failed)\n")
        for f in res.files:
            sys.stdout.write(f"  {f}\n")
    return EXIT_OK


def _emit_json(obj: dict[str, Any]) -> None:
    sys.stdout.write(json.dumps(obj, indent=2, sort_keys=False, allow_nan=False, default=str) + "\n")


def _print_summary(s: dict[str, Any]) -> None:
    out = sys.stdout
    out.write(f"{s['design']}: {s['command']}\n")
    w = max([len(c["check"]) for c in s["checks"]] + [5])
    vw = max([len(c["verdict"]) for c in s["checks"]] + [5])
    for c in s["checks"]:
        out.write(f"  {c['verdict'].upper():<{vw}} {c['check']:<{w}}  {c['detail']}\n")
    details = " ".join(c["detail"] for c in s["checks"])
    for st in s["stages"]:  # stages not run, unless a check above already says why
        if st["status"] in ("not available", "blocked") and st["note"] not in details:
            out.write(f"  note: stage {st['stage']} {st['status']}: {st['note']}\n")
    if s["outputs"]:
        out.write(f"  wrote {len(s['outputs'])} files to {s['out_dir']}\n")
    if s.get("report"):
        out.write(f"  report: {s['report']}\n")
    for line in _figure_lines(s.get("metrics", {})):
        out.write(f"  {line}\n")
    counts = [(sum(c["verdict"] == v for c in s["checks"]), label) for v, label in
              (("fail", "failed"), ("not proven", "not proven"), ("could not run", "could not run"),
               ("warn", "warnings"))]
    tail = ", ".join(f"{n} {label}" for n, label in counts if n)
    verdict = s.get("verdict") or ("PASS" if s["ok"] else "FAIL")
    out.write(f"verdict: {verdict}" + (f" ({tail})" if tail else "") + "\n")


def _figure_lines(m: dict[str, Any]) -> list[str]:
    """Key figures as the build computed them (the same values as ``--json`` and the report)."""
    out = []
    if m.get("min_clearance_text"):
        out.append(f"minimum clearance: {m['min_clearance_text']}")
    for key, label in (("deployed_envelope_mm", "deployed envelope (x, y, z box)"),
                       ("stowed_envelope_mm", f"stowed envelope (x, y, z box) at t = {m.get('stowed_state_t')}"),
                       ):
        if m.get(key):
            out.append(f"{label}: " + " x ".join(f"{x:.4g}" for x in m[key]) + " mm")
    if m.get("stowed_diameter_mm") is not None:
        out.append(f"stowed cylinder about the hub axis: diameter {m['stowed_diameter_mm']:.4g} mm, height "
                   f"{m['stowed_height_mm']:.4g} mm")
    if m.get("packing_ratio"):
        out.append(f"packing ratio: {m['packing_ratio']:.3g}")
    return out


def _new(args: argparse.Namespace) -> int:
    names = scenarios()
    if args.list:
        if args.json:
            _emit_json({"scenarios": names})
        else:
            sys.stdout.write("\n".join(names) + "\n")
        return EXIT_OK
    if not args.name:
        raise _InputError("new needs NAME, the design file to write (or --list to see the scenarios)")
    if args.scenario is None:
        stem = Path(args.name).stem
        args.scenario = stem if stem in names else "miura-reference"
    if args.scenario not in names:
        from .design import suggest

        raise _InputError(f"--scenario {args.scenario!r} is not a bundled scenario{suggest(args.scenario, names)} "
                          f"(available: {', '.join(names)})")
    target = Path(args.name)
    stem = target.stem if target.suffix == ".toml" else target.name
    from .limits import name_problem

    problem = name_problem(stem)
    if problem:
        raise _InputError(f"new {args.name!r}: the file name {stem!r} is also the design name and cannot be "
                          f"used: {problem}")
    if target.suffix != ".toml":
        target = target.with_name(target.name + ".toml")
    if target.exists() and not args.force:
        raise _InputError(f"{target} already exists; use --force to overwrite it")
    text = (STARTERS / f"{args.scenario}.toml").read_text(encoding="utf-8")
    lines = text.splitlines()
    for i, line in enumerate(lines):  # the design is named after the file
        if line.startswith("name = "):
            lines[i] = f"name = {json.dumps(target.stem, ensure_ascii=True)}"  # JSON escapes are valid TOML
            break
    import tomllib

    extra = tomllib.loads(text).get("layout", {}).get("pattern")  # a pattern file the starter imports
    copies = [(STARTERS / extra, target.parent / extra)] if extra else []
    for _, dst in copies:
        if dst.exists() and not args.force:
            raise _InputError(f"{dst} already exists; use --force to overwrite it")
    try:
        target.parent.mkdir(parents=True, exist_ok=True)
        for src, dst in copies:
            tmp = dst.with_name(dst.name + ".tmp")
            tmp.write_bytes(src.read_bytes())
            tmp.replace(dst)
        tmp = target.with_name(target.name + ".tmp")
        tmp.write_text("\n".join(lines) + "\n", encoding="utf-8")
        tmp.replace(target)
    except OSError as exc:
        raise _InputError(f"cannot write {target}: {exc}") from None
    if args.json:
        _emit_json({"ok": True, "command": "new", "file": str(target), "scenario": args.scenario})
    elif not args.quiet:
        sys.stdout.write(f"wrote {target} (scenario {args.scenario}); next: thickpanel check {target}\n")
    return EXIT_OK


class _InputError(Exception):
    """Bad command-line input (exit code 2)."""


def _run(args: argparse.Namespace) -> int:
    if args.command == "new":
        return _new(args)
    if args.command == "study":
        return _study(args)
    from . import build
    from .design import load_design

    if getattr(args, "reproducible", False):
        import os

        os.environ.setdefault("SOURCE_DATE_EPOCH", "0")
    design = load_design(args.file)
    prog = TerminalProgress(sys.stderr, enabled=not args.quiet)
    formats = tuple(x.strip() for x in args.formats.split(",") if x.strip()) if getattr(args, "formats", None) \
        else None
    if args.command == "check":
        s = build.run_check(design, progress=prog)
    elif args.command == "fold":
        if not 0.0 <= args.at <= 1.0:
            raise _InputError(f"--at {args.at:g} is outside the fold fraction range 0 (deployed) .. 1 (stowed)")
        out = args.out or build.default_out_dir(design) / f"fold-t{args.at:.2f}"
        if out.exists() and not args.force:
            raise _InputError(f"output folder {out} already exists; use --force to write into it "
                              "(files of the same name are replaced) or -o to choose another folder")
        s = build.run_fold(design, args.at, out, progress=prog, formats=formats)
    elif args.command == "build":
        s = build.run_build(design, args.out, progress=prog, formats=formats)
    else:
        s = build.run_report(design, args.out, progress=prog)
    code = EXIT_OK if s["ok"] else EXIT_FAIL
    s["exit_code"] = code
    if args.json:
        _emit_json(s)
    elif not args.quiet:
        _print_summary(s)
    return code


def main(argv: list[str] | None = None) -> int:
    """Entry point of the ``thickpanel`` console script; returns the exit code."""
    parser = _parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:  # argparse already printed its usage message
        return EXIT_OK if exc.code == 0 else EXIT_INPUT
    from .errors import DesignFileError, ExportError, PatternError, ThickpanelError

    def fail(code: int, msg: str) -> int:
        msg = msg.encode("utf-8", "backslashreplace").decode("utf-8")  # file names that are not UTF-8
        if args.debug:
            traceback.print_exc()
        sys.stderr.write(f"thickpanel: error: {msg}\n")
        if args.json:
            _emit_json({"ok": False, "command": args.command, "exit_code": code, "error": msg})
        return code

    try:
        return _run(args)
    except (_InputError, DesignFileError, PatternError, ExportError) as exc:
        return fail(EXIT_INPUT, str(exc))
    except ThickpanelError as exc:
        return fail(EXIT_FAIL, f"the design fails: {exc}")
    except KeyboardInterrupt:
        return fail(EXIT_INTERNAL, "interrupted")
    except Exception as exc:  # noqa: BLE001 - the last line of defence of a command line
        return fail(EXIT_INTERNAL, f"internal error ({type(exc).__name__}: {exc}); rerun with --debug and "
                    "report it with the design file")


if __name__ == "__main__":
    raise SystemExit(main())
