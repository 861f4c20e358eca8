"""Short rotor runs: output columns per kind, and symmetries the whole simulation must respect."""

import tomllib

import numpy as np
import pandas as pd
import pytest
from wakes.aero.rotor_loads import KIND_COLUMNS
from wakes.case import parse_case
from wakes.run import run_case

# A coarse two-bladed rotor: 20 deg steps, two revolutions, a short wake (seconds to run).
BASE = """
[bodies.rotor]
type = "rotor"
blades = 2
radius = 0.5
root_cutout = 0.1
chord = {law = "linear", root = 0.06, tip = 0.04}
collective = 10.0
twist = {law = "linear", root = 0.0, tip = -6.0}
rpm = 1200.0
panels = 6
azimuth_step = 20.0
revolutions = 2.0
wake_revolutions = 1.5
rollup_age = 60.0
[wake]
core = "vatistas2"
core_radius = 0.02
cores_at_surfaces = true
"""


def run(extra_rotor: str = "", extra: str = "", **replace):
    """Run BASE with lines added to the rotor table, tables appended and ``key = value`` replaced."""
    text = BASE
    for k, v in replace.items():
        lines = [f"{k} = {v}" if line.startswith(f"{k} =") else line for line in text.splitlines()]
        text = "\n".join(lines) + "\n"
    text = text.replace("[wake]", extra_rotor + "\n[wake]") + extra
    return run_case(parse_case(tomllib.loads(text)))


@pytest.fixture(scope="module")
def hover():
    return run()


def test_hover_run_reports_rotor_loads(hover):
    loads = hover.loads
    assert set(KIND_COLUMNS["rotor"]) <= set(loads.columns)
    extra = {"blade_1_thrust_N", "blade_2_thrust_N", "induced_power_W", "profile_power_W"}
    assert extra <= set(loads.columns)
    s = hover.summary["bodies"]["rotor"]
    assert s["thrust_N"] > 0 and s["power_W"] > 0
    assert s["revolutions"] == pytest.approx(2.0) and s["averaged_steps"] == 18
    last = loads.iloc[-18:]
    assert s["thrust_N"] == pytest.approx(last["thrust_N"].mean())
    assert s["power_W"] == pytest.approx(last["induced_power_W"].mean() + last["profile_power_W"].mean())
    assert s["FM"] == pytest.approx(s["CT"] ** 1.5 / (np.sqrt(2) * s["CP"]))
    assert s["induced_power_factor"] == pytest.approx(
        s["induced_power_W"] / (s["thrust_N"] ** 1.5 / np.sqrt(2 * 1.225 * np.pi * 0.25)))


def test_hover_reports_advance_and_inflow_ratios(hover):
    """mu = 0 in hover; lambda measured at the blades is near momentum theory's sqrt(C_T/2)
    (uniform inflow; a real, short-wake rotor's annulus mean differs by tens of per cent: the
    root cut-out and tip loss, and a 1.5-revolution wake, which lowers the inflow)."""
    loads = hover.loads
    assert {"advance_ratio_mu", "inflow_ratio_lambda"} <= set(loads.columns)
    s = hover.summary["bodies"]["rotor"]
    assert s["advance_ratio_mu"] == 0.0
    assert s["inflow_ratio_lambda"] == pytest.approx(loads["inflow_ratio_lambda"].iloc[-18:].mean())
    assert 0.6 < s["inflow_ratio_lambda"] / np.sqrt(s["CT"] / 2) < 1.4


def test_hover_sections_and_tip_vortex_tables(hover, tmp_path):
    sec = hover.sections
    assert len(sec) == 2 * 6 and set(sec["blade"]) == {1, 2}
    assert {"r_over_R", "gamma_m2_s", "cl", "inflow_angle_deg", "dT_dr_N_per_m", "dQ_dr_N"} <= set(sec)
    assert np.all(sec["inflow_angle_deg"] > 0)                          # air flows down through the disc
    tip = hover.tables["tip_vortex.csv"]
    assert tip["wake_age_deg"].iloc[0] == 0.0 and tip["samples"].iloc[0] == 18
    paths = hover.write(tmp_path / "run")
    assert (tmp_path / "run" / "tip_vortex.csv") in paths
    assert len(pd.read_csv(tmp_path / "run" / "tip_vortex.csv")) == len(tip)


# The free wake amplifies roundoff: runs that differ only in the order of floating-point
# operations end 1e-7 to 1e-5 apart after two revolutions; a wrong frame or sign shows at 1e-2.
SAME = 1e-4


def test_mirror_rotor_has_the_same_loads(hover):
    """A clockwise rotor is the mirror image of the counter-clockwise one: same thrust and power."""
    cw = run('spin = "cw"').summary["bodies"]["rotor"]
    s = hover.summary["bodies"]["rotor"]
    assert cw["thrust_N"] == pytest.approx(s["thrust_N"], rel=SAME)
    assert cw["power_W"] == pytest.approx(s["power_W"], rel=SAME)


def test_loads_do_not_depend_on_where_the_rotor_is_or_points(hover):
    """The whole case turned (axis along y) and moved gives the same hover loads."""
    moved = run('axis = [0.0, 1.0, 0.0]\nhub = [3.0, -2.0, 5.0]\nazimuth = 40.0').summary["bodies"]["rotor"]
    s = hover.summary["bodies"]["rotor"]
    assert moved["thrust_N"] == pytest.approx(s["thrust_N"], rel=SAME)
    assert moved["power_W"] == pytest.approx(s["power_W"], rel=SAME)


def test_propeller_and_turbine_report_their_coefficients():
    prop = run('kind = "propeller"\naxis = [-1.0, 0.0, 0.0]', "[freestream]\nspeed = 10.0\n",
               collective=20.0)
    assert set(KIND_COLUMNS["propeller"]) <= set(prop.loads.columns)
    p = prop.summary["bodies"]["rotor"]
    assert p["J"] == pytest.approx(10.0 / (20.0 * 1.0))
    assert 0 < p["efficiency"] < 1
    turbine = run('kind = "turbine"\naxis = [1.0, 0.0, 0.0]', "[freestream]\nspeed = 8.0\n",
                  collective=-2.0)
    t = turbine.summary["bodies"]["rotor"]
    assert set(KIND_COLUMNS["turbine"]) <= set(turbine.loads.columns)
    assert t["tip_speed_ratio"] == pytest.approx(1200 * 2 * np.pi / 60 * 0.5 / 8.0)
    assert t["thrust_N"] > 0                                            # pushed downwind
    # one sign convention: the turbine gives power and torque, positive; induced power too
    assert t["power_W"] > 0 and t["torque_Nm"] > 0 and t["induced_power_W"] > 0 <= t["profile_power_W"]
    assert t["power_W"] == pytest.approx(t["induced_power_W"] - t["profile_power_W"])
    assert t["inflow_ratio_lambda"] > 0 and t["advance_ratio_mu"] == 0.0


def test_edgewise_flight_runs_without_a_symmetric_wake():
    ff = run("", "[freestream]\nspeed = 8.0\n").summary["bodies"]["rotor"]
    assert ff["thrust_N"] > 0 and "induced_power_factor" not in ff
    assert ff["advance_ratio_mu"] == pytest.approx(8.0 / (1200 * 2 * np.pi / 60 * 0.5))
    assert np.isnan(ff["FM"])                                           # no figure of merit in forward flight
