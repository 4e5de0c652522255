"""Property-based campaign over malformed inputs: design files, crease patterns (API, JSON, DXF) and
command-line arguments end either in a result or in the project's own error, never in a foreign
exception, a traceback or exit code 3 (thickpanel's own robustness rule; no published source).

Size: ``THICKPANEL_FUZZ_EXAMPLES`` examples per property (default 100, about ten seconds in all);
the nightly campaign sets it to a few thousand, e.g. ``THICKPANEL_FUZZ_EXAMPLES=2000``.
"""

from __future__ import annotations

import io
import json
import math
import os
import tomllib
from pathlib import Path
from typing import Any

import ezdxf
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from thickpanel.cli import main
from thickpanel.design import loads_design
from thickpanel.errors import ThickpanelError
from thickpanel.io import loads_pattern, read_dxf
from thickpanel.layouts import panel_estimate
from thickpanel.pattern import CreasePattern

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"
N = int(os.environ.get("THICKPANEL_FUZZ_EXAMPLES", "100"))
FUZZ = settings(max_examples=N, deadline=None, suppress_health_check=list(HealthCheck), derandomize=True)
DESIGNS = sorted(EXAMPLES.glob("*.toml"))

# ----------------------------------------------------------------------------- values
_numbers = st.one_of(
    st.integers(min_value=-(2**70), max_value=2**70),
    st.floats(allow_nan=True, allow_infinity=True),
    st.sampled_from([0, 1, -1, 1e308, -1e-308, 2.0, 0.5, 1e9]),
)
_scalars = st.one_of(_numbers, st.booleans(), st.text(max_size=12), st.sampled_from(["", "..", "P000", "C001", "auto"]))
_values = st.recursive(
    _scalars,
    lambda c: st.one_of(st.lists(c, max_size=4), st.dictionaries(st.text(max_size=6), c, max_size=3)),
    max_leaves=8,
)


def _toml_key(k: str) -> str:
    return json.dumps(k)


def _toml_value(v: Any) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if math.isnan(v):
            return "nan"
        if math.isinf(v):
            return "inf" if v > 0 else "-inf"
        return repr(v)
    if isinstance(v, str):
        return json.dumps(v)
    if isinstance(v, list):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    if isinstance(v, dict):
        return "{" + ", ".join(f"{_toml_key(k)} = {_toml_value(x)}" for k, x in v.items()) + "}"
    raise TypeError(type(v))


def _toml(doc: dict[str, Any]) -> str:
    """Plain TOML writer for the mutated documents (top-level scalars, then one table per section)."""
    head = [f"{_toml_key(k)} = {_toml_value(v)}" for k, v in doc.items() if not isinstance(v, dict)]
    body = []
    for k, v in doc.items():
        if isinstance(v, dict):
            body.append(f"[{_toml_key(k)}]")
            body += [f"{_toml_key(a)} = {_toml_value(b)}" for a, b in v.items()]
    return "\n".join(head + body) + "\n"


@st.composite
def _mutated_design(draw: st.DrawFn) -> tuple[Path, str]:
    path = draw(st.sampled_from(DESIGNS))
    doc = tomllib.loads(path.read_text(encoding="utf-8"))
    for _ in range(draw(st.integers(min_value=1, max_value=3))):
        section = draw(st.sampled_from(sorted(k for k, v in doc.items() if isinstance(v, dict)) + [""]))
        table = doc if section == "" else doc[section]
        keys = sorted(k for k in table if not isinstance(table[k], dict) or section)
        op = draw(st.sampled_from(["replace", "delete", "add", "rename"]))
        if op == "add" or not keys:
            table[draw(st.sampled_from(["ptatern", "family_", "extra", "thickness", "b", "n", "fit"]))] = draw(_values)
        elif op == "replace":
            table[draw(st.sampled_from(keys))] = draw(_values)
        elif op == "delete":
            del table[draw(st.sampled_from(keys))]
        else:
            k = draw(st.sampled_from(keys))
            table[k + draw(st.sampled_from(["_", "s", "x"]))] = table.pop(k)
    return path, _toml(doc)


@FUZZ
@given(_mutated_design())
def test_mutated_design_files_load_or_refuse(case: tuple[Path, str]) -> None:
    path, text = case
    try:
        design = loads_design(text, source=path)
    except ThickpanelError:
        return
    lay = design.layout
    if lay.family is not None:
        n = panel_estimate(lay.family, dict(lay.params))
        if n is not None and n > 2_000:
            return  # valid but large: generation is tested by the layout tests
    try:
        design.make_pattern()
    except ThickpanelError:
        pass


# ----------------------------------------------------------------------------- patterns
_coords = st.one_of(st.floats(allow_nan=True, allow_infinity=True, width=64), st.integers(-(2**70), 2**70))


