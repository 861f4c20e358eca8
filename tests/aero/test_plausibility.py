"""Plausibility flags: each check fires on a table built to cross its bound and stays silent on a
plausible one. Cases are read from small TOML texts (nothing is run but the template check)."""

import math

import numpy as np
import pandas as pd
import pytest
from wakes.aero import plausibility as P
from wakes.aero.polars import SectionPolars, TablePolar, ThinAirfoilPolar
from wakes.case import load_case

ROTOR = """
[fluid]
density = 1.225
[freestream]
{freestream}
[bodies.{name}]
type = "rotor"
kind = "{kind}"
blades = 2
radius = 1.0
root_cutout = 0.2
chord = 0.08
rpm = {rpm}
axis = {axis}
revolutions = {revolutions}
wake_revolutions = {wake}
wake_fade_revolutions = 0.0
azimuth_step = 15.0
"""

WING = """
[freestream]
speed = 10.0
angle_of_attack = 4.0
[bodies.wing]
type = "wing"
span = 2.0
chord = 0.2
[wake]
max_age = {max_age}
[time]
dt = 0.02
steps = {steps}
"""


def _rotor_case(tmp_path, kind="rotor", *, speed=0.0, rpm=600.0, revolutions=4.0, wake=8.0, name="rotor"):
    """A 1 m radius two-bladed rotor; axis +z for a lift rotor, -x (forward) for a propeller,
    +x (downwind) for a turbine; the freestream along +x at ``speed``; 24 steps a revolution."""
    axis = {"rotor": "[0.0, 0.0, 1.0]", "propeller": "[-1.0, 0.0, 0.0]", "turbine": "[1.0, 0.0, 0.0]"}[kind]
    path = tmp_path / f"{name}.toml"
    path.write_text(ROTOR.format(freestream=f"speed = {speed!r}", name=name, kind=kind, rpm=rpm, axis=axis,
                                 revolutions=revolutions, wake=wake))
    return load_case(path)


def _wing_case(tmp_path, *, max_age=math.inf, steps=40):
    path = tmp_path / "wing.toml"
    path.write_text(WING.format(max_age="inf" if math.isinf(max_age) else repr(max_age), steps=steps))
    return load_case(path)


def _codes(flags):
    return [f.code for f in flags]


# --- kappa, FM, Betz, Froude ----------------------------------------------------------------


def test_induced_power_factor_below_one_is_flagged():
    flags = P.check_induced_power({"bodies": {"rotor": {"induced_power_factor": 0.83}}})
    assert _codes(flags) == ["induced-power-below-momentum"]
    assert flags[0].value == 0.83 and flags[0].bound == 1.0
    assert "Glauert 1935" in flags[0].source
    assert "rotor" in flags[0].message and "wake_revolutions" in flags[0].message


def test_induced_power_factor_above_one_or_absent_is_silent():
    assert P.check_induced_power({"bodies": {"rotor": {"induced_power_factor": 1.12}}}) == []
    assert P.check_induced_power({"bodies": {"rotor": {"induced_power_factor": float("nan")},
                                             "wing": {"CL": 0.5}}}) == []


def test_figure_of_merit_above_bound_is_flagged_where_reported(tmp_path):
    hover = _rotor_case(tmp_path)
    assert _codes(P.check_figure_of_merit({"bodies": {"rotor": {"FM": 0.9}}}, hover)) == ["figure-of-merit-high"]
    assert P.check_figure_of_merit({"bodies": {"rotor": {"FM": 0.72}}}, hover) == []
    # in edgewise flight FM means nothing and is reported as NaN: not judged
    forward = _rotor_case(tmp_path, speed=20.0, name="forward")
    assert P.check_figure_of_merit({"bodies": {"forward": {"FM": float("nan")}}}, forward) == []


def test_turbine_power_bound_is_the_actuator_disc():
    """C_P = 4 a (1 - a)^2 at C_T = 4 a (1 - a) for a <= 1/2; 16/27 at a = 1/3 (Betz 1920)."""
    for a in (0.05, 0.2, 1.0 / 3.0, 0.45, 0.5):
        ct = 4.0 * a * (1.0 - a)
        assert P.turbine_power_bound(ct) == pytest.approx(4.0 * a * (1.0 - a) ** 2, rel=1e-12)
    assert P.turbine_power_bound(8.0 / 9.0) == pytest.approx(16.0 / 27.0, rel=1e-12)
    assert P.turbine_power_bound(1.4) == pytest.approx(16.0 / 27.0)   # C_T/2 = 0.7 capped by Betz
    assert P.turbine_power_bound(0.0) == 0.0


