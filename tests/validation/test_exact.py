"""Closed-form classical solutions of ``wakes.exact`` against the literature.

Each check names its source beside it, tagged as in the rest of the suite:
published (the number or formula is in the cited work), derived (computed
exactly from published formulas, often recomputed here by an independent
route such as quadrature), memory (recalled, not re-read), practice (a rule
of thumb of the trade).
"""

import math

import numpy as np
import pytest
from scipy.integrate import quad
from scipy.optimize import minimize_scalar
from scipy.spatial.transform import Rotation
from scipy.special import ellipe, ellipk, erf
from wakes import exact
from wakes.errors import WakesError

RNG_SEED = 20240601


# ---------------------------------------------------------------- helpers

def lamb_ring_literal(r, z, radius, circulation):
    """Lamb's (1932, Hydrodynamics, art. 161; memory for the article) ring
    field written exactly as published, with scipy's ellipk/ellipe (m = k^2).
    Independent of the Carlson-form evaluation inside ``wakes.exact``."""
    a2 = (r + radius) ** 2 + z ** 2
    b2 = (r - radius) ** 2 + z ** 2
    m = 4.0 * r * radius / a2
    k, e = ellipk(m), ellipe(m)
    pre = circulation / (2.0 * np.pi * np.sqrt(a2))
    u_z = pre * (k + (radius ** 2 - r ** 2 - z ** 2) / b2 * e)
    u_r = pre * z / r * (-k + (radius ** 2 + r ** 2 + z ** 2) / b2 * e)
    return u_r, u_z


def ring_quadrature(x, radius, circulation):
    """Biot-Savart law u = Γ/(4π) ∮ dl × (x - x')/|x - x'|³ integrated round a
    ring in z = 0 (vorticity along +e_θ) with scipy.integrate.quad."""
    def integrand(theta, comp):
        src = radius * np.array([np.cos(theta), np.sin(theta), 0.0])
        dl = radius * np.array([-np.sin(theta), np.cos(theta), 0.0])
        d = x - src
        return np.cross(dl, d)[comp] / np.linalg.norm(d) ** 3
    return np.array([
        circulation / (4.0 * np.pi)
        * quad(integrand, 0.0, 2.0 * np.pi, args=(c,), epsabs=1e-13, epsrel=1e-12, limit=200)[0]
        for c in range(3)])


# Smoothing functions q(rho) of the particle kernels (Winckelmans & Leonard
# 1993, J. Comput. Phys. 109; the Gaussian with zeta ∝ exp(-rho^2/2)).
KERNEL_Q = {
    "rosenhead-moore": lambda p: p ** 3 / (p * p + 1.0) ** 1.5,
    "winckelmans-leonard": lambda p: p ** 3 * (p * p + 2.5) / (p * p + 1.0) ** 2.5,
    "gaussian": lambda p: (erf(p / math.sqrt(2.0))
                           - math.sqrt(2.0 / math.pi) * p * math.exp(-p * p / 2.0)),
}

# Swirl profile g(x), u_θ = Γ/(2πh) g(h/σ), of a straight line of particles,
# integrated by hand from q (derived); checked against quadrature below.
LINE_SWIRL = {
    "rosenhead-moore": lambda x: x * x / (x * x + 1.0),
    "winckelmans-leonard": lambda x: x * x * (x * x + 2.0) / (x * x + 1.0) ** 2,
    "gaussian": lambda x: -math.expm1(-x * x / 2.0),
}


def saffman_constant(g):
    """C in U = Γ/(4πR)[ln(8R/a) + C] for a core of swirl profile
    u_θ = Γ/(2πs) g(s/a): C = -1/2 + lim_X [∫₀^X g²/x dx - ln X]
    (Saffman 1970, Stud. Appl. Math. 49; Fukumoto & Moffatt 2000, J. Fluid
    Mech. 417, the "Fraenkel-Saffman first-order formula"; memory)."""
    inner = quad(lambda x: g(x) ** 2 / x, 0.0, 1.0, epsabs=1e-14, limit=200)[0]
    outer = quad(lambda x: (g(x) ** 2 - 1.0) / x, 1.0, np.inf, epsabs=1e-14, limit=200)[0]
    return -0.5 + inner + outer


# ---------------------------------------------------------------- ring field

def test_ring_worked_value():
    # Derived from Lamb 1932, art. 161: R = Γ = 1 at (r, z) = (0.5, 0.5).
    u = exact.ring_velocity([[0.5, 0.0, 0.5]], radius=1.0, circulation=1.0)[0]
    assert u[0] == pytest.approx(0.1286680849, rel=1e-9)   # 10 digits quoted
    assert u[1] == 0.0
    assert u[2] == pytest.approx(0.3458316700, rel=1e-9)
    # The literal formula gives the same digits (confirms the worked value).
    u_r, u_z = lamb_ring_literal(0.5, 0.5, 1.0, 1.0)
    assert (u_r, u_z) == pytest.approx((0.1286680849, 0.3458316700), rel=1e-9)


