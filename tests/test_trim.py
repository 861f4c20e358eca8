"""Trimming a rotor: Newton iterations on revolution-averaged loads, one control per target.

The coarse two-bladed rotor of tests/aero/test_rotor_run.py (20 deg steps, two revolutions),
each run about half a second.
"""

import dataclasses
import re

import numpy as np
import pytest
from wakes import trim_rotor
from wakes.errors import InputError, TrimError
from wakes.run import run_case
from wakes.trim import default_tolerances, with_controls

from .aero.test_rotor_edgewise import EDGEWISE, RPM, case_of

HOVER_COLLECTIVE = 10.0   # the case's


@pytest.fixture(scope="module")
def hover_thrust():
    return run_case(case_of()).summary["bodies"]["rotor"]["thrust_N"]


def test_trim_to_the_hover_thrust_at_mu_to_zero_gives_the_hover_collective(hover_thrust):
    """Started 2 deg low, at mu = 1e-5, the collective trimmed to the hover run's thrust is the
    hover collective within 0.1 deg (measured 0.012 deg off: the thrust tolerance,
    0.5 %, is 0.03 deg of collective at 2.2 N/deg, and mu = 1e-5 moves the thrust by 0.19 %)."""
    mu_tiny = f"[freestream]\nspeed = {1e-5 * RPM * np.pi / 30.0 * 0.5!r}\n"
    start = with_controls(case_of("", mu_tiny), "rotor", {"collective": HOVER_COLLECTIVE - 2.0})
    calls = []
    result = trim_rotor(start, "rotor", {"thrust_N": hover_thrust}, progress=lambda *a: calls.append(a))
    assert result.controls["collective"] == pytest.approx(HOVER_COLLECTIVE, abs=0.1)
    assert abs(result.residuals["thrust_N"]) <= result.tolerances["thrust_N"] == pytest.approx(5e-3 * hover_thrust)
    assert result.run.summary["bodies"]["rotor"]["thrust_N"] == result.figures["thrust_N"]
    assert result.case.body("rotor").collective == result.controls["collective"]
    assert [c[1] for c in calls[:2]] == ["start", "jacobian"] and len(calls) == result.runs == 2 + result.iterations


def test_trim_to_zero_hub_moments_in_edgewise_flight(hover_thrust):
    """mu = 0.13, trimmed to the hover thrust and zero roll and pitch moments: every residual within
    its tolerance (moments 0.5 % of T R). The controls have the signs the loads call for: the
    advancing side carries more lift (a positive roll moment, test_rotor_edgewise.py), which theta_1s
    < 0 takes away; the front of the disc, with less inflow, more (a nose-up moment), which
    theta_1c > 0, more pitch aft, balances (measured: theta_1s = -1.7 deg, theta_1c = +0.5 deg, 6
    runs)."""
    targets = {"thrust_N": hover_thrust, "roll_moment_Nm": 0.0, "pitch_moment_Nm": 0.0}
    result = trim_rotor(case_of("", EDGEWISE), "rotor", targets)
    s = result.run.summary["bodies"]["rotor"]
    for key, target in targets.items():
        assert abs(s[key] - target) <= result.tolerances[key]
    assert result.tolerances["roll_moment_Nm"] == pytest.approx(5e-3 * hover_thrust * 0.5)
    assert result.controls["cyclic_sin"] < -0.5 and result.controls["cyclic_cos"] > 0.1
    assert s["collective_deg"] == result.controls["collective"]


def test_a_trim_that_does_not_converge_names_the_targets_missed_and_the_controls(hover_thrust):
    with pytest.raises(TrimError, match=r"did not converge in 1 steps: thrust_N off by .* controls reached: "
                                        r"collective = .* deg"):
        trim_rotor(case_of(), "rotor", {"thrust_N": 3.0 * hover_thrust}, max_iterations=1)


def test_bad_trim_requests_are_refused_before_any_run():
    case = case_of()
    with pytest.raises(InputError, match="no body 'main'"):
        trim_rotor(case, "main", {"thrust_N": 1.0})
    with pytest.raises(InputError, match="2 targets .* need as many controls; got 1"):
        trim_rotor(case, "rotor", {"thrust_N": 1.0, "roll_moment_Nm": 0.0}, controls=["collective"])
    with pytest.raises(InputError, match="controls must be distinct names of collective, cyclic_cos"):
        trim_rotor(case, "rotor", {"thrust_N": 1.0}, controls=["twist"])
    wing = dataclasses.replace(case, bodies=())
    with pytest.raises(InputError, match="no body 'rotor'"):
        trim_rotor(wing, "rotor", {"thrust_N": 1.0})


def test_default_tolerances_scale_with_the_thrust_and_the_radius():
    tol = default_tolerances({"thrust_N": 20.0, "H_force_N": 0.0, "roll_moment_Nm": 0.0}, 20.0, 2.0)
    assert tol == {"thrust_N": 0.1, "H_force_N": 0.1, "roll_moment_Nm": 0.2}


def _trim_case_file(tmp_path, trim_table):
    """The coarse test rotor's case file with a [bodies.rotor.trim] table."""
    from .aero.test_rotor_run import BASE
    path = tmp_path / "trim.toml"
    path.write_text(BASE + "\n[bodies.rotor.trim]\n" + trim_table, encoding="utf-8")
    return path


def test_wakes_run_trims_the_case_file_rotor_and_records_the_controls(tmp_path, capsys, hover_thrust):
    """[bodies.rotor.trim] thrust = the hover thrust at collective 10 deg, the case file's collective
    set 2 deg low: `wakes run` trims it (the collective back within 0.1 deg, as the Python trim),
    prints one line per trim run and writes the trimmed run, with the trim in summary.json."""
    import json

    from wakes.cli import main
    path = _trim_case_file(tmp_path, f"thrust = {hover_thrust!r}\n")
    path.write_text(path.read_text().replace("collective = 10.0", "collective = 8.0"), encoding="utf-8")
    assert "collective = 8.0" in path.read_text()
    out = tmp_path / "run"
    assert main(["run", str(path), "--out", str(out), "--no-plots"]) == 0
    printed = capsys.readouterr()
    summary = json.loads((out / "summary.json").read_text())
    trim = summary["trim"]["rotor"]
    assert trim["controls_deg"]["collective"] == pytest.approx(HOVER_COLLECTIVE, abs=0.1)
    assert summary["bodies"]["rotor"]["collective_deg"] == trim["controls_deg"]["collective"]
    assert abs(summary["bodies"]["rotor"]["thrust_N"] - hover_thrust) <= trim["tolerances"]["thrust_N"]
    lines = [ln for ln in printed.err.splitlines() if ln.startswith("wakes: trim rotor, run ")]
    assert len(lines) == trim["runs"] and "(start)" in lines[0] and "off target by thrust_N" in lines[0]
    assert "rotor trimmed in" in printed.out


def test_wakes_run_names_the_target_out_of_reach_and_its_residual(tmp_path, capsys):
    from wakes.cli import main
    path = _trim_case_file(tmp_path, "thrust = 500.0\nmax_iterations = 1\n")
    assert main(["check", str(path), "--quiet"]) == 0
    assert "wakes run trims rotor first to thrust_N = 500: up to 3 runs" in capsys.readouterr().out
    out = tmp_path / "run"
    assert main(["run", str(path), "--out", str(out), "--no-plots", "--quiet"]) == 2
    err = capsys.readouterr().err
    assert re.search(r"wakes: error: trim of rotor did not converge in 1 steps: thrust_N off by -4\d\d\.?\d* "
                     r"\(tolerance 2\.5\); controls reached: collective = ", err), err
    assert not out.exists()