def test_turbine_power_above_betz_or_the_disc_is_flagged(tmp_path):
    case = _rotor_case(tmp_path, "turbine", speed=8.0, name="turbine")

    def flags(cp, ct):
        return P.check_turbine_power({"bodies": {"turbine": {"CP": cp, "CT": ct}}}, case)

    betz = flags(0.60, 0.89)
    assert _codes(betz) == ["turbine-power-above-betz"] and betz[0].bound == pytest.approx(16 / 27)
    disc = flags(0.576, 1.0)   # the old turbine template's figures
    assert _codes(disc) == ["turbine-power-above-momentum"] and disc[0].bound == pytest.approx(0.5)
    assert flags(0.45, 0.8) == []
    assert flags(0.385, 0.54) == []


def test_ideal_propeller_efficiency_is_froudes():
    """Actuator disc: T = 2 rho A V^2 a (1 + a) and efficiency 1/(1 + a); with A = pi D^2/4 that is
    C_T/J^2 = (pi/2) a (1 + a)."""
    for a in (0.01, 0.1, 0.5, 2.0):
        j = 0.7
        ct = 0.5 * math.pi * a * (1.0 + a) * j * j
        assert P.ideal_propeller_efficiency(ct, j) == pytest.approx(1.0 / (1.0 + a), rel=1e-12)


def test_propeller_efficiency_above_ideal_is_flagged(tmp_path):
    case = _rotor_case(tmp_path, "propeller", speed=20.0, name="prop")
    ideal = P.ideal_propeller_efficiency(0.06, 0.5)

    def flags(eta):
        return P.check_propeller_efficiency({"bodies": {"prop": {"efficiency": eta, "CT": 0.06, "J": 0.5}}},
                                            case)

    above = flags(ideal + 0.01)
    assert _codes(above) == ["propeller-efficiency-above-ideal"]
    assert above[0].bound == pytest.approx(ideal)
    assert flags(ideal - 0.1) == []
    assert flags(float("nan")) == []


# --- sections --------------------------------------------------------------------------------

TABLE = TablePolar(np.radians([-10.0, 0.0, 10.0, 14.0, 20.0]), [-0.9, 0.1, 1.1, 1.3, 0.9],
                   [0.02, 0.01, 0.02, 0.05, 0.2], name="made-up.csv", out_of_range="flat-plate")


def _rotor_sections(alpha, cl, body="rotor"):
    n = len(alpha)
    return pd.DataFrame({"body": body, "blade": [1 + k % 2 for k in range(n)], "strip": range(n),
                         "r_over_R": np.linspace(0.3, 1.0, n), "cl": cl, "alpha_deg": alpha})


def test_polar_limits_of_a_table_and_of_thin_airfoil_theory():
    table = P.polar_limits(TABLE)
    assert table.alpha_range_deg == pytest.approx((-10.0, 20.0))
    assert table.cl_range == pytest.approx((-0.9, 1.3))
    assert table.stall and not table.mach_dependent
    thin = P.polar_limits(ThinAirfoilPolar())
    assert thin.alpha_range_deg is None and thin.cl_range is None and not thin.stall
    assert P.polar_limits(SectionPolars.uniform(TABLE, 4)) == table
    both = P.polar_limits(SectionPolars((TABLE, ThinAirfoilPolar()), [0, 1]))
    assert both.alpha_range_deg is None and not both.stall   # the widest of the two: any angle
    assert P.polar_limits(object()) is None


def test_a_polar_with_a_mach_method_counts_as_mach_dependent():
    class MachTable(TablePolar):
        def evaluate_mach(self, alpha, mach):
            return self.evaluate(alpha)

    polar = MachTable(TABLE.alpha, TABLE.cl, TABLE.cd, name="by-mach.csv")
    assert P.polar_limits(polar).mach_dependent


def test_mach_dependence_needs_a_speed_of_sound_on_the_section_polars(tmp_path):
    """Without a speed of sound every strip is evaluated at M = 0, whatever the polar can do."""
    class MachTable(TablePolar):
        def evaluate_mach(self, alpha, mach):
            return self.evaluate(alpha)

    polar = MachTable(TABLE.alpha, TABLE.cl, TABLE.cd, name="by-mach.csv")
    assert not P.polar_limits(SectionPolars.uniform(polar, 4)).mach_dependent
    with_sound = P.polar_limits(SectionPolars.uniform(polar, 4, speed_of_sound=300.0))
    assert with_sound.mach_dependent and with_sound.speed_of_sound == 300.0
    rpm = 0.75 * 300.0 * 60.0 / (2.0 * math.pi)      # tip Mach 0.75 at 300 m/s, 0.66 at ISA's 340
    case = _rotor_case(tmp_path, rpm=rpm)
    assert P.check_tip_mach(case, {"rotor": with_sound}) == []
    unaware = P.polar_limits(SectionPolars.uniform(ThinAirfoilPolar(), 4, speed_of_sound=300.0))
    flags = P.check_tip_mach(case, {"rotor": unaware})
    assert _codes(flags) == ["tip-mach-high"] and flags[0].value == pytest.approx(0.75)