def test_ring_matches_literal_lamb_formula():
    # Lamb 1932, art. 161 (memory for the article), evaluated with ellipk/ellipe.
    # Away from the axis and the ring line both evaluations are at round-off;
    # 1e-11 leaves room for the literal formula's own cancellation.
    rng = np.random.default_rng(RNG_SEED)
    r = rng.uniform(0.05, 3.0, 200)
    z = rng.uniform(-2.0, 2.0, 200)
    radius, gamma = 0.7, -1.3
    pts = np.column_stack([r, np.zeros_like(r), z])
    u = exact.ring_velocity(pts, radius, gamma)
    u_r, u_z = lamb_ring_literal(r, z, radius, gamma)
    np.testing.assert_allclose(u[:, 0], u_r, rtol=1e-11, atol=1e-13)
    np.testing.assert_allclose(u[:, 2], u_z, rtol=1e-11, atol=1e-13)
    np.testing.assert_array_equal(u[:, 1], 0.0)


def test_ring_on_axis_and_centre():
    # On the axis u_z = ΓR²/(2(R²+z²)^(3/2)), u_r = 0; centre Γ/(2R)
    # (Lamb 1932; published, memory for the article).
    radius, gamma = 1.7, 2.3
    z = np.array([0.0, 0.3, -1.1, 5.0, 40.0])
    pts = np.column_stack([np.zeros_like(z), np.zeros_like(z), z])
    u = exact.ring_velocity(pts, radius, gamma)
    assert np.isfinite(u).all()
    np.testing.assert_array_equal(u[:, :2], 0.0)
    np.testing.assert_allclose(u[:, 2], gamma * radius ** 2 / (2.0 * (radius ** 2 + z ** 2) ** 1.5),
                               rtol=1e-13)
    assert u[0, 2] == pytest.approx(gamma / (2.0 * radius), rel=1e-14)


def test_ring_radial_velocity_near_axis():
    # Derived: continuity (1/r) d(r u_r)/dr + du_z/dz = 0 with the on-axis
    # u_z gives u_r ≈ 3ΓR² z r / (4 (R²+z²)^(5/2)) + O(r³). At r = 1e-7 the
    # O(r²) relative remainder is 1e-14. The error allowed is round-off of
    # the velocity scale Γ/R; the literal formula (1/r times a difference
    # of O(1) terms) is off by 3e-11 to 3e-10 there.
    radius, gamma, r = 1.0, 1.0, 1e-7
    z = np.array([-0.8, 0.2, 0.5, 3.0])
    u = exact.ring_velocity(np.column_stack([np.full_like(z, r), np.zeros_like(z), z]),
                            radius, gamma)
    expected = 3.0 * gamma * radius ** 2 * z * r / (4.0 * (radius ** 2 + z ** 2) ** 2.5)
    np.testing.assert_allclose(u[:, 0], expected, rtol=0.0, atol=1e-15 * gamma / radius)


def test_ring_scaling_law():
    # Derived (dimensional analysis of Lamb's formula):
    # u(r, z; R, Γ) = (Γ/R) u(r/R, z/R; 1, 1).
    rng = np.random.default_rng(RNG_SEED + 1)
    pts = rng.uniform(-2.0, 2.0, (50, 3))
    radius, gamma = 3.5, -0.4
    scaled = exact.ring_velocity(pts * radius, radius, gamma)
    unit = exact.ring_velocity(pts, 1.0, 1.0)
    np.testing.assert_allclose(scaled, gamma / radius * unit, rtol=1e-12, atol=1e-15)


def test_ring_rotated_and_translated():
    # Derived: the field of a moved ring is the moved field,
    # u(c + Q x; c, Q e_z) = Q u(x; 0, e_z).
    rng = np.random.default_rng(RNG_SEED + 2)
    q = Rotation.random(random_state=RNG_SEED).as_matrix()
    center = np.array([0.3, -1.2, 2.0])
    x = rng.uniform(-2.0, 2.0, (40, 3))
    moved = exact.ring_velocity(center + x @ q.T, 0.9, 1.4, center=center,
                                axis=5.0 * q[:, 2])   # axis length does not matter
    np.testing.assert_allclose(moved, exact.ring_velocity(x, 0.9, 1.4) @ q.T,
                               rtol=1e-11, atol=1e-13)


def test_ring_moves_along_positive_axis():
    # Right-hand rule (vorticity along +e_θ about the axis): the centre
    # velocity Γ/(2R) points along +axis.
    axis = np.array([1.0, -2.0, 0.5])
    u = exact.ring_velocity([[1.0, 1.0, 1.0]], 2.0, 3.0, center=(1, 1, 1), axis=axis)[0]
    np.testing.assert_allclose(u, 3.0 / 4.0 * axis / np.linalg.norm(axis), rtol=1e-14)