@FUZZ
@given(st.lists(st.lists(st.lists(_coords, min_size=2, max_size=2), min_size=2, max_size=2), max_size=8),
       st.lists(st.sampled_from(["mountain", "valley", "border", "cut", "flat", "fold", ""]), max_size=8))
def test_segment_soups(segs: list, kinds: list) -> None:
    try:
        CreasePattern.from_segments(segs, kinds)
    except ThickpanelError:
        pass


@FUZZ
@given(st.lists(st.lists(_coords, min_size=0, max_size=3), max_size=6),
       st.lists(st.lists(st.one_of(st.integers(-3, 8), st.floats()), min_size=0, max_size=3), max_size=6),
       st.lists(st.sampled_from(["mountain", "valley", "border", "cut", "flat", "x"]), max_size=6),
       st.one_of(st.none(), st.lists(st.one_of(st.none(), st.floats(), st.text(max_size=3)), max_size=6)))
def test_crease_pattern_constructor(v: list, c: list, k: list, ta: Any) -> None:
    try:
        CreasePattern(v, c, k, ta)
    except ThickpanelError:
        pass


_SQUARE = {"format": "thickpanel-pattern", "version": 1, "vertices": [[0, 0], [10, 0], [10, 10], [0, 10]],
           "creases": [[0, 1], [1, 2], [2, 3], [3, 0]], "kinds": ["border"] * 4}


@FUZZ
@given(st.sampled_from(sorted(_SQUARE) + ["seams", "target_angles_deg", "units", "name"]), _values,
       st.integers(min_value=0, max_value=200))
def test_pattern_json_mutations(key: str, value: Any, cut: int) -> None:
    d = dict(_SQUARE)
    d[key] = value
    try:
        text = json.dumps(d)
    except (ValueError, TypeError):
        return
    for t in (text, text[: len(text) * cut // 200]):
        try:
            loads_pattern(t)
        except ThickpanelError:
            pass


def _dxf_text() -> str:
    doc = ezdxf.new()
    msp = doc.modelspace()
    msp.add_lwpolyline([(0, 0), (10, 0), (10, 10), (0, 10)], close=True, dxfattribs={"layer": "border"})
    msp.add_line((5, 0), (5, 10), dxfattribs={"layer": "valley"})
    msp.add_arc((5, 5), 3, 0, 90, dxfattribs={"layer": "cut"})
    buf = io.StringIO()
    doc.write(buf)
    return buf.getvalue()


DXF = _dxf_text()


@FUZZ
@given(st.integers(min_value=0, max_value=len(DXF)), st.integers(min_value=0, max_value=len(DXF)),
       st.text(alphabet="0123456789.-\nEAXLINE ", max_size=20))
def test_damaged_dxf_files(tmp_path_factory: pytest.TempPathFactory, cut: int, at: int, junk: str) -> None:
    p = tmp_path_factory.mktemp("dxf") / "d.dxf"
    p.write_text(DXF[:at] + junk + DXF[at:cut] if cut > at else DXF[:cut])
    try:
        read_dxf(p)
    except ThickpanelError:
        pass


# ----------------------------------------------------------------------------- command line
_ARGS = st.lists(st.sampled_from(
    ["check", "fold", "build", "report", "new", "--at", "-1", "2", "0.5", "nan", "--json", "-q", "--formats",
     "step,nope", "--list", "--scenario", "nope", "missing.toml", "/", "..", "x" * 300, "--force", "-o",
     "--reproducible", "--deg"]), max_size=5)


@FUZZ
@given(_ARGS)
def test_cli_arguments(tmp_path_factory: pytest.TempPathFactory, capsys: pytest.CaptureFixture[str],
                      argv: list[str]) -> None:
    cwd = os.getcwd()
    os.chdir(tmp_path_factory.mktemp("cli"))
    try:
        code = main(argv)
    finally:
        os.chdir(cwd)
    err = capsys.readouterr().err
    assert code in (0, 1, 2), err
    assert "Traceback" not in err


def test_cli_argument_that_is_not_utf8(tmp_path: Path) -> None:
    """A file name of bytes that are not UTF-8 (POSIX allows them) gets a clean refusal, exit 2."""
    import subprocess
    import sys

    root = Path(__file__).resolve().parents[1]
    env = dict(os.environ, PYTHONPATH=str(root))
    done = subprocess.run([sys.executable, "-m", "thickpanel.cli", "check", os.fsdecode(b"caf\xe9.toml")],
                          cwd=tmp_path, env=env, capture_output=True, timeout=120)
    assert done.returncode == 2
    assert b"Traceback" not in done.stderr
