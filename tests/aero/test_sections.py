"""Section models: compressibility rules, tables by Mach number, post-stall to +-180 deg, NACA 0012."""

import io
import math
from contextlib import redirect_stdout
from pathlib import Path

import numpy as np
import pytest
from wakes.aero.geometry import Distribution, WingPlanform, wing_surface
from wakes.aero.lifting_line import SolverSettings, _System, solve_circulation
from wakes.aero.polars import PolarRangeError, SectionPolars, TablePolar, ThinAirfoilPolar
from wakes.aero.post_stall import ViternaCorrigan, cd_max_from_aspect_ratio
from wakes.aero.sections import (
    CompressiblePolar,
    builtin_polar,
    builtin_polar_path,
    critical_mach,
    karman_tsien,
    load_mach_table,
    prandtl_glauert,
    with_compressibility,
)
from wakes.errors import CaseError, InputError

ROOT = Path(__file__).resolve().parents[2]


# ---------------------------------------------------------------- compressibility

def test_prandtl_glauert_factor_at_the_caradonna_tung_tip_mach():
    """cl = cl0 / sqrt(1 - M^2) (Glauert 1928). At M = 0.44, the tip Mach number of the model rotor of
    Caradonna & Tung 1981 (NASA TM-81232: 0.439, published), the factor is 1/sqrt(0.8064) = 1.11359
    (derived). The slope dcl/dalpha scales by the same factor."""
    p = CompressiblePolar(ThinAirfoilPolar(), "prandtl-glauert")
    a = np.radians([2.0, 5.0])
    cl, cd, dcl = p.evaluate(a, np.full(2, 0.44))
    np.testing.assert_allclose(cl / (2 * np.pi * a), 1.1135885079684352, rtol=1e-13)
    np.testing.assert_allclose(dcl, 2 * np.pi * 1.1135885079684352, rtol=1e-13)
    np.testing.assert_allclose(cd, 0.0)  # profile drag is left at its low-speed value
    # no Mach number: the low-speed polar
    np.testing.assert_allclose(p.evaluate(a)[0], 2 * np.pi * a, rtol=1e-15)


def test_karman_tsien_reduces_to_prandtl_glauert_for_small_lift():
    """The Karman-Tsien rule (Tsien 1939; von Karman 1941) tends to Prandtl-Glauert as the perturbation
    vanishes; our uniform-loading form differs by a relative amount (k cl0 / 2)^2 / beta^2 (derived),
    raises lift above Prandtl-Glauert at finite cl0 and is odd in cl0."""
    mach = np.array([0.2, 0.44, 0.7])
    beta = np.sqrt(1 - mach ** 2)
    k = mach ** 2 / (2 * (1 + beta))
    for cl0 in (1e-4, 1e-2, 0.5, 1.2):
        kt = karman_tsien(cl0, mach)[0]
        pg = prandtl_glauert(cl0, mach)[0]
        rel = kt / pg - 1.0
        expected = (k * cl0 / 2) ** 2 / beta ** 2 / (1 - (k * cl0 / 2) ** 2 / beta ** 2)
        np.testing.assert_allclose(rel, expected, rtol=1e-9, atol=1e-15)
        assert (rel >= 0).all()
        np.testing.assert_allclose(karman_tsien(-cl0, mach)[0], -kt, rtol=1e-15)
    assert np.max(np.abs(karman_tsien(1e-4, mach)[0] / prandtl_glauert(1e-4, mach)[0] - 1)) < 1e-9


@pytest.mark.parametrize("rule", [prandtl_glauert, karman_tsien])
def test_rule_derivatives_match_finite_differences(rule):
    """dcl/dcl0 and dcl/dM against central differences (step 1e-6: truncation ~1e-12, round-off
    ~1e-10 relative, so rtol 1e-7 is safe)."""
    cl0 = np.array([-1.1, -0.3, 0.2, 0.9, 1.4])
    m = np.array([0.1, 0.3, 0.44, 0.6, 0.7])
    h = 1e-6
    _, d0, dm = rule(cl0, m)
    fd0 = (rule(cl0 + h, m)[0] - rule(cl0 - h, m)[0]) / (2 * h)
    fdm = (rule(cl0, m + h)[0] - rule(cl0, m - h)[0]) / (2 * h)
    np.testing.assert_allclose(d0, fd0, rtol=1e-7)
    np.testing.assert_allclose(dm, fdm, rtol=1e-7)


