"""The vectorizable exp and Gaussian smoothing factor, and the drivers that use them.

References are written independently of the library's polynomials: scipy's
erf/erfc, the Kummer series of erf summed to convergence (Abramowitz &
Stegun 1964, eq. 7.1.6), and, when mpmath is installed, 30-digit arithmetic.
"""

import math

import numpy as np
import pytest
from numba import njit
from scipy.special import erfc, erfcx
from wakes.induction import direct, gaussian
from wakes.induction.gaussian import T_FAR, T_NEAR, exp_neg, exp_neg_ratio, gaussian_g
from wakes.induction.pairs import segment_phi
from wakes.induction.smoothing import CORE_LAMB_OSEEN, GAUSSIAN, LAMB_OSEEN_ALPHA

EPS = np.finfo(float).eps          # 2.2e-16, one unit in the last place at 1
C0 = math.sqrt(2.0 / math.pi)


@njit(cache=True)
def _g_many(t):
    g = np.empty_like(t)
    dg = np.empty_like(t)
    for i in range(t.size):
        g[i], dg[i] = gaussian_g(t[i])
    return g, dg


@njit(cache=True)
def _exp_many(h):
    out = np.empty_like(h)
    for i in range(h.size):
        out[i] = exp_neg(h[i])
    return out


@njit(cache=True)
def _exp_ratio_many(h):
    num = np.empty_like(h)
    den = np.empty_like(h)
    for i in range(h.size):
        num[i], den[i] = exp_neg_ratio(h[i])
    return num, den


def kummer_g(t):
    """g, dg/dt from the positive Kummer series (A&S 7.1.6), for t <= 6.

    erf(x) = (2/sqrt pi) e^{-x^2} sum 2^n x^(2n+1) / (2n+1)!! gives
    g = q/rho^3 = sqrt(2/pi) e^{-t/2} M(t), M = sum t^m/(2m+3)!!, and
    differentiating term by term, g' = -1.5 sqrt(2/pi) e^{-t/2} N(t),
    N = sum t^m/(2m+5)!!. All terms are positive: float64 sums are good to
    about 1 ulp.
    """
    g, dg = [], []
    for tt in np.atleast_1d(t):
        m_sum = n_sum = 0.0
        term_m, term_n = 1.0 / 3.0, 1.0 / 15.0
        for m in range(60):
            m_sum += term_m
            n_sum += term_n
            term_m *= tt / (2 * m + 5)
            term_n *= tt / (2 * m + 7)
        e = C0 * math.exp(-0.5 * tt)
        g.append(e * m_sum)
        dg.append(-1.5 * e * n_sum)
    return np.array(g), np.array(dg)


def erfc_g(t):
    """g, dg/dt from scipy's erfc, for t >= 4 (no cancellation there).

    q = 1 - erfc(rho/sqrt2) - sqrt(2/pi) rho e^{-t/2} with 1 - q <= 0.26;
    g' = (sqrt(2/pi) e^{-t/2} - 3 g)/(2 t) cancels by at most a factor 2.3.
    """
    t = np.atleast_1d(np.asarray(t, float))
    rho = np.sqrt(t)
    e = C0 * np.exp(-0.5 * t)
    q = 1.0 - (erfc(rho / math.sqrt(2.0)) + rho * e)
    g = q / (t * rho)
    return g, (e - 3.0 * g) / (2.0 * t)


def reference_g(t):
    t = np.atleast_1d(np.asarray(t, float))
    g, dg = erfc_g(np.maximum(t, 4.0))
    near = t < 4.0
    if near.any():
        g[near], dg[near] = kummer_g(t[near])
    return g, dg


def _test_points():
    rng = np.random.default_rng(11)
    edges = [np.nextafter(v, d) for v in (T_NEAR, T_FAR) for d in (0.0, 1e3)]
    return np.concatenate([np.linspace(0.0, 100.0, 2001), rng.uniform(0.0, 100.0, 2000),
                           np.geomspace(1e-12, 1e6, 400), edges, [T_NEAR, T_FAR]])


def test_exp_neg_within_two_ulp():
    """exp_neg(h) = e^-h to 2 ulp on its whole domain [0, 700] (numpy's exp: < 1 ulp)."""
    rng = np.random.default_rng(3)
    h = np.concatenate([np.linspace(0.0, 700.0, 70001), rng.uniform(0.0, 50.0, 20000)])
    rel = np.abs(_exp_many(h) - np.exp(-h)) / np.exp(-h)
    assert rel.max() < 2.5 * EPS
    assert _exp_many(np.array([0.0]))[0] == 1.0