def test_body_polar_limits_come_from_the_run_s_body_models(tmp_path):
    from wakes.aero.bodies import BODY_MODELS

    case = _rotor_case(tmp_path)
    wing = _wing_case(tmp_path)
    bodies = [BODY_MODELS[s.type](s, c) for c in (case, wing) for s in c.bodies]
    limits = P.body_polar_limits(bodies)
    assert set(limits) == {"rotor", "wing"}
    assert not limits["rotor"].stall and limits["wing"].alpha_range_deg is None


def test_section_angles_outside_the_table_are_flagged_with_stations_and_time():
    limits = {"rotor": P.polar_limits(TABLE)}
    sections = _rotor_sections([5.0, 24.0, 8.0, -12.0], [0.6, 1.0, 0.9, -0.8])
    flags = P.check_sections(sections, limits, 1.25)
    assert _codes(flags) == ["section-angle-outside-polar"]
    f = flags[0]
    assert f.value == 24.0 and f.bound == 20.0           # the farthest outside, against its end
    assert "2 of 4 stations" in f.message and "t = 1.25 s" in f.message and "r/R" in f.message
    assert P.check_sections(_rotor_sections([5.0, 12.0], [0.6, 1.2]), limits, 1.0) == []


def test_section_cl_beyond_the_table_is_flagged():
    """A vortex-lattice strip's c_l comes from its circulation and can pass the table's largest."""
    limits = {"wing": P.polar_limits(TABLE)}
    sections = pd.DataFrame({"body": "wing", "strip": [0, 1, 2], "eta": [0.1, 0.5, 0.9],
                             "cl": [1.2, 1.45, 0.4], "alpha_effective_deg": [11.0, 14.0, 3.0]})
    flags = P.check_sections(sections, limits, 0.5)
    assert _codes(flags) == ["section-cl-above-polar"]
    assert flags[0].value == 1.45 and flags[0].bound == pytest.approx(1.3) and "eta" in flags[0].message


def test_section_cl_on_a_polar_without_stall_is_flagged_beyond_the_common_maximum():
    limits = {"rotor": P.polar_limits(ThinAirfoilPolar())}
    flags = P.check_sections(_rotor_sections([30.0, 8.0], [3.5, 0.9]), limits, 2.0)
    assert _codes(flags) == ["section-cl-beyond-stall"]
    assert flags[0].value == 3.5 and flags[0].bound == P.NO_STALL_CL_MAX
    assert "Abbott & von Doenhoff 1959" in flags[0].source
    negative = P.check_sections(_rotor_sections([-20.0], [-2.0]), limits, 2.0)
    assert negative[0].value == -2.0 and negative[0].bound == -P.NO_STALL_CL_MAX
    assert P.check_sections(_rotor_sections([10.0, 2.0], [1.2, 0.2]), limits, 2.0) == []


def test_sections_of_a_mixed_case_use_each_body_s_angle_column():
    """A wing and a rotor in one table: each body's rows have only their own angle column."""
    wing = pd.DataFrame({"body": "wing", "strip": [0], "eta": [0.5], "cl": [0.5],
                         "alpha_effective_deg": [25.0]})
    rotor = _rotor_sections([5.0], [0.6])
    table = pd.concat([rotor, wing], ignore_index=True)
    limits = {"wing": P.polar_limits(TABLE), "rotor": P.polar_limits(TABLE)}
    flags = P.check_sections(table, limits, 0.1)
    assert _codes(flags) == ["section-angle-outside-polar"] and flags[0].message.startswith("wing:")


# --- tip Mach, blade loading ------------------------------------------------------------------


def test_tip_mach_above_bound_is_flagged_without_mach_dependence(tmp_path):
    rpm = 0.75 * P.ISA_SPEED_OF_SOUND * 60.0 / (2.0 * math.pi)    # tip Mach 0.75 at R = 1 m
    case = _rotor_case(tmp_path, rpm=rpm)
    flags = P.check_tip_mach(case, {"rotor": P.polar_limits(ThinAirfoilPolar())})
    assert _codes(flags) == ["tip-mach-high"] and flags[0].value == pytest.approx(0.75)
    assert P.check_tip_mach(case, {}) != []    # a body without known polar counts as Mach-free
    mach_aware = P.PolarLimits("by-mach.csv", None, None, True, True)
    assert P.check_tip_mach(case, {"rotor": mach_aware}) == []
    slow = _rotor_case(tmp_path, rpm=0.5 * rpm, name="slow")
    assert P.check_tip_mach(slow, {}) == []