def test_critical_mach_of_the_naca_0012_at_zero_lift():
    """Cp0 = -0.43 with Prandtl-Glauert gives M_cr = 0.74 (Anderson, Fundamentals of Aerodynamics, worked
    NACA 0012 example; memory); Karman-Tsien lowers it (0.723, derived), and more suction lowers it further."""
    assert round(critical_mach(-0.43, "prandtl-glauert"), 2) == 0.74
    assert critical_mach(-0.43) == pytest.approx(0.7229, abs=1e-4)
    assert critical_mach(-1.0) < critical_mach(-0.43)
    with pytest.raises(InputError, match="negative"):
        critical_mach(0.2)


def test_mach_above_the_limit_stops_or_holds():
    base = TablePolar(np.radians([-10.0, 0.0, 10.0]), [-1.0, 0.0, 1.0], [0.01, 0.008, 0.01], name="sec.csv")
    stop = CompressiblePolar(base, "karman-tsien", mach_limit=0.6)
    a, m = np.radians([3.0, 4.0]), np.array([0.5, 0.65])
    with pytest.raises(PolarRangeError, match=r"'sec.csv with karman-tsien' holds up to Mach 0.6.*Mach 0.65 "
                                              r"was met at an angle of 4 deg.*mach_out_of_range") as info:
        stop.evaluate(a, m)
    assert info.value.index == 1 and info.value.mach == pytest.approx(0.65)
    hold = CompressiblePolar(base, "karman-tsien", mach_limit=0.6, mach_out_of_range="hold")
    cl, _, dcl, dcl_dm = hold.evaluate_mach(a, m)
    assert cl[1] == pytest.approx(karman_tsien(base.evaluate(a[1:])[0], 0.6)[0][0], rel=1e-14)
    assert dcl_dm[1] == 0.0 and dcl_dm[0] > 0.0
    with pytest.raises(InputError, match="mach_limit"):
        CompressiblePolar(base, mach_limit=0.95)
    with pytest.raises(InputError, match="rule"):
        CompressiblePolar(base, "linear")


def test_angle_out_of_range_names_angle_mach_and_range():
    base = TablePolar(np.radians([-10.0, 0.0, 10.0]), [-1.0, 0.0, 1.0], [0.01, 0.008, 0.01], name="sec.csv")
    p = CompressiblePolar(base, "prandtl-glauert")
    with pytest.raises(PolarRangeError, match=r"'sec.csv' covers -10 to 10 deg; an angle of 12 deg at "
                                              r"Mach 0.33 was met") as info:
        p.evaluate(np.radians([1.0, 12.0]), np.array([0.2, 0.33]))
    assert info.value.index == 1 and info.value.mach == pytest.approx(0.33)


# ---------------------------------------------------------------- tables by Mach number

def _mach_csv(tmp_path, text):
    f = tmp_path / "by-mach.csv"
    f.write_text(text)
    return f


def test_mach_table_interpolates_in_mach_with_its_slope(tmp_path):
    f = _mach_csv(tmp_path, "# two Mach numbers\nmach,alpha_deg,cl,cd\n"
                  "0.3,-10,-1.0,0.02\n0.3,10,1.0,0.02\n0.6,-10,-1.3,0.03\n0.6,10,1.3,0.03\n")
    p = load_mach_table(f)
    a, m = np.radians([5.0, -5.0]), np.array([0.4, 0.6])
    cl, cd, dcl, dcl_dm = p.evaluate_mach(a, m)
    np.testing.assert_allclose(cl, [0.5 * (1.0 + 0.3 / 3), -0.65], rtol=1e-13)
    np.testing.assert_allclose(cd, [0.02 + 0.01 / 3, 0.03], rtol=1e-13)
    np.testing.assert_allclose(dcl_dm, [0.15 / 0.3, -0.15 / 0.3], rtol=1e-12)
    np.testing.assert_allclose(dcl, np.array([1.1, 1.3]) / np.radians(10.0), rtol=1e-13)
    with pytest.raises(PolarRangeError, match=r"'by-mach.csv' covers Mach 0.3 to 0.6; Mach 0.7 was met at "
                                              r"an angle of -5 deg"):
        p.evaluate_mach(a, np.array([0.4, 0.7]))
    held = load_mach_table(f, mach_out_of_range="hold").evaluate_mach(a, np.array([0.1, 0.7]))
    np.testing.assert_allclose(held[0], [0.5, -0.65])
    np.testing.assert_allclose(held[3], 0.0)
    with pytest.raises(PolarRangeError, match=r"'by-mach.csv, Mach 0.3' covers -10 to 10 deg; an angle of 11 "
                                              r"deg at Mach 0.5 was met"):
        p.evaluate_mach(np.radians([11.0]), np.array([0.5]))
    with pytest.raises(InputError, match="twice"):
        with_compressibility(p, "prandtl-glauert")