def test_exp_neg_ratio_within_two_ulp():
    """num/den = e^-h on [0, 700] and densely on the far form's range [2.5, 45]:
    the [6/6] Pade approximant is within 2e-19 after the reduction, so what
    remains is rounding in num, den and the test's own division (numpy's
    exp: < 1 ulp); den = N(-r) stays in [0.83, 1.2]."""
    rng = np.random.default_rng(4)
    h = np.concatenate([np.linspace(0.0, 700.0, 70001), rng.uniform(2.5, 45.0, 20000),
                        np.nextafter(0.5 * T_NEAR, [0.0, 1e3]), [0.5 * T_FAR]])
    num, den = _exp_ratio_many(h)
    rel = np.abs(num / den - np.exp(-h)) / np.exp(-h)
    assert rel.max() < 2.5 * EPS
    assert 0.83 < den.min() and den.max() < 1.2
    num0, den0 = _exp_ratio_many(np.array([0.0]))
    assert num0[0] == den0[0] == 1.0


def test_far_ratio_against_scipy_erfcx():
    """The far form's S(rho) = P/Q against scipy's erfcx: S = erfcx(rho/sqrt2)
    + sqrt(2/pi) rho, with 1 - q = e^{-rho^2/2} S. What matters is the error
    in q, e^{-rho^2/2} |dS| / q: below 1 ulp of q from RHO_NEAR (where the
    weight is largest, 0.2) to RHO_FAR (fit: 2.5e-17 in 40-digit arithmetic;
    scipy's erfcx adds about 1 ulp of S, weighted by at most 0.2)."""
    rho_near, rho_far = math.sqrt(T_NEAR), math.sqrt(T_FAR)
    rho = np.concatenate([np.linspace(rho_near, rho_far, 20001),
                          np.nextafter([rho_near, rho_far], [10.0, 0.0])])
    v = (rho - rho_near) * gaussian.FAR_INV_H
    s = (np.polynomial.polynomial.polyval(v, gaussian.FAR_P_COEFFS)
         / np.polynomial.polynomial.polyval(v, gaussian.FAR_Q_COEFFS))
    s_ref = erfcx(rho / math.sqrt(2.0)) + C0 * rho
    e = np.exp(-0.5 * rho**2)
    q = 1.0 - e * s_ref
    assert np.max(e * np.abs(s - s_ref) / q) < EPS


def test_references_agree_where_both_hold():
    """The series and the erfc form agree on 4 <= t <= 6 (a check of the identity)."""
    t = np.linspace(4.0, 6.0, 201)
    gk, dgk = kummer_g(t)
    ge, dge = erfc_g(t)
    assert np.max(np.abs(gk - ge) / ge) < 5 * EPS
    assert np.max(np.abs(dgk - dge) / np.abs(dge)) < 12 * EPS   # erfc form cancels by 2.3x here


def test_gaussian_g_against_scipy_and_series():
    """g and g' within a few ulp everywhere, across both branch points.

    Tolerance: the implementation is within 2.1 ulp (g) and 3.3 ulp (g')
    of 30-digit values (see test below); the float64 references add up to
    about 3 ulp (g) and 6 ulp (g', the erfc form cancels by up to 2.3x).
    Measured against them: 2.8 and 3.9 ulp.
    """
    t = _test_points()
    g, dg = _g_many(t)
    gr, dgr = reference_g(t)
    assert np.max(np.abs(g - gr) / gr) < 5 * EPS
    assert np.max(np.abs(dg - dgr) / np.abs(dgr)) < 9 * EPS


def test_gaussian_g_against_high_precision():
    mp = pytest.importorskip("mpmath")
    mp.mp.dps = 30
    t = _test_points()[::7]
    g, dg = _g_many(t)
    for tt, gg, dd in zip(t, g, dg):
        x = mp.mpf(float(tt))
        if x < mp.mpf("0.01"):   # alternating Taylor series in 30 digits
            ref_g = mp.fsum(C0 * (-x / 2) ** n / (mp.factorial(n) * (2 * n + 3)) for n in range(20))
            ref_dg = mp.fsum(C0 * n * mp.mpf(-0.5) ** n * x ** (n - 1) / (mp.factorial(n) * (2 * n + 3))
                             for n in range(1, 20))
        else:
            rho = mp.sqrt(x)
            e = mp.sqrt(2 / mp.pi) * mp.exp(-x / 2)
            ref_g = (mp.erf(rho / mp.sqrt(2)) - rho * e) / (x * rho)
            ref_dg = (e - 3 * ref_g) / (2 * x)
        assert abs(gg - ref_g) / abs(ref_g) < 2.5 * EPS     # measured 2.1 ulp
        assert abs(dd - ref_dg) / abs(ref_dg) < 4 * EPS     # measured 3.3 ulp


