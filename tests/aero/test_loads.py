"""Loads: Trefftz-plane drag against Prandtl's closed form, force decomposition."""

import numpy as np
import pytest
from wakes.aero.geometry import section_etas, station_etas
from wakes.aero.loads import StripLoads, trefftz_induced_drag, wing_totals


def _elliptic_groups(n, b=8.0, g0=2.0):
    eta = station_etas(n, "cosine")
    eta_c = section_etas(n, "cosine")
    nodes = np.stack([np.zeros(n + 1), 0.5 * b * eta, np.zeros(n + 1)], axis=1)
    gamma = g0 * np.sqrt(1 - eta_c ** 2)
    frac = (eta_c - eta[:-1]) / np.diff(eta)
    return nodes, gamma, frac


def test_trefftz_drag_of_elliptic_loading():
    """D_i = pi rho Gamma_0^2 / 8 for elliptic loading (Prandtl 1918; derived from
    D_i = -(rho/2) int Gamma w dy with the uniform downwash w = -Gamma_0/(2b))."""
    rho, g0 = 1.2, 2.0
    nodes, gamma, frac = _elliptic_groups(24, g0=g0)
    d = trefftz_induced_drag([(nodes, gamma, frac)], np.array([1.0, 0.0, 0.0]), rho)[0]
    # 0.2 %: the discrete sum over 24 cosine strips converges as 1/n^2 (0.14 % at n = 24)
    assert d == pytest.approx(np.pi * rho * g0 ** 2 / 8, rel=2e-3)


def test_trefftz_drag_invariant_to_freestream_tilt_and_interference_counts():
    nodes, gamma, frac = _elliptic_groups(16)
    a = np.radians(7.0)
    e = np.array([np.cos(a), 0.0, np.sin(a)])
    flat = trefftz_induced_drag([(nodes, gamma, frac)], np.array([1.0, 0, 0]), 1.0)[0]
    rot = np.array([[np.cos(a), 0, -np.sin(a)], [0, 1, 0], [np.sin(a), 0, np.cos(a)]])
    tilted = trefftz_induced_drag([(nodes @ rot.T, gamma, frac)], e, 1.0)[0]
    assert tilted == pytest.approx(flat, rel=1e-9)
    # two identical wings far apart in span: each sees the other's small upwash, drag drops
    shifted = nodes + np.array([0.0, 40.0, 0.0])
    pair = trefftz_induced_drag([(nodes, gamma, frac), (shifted, gamma, frac)], np.array([1.0, 0, 0]), 1.0)
    assert pair[0] == pytest.approx(pair[1]) and pair[0] < flat


def _strip(fp, fv):
    n = len(fp)
    z = np.zeros(n)
    return StripLoads("s", z, np.zeros((n, 3)), np.ones(n), np.ones(n), z, z, z, z, z, z, z + 1,
                      np.asarray(fp, float), np.asarray(fv, float))


def test_wing_totals_decompose_along_flight_path():
    a = np.radians(5.0)
    v = 10.0 * np.array([np.cos(a), 0.0, np.sin(a)])
    e_l = np.array([-np.sin(a), 0.0, np.cos(a)])
    e_d = v / 10.0
    strip = _strip([100.0 * e_l + 2.0 * e_d], [0.5 * e_d])
    out = wing_totals([strip], velocity=v, span_axis=np.array([0.0, 1.0, 0.0]), density=1.0,
                      area=2.0, span=4.0, trefftz_drag=1.9)
    q = 0.5 * 100.0
    assert out["lift_N"] == pytest.approx(100.0)
    assert out["induced_drag_N"] == pytest.approx(2.0)
    assert out["profile_drag_N"] == pytest.approx(0.5)
    assert out["CL"] == pytest.approx(100.0 / (q * 2.0))
    assert out["span_efficiency"] == pytest.approx(out["CL"] ** 2 / (np.pi * 8.0 * out["CDi"]))
    assert out["trefftz_difference"] == pytest.approx((2.0 - 1.9) / 1.9)
    assert out["side_force_N"] == pytest.approx(0.0, abs=1e-12)
