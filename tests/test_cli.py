"""The ``thickpanel`` command line, exercised through a subprocess: exit codes, --json, bad input.

Outside sources: exit status conventions of POSIX.1-2017 (IEEE Std 1003.1, "exit": 0 is success,
non-zero failure; we document 1/2/3); the TOML v1.0.0 specification (https://toml.io/en/v1.0.0)
decides which files are syntax errors; JSON output must parse under RFC 8259 (Bray 2017) with
Python's ``json`` module, which rejects NaN when ``allow_nan=False`` is not honoured by the writer
(so we parse with ``parse_constant`` raising); the Miura-ori reference sheet's flat panel area is
a b sin(gamma) per parallelogram (Schenk & Guest 2013, PNAS 110(9):3276, flat state theta = 0).
"""

from __future__ import annotations

import importlib
import importlib.util
import json
import math
import subprocess
import sys
from pathlib import Path

import pytest

PY = sys.executable
ROOT = Path(__file__).resolve().parents[1]


def run(*args: str, cwd: Path | None = None) -> subprocess.CompletedProcess[str]:
    return subprocess.run([PY, "-m", "thickpanel.cli", *args], capture_output=True, text=True, cwd=cwd,
                          timeout=600)


def strict_json(text: str):
    def bad(c):
        raise ValueError(f"non-standard JSON constant {c}")  # RFC 8259 has no NaN/Infinity

    return json.loads(text, parse_constant=bad)


def has(mod: str) -> bool:
    try:
        return importlib.util.find_spec(mod) is not None
    except ModuleNotFoundError:
        return False


def has_attr(mod: str, name: str) -> bool:
    if not has(mod):
        return False
    return hasattr(importlib.import_module(mod), name)


@pytest.fixture(scope="module")
def starter(tmp_path_factory) -> Path:
    d = tmp_path_factory.mktemp("cli")
    r = run("new", str(d / "sheet"))
    assert r.returncode == 0, r.stderr
    f = d / "sheet.toml"
    f.write_text(f.read_text().replace("states = 24 ", "states = 8 "))  # fewer states: faster tests
    return f


def test_new_writes_named_starter(starter):
    text = starter.read_text()
    assert 'name = "sheet"' in text
    assert "SAFETY" in text


def test_new_list_and_refuse_overwrite(starter):
    r = run("new", "--list", "--json")
    assert r.returncode == 0
    names = strict_json(r.stdout)["scenarios"]
    assert {"miura-reference", "shelter-roof", "lamp-shade", "reflector-backing"} <= set(names)
    r = run("new")
    assert r.returncode == 2 and "new needs NAME" in r.stderr
    r = run("new", str(starter.with_name("lamp-shade")), "--json")  # NAME picks the scenario of that name
    assert r.returncode == 0 and strict_json(r.stdout)["scenario"] == "lamp-shade"
    assert (starter.parent / "lamp-shade-band.json").is_file()  # the pattern file it imports comes along
    r = run("new", str(starter))
    assert r.returncode == 2
    assert "already exists" in r.stderr and "Traceback" not in r.stderr
    r = run("new", str(starter.with_name("other")), "--scenario", "miura-refrence")
    assert r.returncode == 2 and "did you mean 'miura-reference'" in r.stderr


def test_check_json_summary(starter):
    r = run("check", str(starter), "--json")
    assert r.returncode in (0, 1), r.stderr
    s = strict_json(r.stdout)
    assert s["command"] == "check" and s["design"] == "sheet"
    assert s["exit_code"] == r.returncode
    assert s["ok"] == (r.returncode == 0)
    # 4 x 3 parallelograms of a = b = 30 mm at gamma = 70 deg: area a b sin(gamma) each
    # (Schenk & Guest 2013, flat state).
    assert s["metrics"]["panels"] == 12
    assert s["metrics"]["deployed_area_mm2"] == pytest.approx(12 * 30 * 30 * math.sin(math.radians(70)), rel=1e-9)
    assert {c["verdict"] for c in s["checks"]} <= {"pass", "fail", "not proven", "could not run", "does not apply",
                                                   "warn", "info"}
    assert s["verdict"] in ("PASS", "FAIL", "NOT PROVEN")
    # progress bars stay quiet when stderr is not a terminal
    assert r.stderr == ""


def test_check_text_and_quiet(starter):
    r = run("check", str(starter))
    assert r.returncode in (0, 1)
    assert "verdict:" in r.stdout and "pattern valid" in r.stdout
    q = run("check", str(starter), "--quiet")
    assert q.returncode == r.returncode and q.stdout == "" and q.stderr == ""


