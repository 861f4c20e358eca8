"""Rotor loads: thrust and shaft torque from strip forces, coefficient conventions, radial table."""

import numpy as np
import pytest
from wakes import exact
from wakes.aero.loads import StripLoads
from wakes.aero.rotor_loads import (
    KIND_COLUMNS,
    NEAR_HOVER_RATIO,
    blade_forces,
    coefficients,
    freestream_ratios,
    inflow_ratio,
    last_revolution,
    near_hover,
    power_split,
    radial_table,
    shaft_torques,
)

RHO, OMEGA, R = 1.2, 100.0, 0.5


def strips(points, f_pressure, f_profile=None, gamma=None, flow=None):
    n = len(points)
    points = np.asarray(points, dtype=float)
    f_profile = np.zeros((n, 3)) if f_profile is None else np.asarray(f_profile, dtype=float)
    gamma = np.ones(n) if gamma is None else np.asarray(gamma, dtype=float)
    z = np.zeros(n)
    return StripLoads("b", z, points, np.full(n, 0.05), np.full(n, 0.1), gamma, z + 0.5, z + 0.01,
                      z, np.radians(np.full(n, 3.0)), z, z + 50.0,
                      np.asarray(f_pressure, dtype=float), f_profile,
                      None if flow is None else np.asarray(flow, dtype=float))


def test_thrust_and_shaft_torque_signs():
    # a section at (0.4, 0, 0) on a ccw rotor (axis +z) moves along +y; air drag pushes it along -y
    s = strips([[0.4, 0, 0]], [[0, 0, 10.0]], [[0, -2.0, 0]])
    f = blade_forces([s], np.zeros(3), np.array([0, 0, 1.0]), spin=1)
    assert f["thrust"][0] == pytest.approx(10.0)
    assert f["torque_induced"][0] == pytest.approx(0.0)
    assert f["torque_profile"][0] == pytest.approx(0.8)         # the shaft must supply 2 N x 0.4 m
    # the mirror rotor (cw) with the mirrored drag needs the same shaft torque
    s = strips([[0.4, 0, 0]], [[0, 0, 10.0]], [[0, 2.0, 0]])
    f = blade_forces([s], np.zeros(3), np.array([0, 0, 1.0]), spin=-1)
    assert f["torque_profile"][0] == pytest.approx(0.8)


def test_rotor_coefficients_follow_the_tip_speed_convention():
    c = coefficients("rotor", thrust=100.0, torque=4.0, omega=OMEGA, radius=R, density=RHO, speed=0.0)
    area, tip = np.pi * R * R, OMEGA * R
    assert c["CT"] == pytest.approx(100.0 / (RHO * area * tip ** 2))
    assert c["CQ"] == pytest.approx(4.0 / (RHO * area * tip ** 2 * R))
    assert c["CP"] == pytest.approx(c["CQ"])                     # P = Omega Q
    assert c["power_W"] == pytest.approx(400.0)
    assert c["FM"] == pytest.approx(exact.figure_of_merit(c["CT"], c["CP"]))
    assert set(c) == set(KIND_COLUMNS["rotor"])


def test_propeller_coefficients_and_efficiency():
    v = 15.0
    c = coefficients("propeller", thrust=30.0, torque=1.5, omega=OMEGA, radius=R, density=RHO, speed=v)
    n, d = OMEGA / (2 * np.pi), 2 * R
    assert c["CT"] == pytest.approx(30.0 / (RHO * n ** 2 * d ** 4))
    assert c["CP"] == pytest.approx(150.0 / (RHO * n ** 3 * d ** 5))
    assert c["J"] == pytest.approx(v / (n * d))
    assert c["efficiency"] == pytest.approx(c["J"] * c["CT"] / c["CP"])   # eta = J C_T / C_P
    windmill = coefficients("propeller", thrust=-1.0, torque=-0.1, omega=OMEGA, radius=R, density=RHO,
                            speed=v)
    assert np.isnan(windmill["efficiency"])                      # undefined without shaft power


def test_turbine_coefficients_use_the_wind_speed():
    v = 8.0
    c = coefficients("turbine", thrust=500.0, torque=-20.0, omega=OMEGA, radius=R, density=RHO, speed=v)
    q = 0.5 * RHO * np.pi * R * R * v * v
    assert c["power_W"] == pytest.approx(2000.0)                 # extracted: minus the shaft power
    assert c["CP"] == pytest.approx(2000.0 / (q * v))
    assert c["CT"] == pytest.approx(500.0 / q)
    assert c["tip_speed_ratio"] == pytest.approx(OMEGA * R / v)


