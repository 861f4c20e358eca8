"""Rotor case files: defaults, and bad input stopping with a clear error (exit status 2)."""

import math
import re

import pytest
from wakes.case import MAX_AZIMUTH_STEP, case_reference, parse_case
from wakes.cli import main
from wakes.errors import CaseError

ROTOR = """
title = "tiny rotor"
[bodies.rotor]
type = "rotor"
blades = 2
radius = 0.5
root_cutout = 0.1
chord = 0.05
collective = 8.0
rpm = 1200.0
panels = 5
azimuth_step = 20.0
revolutions = 1.0
wake_revolutions = 1.0
rollup_age = 60.0
[wake]
core = "vatistas2"
core_radius = 0.02
cores_at_surfaces = true
"""


def parsed(text=ROTOR):
    import tomllib
    return parse_case(tomllib.loads(text), source="case.toml")


def test_defaults_are_worked_out_from_the_rotor():
    case = parsed()
    rotor = case.body("rotor")
    assert case.time.dt == pytest.approx(20.0 / (6.0 * 1200.0))       # 20 deg a step
    assert case.time.steps == 19                                        # one revolution, both ends
    assert rotor.kind == "rotor" and rotor.spin == "ccw" and rotor.axis == (0.0, 0.0, 1.0)
    assert rotor.geometry().omega == pytest.approx(1200 * 2 * math.pi / 60)
    assert "bodies.NAME] (type = \"rotor\")" in case_reference()


BAD = {
    "no blades": (ROTOR.replace("blades = 2", "blades = 0"), r"bodies.rotor.blades must be between 1 and 64"),
    "radius inside cut-out": (ROTOR.replace("root_cutout = 0.1", "root_cutout = 0.5"),
                              r"bodies.rotor.root_cutout must be less than bodies.rotor.radius = 0.5 m"),
    "zero rpm": (ROTOR.replace("rpm = 1200.0", "rpm = 0.0"), r"bodies.rotor.rpm must be greater than 0"),
    "time step": (ROTOR + "[time]\ndt = 0.01\n",
                  rf"time.dt = 0.01 s turns the blades of bodies.rotor by 72 deg"
                  rf".*at most {MAX_AZIMUTH_STEP:g} deg"),
    "azimuth step": (ROTOR.replace("azimuth_step = 20.0", "azimuth_step = 45.0"),
                     r"bodies.rotor.azimuth_step must be at most 30 \[deg\]; got 45"),
    "zero axis": (ROTOR.replace("panels = 5", "panels = 5\naxis = [0, 0, 0]"),
                  r"bodies.rotor.axis must be a nonzero"),
    "turbine without wind": (ROTOR.replace('type = "rotor"', 'type = "rotor"\nkind = "turbine"'),
                             r"a turbine needs wind blowing along its axis"),
    "propeller flying backwards": (ROTOR.replace('type = "rotor"', 'type = "rotor"\nkind = "propeller"')
                                   + "[freestream]\nvelocity = [0.0, 0.0, 5.0]\n",
                                   r"a propeller's axis points forward"),
    "symmetric wake edgewise": (ROTOR.replace("panels = 5", "panels = 5\nsymmetric_wake = true")
                                + "[freestream]\nspeed = 5.0\n", r"symmetric_wake = true needs axial flow"),
    "unknown kind": (ROTOR.replace('type = "rotor"', 'type = "rotor"\nkind = "fan"'),
                     r"bodies.rotor.kind must be one of 'rotor', 'propeller', 'turbine'"),
}


@pytest.mark.parametrize("name", sorted(BAD))
def test_bad_rotor_input_names_the_key(name):
    text, message = BAD[name]
    with pytest.raises(CaseError) as info:
        parsed(text)
    assert re.search(message, str(info.value)), str(info.value)


@pytest.mark.parametrize("name", ["no blades", "zero rpm", "time step"])
def test_bad_rotor_input_exits_2_and_writes_nothing(name, tmp_path, capsys):
    case = tmp_path / "case.toml"
    case.write_text(BAD[name][0])
    out = tmp_path / "out"
    assert main(["run", str(case), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and re.search(BAD[name][1], err)
    assert not out.exists()


def test_polar_not_covering_the_angles_met_names_station_time_and_angle(tmp_path, capsys):
    """Stopping (not extending) is the documented behaviour of out_of_range = "error"."""
    (tmp_path / "narrow.csv").write_text("alpha_deg,cl,cd\n-2,-0.2,0.01\n4,0.4,0.01\n")
    case = tmp_path / "case.toml"
    case.write_text(ROTOR + '[bodies.rotor.airfoil]\npolar = "narrow.csv"\n')
    out = tmp_path / "out"
    assert main(["run", str(case), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert re.search(r"surface 'rotor/blade \d', strip \d+ \(eta = 0\.\d+\)", err), err
    assert re.search(r"covers -2 to 4 deg; an angle of [\d.]+ deg at Mach 0\.\d+ was met", err)
    assert re.search(r"at step \d+ \(t = [\d.e-]+ s\)", err)
    assert not out.exists()


@pytest.mark.parametrize("ground, message", [
    ("point = [0.0, 0.0, 0.0]", r"bodies\.rotor\.hub is 0 m above the ground plane.*more than 0 m"),
    ("point = [0.0, 0.0, -1.0]\nnormal = [0.0, 0.0, 0.0]", r"ground\.normal must be a nonzero vector"),
    ("point = [0.0, 0.0, 1.0]", r"hub is -1 m above the ground plane"),
])
def test_a_ground_the_blades_would_cut_is_refused(ground, message):
    with pytest.raises(CaseError, match=message):
        parsed(ROTOR + "[ground]\n" + ground + "\n")


def test_a_tilted_disc_needs_more_height_above_the_ground():
    """Axis tilted 90 deg: the disc stands on edge and reaches a full radius towards the ground."""
    text = ROTOR.replace('rpm = 1200.0', 'rpm = 1200.0\naxis = [1.0, 0.0, 0.0]')
    with pytest.raises(CaseError, match=r"reach 0\.5 m"):
        parsed(text + "[ground]\npoint = [0.0, 0.0, -0.45]\n")
    assert parsed(text + "[ground]\npoint = [0.0, 0.0, -0.55]\n").ground.plane() is not None


def test_ground_effect_run_writes_its_ground_back():
    case = parsed(ROTOR + "[ground]\npoint = [0.0, 0.0, -0.6]\n")
    assert case.to_dict()["ground"] == {"point": [0.0, 0.0, -0.6], "normal": [0.0, 0.0, 1.0]}
    assert parsed().ground.plane() is None