def test_ring_far_field_is_dipole():
    # Derived: far away a ring acts as a dipole of moment m = ΓπR² e_z
    # (its impulse per unit density; Lamb 1932), u = (3(m·n)n - m)/(4πd³).
    # Relative corrections are O((R/d)²) = 1e-6 at d = 1000 R.
    radius, gamma, d = 0.5, 2.0, 500.0
    rng = np.random.default_rng(RNG_SEED + 3)
    n = rng.normal(size=(20, 3))
    n /= np.linalg.norm(n, axis=1, keepdims=True)
    u = exact.ring_velocity(d * n, radius, gamma)
    m = gamma * np.pi * radius ** 2 * np.array([0.0, 0.0, 1.0])
    dipole = (3.0 * (n @ m)[:, None] * n - m) / (4.0 * np.pi * d ** 3)
    scale = np.linalg.norm(m) / (4.0 * np.pi * d ** 3)
    assert np.max(np.abs(u - dipole)) / scale < 1e-5


@pytest.mark.parametrize("x", [(0.3, 0.0, 0.2), (1.5, -0.4, 0.7), (0.9, 0.5, -0.05),
                               (0.0, 2.0, 3.0)])
def test_ring_against_biot_savart_quadrature(x):
    # Independent check: scipy.integrate.quad of the Biot-Savart law round
    # the ring (quad asked for 1e-12 relative or 1e-13 absolute).
    x = np.array(x)
    expected = ring_quadrature(x, 1.2, 0.8)
    u = exact.ring_velocity(x[None, :], 1.2, 0.8)[0]
    np.testing.assert_allclose(u, expected, rtol=1e-10, atol=1e-13)


def test_ring_line_gets_zero_and_stays_finite():
    # Convention: a point on the singular ring line gets zero velocity.
    center, axis = np.array([1.0, 2.0, 3.0]), np.array([0.0, 1.0, 1.0])
    e1 = np.array([1.0, 0.0, 0.0])   # in the ring plane
    on_ring = center + 2.0 * e1
    near = center + 2.0 * (1.0 + 1e-6) * e1
    u = exact.ring_velocity(np.array([on_ring, near]), 2.0, 1.0, center=center, axis=axis)
    np.testing.assert_array_equal(u[0], 0.0)
    assert np.isfinite(u).all() and np.linalg.norm(u[1]) > 1e4   # ~ Γ/(2π · 2e-6)


def test_ring_empty_points():
    assert exact.ring_velocity(np.empty((0, 3)), 1.0, 1.0).shape == (0, 3)


# ---------------------------------------------------------------- straight segment

def test_segment_worked_value():
    # Derived from the Katz & Plotkin (2001, Low-Speed Aerodynamics, 2nd ed.)
    # segment law: Γ = 1, (0,0,0)→(1,0,0) at (0.5, 1, 0).
    u = exact.segment_velocity([[0.5, 1.0, 0.0]], (0, 0, 0), (1, 0, 0), 1.0)[0]
    assert u[2] == pytest.approx(0.07117625, rel=1e-7)   # 8 digits quoted
    np.testing.assert_array_equal(u[:2], 0.0)


def segment_quadrature(x, a, b, circulation):
    """Γ/(4π) ∫ dl × (x - x')/|x - x'|³ along A→B with scipy.integrate.quad."""
    t_vec = b - a

    def integrand(s, comp):
        d = x - (a + s * t_vec)
        return np.cross(t_vec, d)[comp] / np.linalg.norm(d) ** 3
    return np.array([circulation / (4.0 * np.pi)
                     * quad(integrand, 0.0, 1.0, args=(c,), epsabs=1e-15, epsrel=1e-12)[0]
                     for c in range(3)])


def test_segment_against_biot_savart_quadrature():
    # Independent check: quadrature of the Biot-Savart law along the segment.
    rng = np.random.default_rng(RNG_SEED + 4)
    a, b = np.array([0.2, -0.1, 0.4]), np.array([1.1, 0.7, -0.3])
    pts = rng.uniform(-1.0, 2.0, (6, 3))
    u = exact.segment_velocity(pts, a, b, -1.7)
    expected = np.array([segment_quadrature(x, a, b, -1.7) for x in pts])
    np.testing.assert_allclose(u, expected, rtol=1e-10, atol=1e-13)


def test_segment_infinite_line_limit():
    # A long segment tends to the infinite line, u = Γ/(2πh) (Helmholtz; Lamb
    # 1932; published). Half-length L = 1e4 h: relative error h²/(2L²) = 5e-9.
    h, half = 0.5, 5e3
    u = exact.segment_velocity([[0.0, h, 0.0]], (-half, 0, 0), (half, 0, 0), 2.0)[0]
    assert u[2] == pytest.approx(2.0 / (2.0 * np.pi * h), rel=1e-8)