def test_radial_table_gives_per_metre_loads_and_inflow_angle():
    pts = [[0.2, 0, 0], [0.4, 0, 0]]
    s = strips(pts, [[0, 0, 5.0], [0, 0, 8.0]], [[0, -1.0, 0], [0, -2.0, 0]])
    t = radial_table("rot", [s], radius=0.5, r=np.array([0.2, 0.4]), dr=np.array([0.1, 0.2]),
                     pitch_deg=np.array([10.0, 8.0]), hub=np.zeros(3), axis=np.array([0, 0, 1.0]),
                     spin=1)
    assert np.allclose(t["dT_dr_N_per_m"], [50.0, 40.0])
    assert np.allclose(t["dQ_dr_N"], [0.2 / 0.1, 0.8 / 0.2])
    assert np.allclose(t["inflow_angle_deg"], [7.0, 5.0])        # pitch minus 3 deg of attack
    assert list(t["r_over_R"]) == pytest.approx([0.4, 0.8])


def test_last_revolution_takes_the_last_rows():
    import pandas as pd
    frame = pd.DataFrame({"a": np.arange(10)})
    assert list(last_revolution(frame, 4)["a"]) == [6, 7, 8, 9]
    assert len(last_revolution(frame, 40)) == 10


def test_turbine_power_torque_and_induced_power_are_positive_when_it_extracts():
    """One sign convention per kind: a turbine gives torque and power, so they are positive."""
    # the air drives the shaft: pressure-force torque -30 N m, profile drag costs 2 N m
    c = coefficients("turbine", thrust=500.0, torque=-28.0, omega=OMEGA, radius=R, density=RHO, speed=8.0)
    split = power_split("turbine", OMEGA, -30.0, 2.0)
    assert c["power_W"] > 0 and c["torque_Nm"] > 0
    assert split == {"induced_power_W": 3000.0, "profile_power_W": 200.0}
    assert c["power_W"] == pytest.approx(split["induced_power_W"] - split["profile_power_W"])
    assert shaft_torques("turbine", OMEGA, 3000.0, 200.0) == pytest.approx((-30.0, 2.0))
    # a rotor takes power: both parts positive and they add up
    rotor = power_split("rotor", OMEGA, 3.0, 1.0)
    assert rotor == {"induced_power_W": 300.0, "profile_power_W": 100.0}


def test_figure_of_merit_only_near_hover():
    """FM is NaN once the freestream exceeds 5 % of the hover induced velocity, edgewise or axial."""
    kw = dict(thrust=100.0, torque=4.0, omega=OMEGA, radius=R, density=RHO, speed=0.0)
    ct = coefficients("rotor", **kw)["CT"]
    limit = NEAR_HOVER_RATIO * np.sqrt(ct / 2)
    assert np.isfinite(coefficients("rotor", **kw, mu=0.9 * limit)["FM"])
    assert np.isnan(coefficients("rotor", **kw, mu=1.1 * limit)["FM"])
    assert np.isnan(coefficients("rotor", **kw, climb_ratio=-1.1 * limit)["FM"])
    assert np.isfinite(coefficients("rotor", **kw, mu=0.6 * limit, climb_ratio=0.6 * limit)["FM"])
    assert not near_hover(0.0, 0.0, -0.001)                      # no thrust, no hover
    mu, lam_c = freestream_ratios([0.0, 5.0, 2.0], [0.0, 0.0, 1.0], OMEGA, R)
    assert (mu, lam_c) == pytest.approx((0.1, -0.04))            # descending: negative climb ratio


def test_inflow_ratio_is_the_annulus_mean_through_the_disc():
    """Air going down through a lift rotor (against the axis) is a positive inflow; a turbine's
    air going downwind (along its axis) likewise; weights r dr."""
    pts = [[0.2, 0, 0], [0.4, 0, 0]]
    flow = [[0, -30.0, -2.0], [0, -60.0, -4.0]]
    s = strips(pts, np.zeros((2, 3)), flow=flow)
    r, dr = np.array([0.2, 0.4]), np.array([0.1, 0.1])
    lam = inflow_ratio("rotor", [s, s], np.array([0, 0, 1.0]), r, dr, OMEGA, R)
    assert lam == pytest.approx((2.0 * 0.02 + 4.0 * 0.04) / 0.06 / (OMEGA * R))
    assert inflow_ratio("turbine", [s], np.array([0, 0, -1.0]), r, dr, OMEGA, R) == pytest.approx(lam)
