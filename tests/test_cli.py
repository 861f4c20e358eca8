"""The ``wakes`` command: a finished run writes its folder; a user error exits 2 in one line."""

import json
import re
import subprocess
import sys
from pathlib import Path

import pandas as pd
import pytest
from wakes.cli import main

TINY = """
title = "tiny"
[freestream]
speed = 10.0
angle_of_attack = 4.0
[bodies.wing]
type = "wing"
span = 4.0
chord = 0.5
spanwise_panels = 6
[wake]
motion = "frozen"
[time]
steps = 4
"""


def test_run_writes_the_results_folder(tmp_path, capsys):
    case = tmp_path / "tiny.toml"
    case.write_text(TINY)
    out = tmp_path / "run"
    assert main(["run", str(case), "--out", str(out)]) == 0
    printed = capsys.readouterr().out
    assert re.search(r"^wing +CL +0\.\d+", printed, re.M)  # the result table
    loads = pd.read_csv(out / "loads.csv")
    assert list(loads["step"]) == [0, 1, 2, 3]
    assert {"lift_N", "induced_drag_N", "CL", "CDi", "span_efficiency", "profile_drag_N", "CD0",
            "induced_drag_trefftz_N", "trefftz_difference"} <= set(loads.columns)
    sections = pd.read_csv(out / "sections.csv")
    assert len(sections) == 6 and "gamma_m2_s" in sections
    summary = json.loads((out / "summary.json").read_text())
    wing = summary["bodies"]["wing"]
    assert wing["CL"] == pytest.approx(loads["CL"].iloc[-1])
    assert {"CL", "CDi", "span_efficiency", "lift_N", "induced_drag_N"} <= set(wing)
    assert summary["case"]["bodies"]["wing"]["spanwise_panels"] == 6
    assert summary["version"]
    assert (out / "case.toml").read_text().startswith("# Resolved case written by wakes")
    assert (out / "wake_segments.csv").exists()


BAD = {
    "syntax": ("[freestream\nspeed = 1\n", r"invalid TOML at line 1, column \d+"),
    "unknown": (TINY.replace("span = 4.0", "spam = 4.0"), r"unknown key 'bodies.wing.spam'; did you mean 'span'\?"),
    "negative chord": (TINY.replace("chord = 0.5", "chord = -0.5"), r"bodies.wing.chord must be greater than 0"),
    "negative span": (TINY.replace("span = 4.0", "span = -4.0"), r"bodies.wing.span must be greater than 0"),
    "zero freestream": (TINY.replace("speed = 10.0", "speed = 0.0"), r"a wing needs a freestream"),
    "polar columns": (TINY + '[bodies.wing.airfoil]\npolar = "p.csv"\n', r"p.csv'?: missing column\(s\) cd"),
    "polar angles": (TINY + '[bodies.wing.airfoil]\npolar = "q.csv"\n', r"q.csv.*increase strictly"),
    "polar range": (TINY + '[bodies.wing.airfoil]\npolar = "r.csv"\n', r"'r.csv' covers -1 to 1 deg.*step 0"),
    "huge span": (TINY.replace("span = 4.0", "span = 1e300"),
                  r"bodies.wing.span must be at most 10000 \[m\]; got 1e\+300 \(accepted: between 0.0001 and 10000\)"),
    "wing in rotor": (TINY + '[bodies.rotor]\ntype = "rotor"\nblades = 2\nradius = 0.5\nroot_cutout = 0.1\n'
                      'chord = 0.05\nrpm = 1000.0\nkind = "propeller"\naxis = [-1.0, 0.0, 0.0]\n'
                      'hub = [0.0, 1.0, 0.0]\n',
                      r"bodies.wing and bodies.rotor overlap near"),
    "eddy factor": (TINY.replace('motion = "frozen"', 'motion = "frozen"\ncore_eddy_factor = 0.5'),
                    r"wake.core_eddy_factor must be between 0 and 0.01; got 0.5"),
    "eddy factor and growth": (TINY.replace('motion = "frozen"',
                                            'motion = "frozen"\ncore_eddy_factor = 6.5e-5\ncore_growth = 10.0'),
                               r"wake.core_growth and wake.core_eddy_factor are both given.*give one of them"),
    "wing through ground": (TINY + "[ground]\npoint = [0.0, 0.0, 0.0]\nnormal = [0.0, 0.3, 1.0]\n",
                            r"bodies.wing reaches through the ground plane"),
}


@pytest.mark.parametrize("name", sorted(BAD))
def test_user_errors_exit_2_with_one_line_and_write_nothing(name, tmp_path, capsys):
    text, message = BAD[name]
    (tmp_path / "p.csv").write_text("alpha_deg,cl\n0,0\n1,0.1\n")
    (tmp_path / "q.csv").write_text("alpha_deg,cl,cd\n0,0,0.01\n0,0.1,0.01\n")
    (tmp_path / "r.csv").write_text("alpha_deg,cl,cd\n-1,-0.1,0.01\n1,0.1,0.01\n")
    case = tmp_path / "case.toml"
    case.write_text(text)
    out = tmp_path / "out"
    assert main(["run", str(case), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and err.startswith("wakes: error: ")
    assert "case.toml" in err or ".csv" in err
    assert re.search(message, err), err
    assert not out.exists()


def test_check_refuses_what_run_would_refuse(tmp_path, capsys):
    """A case that passes 'wakes check' must not fail 'wakes run' on its input: span = 1e300
    used to pass check and overflow in the lattice."""
    case = tmp_path / "case.toml"
    case.write_text(TINY.replace("span = 4.0", "span = 1e300"))
    assert main(["check", str(case)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "bodies.wing.span must be at most 10000" in err, err


def test_check_warns_of_an_advance_ratio_above_one(tmp_path, capsys):
    """The freestream across a rotor's axis faster than its tips: 'wakes check' accepts the case
    and names the plausibility warning before any run."""
    case = tmp_path / "case.toml"
    case.write_text('[freestream]\nspeed = 70.0\n[bodies.rotor]\ntype = "rotor"\nblades = 2\nradius = 0.5\n'
                    'root_cutout = 0.1\nchord = 0.05\nrpm = 1200.0\n')    # tip speed 62.8 m/s: mu = 1.11
    assert main(["check", str(case), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "before running, from the case alone: 1 plausibility warning:" in out
    assert re.search(r"! advance-ratio-high: rotor: advance ratio mu = 1\.11", out), out
    case.write_text(case.read_text().replace("speed = 70.0", "speed = 50.0"))
    assert main(["check", str(case), "--quiet"]) == 0
    assert "plausibility" not in capsys.readouterr().out


def test_console_script_has_no_traceback(tmp_path):
    case = tmp_path / "case.toml"
    case.write_text(TINY.replace("spacing", "x").replace("chord = 0.5", "chord = 0.5\nspacin = 1"))
    proc = subprocess.run([sys.executable, "-m", "wakes.cli", "run", str(case), "--out",
                           str(tmp_path / "o")], capture_output=True, text=True,
                          cwd=Path(__file__).resolve().parents[1])
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr and proc.stderr.count("\n") == 1
    assert "did you mean 'spacing'?" in proc.stderr


def test_usage_errors_exit_2(capsys):
    with pytest.raises(SystemExit) as info:
        main(["run", "x.toml"])
    assert info.value.code == 2