def test_segment_line_gets_zero():
    # Convention: points on the segment's line (inside, at the ends, beyond)
    # get zero, without NaN.
    pts = [[0.5, 0.0, 0.0], [0.0, 0.0, 0.0], [1.0, 0.0, 0.0], [3.0, 0.0, 0.0]]
    u = exact.segment_velocity(pts, (0, 0, 0), (1, 0, 0), 1.0)
    np.testing.assert_array_equal(u, 0.0)


# ---------------------------------------------------------------- Lamb-Oseen

def test_lamb_oseen_alpha():
    # Devenport et al. 1996, J. Fluid Mech. 312: α = 1.25643 (published);
    # 1.2564312 to 8 digits (derived: the root of 1 + 2α = e^α).
    assert exact.LAMB_OSEEN_ALPHA == pytest.approx(1.25643, abs=5e-6)
    assert exact.LAMB_OSEEN_ALPHA == pytest.approx(1.2564312, abs=5e-8)
    assert math.exp(exact.LAMB_OSEEN_ALPHA) == pytest.approx(1.0 + 2.0 * exact.LAMB_OSEEN_ALPHA,
                                                             rel=1e-15)


def test_lamb_oseen_peak_digits():
    # Derived (α as in Devenport et al. 1996): r_peak = 1.1209064 √(4νt),
    # u_peak = 0.6381727 Γ/(2π√(4νt)); 8 significant digits quoted.
    gamma, nu, t = 3.0, 1.5e-5, 40.0
    scale = math.sqrt(4.0 * nu * t)
    r_peak, u_peak = exact.lamb_oseen_peak(gamma, nu, t)
    assert r_peak == pytest.approx(1.1209064 * scale, rel=1e-7)
    assert u_peak == pytest.approx(0.6381727 * gamma / (2.0 * np.pi * scale), rel=1e-7)
    # Independent route: the maximum of the velocity profile itself.
    best = minimize_scalar(lambda r: -exact.lamb_oseen_velocity(r, gamma, nu, t),
                           bounds=(0.5 * scale, 2.0 * scale), method="bounded",
                           options={"xatol": 1e-12})
    assert best.x == pytest.approx(r_peak, rel=1e-6)   # flat maximum: x to ~sqrt(eps)
    assert -best.fun == pytest.approx(u_peak, rel=1e-12)


def test_lamb_oseen_limits():
    # Far field: the potential vortex Γ/(2πr) (exp(-400) below round-off).
    # Near axis: solid-body rotation Γr/(8πνt) with O(r²/(4νt)) = 1e-12
    # relative remainder at r = 1e-6 √(4νt) (derived by expansion).
    gamma, nu, t = 1.2, 1e-3, 2.0
    scale = math.sqrt(4.0 * nu * t)
    assert exact.lamb_oseen_velocity(20.0 * scale, gamma, nu, t) == pytest.approx(
        gamma / (2.0 * np.pi * 20.0 * scale), rel=1e-15)
    r = 1e-6 * scale
    assert exact.lamb_oseen_velocity(r, gamma, nu, t) == pytest.approx(
        gamma * r / (8.0 * np.pi * nu * t), rel=1e-10)
    assert exact.lamb_oseen_velocity(0.0, gamma, nu, t) == 0.0


def test_lamb_oseen_broadcasts_arrays():
    r = np.linspace(0.0, 1.0, 6).reshape(2, 3)
    u = exact.lamb_oseen_velocity(r, 1.0, 1e-2, np.array([[1.0], [2.0]]))
    assert u.shape == (2, 3) and np.isfinite(u).all()
    assert u[1, 2] == pytest.approx(1.0 / (2.0 * np.pi) * (1.0 - math.exp(-1.0 / 0.08)), rel=1e-14)


# ---------------------------------------------------------------- ring speed

def test_ring_core_constants_published():
    c = exact.RING_CORE_CONSTANTS
    assert c["uniform"] == -0.25                     # Kelvin 1867, published (memory for the page)
    assert c["hollow"] == -0.5                       # Hicks 1884; Lamb 1932 art. 163 (memory)
    assert c["gaussian"] == pytest.approx(-0.5579658, abs=5e-8)   # Saffman 1970, published


@pytest.mark.parametrize("core, profile", [
    ("uniform", lambda x: x * x if x < 1.0 else 1.0),     # solid-body core
    ("hollow", lambda x: 0.0 if x < 1.0 else 1.0),        # no vorticity inside
    ("gaussian", lambda x: -math.expm1(-x * x)),          # ω ∝ exp(-s²/a²)
])
def test_ring_core_constants_from_saffman_formula(core, profile):
    # Derived: the general thin-ring formula (Saffman 1970; memory) applied to
    # each core's swirl profile reproduces the classical constants.
    assert saffman_constant(profile) == pytest.approx(exact.RING_CORE_CONSTANTS[core], abs=1e-9)


