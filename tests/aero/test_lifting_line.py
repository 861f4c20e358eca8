"""The circulation solve: Newton iteration, its residual, its errors."""

import numpy as np
import pytest
from wakes.aero.geometry import Distribution, WingPlanform, wing_surface
from wakes.aero.lifting_line import LinearCache, SolverSettings, falling_slope, solve_circulation
from wakes.aero.polars import PolarRangeError, SectionPolars, TablePolar, ThinAirfoilPolar
from wakes.aero.sections import builtin_polar
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


def _stalled_wing_lift(n, alphas_deg):
    """C_L of a rectangular wing of aspect ratio 6 (NACA 0012 table, Viterna beyond it) at each angle.

    Each solve starts from the previous angle's circulation, as a time march does.
    """
    polar = builtin_polar("naca0012", out_of_range="viterna")
    s = wing_surface("w", WingPlanform(6.0, Distribution.constant(1.0)), n_span=n, spacing="cosine",
                     n_chord=1, lifting_line=True, polars=SectionPolars.uniform(polar, n))
    pts = s.eval_points()
    aic = influence_matrix([s], pts)
    width = np.linalg.norm(s.span_vector, axis=1)
    gamma, out = np.zeros(n), []
    for deg in alphas_deg:
        a = np.radians(deg)
        onset = np.tile([np.cos(a), 0.0, np.sin(a)], (n, 1))
        sol = solve_circulation([s], aic, onset, gamma, SolverSettings(tolerance=1e-8, max_iterations=100))
        gamma = sol.gamma[0][0]
        out.append((2.0 * np.sum(gamma * width) / 6.0, sol, s, aic, onset, polar))
    return out


def test_wing_past_stall_converges_and_its_lift_settles_as_strips_double():
    """Chattot's spanwise artificial viscosity (Chattot 2004, AIAA 2004-0220) on stalled strips.

    A rectangular wing of aspect ratio 6 swept to 30 deg (its sections reach
    23 deg, past the NACA 0012's stall near 16 deg) converges with 20, 40
    and 80 strips, and C_L changes by less than 1 % when the strips double,
    since the added term is a second difference that vanishes as the
    strips refine. Without the term the solve stopped at 26 deg with 40
    and 80 strips (measured 2026-12-05).
    """
    alphas = list(range(10, 32, 2))
    lift = {n: _stalled_wing_lift(n, alphas)[-1] for n in (20, 40, 80)}
    cl = {n: v[0] for n, v in lift.items()}
    assert np.nanmax(lift[40][1].alpha) > np.radians(20.0)       # sections well past stall
    assert abs(cl[40] / cl[20] - 1.0) < 0.01 and abs(cl[80] / cl[40] - 1.0) < 0.005
    assert 1.1 < cl[80] < 1.25                                     # below the wing's peak (about 1.23 at 24 deg)


def test_stalled_strips_satisfy_the_viscous_section_equation():
    """At convergence Gamma_j - 1/2 q c cl = mu_j (Gamma_j+1 - 2 Gamma_j + Gamma_j-1), Gamma = 0 beyond the tips.

    mu_j = c m(-dcl/dalpha) / (2 pi ds_j), m(x) = max(0, x) rounded below STALL_RAMP (falling_slope),
    zero on strips with a rising lift curve, taken at the solve's starting guess (here the previous
    angle's circulation) and held through the solve.
    """
    solves = _stalled_wing_lift(20, list(range(10, 32, 2)))
    _, sol, s, aic, onset, polar = solves[-1]
    start = solves[-2][1].gamma[0][0]

    def section(gamma):
        v = onset + np.einsum("ikn,n->ik", aic, gamma)
        vt = np.einsum("ij,ij->i", v, s.chord_dir)
        vn = np.einsum("ij,ij->i", v, s.section_normal)
        return np.hypot(vt, vn), polar.evaluate(np.arctan2(vn, vt))

    g = sol.gamma[0][0]
    q, (cl, _, _) = section(g)
    dcl = section(start)[1][2]
    mu = s.section_chord * falling_slope(dcl)[0] / (2 * np.pi * np.linalg.norm(s.span_vector, axis=1))
    ext = np.concatenate([[0.0], g, [0.0]])
    lap = ext[2:] - 2 * g + ext[:-2]
    assert (mu > 0).sum() >= 4 and (mu == 0).sum() >= 4               # some strips stalled, some not
    np.testing.assert_allclose(g - 0.5 * q * s.section_chord * cl, mu * lap, atol=1e-7)
