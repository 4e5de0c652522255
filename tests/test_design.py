"""Design-file loading and validation (thickpanel.design).

Outside sources: the TOML v1.0.0 specification (Preston-Werner et al., https://toml.io/en/v1.0.0)
decides what is valid TOML and which types values have; Python's ``tomllib`` documentation
(Python 3.11 standard library) gives the "(at line L, column C)" position of a syntax error;
``difflib.get_close_matches`` (Python standard library, Ratcliff/Obershelp "gestalt pattern
matching", Dr. Dobb's Journal 1988) ranks the suggested key; the degree/radian conversion is the SI
definition (BIPM, *The International System of Units*, 9th ed. 2019, table 4: 1 deg = pi/180 rad).
"""

from __future__ import annotations

import math
from pathlib import Path

import pytest

from thickpanel import CreasePattern, DesignFileError
from thickpanel.design import SCHEMA, load_design, loads_design
from thickpanel.design_doc import schema_markdown

MINI = """
name = "mini"
[layout]
family = "miura"
a = 20.0
b = 20.0
gamma_deg = 70.0
nx = 2
ny = 2
[panels]
thickness = 3.0
"""


def load(text: str, **kw):
    return loads_design(text, check_layout=kw.pop("check_layout", False), **kw)


def test_defaults_and_units():
    d = load(MINI)
    assert d.name == "mini"
    assert d.panels.thickness == 3.0
    assert d.fold.target_deg == 170.0
    # SI brochure (BIPM 2019) table 4: 1 degree = pi/180 rad.
    assert d.fold.target == pytest.approx(170.0 * math.pi / 180.0, rel=1e-15)
    assert d.exports.states == (0.0, 1.0)
    assert d.method.name == "auto"
    assert d.hinge.style == "none"


def test_design_is_frozen():
    d = load(MINI)
    with pytest.raises(AttributeError):
        d.name = "other"  # type: ignore[misc]
    with pytest.raises(TypeError):
        d.layout.params["a"] = 1.0  # type: ignore[index]


def test_toml_syntax_error_gives_line_and_column():
    # TOML v1.0.0: a bare value with no closing quote is invalid; tomllib reports line and column.
    with pytest.raises(DesignFileError, match=r"TOML syntax error.*line 3, column"):
        load('[layout]\nfamily = "miura"\nnx = "2\n')


def test_unknown_key_suggests_nearest():
    with pytest.raises(DesignFileError, match=r"unknown key \[panels\] thicknes; did you mean 'thickness'"):
        load(MINI.replace("thickness = 3.0", "thicknes = 3.0"))


def test_unknown_section_suggests_nearest():
    with pytest.raises(DesignFileError, match=r"unknown section \[hinges\]; did you mean 'hinge'"):
        load(MINI + "[hinges]\nstyle = 'none'\n")


def test_unknown_top_level_key():
    with pytest.raises(DesignFileError, match=r"unknown top-level key 'nme'; did you mean 'name'"):
        load('nme = "x"\n' + MINI.replace('name = "mini"', ""))


def test_missing_required_key_names_section():
    with pytest.raises(DesignFileError, match=r"\[panels\] thickness is missing: section \[panels\] needs"):
        load(MINI.replace("thickness = 3.0", 'material = ""'))
    with pytest.raises(DesignFileError, match=r"section \[layout\] is missing"):
        load("[panels]\nthickness = 2.0\n")


@pytest.mark.parametrize(
    "section,line,pattern",
    [
        ("fold", "target_deg = 200.0", r"\[fold\] target_deg = 200 deg is out of range; allowed: 0 < value <= 180 deg"),
        ("fold", "target_deg = 0", r"\[fold\] target_deg = 0 deg is out of range"),
        ("fold", "states = 1", r"\[fold\] states = 1 is out of range; allowed: 2 <= value <= 2000"),
        # TOML v1.0.0: 60.0 is a float, so it is not a whole number.
        ("fold", "states = 60.0", r"\[fold\] states = 60.0 must be a whole number"),
        ("fold", 'target_deg = "90"', r"\[fold\] target_deg = '90' must be a number in deg"),
        # TOML v1.0.0: true is a boolean, never a number.
        ("fold", "target_deg = true", r"must be a number"),
        ("fold", "target_deg = nan", r"must be finite"),
        ("exports", "states = [0.0, 1.5]", r"\[exports\] states: item 1.5 is out of range; allowed: 0 <= value <= 1"),
        ("exports", 'formats = "step"', r"\[exports\] formats = 'step' must be a list"),
        ("checks", "require_rigid = 1", r"\[checks\] require_rigid = 1 must be true or false"),
        ("fold", 'driver = "P003"', r"\[fold\] driver = 'P003' is not a crease id"),
    ],
)
def test_bad_values_name_key_value_and_range(section, line, pattern):
    with pytest.raises(DesignFileError, match=pattern):
        load(MINI + f"[{section}]\n{line}\n")