def test_ring_speed_value():
    # Kelvin 1867 formula, worked by hand: R = 2, Γ = 3, a = 0.1, uniform core:
    # U = 3/(8π) (ln 160 - 1/4) = 0.11937 (ln 160 = 5.0751738).
    u = exact.ring_speed(2.0, 3.0, 0.1, core="uniform")
    assert u == pytest.approx(3.0 / (8.0 * np.pi) * (5.0751738152 - 0.25), rel=1e-10)
    assert exact.ring_speed(2.0, -3.0, 0.1, core="uniform") == -u
    speeds = exact.ring_speed(1.0, 1.0, np.array([0.01, 0.1]), core="hollow")
    assert speeds.shape == (2,) and speeds[0] > speeds[1]   # thinner cores are faster


def test_particle_ring_constants_table():
    c = exact.PARTICLE_RING_CONSTANTS
    assert c["rosenhead-moore"]["single"] == -1.0    # derived (Rosenhead-Moore ring; memory)
    assert c["rosenhead-moore"]["filled"] == -1.0
    assert c["winckelmans-leonard"]["single"] == -0.5
    assert c["winckelmans-leonard"]["filled"] == pytest.approx(-5.0 / 12.0, abs=1e-16)
    assert c["gaussian"]["single"] == pytest.approx(-1.0579658, abs=5e-8)
    # Saffman's Gaussian constant with a = √2 σ: C_S - ln(2)/2.
    assert c["gaussian"]["filled"] == pytest.approx(-0.9045393, abs=5e-8)
    assert c["gaussian"]["filled"] == pytest.approx(
        exact.RING_CORE_CONSTANTS["gaussian"] - math.log(2.0) / 2.0, abs=1e-15)


@pytest.mark.parametrize("kernel", sorted(KERNEL_Q))
def test_particle_ring_single_constant_by_quadrature(kernel):
    # Derived: the regularized Biot-Savart law integrated round a continuous
    # circle of particles, at a point of the circle, with σ/R = 1e-3; the
    # thin-ring remainder is O((σ/R)² ln) so C is good to ~1e-5 (observed
    # 1.4e-6 for Rosenhead-Moore, the slowest to converge).
    q = KERNEL_Q[kernel]
    radius, sigma = 1.0, 1e-3

    def u_z(theta):   # z-velocity at (R, 0, 0) from the element at angle theta
        rx, ry = radius * (1.0 - math.cos(theta)), -radius * math.sin(theta)
        cz = -radius * math.sin(theta) * ry - radius * math.cos(theta) * rx
        d = math.hypot(rx, ry)
        return cz * q(d / sigma) / d ** 3 if d > 0.0 else 0.0
    total = 2.0 * quad(u_z, 0.0, np.pi, points=[sigma, 10 * sigma, 100 * sigma],
                       epsabs=0.0, epsrel=1e-13, limit=400)[0] / (4.0 * np.pi)
    constant = 4.0 * np.pi * radius * total - math.log(8.0 * radius / sigma)
    assert constant == pytest.approx(exact.PARTICLE_RING_CONSTANTS[kernel]["single"], abs=1e-5)
    assert exact.ring_speed_particles(radius, 1.0, sigma, kernel) == pytest.approx(total, rel=2e-6)


@pytest.mark.parametrize("kernel", sorted(KERNEL_Q))
def test_particle_line_swirl_profile(kernel):
    # Derived: the swirl of a straight line of particles, by quadrature of the
    # regularized Biot-Savart law along the line, equals the closed-form
    # profile used for the filled-core constants: g(x) = x² ∫₀^∞ q(ρ)/|r|³ dt.
    q, g = KERNEL_Q[kernel], LINE_SWIRL[kernel]
    for x in (0.1, 0.7, 1.0, 2.5, 6.0):
        val = x * x * quad(lambda t, x=x: q(math.hypot(x, t)) / math.hypot(x, t) ** 3,
                           0.0, np.inf, epsabs=0.0, epsrel=1e-12, limit=200)[0]
        assert val == pytest.approx(g(x), rel=1e-9)


@pytest.mark.parametrize("kernel", sorted(KERNEL_Q))
def test_particle_ring_filled_constant_from_saffman_formula(kernel):
    # Derived: Saffman's (1970) formula with the kernel's line swirl profile.
    assert saffman_constant(LINE_SWIRL[kernel]) == pytest.approx(
        exact.PARTICLE_RING_CONSTANTS[kernel]["filled"], abs=1e-9)


@pytest.mark.parametrize("kernel", sorted(KERNEL_Q))
def test_particle_ring_discrete_circle(kernel):
    # Practice check of the documented use: a discrete circle of particles at
    # spacing σ/2, σ/R = 0.05, moves at the "single" speed within 0.2 % (the
    # thin-ring remainder is ~0.05 %, the spacing error ~1e-4; direct sum).
    q = KERNEL_Q[kernel]
    radius, sigma, gamma = 1.0, 0.05, 1.0
    n = int(round(2.0 * np.pi * radius / (0.5 * sigma)))
    theta = 2.0 * np.pi * np.arange(1, n) / n          # all but the target particle
    rx, ry = radius * (1.0 - np.cos(theta)), -radius * np.sin(theta)
    d = np.hypot(rx, ry)
    cz = -np.sin(theta) * ry - np.cos(theta) * rx       # (t̂ × r)_z, |dl| = R dθ = ds
    qv = np.array([q(p) for p in d / sigma])
    u = gamma / (4.0 * np.pi) * np.sum(cz * qv / d ** 3) * (2.0 * np.pi * radius / n)
    assert u == pytest.approx(exact.ring_speed_particles(radius, gamma, sigma, kernel), rel=2e-3)


