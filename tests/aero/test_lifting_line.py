"""The circulation solve: Newton iteration, its residual, its errors."""

import numpy as np
import pytest
from wakes.aero.geometry import Distribution, WingPlanform, wing_surface
from wakes.aero.lifting_line import LinearCache, SolverSettings, solve_circulation
from wakes.aero.polars import PolarRangeError, SectionPolars, TablePolar, ThinAirfoilPolar
from wakes.aero.vortex_lattice import influence_matrix
from wakes.errors import NumericalError


def _problem(polar, alpha_deg=5.0, n=12, lifting_line=True, n_chord=1):
    s = wing_surface("w", WingPlanform(6.0, Distribution("linear", root=1.2, tip=0.6)),
                     n_span=n, spacing="cosine", n_chord=n_chord, lifting_line=lifting_line,
                     polars=SectionPolars.uniform(polar, n))
    pts = s.eval_points()
    a = np.radians(alpha_deg)
    onset = np.tile(10.0 * np.array([np.cos(a), 0.0, np.sin(a)]), (len(pts), 1))
    return s, influence_matrix([s], pts), onset


def test_converged_sections_satisfy_kutta_joukowski_with_their_polar():
    """At convergence each strip has Gamma = 1/2 |V| c cl(alpha) with V the total velocity."""
    polar = TablePolar(np.radians([-10.0, 0.0, 6.0, 12.0]), [-0.9, 0.2, 0.85, 1.0],
                       [0.02, 0.01, 0.012, 0.03], name="t")
    s, aic, onset = _problem(polar, alpha_deg=6.0)
    sol = solve_circulation([s], aic, onset, np.zeros(s.n_unknowns), SolverSettings(tolerance=1e-10))
    v = onset + np.einsum("ikn,n->ik", aic, sol.gamma[0].ravel())
    vt = np.einsum("ij,ij->i", v, s.chord_dir)
    vn = np.einsum("ij,ij->i", v, s.section_normal)
    cl = polar.evaluate(np.arctan2(vn, vt))[0]
    np.testing.assert_allclose(sol.gamma[0][0], 0.5 * np.hypot(vt, vn) * s.section_chord * cl,
                               rtol=1e-9)
    assert sol.residual < 1e-10 and sol.iterations <= 8


def test_relaxation_only_slows_convergence():
    s, aic, onset = _problem(ThinAirfoilPolar())
    full = solve_circulation([s], aic, onset, np.zeros(s.n_unknowns), SolverSettings(tolerance=1e-9))
    half = solve_circulation([s], aic, onset, np.zeros(s.n_unknowns),
                             SolverSettings(tolerance=1e-9, relaxation=0.5))
    np.testing.assert_allclose(half.gamma[0], full.gamma[0], rtol=1e-7)
    assert half.iterations > full.iterations


def test_no_convergence_is_a_numerical_error_with_step_and_time():
    s, aic, onset = _problem(ThinAirfoilPolar())
    with pytest.raises(NumericalError, match=r"step 7 \(t = 0.35 s\).*after 1 iterations"):
        solve_circulation([s], aic, onset, np.zeros(s.n_unknowns),
                          SolverSettings(tolerance=1e-14, max_iterations=1, relaxation=0.1),
                          step=7, time=0.35)


def test_polar_range_error_names_surface_strip_and_step():
    polar = TablePolar(np.radians([-2.0, 0.0, 2.0]), [-0.2, 0.0, 0.2], [0.01, 0.01, 0.01], name="narrow")
    s, aic, onset = _problem(polar, alpha_deg=8.0)
    with pytest.raises(PolarRangeError, match=r"surface 'w', strip \d+ \(eta = .*\).*'narrow'.*step 3"):
        solve_circulation([s], aic, onset, np.zeros(s.n_unknowns), SolverSettings(), step=3, time=0.1)


def test_vortex_lattice_is_linear_and_cache_reuses_factors():
    s, aic, onset = _problem(ThinAirfoilPolar(), lifting_line=False, n_chord=3)
    cache = LinearCache()
    a = solve_circulation([s], aic, onset, np.zeros(s.n_unknowns), SolverSettings(), linear_cache=cache)
    b = solve_circulation([s], aic, 2 * onset, np.zeros(s.n_unknowns), SolverSettings(), linear_cache=cache)
    np.testing.assert_allclose(b.gamma[0], 2 * a.gamma[0], rtol=1e-12)
    n = np.einsum("ij,ij->i", onset + np.einsum("ikn,n->ik", aic, a.gamma[0].ravel()),
                  s.normals.reshape(-1, 3))
    np.testing.assert_allclose(n, 0.0, atol=1e-12)
    plain = solve_circulation([s], aic, onset, np.zeros(s.n_unknowns), SolverSettings())
    np.testing.assert_allclose(plain.gamma[0], a.gamma[0], rtol=1e-9)