def test_thickness_range_message():
    msg = r"\[panels\] thickness = -1 mm is out of range; allowed: 0 < value <= 1000 mm"
    with pytest.raises(DesignFileError, match=msg):
        load(MINI.replace("thickness = 3.0", "thickness = -1"))


def test_hinge_options_checked_against_style():
    pytest.importorskip("hinges")
    with pytest.raises(DesignFileError, match=r"style = 'knukle' is not a hinge style; did you mean 'knuckle'"):
        loads_design(MINI + '[hinge]\nstyle = "knukle"\n', check_layout=True)
    msg = r"unknown key \[hinge\] pin_diameter for style 'knuckle'; did you mean 'pin_diameter_mm'"
    with pytest.raises(DesignFileError, match=msg):
        loads_design(MINI + '[hinge]\nstyle = "knuckle"\npin_diameter = 2.0\n')
    d = loads_design(MINI + '[hinge]\nstyle = "knuckle"\npin_diameter_mm = 1.5\nknuckles = 3\n')
    assert dict(d.hinge.options) == {"pin_diameter_mm": 1.5, "knuckles": 3}


def test_layout_needs_exactly_one_source(tmp_path):
    with pytest.raises(DesignFileError, match=r"exactly one of 'family'"):
        load("[layout]\nnx = 3\n[panels]\nthickness = 1.0\n")
    with pytest.raises(DesignFileError, match=r"got both"):
        load('[layout]\nfamily = "miura"\npattern = "x.json"\n[panels]\nthickness = 1.0\n')


def test_missing_pattern_file(tmp_path):
    f = tmp_path / "d.toml"
    f.write_text('[layout]\npattern = "nowhere.json"\n[panels]\nthickness = 1.0\n')
    with pytest.raises(DesignFileError, match=r"\[layout\] pattern = 'nowhere.json': file not found"):
        load_design(f)


def test_pattern_suffix_checked(tmp_path):
    (tmp_path / "p.svg").write_text("<svg/>")
    f = tmp_path / "d.toml"
    f.write_text('[layout]\npattern = "p.svg"\n[panels]\nthickness = 1.0\n')
    with pytest.raises(DesignFileError, match=r"suffix '.svg' is not supported; allowed: .json, .dxf"):
        load_design(f)


def test_missing_design_file(tmp_path):
    with pytest.raises(DesignFileError, match="not found"):
        load_design(tmp_path / "absent.toml")


def test_name_defaults_to_stem_and_paths_are_relative(tmp_path):
    f = tmp_path / "sub" / "roof.toml"
    f.parent.mkdir()
    f.write_text(MINI.replace('name = "mini"', "") + '[exports]\nfolder = "out"\n')
    d = load_design(f, check_layout=False)
    assert d.name == "roof"
    assert d.exports.folder == (tmp_path / "sub" / "out").resolve()


def test_layout_parameters_checked_against_generator():
    pytest.importorskip("thickpanel.layouts.classic")
    msg = r"unknown key \[layout\] gama_deg for family 'miura'; did you mean 'gamma_deg'"
    with pytest.raises(DesignFileError, match=msg):
        loads_design(MINI.replace("gamma_deg", "gama_deg"))
    with pytest.raises(DesignFileError, match=r"\[layout\] ny is missing: family 'miura' needs key 'ny'"):
        loads_design(MINI.replace("ny = 2", ""))
    with pytest.raises(DesignFileError, match=r"family = 'miur' is not a registered layout; did you mean 'miura'"):
        loads_design(MINI.replace('"miura"', '"miur"'))


def test_make_pattern_and_overrides():
    pytest.importorskip("thickpanel.layouts.classic")
    d = loads_design(MINI + '[[panels.override]]\npanels = ["P000"]\nthickness = 5.0\n')
    cp = d.make_pattern()
    assert isinstance(cp, CreasePattern)
    assert cp.n_panels == 4
    th = d.panel_thickness(cp)
    assert isinstance(th, dict)
    assert th[0] == 5.0 and th[1] == 3.0
    bad = loads_design(MINI + '[[panels.override]]\npanels = ["P099"]\nthickness = 5.0\n')
    with pytest.raises(DesignFileError, match=r"'P099' is not a panel of this pattern \(P000..P003\)"):
        bad.panel_thickness(cp)