# ---------------------------------------------------------------- wings

def test_elliptic_wing_lift_slope():
    # Derived from Prandtl's lifting line: a0 = 2π, AR 6 gives 2π/(1 + 1/3)
    # = 1.5π = 4.712389 /rad.
    assert exact.elliptic_wing_lift_slope(6.0) == pytest.approx(4.712389, abs=5e-7)
    assert exact.elliptic_wing_lift_slope(6.0, a0=5.7) == pytest.approx(
        5.7 / (1.0 + 5.7 / (6.0 * np.pi)), rel=1e-15)
    # Infinite span recovers the section slope.
    assert exact.elliptic_wing_lift_slope(1e12) == pytest.approx(2.0 * np.pi, rel=1e-11)


def test_elliptic_wing_induced_drag():
    # Prandtl: C_Di = C_L²/(π AR); by hand C_L = 0.5, AR = 8:
    # 0.25/(8π) = 0.0099471839432.
    assert exact.elliptic_wing_induced_drag(0.5, 8.0) == pytest.approx(0.0099471839432, rel=1e-11)
    cdi = exact.elliptic_wing_induced_drag(np.array([-0.5, 0.0, 0.5]), 8.0)
    np.testing.assert_allclose(cdi, [0.0099471839432, 0.0, 0.0099471839432], rtol=1e-11)


def test_wagner_jones():
    # Jones 1940, NACA Report 681 (memory): Φ(0) = 1/2 and Φ → 1.
    assert exact.wagner_jones(0.0) == pytest.approx(0.5, abs=1e-15)
    assert exact.wagner_jones(2000.0) == pytest.approx(1.0, abs=1e-15)
    s = np.linspace(0.0, 100.0, 201)
    phi = exact.wagner_jones(s)
    assert np.all(np.diff(phi) > 0.0)                  # lift builds monotonically
    # Hand value at s = 10: 1 - 0.165 e^-0.455 - 0.335 e^-3
    # = 1 - 0.165·0.6344480 - 0.335·0.0497871 = 1 - 0.1046839 - 0.0166787
    # = 0.8786374.
    assert exact.wagner_jones(10.0) == pytest.approx(0.8786374, abs=5e-7)


def test_theodorsen_function():
    # Theodorsen 1935, NACA Report 496; tabulated F, G (Bisplinghoff, Ashley & Halfman 1955,
    # Aeroelasticity; values from memory, 4 digits): C(0.1) = 0.8319 - 0.1723i,
    # C(0.5) = 0.5979 - 0.1507i, C(1) = 0.5394 - 0.1003i.
    c = exact.theodorsen(np.array([0.1, 0.5, 1.0]))
    np.testing.assert_allclose(c.real, [0.8319, 0.5979, 0.5394], atol=6e-5)
    np.testing.assert_allclose(c.imag, [-0.1723, -0.1507, -0.1003], atol=6e-5)
    # the limits: C -> 1 as k -> 0 (quasi-steady), C -> 1/2 as k -> infinity
    assert abs(exact.theodorsen(1e-6) - 1.0) < 1e-4
    assert abs(exact.theodorsen(1e4) - 0.5) < 1e-4


def test_wagner_from_theodorsen():
    # Phi(0) = 1/2 and Phi -> 1 (Wagner 1925); lift builds monotonically.
    s = np.array([0.0, 0.5, 1.0, 2.0, 4.0, 8.0, 12.0, 30.0, 100.0])
    phi = exact.wagner(s)
    assert phi[0] == 0.5
    assert np.all(np.diff(phi) > 0.0)
    assert 0.985 < phi[-1] < 1.0
    # Jones's approximation (Jones 1940, NACA Report 681, memory) stays within 0.7 % of the
    # final lift of the function it approximates over 0 <= s <= 30 (measured: 0.65 % at s = 1
    # and s = 6; a fit of two exponentials to the exact function).
    assert np.max(np.abs(phi[:-1] - exact.wagner_jones(s[:-1]))) < 0.007
    # Jones's approximation decays exponentially, the exact function algebraically: far from the
    # start they part (the exact lift is 1 % short of the final lift at s = 100).
    assert exact.wagner_jones(100.0) - phi[-1] > 0.005