def test_tip_mach_adds_the_freestream_on_the_advancing_side(tmp_path):
    case = _rotor_case(tmp_path, speed=30.0)     # edgewise: the freestream lies in the disc
    tip = 2.0 * math.pi * 600.0 / 60.0
    assert P.tip_mach(case.bodies[0], case) == pytest.approx((tip + 30.0) / P.ISA_SPEED_OF_SOUND)


def test_advance_ratio_above_one_is_flagged_for_every_kind(tmp_path):
    tip = 2.0 * math.pi * 600.0 / 60.0                       # the 1 m rotor at 600 rpm
    fast = _rotor_case(tmp_path, speed=1.1 * tip)
    flags = P.check_advance_ratio(fast)
    assert _codes(flags) == ["advance-ratio-high"] and flags[0].value == pytest.approx(1.1)
    assert P.check_advance_ratio(_rotor_case(tmp_path, speed=0.9 * tip)) == []
    # a propeller's flight speed runs along its axis: no advance ratio mu, however fast
    assert P.check_advance_ratio(_rotor_case(tmp_path, "propeller", speed=1.5 * tip, name="p")) == []


def test_blade_loading_above_bound_is_flagged_for_lift_rotors(tmp_path):
    case = _rotor_case(tmp_path)
    flags = P.check_blade_loading({"bodies": {"rotor": {"CT": 0.010, "solidity": 0.06}}}, case)
    assert _codes(flags) == ["blade-loading-high"] and flags[0].value == pytest.approx(0.010 / 0.06)
    assert P.check_blade_loading({"bodies": {"rotor": {"CT": 0.005, "solidity": 0.06}}}, case) == []
    turbine = _rotor_case(tmp_path, "turbine", speed=8.0, name="turbine")   # other C_T convention
    assert P.check_blade_loading({"bodies": {"turbine": {"CT": 0.9, "solidity": 0.06}}}, turbine) == []


# --- settling and wake length -----------------------------------------------------------------


def _rotor_loads(thrust, power=None, body="rotor"):
    n = len(thrust)
    return pd.DataFrame({"step": range(n), "body": body, "thrust_N": thrust,
                         "power_W": np.full(n, 100.0) if power is None else power})


def test_rotor_loads_still_changing_are_flagged(tmp_path):
    case = _rotor_case(tmp_path)     # 24 steps a revolution
    assert round(60.0 / 600.0 / case.time.dt) == 24
    ramp = np.concatenate([np.full(24, 100.0), np.full(24, 104.0)])      # +4 % in the last revolution
    flags = P.check_settled(_rotor_loads(ramp), case)
    assert _codes(flags) == ["loads-not-settled"]
    assert flags[0].value == pytest.approx(4.0 / 104.0) and "thrust_N" in flags[0].message
    power = P.check_settled(_rotor_loads(np.full(48, 100.0), np.concatenate([np.full(24, 100.0),
                                                                              np.full(24, 90.0)])), case)
    assert _codes(power) == ["loads-not-settled"] and "power_W" in power[0].message
    steady = 100.0 + np.sin(np.arange(72) * 2 * np.pi / 24)            # periodic: means equal
    assert P.check_settled(_rotor_loads(steady), case) == []


def test_a_run_shorter_than_two_windows_is_flagged(tmp_path):
    case = _rotor_case(tmp_path)
    flags = P.check_settled(_rotor_loads(np.full(30, 100.0)), case)
    assert _codes(flags) == ["loads-not-settled"] and flags[0].value == 30 and flags[0].bound == 48


def test_wing_loads_are_judged_over_a_span_of_travel(tmp_path):
    case = _wing_case(tmp_path)                 # 10 m/s, dt 0.02 s, span 2 m: 10 steps a span
    lift = np.concatenate([np.full(30, 50.0), np.full(10, 53.0)])
    loads = pd.DataFrame({"step": range(40), "body": "wing", "lift_N": lift, "induced_drag_N": 1.0})
    flags = P.check_settled(loads, case)
    assert _codes(flags) == ["loads-not-settled"] and "span of travel (10 steps)" in flags[0].message
    loads["lift_N"] = 50.0
    assert P.check_settled(loads, case) == []