def write(tmp_path: Path, text: str, name: str = "d.toml") -> Path:
    p = tmp_path / name
    p.write_text(text)
    return p


GOOD = Path(ROOT / "thickpanel" / "starters" / "miura-reference.toml").read_text()


def with_pattern(text: str, file: str) -> str:
    """The starter with its generated layout replaced by an imported pattern file."""
    keep = [ln for ln in text.splitlines() if ln.split("=")[0].strip() not in ("a", "b", "gamma_deg", "nx", "ny")]
    return "\n".join(keep).replace('family = "miura"', f'pattern = "{file}"') + "\n"


@pytest.mark.parametrize(
    "edit,needle",
    [
        (lambda t: t.replace("nx = 4 ", 'nx = "4'), "TOML syntax error"),  # unterminated string
        (lambda t: t.replace("thickness = 2.0", "thickness = true"), "[panels] thickness = True must be a number"),
        (lambda t: t.replace("thickness = 2.0", "thicknes = 2.0"), "did you mean 'thickness'"),
        (lambda t: t.replace("target_deg = 120.0", "target_deg = 181.0"),
         "[fold] target_deg = 181 deg is out of range; allowed: 0 < value <= 180 deg"),
        (lambda t: with_pattern(t, "missing.json"), "[layout] pattern = 'missing.json': file not found"),
        (lambda t: t.replace('family = "miura"', 'family = "miuraa"'), "did you mean 'miura'"),
    ],
)
def test_bad_input_exit_2_one_message(tmp_path, edit, needle):
    p = write(tmp_path, edit(GOOD))
    r = run("check", str(p))
    assert r.returncode == 2, (r.stdout, r.stderr)
    assert needle in r.stderr
    assert "Traceback" not in r.stderr
    assert r.stderr.count("\n") == 1  # one clear message
    assert r.stdout == ""


def test_toml_error_has_line_and_column(tmp_path):
    p = write(tmp_path, GOOD.replace("nx = 4 ", 'nx = "4'))
    r = run("check", str(p), "--json")
    assert r.returncode == 2
    assert "line 18, column" in r.stderr
    err = strict_json(r.stdout)
    assert err["ok"] is False and err["exit_code"] == 2


def test_debug_shows_traceback(tmp_path):
    p = write(tmp_path, GOOD.replace("thickness = 2.0", "thickness = -2.0"))
    r = run("check", str(p), "--debug")
    assert r.returncode == 2 and "Traceback" in r.stderr and "out of range" in r.stderr


def test_missing_design_file(tmp_path):
    r = run("build", str(tmp_path / "nope.toml"))
    assert r.returncode == 2 and "not found" in r.stderr and "Traceback" not in r.stderr


def test_usage_error_is_exit_2():
    r = run("fold")
    assert r.returncode == 2


def test_fold_at_out_of_range(starter):
    r = run("fold", str(starter), "--at", "1.5")
    assert r.returncode == 2 and "outside the fold fraction range" in r.stderr


@pytest.mark.skipif(not has_attr("thickpanel.io", "read_pattern"), reason="thickpanel.io not written yet")
def test_dxf_without_crease_layers(tmp_path):
    ezdxf = pytest.importorskip("ezdxf")
    doc = ezdxf.new()
    doc.layers.add("NOTES")
    doc.modelspace().add_line((0, 0), (10, 0), dxfattribs={"layer": "NOTES"})
    doc.saveas(tmp_path / "p.dxf")
    p = write(tmp_path, with_pattern(GOOD, "p.dxf"))
    r = run("check", str(p))
    assert r.returncode == 2, r.stderr
    assert "[layout] pattern = 'p.dxf'" in r.stderr and "Traceback" not in r.stderr


@pytest.mark.skipif(not has("thickpanel.kinematics"), reason="thickpanel.kinematics not written yet")
def test_design_failing_its_checks_exits_1(tmp_path):
    # The square twist with its standard assignment is not rigidly foldable
    # (Hull, *Origametry*, 2020; Evans et al. 2015, R. Soc. Open Sci. 2:150067).
    text = GOOD.split("[layout]")[0] + (
        '[layout]\nfamily = "square-twist"\nside = 40.0\ntwist_deg = 30.0\n'
        "[panels]\nthickness = 1.0\n[fold]\ntarget_deg = 60.0\n[checks]\nrequire_rigid = true\n"
    )
    r = run("check", str(write(tmp_path, text)), "--json")
    assert r.returncode == 1, r.stderr
    s = strict_json(r.stdout)
    assert s["ok"] is False
    assert any(c["check"] == "rigid-foldable" and c["verdict"] == "fail" for c in s["checks"])