def test_centre_values():
    """g(0) = sqrt(2/pi)/3 and g'(0) = -sqrt(2/pi)/10 (first two series terms)."""
    g, dg = _g_many(np.array([0.0]))
    assert g[0] == pytest.approx(C0 / 3, rel=2 * EPS)
    assert dg[0] == pytest.approx(-C0 / 10, rel=2 * EPS)


def test_kernel_is_singular_beyond_t_far():
    """Beyond T_FAR the drivers use the singular law: its error is below round-off.

    1 - q = erfc(rho/sqrt2) + sqrt(2/pi) rho e^{-t/2} and the extra term in
    g', sqrt(2/pi) rho^3 e^{-t/2}/(2 * 1.5), both fall below 1e-17 there.
    """
    rho = math.sqrt(T_FAR)
    e = C0 * math.exp(-0.5 * T_FAR)
    assert erfc(rho / math.sqrt(2.0)) + rho * e < 1e-18
    assert rho**3 * e / 3.0 < 1e-17


def test_tables_have_the_fitted_shape():
    """Coefficient tables as generated; the first terms are the series' own;
    the far ratio's coefficients are all positive (no cancellation in P, Q);
    the Pade coefficients are those of N(x) = 1 + x/2 + 5x^2/44 + x^3/66 +
    x^4/792 + x^5/15840 + x^6/665280 (the [6/6] approximant of e^x)."""
    assert len(gaussian.EXP_COEFFS) == 12
    assert gaussian.EXP_COEFFS[:2] == (1.0, 1.0)
    for name in ("NEAR_M_COEFFS", "NEAR_N_COEFFS"):
        assert len(getattr(gaussian, name)) == 16
    assert len(gaussian.FAR_P_COEFFS) == 6 and len(gaussian.FAR_Q_COEFFS) == 5
    assert min(gaussian.FAR_P_COEFFS + gaussian.FAR_Q_COEFFS) > 0.0
    expected = (1.0, 1 / 2, 5 / 44, 1 / 66, 1 / 792, 1 / 15840, 1 / 665280)
    assert gaussian.PADE_EXP == pytest.approx(expected, rel=EPS)
    assert gaussian.NEAR_M_COEFFS[0] == pytest.approx(1 / 3, rel=EPS)
    assert gaussian.NEAR_N_COEFFS[0] == pytest.approx(1 / 15, rel=EPS)


def _brute_force(src, alpha, sigma, targets):
    """Velocity and gradient by numpy over all pairs, with the reference g."""
    r = targets[:, None, :] - src[None, :, :]
    r2 = np.einsum("ijk,ijk->ij", r, r)
    s2 = (sigma**2)[None, :] * np.ones_like(r2)
    g, dg = reference_g((r2 / s2).ravel())
    f = g.reshape(r2.shape) / s2**1.5
    df = dg.reshape(r2.shape) / s2**2.5
    c = np.cross(alpha[None, :, :], r)
    vel = np.einsum("ij,ijk->ik", f, c) / (4 * np.pi)
    eps = np.zeros((3, 3, 3))
    eps[0, 1, 2] = eps[1, 2, 0] = eps[2, 0, 1] = 1.0
    eps[0, 2, 1] = eps[2, 1, 0] = eps[1, 0, 2] = -1.0
    # grad[i, j, k] = sum_q f eps_jlk alpha_l + 2 f' c_j r_k
    grad = (np.einsum("iq,jlk,ql->ijk", f, eps, alpha)
            + 2.0 * np.einsum("iq,iqj,iqk->ijk", df, c, r)) / (4 * np.pi)
    return vel, grad