@pytest.mark.parametrize("text, message", [
    ("mach,alpha_deg,cl,cd\n0.5,0,0,0.01\n0.5,5,0.5,0.01\n0.3,0,0,0.01\n0.3,5,0.5,0.01\n",
     r"line 4: mach = 0.3 follows 0.5"),
    ("mach,alpha_deg,cl,cd\n0.3,0,0,0.01\n0.3,5,0.5,0.01\n0.5,0,0,0.01\n",
     r"line 4: Mach 0.5 has a single row"),
    ("mach,alpha_deg,cl,cd\n0.3,0,0,0.01\n0.3,5,0.5,0.01\n0.5,5,0,0.01\n0.5,5,0.5,0.01\n",
     r"line 5: alpha_deg = 5 does not exceed"),
    ("mach,alpha_deg,cl,cd\n0.3,0,0,0.01\n0.3,5,0.5,0.01\n",
     r"at least two Mach numbers"),
])
def test_mach_table_file_errors_name_the_line(tmp_path, text, message):
    with pytest.raises(CaseError, match=message):
        load_mach_table(_mach_csv(tmp_path, text))


# ---------------------------------------------------------------- post-stall

def test_cd_max_from_aspect_ratio_as_published():
    """cd_max = 1.11 + 0.018 AR for AR <= 50, 2.01 beyond (Viterna & Corrigan 1982; memory)."""
    assert cd_max_from_aspect_ratio(6.0) == pytest.approx(1.218, rel=1e-12)
    assert cd_max_from_aspect_ratio(50.0) == pytest.approx(2.01, rel=1e-12)
    assert cd_max_from_aspect_ratio(80.0) == 2.01 and cd_max_from_aspect_ratio(None) == 2.01
    with pytest.raises(InputError):
        cd_max_from_aspect_ratio(-1.0)


def test_viterna_corrigan_reproduces_a_flat_plate():
    """Matched on the flat-plate curves cl = sin 2a, cd = 2 sin^2 a with cd_max = 2, the Viterna-Corrigan
    coefficients A2 and B2 vanish and the fit is the flat plate itself (derived from the formulas)."""
    a_s = np.radians(20.0)
    vc = ViternaCorrigan(a_s, np.sin(2 * a_s), 2 * np.sin(a_s) ** 2, 2.0)
    a = np.radians(np.linspace(20.0, 90.0, 15))
    cl, cd, dcl = vc.evaluate(a)
    np.testing.assert_allclose(cl, np.sin(2 * a), atol=1e-14)
    np.testing.assert_allclose(cd, 2 * np.sin(a) ** 2, atol=1e-14)
    np.testing.assert_allclose(dcl, 2 * np.cos(2 * a), atol=1e-13)


def _stalled_table(out_of_range="viterna", **kw):
    alpha = np.radians([-14.0, -8.0, 0.0, 2.0, 10.0, 16.0])
    return TablePolar(alpha, [-1.0, -0.8, 0.1, 0.32, 1.1, 1.25], [0.03, 0.012, 0.008, 0.008, 0.014, 0.035],
                      name="stall.csv", out_of_range=out_of_range, **kw)