def test_generator_refusal_becomes_design_error():
    pytest.importorskip("thickpanel.layouts.classic")
    d = loads_design(MINI.replace("gamma_deg = 70.0", "gamma_deg = 95.0"))
    with pytest.raises(DesignFileError, match=r"\[layout\] family = 'miura'.*gamma"):
        d.make_pattern()


def test_override_needs_selector_and_change():
    with pytest.raises(DesignFileError, match=r"#1 needs 'panels'"):
        load(MINI + "[[panels.override]]\nthickness = 5.0\n")
    with pytest.raises(DesignFileError, match=r"#1 changes nothing"):
        load(MINI + '[[panels.override]]\npanels = ["P001"]\n')
    with pytest.raises(DesignFileError, match=r"radius = \[5.0, 1.0\] must be \[low, high\]"):
        load(MINI + "[[panels.override]]\nradius = [5.0, 1.0]\nthickness = 2.0\n")


def test_every_schema_key_is_documented():
    doc = Path(__file__).resolve().parents[1] / "docs" / "design-file.md"
    text = doc.read_text()
    # the generated block in the reference page is exactly what the schema gives today
    assert schema_markdown() in text, "regenerate: python -m thickpanel.design_doc --write docs/design-file.md"
    for k in SCHEMA:
        assert f"| `{k.name}` |" in text
        assert k.unit is not None and k.doc


def test_material_keys_checked():
    pytest.importorskip("hinges.materials")
    msg = r"\[panels\] material = 'al-6061' is not a known material; did you mean 'al-6061-t6'"
    with pytest.raises(DesignFileError, match=msg):
        loads_design(MINI.replace("thickness = 3.0", 'thickness = 3.0\nmaterial = "al-6061"'))
    with pytest.raises(DesignFileError, match=r"#1 material = 'pla\+' is not a known material; did you mean 'pla'"):
        loads_design(MINI + '[[panels.override]]\npanels = ["P000"]\nmaterial = "pla+"\n')


def test_per_region_material_reaches_the_slabs():
    pytest.importorskip("thickpanel.thickness")
    from thickpanel.build import run_pipeline

    d = loads_design(MINI + '[method]\nname = "tapered"\n[fold]\ntarget_deg = 90.0\nstates = 6\n'
                     '[[panels.override]]\npanels = ["P001"]\nmaterial = "petg"\n')
    res = run_pipeline(d, stages=("pattern", "fold path", "method"))
    assert res.plan is not None
    assert [s.material for s in res.plan.slabs][1] == "petg"
    assert all(s.material != "petg" for k, s in enumerate(res.plan.slabs) if k != 1)


def test_stop_at_contact_ends_the_path_before_contact():
    # The lamp-shade band curls until its two end panels meet (found by the clearance sweep near
    # 33 deg); folding it to 40 deg with stop_at_contact must end the path before that contact, and
    # the re-swept path then keeps a non-negative clearance. Oracle: the sweep's own first contact
    # on the full path, checked against the truncated path's end.
    pytest.importorskip("thickpanel.clearance")
    from thickpanel.build import run_pipeline

    ex = Path(__file__).resolve().parents[1] / "examples" / "lamp-shade.toml"
    text = ex.read_text().replace("target_deg = 32.0", "target_deg = 40.0").replace(
        "states = 12", "states = 12\nstop_at_contact = true")
    d = loads_design(text, source=ex)
    res = run_pipeline(d, stages=("pattern", "fold path", "method", "clearance"))
    if res.clearance is None:
        pytest.skip("no clearance report")
    assert res.path.stop_reason == "contact"
    assert 0.0 < res.metrics["reached_fold_deg"] < 40.0
    assert res.clearance.min_clearance >= -1e-6


def test_unknown_method_option_suggests_nearest():
    pytest.importorskip("thickpanel.thickness.membrane_gap")
    from thickpanel.build import run_pipeline

    d = loads_design(MINI + '[method]\nname = "membrane-gap"\noptions = { sid = "outside" }\n[fold]\nstates = 4\n')
    with pytest.raises(DesignFileError, match=r"unknown key \[method\] options \(method 'membrane-gap'\) sid; "
                                              r"did you mean 'side'"):
        run_pipeline(d, stages=("pattern", "method"))


def test_export_formats_checked():
    pytest.importorskip("thickpanel.export")
    with pytest.raises(DesignFileError, match=r"formats: 'stp' is not an export format; did you mean 'step'"):
        loads_design(MINI + '[exports]\nformats = ["stp"]\n')