@pytest.mark.parametrize("gradient", [False, True])
def test_gaussian_driver_over_all_sub_block_classes(gradient):
    """Sub-blocks far from a target use the singular law, nearer ones the far
    form, the nearest the full kernel: the sum equals a brute-force one.

    Three clusters of 96 sources (sigma = 0.05): one around the targets
    (full kernel), one 0.3 away (beyond 2.25 sigma, within 9.5 sigma: far
    form), one 3 away (singular law). Brute force: numpy over all pairs with
    the scipy/series reference g; agreement to 1e-13 is round-off in sums
    of 288 terms.
    """
    rng = np.random.default_rng(5)
    centres = np.array([[0.0, 0.0, 0.0], [0.3, 0.0, 0.0], [3.0, 0.0, 0.0]])
    src = np.concatenate([c + rng.uniform(-0.04, 0.04, (96, 3)) for c in centres])
    alpha = rng.normal(size=src.shape)
    sigma = np.full(len(src), 0.05)
    targets = np.concatenate([rng.uniform(-0.05, 0.05, (20, 3)), src[:5]])
    vel = np.zeros((len(targets), 3))
    grad = np.zeros((len(targets), 3, 3) if gradient else (0, 3, 3))
    cols = [np.ascontiguousarray(a[:, k]) for a in (targets, src, alpha) for k in range(3)]
    direct.particles_direct(*cols, sigma**2, GAUSSIAN, gradient, vel, grad)
    vel_ref, grad_ref = _brute_force(src, alpha, sigma, targets)
    assert np.linalg.norm(vel - vel_ref) < 1e-13 * np.linalg.norm(vel_ref)
    if gradient:
        assert np.linalg.norm(grad - grad_ref) < 1e-13 * np.linalg.norm(grad_ref)


def test_morton_order_is_a_local_permutation():
    """The source sort is a permutation, and neighbours in it are close."""
    rng = np.random.default_rng(2)
    p = rng.random((4096, 3))
    order = direct.morton_order(*p.T)
    assert np.array_equal(np.sort(order), np.arange(len(p)))
    step_sorted = np.linalg.norm(np.diff(p[order], axis=0), axis=1).mean()
    step_random = np.linalg.norm(np.diff(p, axis=0), axis=1).mean()
    assert step_sorted < 0.25 * step_random


@njit(cache=True)
def _lamb_oseen_many(h2, rc2):
    p = np.empty_like(h2)
    dp = np.empty_like(h2)
    for i in range(h2.size):
        p[i], dp[i] = segment_phi(h2[i], rc2, CORE_LAMB_OSEEN)
    return p, dp


def test_lamb_oseen_core_with_the_vectorizable_exp():
    """The Lamb-Oseen core factor over h^2, phi = a (1 - e^-x)/x (x = a h^2/rc^2),
    and d phi/d(h^2) = a^2 (e^-x (1 + x) - 1)/x^2, from exp_neg and the
    series, against numpy's expm1 (no cancellation) on 0 <= x <= 800: phi
    within 4 ulp relative; its derivative within 2e-14 relative where the
    closed form is used (x >= 0.25: e^-x (1 + x) - 1 cancels by up to a
    factor 38 at x = 0.25, so a few ulp of rounding become ~1e-14; measured
    7e-15) and within 4 ulp of the series below, where the library sums it.
    """
    rc2 = 0.3
    a = LAMB_OSEEN_ALPHA / rc2
    x = np.concatenate([np.linspace(0.0, 0.3, 301), np.geomspace(0.3, 800.0, 2000)])
    p, dp = _lamb_oseen_many(x / a, rc2)
    xs = np.maximum(x, 1e-300)
    em1 = -np.expm1(-xs)                       # 1 - e^-x
    p_ref = np.where(x > 0, a * em1 / xs, a)
    assert np.max(np.abs(p / p_ref - 1)) < 4 * EPS
    far = x >= 0.25
    # e^-x (1 + x) - 1 = x e^-x - (1 - e^-x)
    xf = x[far]
    dp_ref = a * a * (xf * np.exp(-xf) + np.expm1(-xf)) / xf**2
    assert np.max(np.abs(dp[far] / dp_ref - 1)) < 2e-14
    # near 0 that reference cancels: there, the derivative's Taylor series,
    # sum_{n>=1} n (-1)^n x^(n-1)/(n+1)!, summed to 30 terms
    xn = x[~far]
    series = sum(n * (-1.0) ** n * xn ** (n - 1) / math.factorial(n + 1) for n in range(1, 31))
    assert np.max(np.abs(dp[~far] / (a * a * series) - 1)) < 4 * EPS