def test_viterna_extension_is_continuous_at_the_matching_angles_and_periodic():
    """Values match the table at its last measured angles (Viterna & Corrigan's construction), cl = 0 and
    cd = cd_max at +-90 deg, and the reversed-flow mirror makes cl(180) = cl(-180) = -cl(0) and
    cd(+-180) = cd(0) (our choice, exact for a flat plate)."""
    p = _stalled_table(aspect_ratio=6.0)
    eps = 1e-10
    for end, cl_end, cd_end in ((16.0, 1.25, 0.035), (-14.0, -1.0, 0.03)):
        a = np.radians(end)
        cl, cd, _ = p.evaluate(np.array([a - eps, a + eps]))
        np.testing.assert_allclose(cl, cl_end, atol=1e-8)
        np.testing.assert_allclose(cd, cd_end, atol=1e-8)
    cl, cd, _ = p.evaluate(np.radians([90.0, -90.0]))
    np.testing.assert_allclose(cl, 0.0, atol=1e-14)
    np.testing.assert_allclose(cd, 1.218, rtol=1e-12)
    cl, cd, _ = p.evaluate(np.radians([180.0, -180.0, 540.0]))
    np.testing.assert_allclose(cl, -0.1, rtol=1e-12)
    np.testing.assert_allclose(cd, 0.008, rtol=1e-12)
    # continuous all round: no jump larger than the largest slope times the spacing (Lipschitz bound)
    a = np.radians(np.linspace(-180.0, 180.0, 72001))
    cl, cd, dcl = p.evaluate(a)
    da = a[1] - a[0]
    assert np.max(np.abs(np.diff(cl))) <= 1.001 * np.max(np.abs(dcl)) * da
    assert np.max(np.abs(np.diff(cd))) < 1e-3
    assert np.isfinite(dcl).all() and np.max(np.abs(dcl)) < 10.0


def test_viterna_slope_matches_finite_differences_off_the_nodes():
    """dcl/dalpha of the extension (both Viterna-Corrigan sides and the mirrored parts) against central
    differences (step 1e-7 rad; angles at least 0.5 deg from any node or junction)."""
    p = _stalled_table()
    a = np.radians([25.0, 47.0, 80.0, 100.0, 150.0, 171.0, 177.0, -20.0, -60.0, -95.0, -130.0, -175.0])
    h = 1e-7
    fd = (p.evaluate(a + h)[0] - p.evaluate(a - h)[0]) / (2 * h)
    np.testing.assert_allclose(p.evaluate(a)[2], fd, rtol=1e-6, atol=1e-8)


def test_viterna_needs_a_table_past_stall_on_both_sides():
    with pytest.raises(InputError, match=r"covers 0 to 16 deg; the Viterna-Corrigan extension needs both ends"):
        TablePolar(np.radians([0.0, 8.0, 16.0]), [0.0, 0.8, 1.2], [0.01, 0.01, 0.03], name="half.csv",
                   out_of_range="viterna")
    full = np.radians([-180.0, 0.0, 180.0])
    TablePolar(full, [0.0, 0.0, 0.0], [0.02, 0.01, 0.02], out_of_range="viterna")  # nothing to extend


# ---------------------------------------------------------------- NACA 0012