def test_kussner_from_sears():
    """Küssner's function computed from Sears's function (Sears 1941; exact.kussner)."""
    s = np.array([0.0, 0.5, 1.0, 2.0, 4.0, 8.0, 12.0, 30.0, 60.0])
    psi = exact.kussner(s)
    assert psi[0] == 0.0
    assert np.all(np.diff(psi) > 0.0)                   # the lift builds monotonically
    assert 0.97 < psi[-1] < 1.0                         # and slowly (algebraically) nears 1
    # Near the start psi follows sqrt(2 s)/pi, the step response of Sears's function's
    # high-frequency limit e^(i(k - pi/4))/sqrt(2 pi k) (derived); the next term is of order s.
    small = np.array([1e-4, 1e-3])
    np.testing.assert_allclose(exact.kussner(small), np.sqrt(2.0 * small) / np.pi, rtol=0.02)
    # Sears & Sparks's two-exponential fit (Sears & Sparks 1941, J. Aeronaut. Sci. 9; from
    # memory) approximates it, loosely near the start (measured: largest departure 0.095 at
    # s = 0.2, 0.04 at s = 1). Bounds ours: no accuracy is stated with the fit that we can cite.
    fine = np.concatenate([np.linspace(0.05, 1.0, 20), s[1:]])
    gap = np.abs(exact.kussner(fine) - exact.kussner_sears_sparks(fine))
    assert gap.max() < 0.1
    assert gap[fine >= 1.0].max() < 0.05
    # Sears's function at zero frequency is the steady lift, 1 (Sears 1941).
    assert abs(exact.sears(1e-8) - 1.0) < 1e-6


def test_one_minus_cosine_gust_lift_is_duhamels_integral_of_kussner():
    """Against the same integral by Gauss-Legendre quadrature in u = sqrt(s - sigma), in which
    psi is smooth (derived), at three distances; zero at the start, positive after it, and the
    peak comes after the gust's own peak at half its length (the lift lags the gust)."""
    g = 10.0
    stations = np.array([3.0, 7.0, 12.0])
    s = np.linspace(0.0, 30.0, 61)
    lift = exact.one_minus_cosine_gust_lift(np.concatenate([stations, s]), g)
    u, w = np.polynomial.legendre.leggauss(16)
    for x, value in zip(stations, lift):
        lo, hi = np.sqrt(x - min(x, g)), np.sqrt(x)
        root = 0.5 * (hi - lo) * u + 0.5 * (hi + lo)
        sigma = x - root ** 2
        integrand = np.pi / g * np.sin(2 * np.pi * sigma / g) * exact.kussner(root ** 2) * 2 * root
        assert value == pytest.approx(0.5 * (hi - lo) * float(w @ integrand), abs=1e-4)
    lift = lift[len(stations):]
    assert lift[0] == 0.0 and np.all(lift[1:] > 0.0)
    assert s[np.argmax(lift)] > g / 2


# ---------------------------------------------------------------- momentum theory

def test_hover_momentum_theory_worked_numbers():
    # Momentum theory (Rankine-Froude; Leishman 2006), by hand: T = 2000 N,
    # ρ = 1 kg/m³, A = 10 m²: v_i = √(2000/20) = 10 m/s, P = 20 kW.
    assert exact.hover_induced_velocity(2000.0, 1.0, 10.0) == pytest.approx(10.0, rel=1e-15)
    assert exact.hover_ideal_power(2000.0, 1.0, 10.0) == pytest.approx(20000.0, rel=1e-15)
    # T = 5000 N, ρ = 1.225, A = π·3² = 28.2743 m²: v_i = √(5000/69.272) = 8.4958 m/s.
    v_i = exact.hover_induced_velocity(5000.0, 1.225, np.pi * 9.0)
    assert v_i == pytest.approx(8.4958, rel=1e-4)   # 5 digits by hand
    assert exact.hover_ideal_power(0.0, 1.2, 3.0) == 0.0


def test_figure_of_merit_consistent_with_ideal_power():
    # Derived: FM = C_T^(3/2)/(√2 C_P) equals P_ideal/P for any rotor; a rotor
    # needing exactly the ideal power has FM = 1.
    rho, radius, omega, thrust, power = 1.2, 2.5, 40.0, 3000.0, 30000.0
    area = np.pi * radius ** 2
    tip = omega * radius
    ct = thrust / (rho * area * tip ** 2)
    cp = power / (rho * area * tip ** 3)
    fm = exact.figure_of_merit(ct, cp)
    assert fm == pytest.approx(exact.hover_ideal_power(thrust, rho, area) / power, rel=1e-13)
    assert exact.figure_of_merit(ct, ct ** 1.5 / math.sqrt(2.0)) == pytest.approx(1.0, rel=1e-15)


