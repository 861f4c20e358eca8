"""Case files: parsing, checking, defaults, writing back."""

import math
from pathlib import Path

import numpy as np
import pytest
from wakes.case import WingSpec, case_reference, load_case, parse_case, read_toml
from wakes.errors import CaseError

ROOT = Path(__file__).resolve().parents[1]
CASES = ROOT / "cases"


def _wing(**extra):
    body = {"type": "wing", "span": 6.0, "chord": 1.0}
    body.update(extra)
    return {"freestream": {"speed": 10.0, "angle_of_attack": 4.0}, "bodies": {"wing": body}}


@pytest.mark.parametrize("path", sorted(CASES.rglob("*.toml")), ids=lambda p: p.name)
def test_shipped_cases_load_and_write_back_identically(path, tmp_path):
    """Every shipped case loads; its resolved TOML loads again to the same case."""
    case = load_case(path)
    again = tmp_path / "case.toml"
    again.write_text(case.to_toml("header"))
    assert load_case(again).to_dict() == case.to_dict()


def test_defaults_are_resolved_from_the_case():
    case = parse_case(_wing())
    wing = case.body("wing")
    assert isinstance(wing, WingSpec) and wing.chordwise_panels == 1
    assert wing.reference_area == pytest.approx(6.0)
    assert case.wake.core_radius == pytest.approx(0.1)        # 0.1 x mean chord
    assert case.time.dt == pytest.approx(0.25 * 1.0 / 10.0)    # a quarter chord per step
    assert case.time.steps == math.ceil(3 * 6.0 / (10.0 * case.time.dt))
    vlm = parse_case(_wing(model="vortex-lattice", chordwise_panels=8))
    assert vlm.time.dt == pytest.approx(1.0 / (8 * 10.0))


def test_freestream_vector_and_exclusive_forms():
    fs = parse_case(_wing()).freestream
    a = np.radians(4.0)
    np.testing.assert_allclose(fs.vector(), 10 * np.array([np.cos(a), 0.0, np.sin(a)]))
    beta = parse_case({**_wing(), "freestream": {"speed": 5.0, "sideslip": 90.0}}).freestream
    np.testing.assert_allclose(beta.vector(), [0.0, -5.0, 0.0], atol=1e-15)
    vec = parse_case({**_wing(), "freestream": {"velocity": [3.0, 0.0, 1.0]}})
    assert "speed" not in vec.to_dict()["freestream"]
    with pytest.raises(CaseError, match="either velocity or speed"):
        parse_case({**_wing(), "freestream": {"velocity": [3.0, 0.0, 1.0], "speed": 3.0}})