def test_internal_error_exit_3(monkeypatch, starter, capsys):
    from thickpanel import build, cli

    def boom(*a, **k):
        raise ZeroDivisionError("simulated")

    monkeypatch.setattr(build, "run_check", boom)
    assert cli.main(["check", str(starter)]) == 3
    err = capsys.readouterr().err
    assert "internal error (ZeroDivisionError: simulated)" in err and "Traceback" not in err


@pytest.mark.skipif(not has("thickpanel.kinematics"), reason="thickpanel.kinematics not written yet")
def test_locked_membrane_design_warns_and_sizes_slack(tmp_path):
    # Standard square twist: locked with ideal hinges (Hull, *Origametry*, 2020). A membrane-gap
    # design (Zirbel et al. 2013, J. Mech. Des. 135:111005: membranes suit patterns that are not
    # rigidly foldable) still gets a plan; the fold and the clearance are reported as unproven and
    # the hinge play the least-squares fold needs is sized.
    text = ('[layout]\nfamily = "square-twist"\nside = 40.0\ntwist_deg = 30.0\n[panels]\nthickness = 1.0\n'
            '[method]\nname = "membrane-gap"\n[fold]\ntarget_deg = 60.0\nstates = 10\n')
    r = run("check", str(write(tmp_path, text)), "--json")
    assert r.returncode == 0, r.stderr
    s = strict_json(r.stdout)
    verdicts = {c["check"]: c["verdict"] for c in s["checks"]}
    assert verdicts["rigid-foldable"] == "warn"
    assert verdicts["joint slack (locked pattern)"] == "warn"
    assert verdicts["clearance over the fold"] == "not proven"
    assert verdicts["thickness method"] == "pass"
    assert s["verdict"] == "NOT PROVEN"  # never PASS beside an unproven row
    assert s["metrics"]["slack_max_play_mm"] > 0


class _Stream:
    def __init__(self, tty: bool) -> None:
        self.tty = tty
        self.text = ""

    def isatty(self) -> bool:
        return self.tty

    def write(self, s: str) -> int:
        self.text += s
        return len(s)

    def flush(self) -> None:
        pass


def test_progress_bar_only_on_a_terminal():
    # POSIX isatty(3): progress goes to a terminal only; pipes and files stay clean.
    from thickpanel.cli import TerminalProgress

    for tty, quiet in ((True, False), (False, False), (True, True)):
        st = _Stream(tty)
        bar = TerminalProgress(st, enabled=not quiet)  # type: ignore[arg-type]
        bar("fold path", 0, 1)
        bar("fold path", 1, 1)
        assert ("fold path" in st.text) == (tty and not quiet)


@pytest.mark.cad
def test_unwritable_output_folder_is_bad_input(starter, tmp_path):
    blocker = tmp_path / "taken"
    blocker.write_text("a file where the output folder should go")
    r = run("fold", str(starter), "--at", "0", "-o", str(blocker / "sub"))
    assert r.returncode == 2, (r.returncode, r.stderr)
    assert "Traceback" not in r.stderr and r.stderr.count("\n") == 1
    assert not any(p.suffix == ".tmp" for p in tmp_path.rglob("*"))  # no partial files left behind


@pytest.mark.cad
def test_check_refuses_a_pin_that_does_not_fit(tmp_path):
    # A 4 mm pin in 3 mm aluminium panels: the barrel cannot fit inside the panel thickness
    # (a barrel's outer diameter exceeds its pin's; common machining practice keeps a wall).
    text = (ROOT / "examples" / "reflector-backing.toml").read_text().replace("pin_diameter_mm = 1.5",
                                                                               "pin_diameter_mm = 4.0")
    r = run("check", str(write(tmp_path, text)))
    assert r.returncode == 2, (r.returncode, r.stderr)
    assert "[hinge]" in r.stderr and "4 mm" in r.stderr and "Traceback" not in r.stderr


@pytest.mark.skipif(not has("thickpanel.kinematics"), reason="thickpanel.kinematics not written yet")
def test_fold_path_progress_ticks_once_per_state(starter):
    from thickpanel.build import run_pipeline
    from thickpanel.design import load_design

    ticks: list[tuple[str, int, int]] = []
    res = run_pipeline(load_design(starter), stages=("pattern", "fold path"),
                       progress=lambda label, i, n: ticks.append((label, i, n)))
    inner = [t for t in ticks if t[0] == "fold path" and t[2] == 8]  # the starter samples 8 states
    assert res.path is not None and len(res.path.states) == 8
    assert len(inner) == 8 and inner[-1][1] == 7  # one tick per sampled state, bar not closed early