def test_wake_deficit_is_the_vortex_cylinder_s():
    assert P.wake_deficit(1.0, 1.0) == pytest.approx(1.0 - 1.0 / math.sqrt(2.0))
    assert P.wake_deficit(0.0, 1.0) == 1.0
    assert P.wake_deficit(1e6, 1.0) < 1e-11


def test_rotor_wake_length_in_hover_is_the_momentum_inflow_times_the_wake_age(tmp_path):
    case = _rotor_case(tmp_path, revolutions=12.0, wake=8.0)
    thrust = 200.0
    vh = math.sqrt(thrust / (2.0 * 1.225 * math.pi))
    assert P.rotor_wake_length(case.bodies[0], case, thrust) == pytest.approx(vh * 8.0 * 0.1)
    short = _rotor_case(tmp_path, revolutions=2.0, wake=8.0, name="short")   # the run ends first
    steps_time = (short.time.steps - 1) * short.time.dt
    assert P.rotor_wake_length(short.bodies[0], short, thrust) == pytest.approx(vh * steps_time)


def test_rotor_wake_length_of_a_turbine_uses_the_windmill_branch(tmp_path):
    case = _rotor_case(tmp_path, "turbine", speed=8.0, revolutions=12.0, wake=8.0, name="turbine")
    ct = 8.0 / 9.0
    thrust = ct * 0.5 * 1.225 * math.pi * 64.0
    assert P.rotor_wake_length(case.bodies[0], case, thrust) == pytest.approx(8.0 * (2.0 / 3.0) * 0.8)


def test_a_wake_cut_too_short_is_flagged(tmp_path):
    summary = {"bodies": {"rotor": {"thrust_N": 200.0}}}
    short = _rotor_case(tmp_path, revolutions=12.0, wake=2.0)
    flags = P.check_wake_length(summary, short)
    assert _codes(flags) == ["wake-too-short"] and flags[0].value > P.WAKE_DEFICIT_MAX
    long = _rotor_case(tmp_path, revolutions=12.0, wake=10.0, name="long")
    assert P.check_wake_length({"bodies": {"long": {"thrust_N": 200.0}}}, long) == []
    wing = _wing_case(tmp_path, max_age=0.06)      # 0.6 m of wake behind a 2 m span
    assert _codes(P.check_wake_length({"bodies": {"wing": {}}}, wing)) == ["wake-too-short"]
    assert P.check_wake_length({"bodies": {"wing": {}}}, _wing_case(tmp_path)) == []


# --- all together -----------------------------------------------------------------------------


def test_check_run_is_silent_on_a_plausible_hover_and_collects_every_flag(tmp_path):
    case = _rotor_case(tmp_path, revolutions=12.0, wake=10.0)
    summary = {"bodies": {"rotor": {"thrust_N": 200.0, "CT": 0.005, "FM": 0.7, "solidity": 0.05,
                                    "induced_power_factor": 1.12}}, "run": {"final_time_s": 1.2}}
    loads = _rotor_loads(np.full(72, 200.0))
    sections = _rotor_sections([3.0, 6.0], [0.4, 0.7])
    polars = {"rotor": P.polar_limits(ThinAirfoilPolar())}
    assert P.check_run(summary, loads, sections, case, polars) == []
    summary["bodies"]["rotor"].update({"FM": 0.9, "induced_power_factor": 0.8, "CT": 0.01})
    sections.loc[1, "cl"] = 2.0
    loads.loc[60:, "thrust_N"] = 230.0
    codes = _codes(P.check_run(summary, loads, sections, case, polars))
    assert codes == ["induced-power-below-momentum", "figure-of-merit-high", "section-cl-beyond-stall",
                     "blade-loading-high", "loads-not-settled"]


def test_flags_become_summary_entries():
    flag = P.Flag("figure-of-merit-high", "rotor: ...", np.float64(0.9), 0.85, P.FM_SOURCE)
    d = flag.as_dict()
    assert list(d) == ["code", "message", "value", "bound", "source"]
    assert type(d["value"]) is float and d["source"].startswith("common practice")


def test_case_polar_limits_reads_each_body_s_polar(tmp_path):
    csv = tmp_path / "section.csv"
    csv.write_text("alpha_deg,cl,cd\n-8,-0.7,0.02\n0,0.1,0.01\n12,1.2,0.03\n")
    path = tmp_path / "wing.toml"
    path.write_text(WING.format(max_age="inf", steps=40) + '[bodies.wing.airfoil]\npolar = "section.csv"\n')
    limits = P.case_polar_limits(load_case(path))
    assert limits["wing"].alpha_range_deg == pytest.approx((-8.0, 12.0))
    assert limits["wing"].cl_range == pytest.approx((-0.7, 1.2))