def test_froude_efficiency():
    # Derived from actuator-disk momentum theory (Froude 1889): T = 2ρA(V+w)w
    # solved for the added velocity w, η = V/(V + w); versus the C_T, J form.
    rho, diameter, n, v, thrust = 1.2, 2.0, 20.0, 30.0, 2000.0
    area = np.pi * diameter ** 2 / 4.0
    w = (-v + math.sqrt(v * v + 2.0 * thrust / (rho * area))) / 2.0
    ct = thrust / (rho * n ** 2 * diameter ** 4)
    j = v / (n * diameter)
    assert exact.froude_efficiency(ct, j) == pytest.approx(v / (v + w), rel=1e-13)
    # Limits: no thrust is lossless; no forward speed, no useful power.
    assert exact.froude_efficiency(0.0, 0.5) == 1.0
    assert exact.froude_efficiency(0.1, 0.0) == 0.0
    eta = exact.froude_efficiency(0.1, np.array([0.2, 0.5, 1.0, 2.0]))
    assert np.all(np.diff(eta) > 0.0) and np.all(eta < 1.0)


def test_betz_limit():
    # Betz 1920 (published): C_P ≤ 16/27; derived as the maximum of
    # 4a(1-a)² over the axial induction factor a.
    assert exact.BETZ_LIMIT == pytest.approx(0.5925926, abs=5e-8)
    best = minimize_scalar(lambda a: -4.0 * a * (1.0 - a) ** 2, bounds=(0.0, 0.5),
                           method="bounded", options={"xatol": 1e-10})
    assert -best.fun == pytest.approx(exact.BETZ_LIMIT, rel=1e-12)


# ---------------------------------------------------------------- bad input

BAD_CALLS = [
    (lambda: exact.ring_velocity([[0, 0, 0]], -1.0, 1.0), r"radius.*-1"),
    (lambda: exact.ring_velocity([0, 0, 0], 1.0, 1.0), r"points.*\(N, 3\)"),
    (lambda: exact.ring_velocity([[0, 0, 0]], 1.0, float("nan")), r"circulation.*nan"),
    (lambda: exact.ring_velocity([[0, 0, 0]], 1.0, [1.0, 2.0]), r"circulation.*single"),
    (lambda: exact.ring_velocity([[0, 0, 0]], 1.0, 1.0, center=(0, 0)), r"center.*\(3,\)"),
    (lambda: exact.ring_velocity([[0, 0, 0]], 1.0, 1.0, axis=(0, 0, 0)), r"axis.*non-zero"),
    (lambda: exact.segment_velocity([[0, 0, 0]], (1, 1, 1), (1, 1, 1), 1.0), r"end.*differ"),
    (lambda: exact.segment_velocity([[0, np.inf, 0]], (0, 0, 0), (1, 0, 0), 1.0),
     r"points\[0, 1\] = inf"),
    (lambda: exact.ring_speed(1.0, 1.0, 0.1, core="rankine"), r"core.*'uniform'.*'rankine'"),
    (lambda: exact.ring_speed(1.0, 1.0, -0.1), r"core_radius.*positive.*-0.1"),
    (lambda: exact.ring_speed(1.0, 1.0, 2.0), r"core_radius.*smaller than radius"),
    (lambda: exact.ring_speed_particles(1.0, 1.0, 0.1, "singular"), r"kernel.*'singular'"),
    (lambda: exact.ring_speed_particles(1.0, 1.0, 0.1, filled="yes"), r"filled.*'yes'"),
    (lambda: exact.lamb_oseen_velocity([0.1, -1.0], 1.0, 1e-5, 1.0), r"^r must.*r\[1\] = -1"),
    (lambda: exact.lamb_oseen_velocity(0.1, 1.0, 1e-5, 0.0), r"time.*positive"),
    (lambda: exact.lamb_oseen_velocity(np.ones(3), 1.0, 1e-5, np.ones(2)),
     r"r \(3,\).*time \(2,\)"),
    (lambda: exact.lamb_oseen_peak(1.0, -1e-5, 1.0), r"viscosity.*-1e-05"),
    (lambda: exact.elliptic_wing_lift_slope(0.0), r"aspect_ratio.*positive"),
    (lambda: exact.elliptic_wing_induced_drag("high", 6.0), r"lift_coefficient.*'high'"),
    (lambda: exact.hover_induced_velocity(-5.0, 1.2, 3.0), r"thrust.*-5"),
    (lambda: exact.hover_ideal_power(5.0, 0.0, 3.0), r"density.*positive"),
    (lambda: exact.figure_of_merit(0.005, 0.0), r"power_coefficient"),
    (lambda: exact.froude_efficiency(0.1, -0.2), r"advance_ratio.*-0.2"),
    (lambda: exact.wagner_jones(-1.0), r"^s must.*-1"),
    (lambda: exact.wagner([1.0, -2.0]), r"^s must.*s\[1\] = -2"),
    (lambda: exact.theodorsen(0.0), r"^k must be positive"),
    (lambda: exact.kussner(-1.0), r"^s must be zero or positive"),
    (lambda: exact.one_minus_cosine_gust_lift(1.0, 0.0), r"^length must be finite and positive"),
]


@pytest.mark.parametrize("call, message", BAD_CALLS)
def test_bad_input_names_the_argument(call, message):
    with pytest.raises(WakesError, match=message) as info:
        call()
    assert isinstance(info.value, ValueError)