def test_naca0012_table_is_what_its_generator_writes():
    """The bundled CSV is the output of tools/make_naca0012_polar.py (each value's source is named there)."""
    import importlib.util

    spec = importlib.util.spec_from_file_location("make_naca0012_polar", ROOT / "tools" / "make_naca0012_polar.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    out = io.StringIO()
    with redirect_stdout(out):
        mod.main()
    assert builtin_polar_path("naca0012").read_text() == out.getvalue()


def test_naca0012_slope_cl_max_and_drag_within_the_published_range():
    """Near Re = 2e6: lift slope 0.100 to 0.110 per deg (Abbott & von Doenhoff 1959, App. IV, about 0.105;
    Ladson 1988, NASA TM-4074; McCroskey 1987, NASA TM-100019; memory), cl_max 1.3 to 1.6 at 14 to 18 deg
    (same sources, memory), minimum drag 0.0055 to 0.0075 (Sheldahl & Klimas 1981 give 0.0064 at
    Re = 2e6, read; Abbott & von Doenhoff about 0.006 at 3e6, memory); symmetric section."""
    p = builtin_polar("naca0012")
    a = np.radians(np.arange(-8.0, 8.5, 0.5))
    cl, cd, dcl = p.evaluate(a)
    slope_per_deg = np.polyfit(np.degrees(a), cl, 1)[0]
    assert 0.100 <= slope_per_deg <= 0.110
    np.testing.assert_allclose(cl, -cl[::-1], atol=1e-12)
    lo, hi = p.alpha_range
    grid = np.radians(np.linspace(np.degrees(lo), np.degrees(hi), 3201))
    cl_all, cd_all, _ = p.evaluate(grid)
    assert 1.3 <= cl_all.max() <= 1.6
    assert 14.0 <= np.degrees(grid[np.argmax(cl_all)]) <= 18.0
    assert 0.0055 <= cd_all.min() <= 0.0075
    # compressible at the tip Mach number 0.44 of Caradonna & Tung (1981): slope raised by 1/beta
    pg = CompressiblePolar(p, "prandtl-glauert")
    np.testing.assert_allclose(pg.evaluate(a, 0.44)[2], dcl / math.sqrt(1 - 0.44 ** 2), rtol=1e-13)


# ---------------------------------------------------------------- the lifting-line solve

def _wing(polars):
    s = wing_surface("w", WingPlanform(6.0, Distribution("linear", root=1.2, tip=0.6)),
                     n_span=10, spacing="cosine", n_chord=1, lifting_line=True, polars=polars)
    return s


def _onset(s, alpha_deg, speed=10.0):
    from wakes.aero.vortex_lattice import influence_matrix

    pts = s.eval_points()
    a = np.radians(alpha_deg)
    onset = np.tile(speed * np.array([np.cos(a), 0.0, np.sin(a)]), (len(pts), 1))
    return influence_matrix([s], pts), onset


@pytest.mark.parametrize("alpha_deg, rule", [(6.0, "prandtl-glauert"), (28.0, "karman-tsien")])
def test_newton_jacobian_matches_finite_differences(alpha_deg, rule):
    """The analytic Jacobian, with dcl/dalpha and the Mach number's share dcl/dM dM/d|V| of the compressible
    polar, against central differences of the residual (28 deg puts the strips on the Viterna-Corrigan
    part). Speed of sound 20 m/s at 10 m/s: M about 0.5, so the Mach terms matter. Step 1e-7 of the
    circulation scale; rtol 1e-5 covers round-off; the states sit away from table nodes. At 28 deg the
    strips are stalled and carry the artificial viscosity mu of the module notes, which the Jacobian holds
    fixed (mu follows the state between iterations), so the differences hold it fixed too."""
    polar = CompressiblePolar(builtin_polar("naca0012", out_of_range="viterna", aspect_ratio=6.0), rule)
    s = _wing(SectionPolars.uniform(polar, 10, speed_of_sound=20.0))
    aic, onset = _onset(s, alpha_deg)
    system = _System([s], aic, onset)
    rng = np.random.default_rng(16)
    gamma = (0.5 + 0.2 * rng.random(s.n_unknowns)) * (1.0 if alpha_deg < 10 else 2.0)
    res, jac = system.evaluate(gamma, True)[:2]
    mu = system.viscosity(gamma)
    assert (mu > 0).sum() == (8 if alpha_deg > 20 else 0)           # the viscous term is exercised at 28 deg
    h = 1e-7 * np.max(np.abs(gamma))
    fd = np.empty_like(jac)
    for j in range(gamma.shape[0]):
        e = np.zeros_like(gamma)
        e[j] = h
        fd[:, j] = (system.evaluate(gamma + e, False, mu)[0] - system.evaluate(gamma - e, False, mu)[0]) / (2 * h)
    np.testing.assert_allclose(jac, fd, rtol=1e-5, atol=1e-7 * np.max(np.abs(jac)))
    # without the Mach term the Jacobian would be off by a visible amount: the test can fail
    no_mach = _System([_wing(SectionPolars.uniform(polar, 10))], aic, onset).evaluate(gamma, True)[1]
    assert np.max(np.abs(no_mach - jac)) > 1e-3 * np.max(np.abs(jac))


def test_compressible_solution_satisfies_kutta_joukowski_at_the_local_mach():
    """At convergence Gamma = 1/2 |V| c cl(alpha, |V|/a) at every strip, and Newton converges fast."""
    polar = CompressiblePolar(builtin_polar("naca0012"), "prandtl-glauert")
    s = _wing(SectionPolars.uniform(polar, 10, speed_of_sound=25.0))
    aic, onset = _onset(s, 5.0)
    sol = solve_circulation([s], aic, onset, np.zeros(s.n_unknowns), SolverSettings(tolerance=1e-11))
    v = onset + np.einsum("ikn,n->ik", aic, sol.gamma[0].ravel())
    vt = np.einsum("ij,ij->i", v, s.chord_dir)
    vn = np.einsum("ij,ij->i", v, s.section_normal)
    q = np.hypot(vt, vn)
    cl = polar.evaluate(np.arctan2(vn, vt), q / 25.0)[0]
    np.testing.assert_allclose(sol.gamma[0][0], 0.5 * q * s.section_chord * cl, rtol=1e-9)
    assert sol.iterations <= 6
    low = solve_circulation([_wing(SectionPolars.uniform(polar, 10))], aic, onset, np.zeros(s.n_unknowns),
                            SolverSettings(tolerance=1e-11))
    # M = 0.4: the section slope rises by 1/beta = 1.091; the wing's by less (its induced angle grows too)
    gain = sol.gamma[0].sum() / low.gamma[0].sum()
    assert 1.02 < gain < 1.0 / math.sqrt(1 - 0.4 ** 2)


def test_range_error_in_a_run_names_station_time_angle_and_mach():
    base = TablePolar(np.radians([-4.0, 0.0, 4.0]), [-0.4, 0.0, 0.4], [0.01, 0.01, 0.01], name="narrow.csv")
    s = _wing(SectionPolars.uniform(CompressiblePolar(base, "prandtl-glauert"), 10, speed_of_sound=30.0))
    aic, onset = _onset(s, 9.0)
    with pytest.raises(PolarRangeError, match=r"surface 'w', strip \d+ \(eta = -?\d\.\d{3}\): polar 'narrow.csv' "
                                              r"covers -4 to 4 deg; an angle of [\d.]+ deg at Mach 0.3\d* was met "
                                              r".* at step 4 \(t = 0.2 s\)") as info:
        solve_circulation([s], aic, onset, np.zeros(s.n_unknowns), SolverSettings(), step=4, time=0.2)
    assert info.value.mach == pytest.approx(1 / 3, rel=0.05)
    # the speed of sound must be a positive number
    with pytest.raises(InputError, match="speed of sound"):
        SectionPolars.uniform(base, 3, speed_of_sound=0.0)


def test_section_polars_mix_polars_and_scale_the_mach_slope_by_the_speed_of_sound():
    """dcl/d|V| = dcl/dM / a; a low-speed polar among them has no Mach slope."""
    comp = CompressiblePolar(ThinAirfoilPolar(), "prandtl-glauert")
    sp = SectionPolars((comp, ThinAirfoilPolar()), [0, 1, 0], speed_of_sound=340.0)
    a = np.radians([4.0, 4.0, 4.0])
    speed = np.array([150.0, 150.0, 100.0])
    cl, cd, dcl, dcl_dq = sp.evaluate_at_speed(a, speed)
    m = speed / 340.0
    np.testing.assert_allclose(dcl_dq[[0, 2]], prandtl_glauert(2 * np.pi * a[0], m[[0, 2]])[2] / 340.0, rtol=1e-13)
    assert dcl_dq[1] == 0.0 and cl[1] == pytest.approx(2 * np.pi * a[1])
    plain = SectionPolars((comp,), [0, 0, 0]).evaluate_at_speed(a, speed)
    np.testing.assert_allclose(plain[0], 2 * np.pi * a)
    np.testing.assert_allclose(plain[3], 0.0)


def test_unknown_builtin_section_names_the_known_ones():
    with pytest.raises(InputError, match=r"unknown built-in section 'naca0015'; known: 'naca0012'"):
        builtin_polar("naca0015")