@pytest.mark.parametrize("data, message", [
    ({**_wing(), "wake": {"modle": "particles"}}, r"unknown key 'wake.modle'; did you mean 'model'\?"),
    (_wing(spann=3.0), r"unknown key 'bodies.wing.spann'; did you mean 'span'\?"),
    (_wing(span=-2.0), r"bodies.wing.span must be greater than 0 \[m\]; got -2.0"),
    (_wing(chord=-1.0), r"bodies.wing.chord must be greater than 0 \[m\]; got -1.0"),
    (_wing(chord={"law": "linear", "root": 1.0, "tip": -0.1}), r"bodies.wing.chord.tip must be greater than 0"),
    (_wing(chord={"law": "cubic"}), r"chord.law must be one of 'constant', 'linear'"),
    (_wing(chord={"law": "linear", "root": 1.0}), r"law \"linear\" needs key 'tip'"),
    (_wing(chord={"law": "table", "eta": [0.0, 0.5], "values": [1.0, 0.5]}), r"must run from 0 to 1"),
    (_wing(spanwise_panels=2.5), r"spanwise_panels must be an integer"),
    (_wing(spacing="cosin"), r"spacing must be one of 'cosine', 'uniform'; got 'cosin' \(did you mean 'cosine'\?\)"),
    (_wing(symmetric="yes"), r"symmetric must be true or false"),
    (_wing(position=[0.0, 1.0]), r"position must be a list of 3 numbers"),
    (_wing(chordwise_panels=4), r"chordwise_panels must be 1 for model = \"lifting-line\""),
    (_wing(type="rotr"), r"type must be one of 'wing'.*; got 'rotr'"),
    ({**_wing(), "freestream": {"speed": 0.0}}, r"a wing needs a freestream"),
    ({**_wing(), "freestream": {"speed": 10.0, "angle_of_attack": 120.0}}, r"between -90 and 90 \[deg\]"),
    ({"freestream": {"speed": 1.0}}, r"needs at least one body"),
    ({**_wing(), "time": {"dt": 0.0}}, r"time.dt must be greater than 0"),
    ({**_wing(), "wake": {"max_age": -1.0}}, r"max_age must be greater than 0"),
    ({**_wing(), "solver": {"relaxation": 1.5}}, r"relaxation must be at most 1"),
    ({**_wing(), "wake": {"core_eddy_factor": -1e-4}}, r"wake.core_eddy_factor must be between 0 and 0.01"),
    ({**_wing(), "wake": {"core_eddy_factor": "eddy"}}, r"wake.core_eddy_factor must be a number"),
    (_wing(airfoil={"lift_slope": 6.0, "polar": "x.csv"}), r"not found|either a polar table"),
    (_wing(span=1e308), r"bodies.wing.span must be at most 10000 \[m\]; got 1e\+308"),
    ({**_wing(), "freestream": {"speed": 1e308}}, r"freestream.speed must be between 0 and 1000 \[m/s\]; got 1e\+308"),
    ({**_wing(span=1e4), "freestream": {"speed": 1e-3}, "time": {"dt": 1e-3}},
     r"\[time\] steps: the default .* give \[time\] steps"),
    ({**_wing(), "freestream": {"speed": 1e-6}}, r"\[time\] dt: the default"),
])
def test_bad_values_name_the_key_and_what_is_accepted(data, message):
    with pytest.raises(CaseError, match=message):
        parse_case(data, source="c.toml")


def test_polar_problems_are_reported_at_load(tmp_path):
    (tmp_path / "p.csv").write_text("alpha_deg,cl\n0,0\n")
    with pytest.raises(CaseError, match=r"p.csv.*missing column\(s\) cd"):
        parse_case(_wing(airfoil={"polar": "p.csv"}), base_dir=tmp_path)
    (tmp_path / "q.csv").write_text("alpha_deg,cl,cd\n0,0,0.01\n-1,0.1,0.01\n")
    with pytest.raises(CaseError, match=r"q.csv.*increase strictly"):
        parse_case(_wing(airfoil={"polar": "q.csv"}), base_dir=tmp_path)
    (tmp_path / "ok.csv").write_text("alpha_deg,cl,cd\n-5,-0.5,0.01\n10,1.0,0.02\n")
    with pytest.raises(CaseError, match=r"either a polar table or thin-airfoil coefficients"):
        parse_case(_wing(airfoil={"polar": "ok.csv", "cd0": 0.01}), base_dir=tmp_path)
    case = parse_case(_wing(airfoil={"polar": "ok.csv"}), base_dir=tmp_path)
    assert Path(case.body("wing").airfoil.polar).is_absolute()


def test_toml_syntax_error_names_file_line_and_column(tmp_path):
    f = tmp_path / "bad.toml"
    f.write_text("[freestream]\nspeed = 10.0\nangle_of_attack 5\n")
    with pytest.raises(CaseError, match=r"bad.toml: invalid TOML at line 3, column 17"):
        read_toml(f)
    with pytest.raises(CaseError, match=r"case file '.*nothere.toml' not found"):
        load_case(tmp_path / "nothere.toml")


def test_overrides_merge_before_checking():
    case = load_case(CASES / "validation" / "elliptic-wing.toml",
                     {"bodies": {"wing": {"spanwise_panels": 10}}, "time": {"steps": 5}})
    assert case.body("wing").spanwise_panels == 10 and case.time.steps == 5
    assert case.body("wing").span == 8.0


def test_reference_lists_every_key():
    text = case_reference()
    for key in ("density", "angle_of_attack", "dt", "core_radius", "near_wake_steps",
                "spanwise_panels", "out_of_range", "reference_area"):
        assert f"`{key}`" in text
