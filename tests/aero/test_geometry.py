"""Wing geometry: spanwise laws, stations, planform, ring lattices."""

import numpy as np
import pytest
from wakes.aero.geometry import (
    Distribution,
    WingPlanform,
    build_surface,
    rotation_matrix,
    section_etas,
    station_etas,
    wing_surface,
)
from wakes.aero.polars import SectionPolars, ThinAirfoilPolar


def _polars(n):
    return SectionPolars.uniform(ThinAirfoilPolar(), n)


def test_stations_span_the_wing_and_sections_lie_inside_strips():
    for spacing in ("cosine", "uniform"):
        eta = station_etas(9, spacing)
        assert eta[0] == -1.0 and eta[-1] == 1.0 and np.all(np.diff(eta) > 0)
        mid = section_etas(9, spacing)
        assert np.all((mid > eta[:-1]) & (mid < eta[1:]))
    np.testing.assert_allclose(section_etas(4, "uniform"), [-0.75, -0.25, 0.25, 0.75])


def test_distribution_laws():
    eta = np.array([-1.0, -0.5, 0.0, 0.5, 1.0])
    np.testing.assert_allclose(Distribution("linear", root=2.0, tip=1.0)(eta), [1, 1.5, 2, 1.5, 1])
    np.testing.assert_allclose(Distribution("elliptic", root=2.0)(eta), 2 * np.sqrt(1 - eta ** 2))
    table = Distribution("table", eta=(0.0, 1.0), values=(3.0, 1.0))
    np.testing.assert_allclose(table(eta), [1, 2, 3, 2, 1])
    full = Distribution("table", eta=(-1.0, 1.0), values=(0.0, 2.0))
    np.testing.assert_allclose(full(eta, symmetric=False), [0, 0.5, 1, 1.5, 2])
    assert "from 0 to 1" in full.problem(symmetric=True)
    assert Distribution("table", eta=(0.0, 0.0, 1.0), values=(1, 1, 1)).problem(True).startswith(
        "table 'eta' must increase")


def test_planform_areas():
    """Elliptic S = pi b c0 / 4; trapezoid S = b (c_r + c_t) / 2."""
    ell = WingPlanform(8.0, Distribution("elliptic", root=1.2))
    assert ell.area() == pytest.approx(np.pi * 8.0 * 1.2 / 4, rel=1e-5)
    trap = WingPlanform(3.0, Distribution("linear", root=0.3, tip=0.1))
    assert trap.area() == pytest.approx(0.6, rel=1e-9)


def test_quarter_chord_follows_sweep_and_dihedral():
    w = WingPlanform(4.0, Distribution.constant(0.5), sweep=Distribution.constant(30.0),
                     dihedral=Distribution.constant(5.0))
    qc = w.quarter_chord(np.array([-1.0, 0.0, 0.5]))
    y = np.array([-2.0, 0.0, 1.0])
    np.testing.assert_allclose(qc[:, 1], y)
    np.testing.assert_allclose(qc[:, 0], np.abs(y) * np.tan(np.radians(30.0)), atol=1e-12)
    np.testing.assert_allclose(qc[:, 2], np.abs(y) * np.tan(np.radians(5.0)), atol=1e-12)


def test_rotation_raises_leading_edge_for_positive_pitch():
    r = rotation_matrix([10.0, 7.0, -20.0])
    np.testing.assert_allclose(r @ r.T, np.eye(3), atol=1e-15)
    assert np.linalg.det(r) == pytest.approx(1.0)
    chord_dir = rotation_matrix([0.0, 5.0, 0.0]) @ np.array([1.0, 0.0, 0.0])
    assert chord_dir[2] < 0  # trailing edge down, leading edge up


def test_vortex_lattice_rows_collocation_and_normals():
    """Rings start a quarter panel aft of each panel's leading edge; the shedding row lies a
    quarter panel behind the trailing edge; collocation at three quarters (Katz & Plotkin 2001)."""
    n_c, n_s = 4, 6
    s = wing_surface("w", WingPlanform(6.0, Distribution.constant(1.0)), n_span=n_s,
                     spacing="uniform", n_chord=n_c, lifting_line=False, polars=_polars(n_s))
    x_le = -0.25
    np.testing.assert_allclose(s.corners[:, 0, 0] - x_le, [0.0625, 0.3125, 0.5625, 0.8125, 1.0625])
    np.testing.assert_allclose(s.collocation[:, 2, 0] - x_le, (np.arange(n_c) + 0.75) / n_c)
    np.testing.assert_allclose(s.normals.reshape(-1, 3), np.tile([0.0, 0.0, 1.0], (n_c * n_s, 1)),
                               atol=1e-15)
    assert s.areas.sum() == pytest.approx(6.0)
    assert s.eval_points().shape == (n_c * n_s, 3)


def test_lifting_line_sheds_at_trailing_edge_and_sections_on_bound_vortex():
    s = wing_surface("w", WingPlanform(4.0, Distribution("linear", root=1.0, tip=0.5)),
                     n_span=8, spacing="cosine", n_chord=1, lifting_line=True, polars=_polars(8))
    chord = Distribution("linear", root=1.0, tip=0.5)(station_etas(8, "cosine"))
    np.testing.assert_allclose(s.te_nodes[:, 0], 0.75 * chord)
    np.testing.assert_allclose(s.section_points[:, 0], 0.0, atol=1e-15)
    np.testing.assert_allclose(s.section_points[:, 1], 2.0 * section_etas(8, "cosine"))
    np.testing.assert_allclose(s.section_normal, np.tile([0, 0, 1.0], (8, 1)), atol=1e-15)


def test_build_surface_chord_direction_sets_normal():
    qc = np.array([[0.0, -1.0, 0.0], [0.0, 0.0, 0.0], [0.0, 1.0, 0.0]])
    th = np.radians(10.0)
    t = np.tile([np.cos(th), 0.0, -np.sin(th)], (3, 1))
    s = build_surface("b", qc, np.ones(3), t, np.array([-0.5, 0.5]), np.ones(2), t[:2],
                      n_chord=1, lifting_line=True, polars=_polars(2))
    np.testing.assert_allclose(s.section_normal[0], [np.sin(th), 0.0, np.cos(th)], atol=1e-15)
