"""Direct induction against independent references and closed forms."""

import numpy as np
import pytest
import wakes
from scipy import integrate
from wakes import exact

from .reference import CORE_NAMES, KERNEL_NAMES, particle_field, q_and_dq

RNG_SEED = 20261201


def random_particles(n, kernel, seed=RNG_SEED, sigma=(0.05, 0.2)):
    rng = np.random.default_rng(seed)
    x = rng.uniform(-1, 1, (n, 3))
    a = rng.normal(size=(n, 3)) * 1e-2
    s = rng.uniform(*sigma, n)
    return wakes.Particles(x, a, s, kernel=kernel)


def rel(a, b):
    return np.linalg.norm(a - b) / np.linalg.norm(b)


@pytest.mark.parametrize("kernel", KERNEL_NAMES)
def test_particles_match_independent_numpy_sum(kernel):
    """Velocity and gradient equal a plain numpy sum to 1e-12 relative.

    Targets include the sources themselves (self-pairs) and fresh points;
    the reference is written from zeta(rho) (Winckelmans & Leonard 1993).
    """
    p = random_particles(300, kernel)
    rng = np.random.default_rng(1)
    targets = np.vstack([p.positions, rng.uniform(-1.2, 1.2, (100, 3))])
    u, g = wakes.induce(p, targets, gradient=True)
    u_ref, g_ref = particle_field(p.positions, p.strengths, p.radii, targets, kernel)
    assert rel(u, u_ref) < 1e-12
    assert rel(g, g_ref) < 1e-12
    assert rel(wakes.induce(p, targets), u) < 1e-13  # velocity-only driver agrees


@pytest.mark.parametrize("kernel", ["singular", "winckelmans-leonard"])
def test_gradient_over_several_source_blocks(kernel):
    """The gradient drivers sum sources in blocks (direct.GRADIENT_BLOCK in
    three passes, or direct.SOURCE_BLOCK in one, as the machine chose):
    two full blocks and a tail of 5 (not a multiple of the vector width)
    agree with the numpy sum to 1e-12 relative, and a target on a source
    skips only that singular pair.
    """
    from wakes.induction import direct

    block = direct.GRADIENT_BLOCK if direct.GRADIENT_PASSES == 3 else direct.SOURCE_BLOCK
    n = 2 * block + 5
    p = random_particles(n, kernel, seed=9)
    rng = np.random.default_rng(2)
    targets = np.vstack([p.positions[::37], rng.uniform(-1.2, 1.2, (20, 3))])
    u, g = wakes.induce(p, targets, gradient=True)
    u_ref, g_ref = particle_field(p.positions, p.strengths, p.radii, targets, kernel)
    assert rel(u, u_ref) < 1e-12
    assert rel(g, g_ref) < 1e-12


@pytest.mark.parametrize("kernel", KERNEL_NAMES[1:])
def test_kernel_normalisation(kernel):
    """q(rho) -> 1 at infinity, and q equals 4 pi int zeta s^2 ds (definition)."""
    for rho in (0.3, 1.0, 2.5, 7.0):
        integral, _ = integrate.quad(lambda s: q_and_dq(np.array(s), kernel)[1], 0, rho)
        assert integral == pytest.approx(q_and_dq(np.array(rho), kernel)[0], rel=1e-10)
    assert q_and_dq(np.array(1e4), kernel)[0] == pytest.approx(1.0, abs=1e-6)


@pytest.mark.parametrize("kernel", KERNEL_NAMES)
def test_particle_gradient_against_finite_differences(kernel):
    p = random_particles(50, kernel, seed=3)
    x0 = np.array([[0.13, -0.21, 0.08], [0.5, 0.4, -0.3]])
    _, g = wakes.induce(p, x0, gradient=True)
    h = 1e-5
    for k in range(3):
        e = np.zeros(3)
        e[k] = h
        du = (wakes.induce(p, x0 + e) - wakes.induce(p, x0 - e)) / (2 * h)
        # central differences: error ~ h^2 u''' ~ 1e-10 relative to the field scale
        assert np.allclose(g[:, :, k], du, rtol=1e-6, atol=1e-8 * np.abs(g).max())


@pytest.mark.parametrize("kernel", KERNEL_NAMES[1:])
def test_regularized_far_field_tends_to_singular(kernel):
    """Far from sigma every kernel's q -> 1 (RM decays slowest, as 1 - 1.5/rho^2)."""
    rng = np.random.default_rng(4)
    x = rng.uniform(-0.1, 0.1, (20, 3))
    a = rng.normal(size=(20, 3))
    reg = wakes.Particles(x, a, 1e-3, kernel=kernel)
    sing = wakes.Particles(x, a, 1e-3, kernel="singular")
    far = np.array([[5.0, 3.0, -2.0], [0.0, 0.0, 8.0]])
    u, g = wakes.induce(reg, far, gradient=True)
    us, gs = wakes.induce(sing, far, gradient=True)
    assert rel(u, us) < 1e-6 and rel(g, gs) < 1e-6


def test_singular_kernel_skips_self_pair_and_gaussian_is_finite_at_zero():
    x = np.array([[0.0, 0.0, 0.0], [1.0, 0.0, 0.0]])
    a = np.array([[0.0, 0.0, 1.0], [0.0, 0.0, 1.0]])
    u = wakes.induce(wakes.Particles(x, a, 0.1, kernel="singular"), x)
    # each sees only the other: |u| = |alpha|/(4 pi d^2)
    assert np.allclose(np.abs(u[:, 1]), 1 / (4 * np.pi))
    assert np.all(np.isfinite(u))


# ---------------------------------------------------------------- filaments

def ring_polyline(n, radius=1.0):
    t = np.linspace(0, 2 * np.pi, n, endpoint=False)
    return np.stack([radius * np.cos(t), radius * np.sin(t), np.zeros(n)], axis=1)


def test_segment_test_value():
    """Gamma = 1, (0,0,0)->(1,0,0), at (0.5, 1, 0): u_z = 0.07117625.

    Derived from the straight-segment law (Katz & Plotkin 2001).
    """
    f = wakes.Filaments.from_polyline([[0, 0, 0], [1, 0, 0]], 1.0, 1e-3, core="singular")
    u = wakes.induce(f, [[0.5, 1.0, 0.0]])
    assert u[0, 2] == pytest.approx(0.07117625, abs=5e-9)
    assert np.allclose(u[0, :2], 0.0, atol=1e-15)


def test_segment_against_quadrature_of_biot_savart():
    """The closed form equals scipy quad of Gamma/(4pi) dl x r / |r|^3."""
    a, b = np.array([0.2, -0.3, 0.1]), np.array([1.1, 0.4, -0.5])
    f = wakes.Filaments.from_polyline([a, b], 2.5, 1e-3, core="singular")
    for x in ([0.7, 0.9, 0.3], [-1.0, 0.2, 2.0], [0.65, 0.15, -0.2]):
        x = np.array(x)

        def integrand(s, k, x=x):
            p = a + s * (b - a)
            r = x - p
            return (2.5 / (4 * np.pi) * np.cross(b - a, r) / np.linalg.norm(r) ** 3)[k]

        ref = [integrate.quad(integrand, 0, 1, args=(k,), epsabs=1e-14, epsrel=1e-13)[0]
               for k in range(3)]
        assert wakes.induce(f, [x])[0] == pytest.approx(ref, rel=1e-10, abs=1e-13)


def test_closed_polyline_ring_matches_elliptic_integral_field():
    """Polyline ring -> Lamb's elliptic-integral field (Lamb 1932, section 161).

    A polygon inscribed in the circle converges at second order in the
    segment count; below 1e-5 relative for 2048 segments.
    """
    rng = np.random.default_rng(7)
    pts = np.column_stack([rng.uniform(0.0, 2.0, 40), rng.uniform(-1, 1, 40),
                           rng.uniform(-1.0, 1.0, 40)])
    far = np.hypot(np.hypot(pts[:, 0], pts[:, 1]) - 1.0, pts[:, 2]) > 0.2
    pts = pts[far]
    ref = exact.ring_velocity(pts, 1.0, 1.0)
    errs = []
    for n in (256, 512, 1024, 2048):
        f = wakes.Filaments.from_polyline(ring_polyline(n), 1.0, 1e-3, closed=True,
                                          core="singular")
        errs.append(rel(wakes.induce(f, pts), ref))
    orders = np.log2(np.array(errs[:-1]) / np.array(errs[1:]))
    assert errs[-1] < 1e-5
    assert np.all(np.abs(orders - 2.0) < 0.1), orders


@pytest.mark.parametrize("core", CORE_NAMES)
def test_core_profile_of_a_long_segment(core):
    """Swirl at distance h from the middle of a long segment = Gamma/(2 pi h) F(h).

    F per core model (Vatistas, Kozel & Mih 1991; Lamb-Oseen constant alpha, the root
    of 1 + 2 alpha = e^alpha, 1.25643 in Devenport et al. 1996). The segment is 2e4 core radii long,
    so the finite-length correction is below 1e-8.
    """
    rc, gam, half = 0.1, 1.3, 1000.0
    f = wakes.Filaments.from_polyline([[0, 0, -half], [0, 0, half]], gam, rc, core=core)
    h = np.array([0.03, 0.1, 0.25, 0.6])
    u = wakes.induce(f, np.column_stack([h, 0 * h, 0 * h]))
    factor = {
        "singular": np.ones_like(h),
        "rankine": np.minimum(h**2 / rc**2, 1.0),
        "lamb-oseen": 1 - np.exp(-exact.LAMB_OSEEN_ALPHA * h**2 / rc**2),
        "scully": h**2 / (rc**2 + h**2),
        "vatistas2": h**2 / np.sqrt(rc**4 + h**4),
    }[core]
    straight = gam / (2 * np.pi * h) * (1 - 0.5 * (h / half) ** 2)  # finite length
    assert np.allclose(u[:, 1], straight * factor, rtol=1e-7)
    assert np.allclose(u[:, [0, 2]], 0.0, atol=1e-14)


def test_vatistas_peak_and_target_on_singular_line():
    """Vatistas n=2 peak 2^(-1/2) Gamma/(2 pi rc) at rc (Vatistas et al. 1991);
    a target on a singular segment's line (or its extension) gets zero."""
    f = wakes.Filaments.from_polyline([[0, 0, -500], [0, 0, 500]], 1.0, 0.2, core="vatistas2")
    u = wakes.induce(f, [[0.2, 0.0, 0.0]])
    assert u[0, 1] == pytest.approx(2**-0.5 / (2 * np.pi * 0.2), rel=1e-6)
    s = wakes.Filaments.from_polyline([[0, 0, 0], [0, 0, 1]], 1.0, 0.2, core="singular")
    u, g = wakes.induce(s, [[0, 0, 0.5], [0, 0, 2.0], [0, 0, 0.0]], gradient=True)
    assert np.all(u == 0.0) and np.all(g == 0.0)


@pytest.mark.parametrize("core", CORE_NAMES)
def test_segment_gradient_against_finite_differences(core):
    rng = np.random.default_rng(11)
    nodes = rng.uniform(-1, 1, (12, 3))
    f = wakes.Filaments.from_polyline(nodes, rng.normal(size=11), 0.3, core=core)
    x0 = np.array([[0.11, 0.27, -0.05], [0.6, -0.4, 0.33]])
    _, g = wakes.induce(f, x0, gradient=True)
    h = 1e-6
    for k in range(3):
        e = np.zeros(3)
        e[k] = h
        du = (wakes.induce(f, x0 + e) - wakes.induce(f, x0 - e)) / (2 * h)
        assert np.allclose(g[:, :, k], du, rtol=1e-5, atol=1e-7 * np.abs(g).max())


@pytest.mark.parametrize("core", CORE_NAMES[1:])
def test_cored_segment_is_finite_on_its_line_and_nodes(core):
    f = wakes.Filaments.from_polyline([[0, 0, 0], [1, 0, 0], [1, 1, 0]], 1.0, 0.1, core=core)
    u, g = wakes.induce(f, f.nodes, gradient=True)
    assert np.all(np.isfinite(u)) and np.all(np.isfinite(g))
    u2, g2 = wakes.induce(f, [[0.5, 0, 0], [0.5, 1e-9, 0]], gradient=True)
    assert np.all(np.isfinite(u2)) and np.allclose(u2[0], u2[1], atol=1e-6)


def test_lamb_oseen_core_series_branch_is_continuous():
    """The Taylor branch near the core centre joins the closed form smoothly."""
    rc = 1.0
    f = wakes.Filaments.from_polyline([[0, 0, -1e3], [0, 0, 1e3]], 1.0, rc, core="lamb-oseen")
    # x = alpha h^2/rc^2 (alpha = 1.2564312, the root of 1 + 2 alpha = e^alpha) crosses 0.25
    # at h = 0.44608
    h = np.array([0.446, 0.44608, 0.44616])
    u, g = wakes.induce(f, np.column_stack([h, 0 * h, 0 * h]), gradient=True)
    ref = (1 - np.exp(-exact.LAMB_OSEEN_ALPHA * h**2)) / (2 * np.pi * h)
    assert np.allclose(u[:, 1], ref, rtol=1e-12)


def test_mixed_sources_sum():
    p = random_particles(40, "gaussian")
    f = wakes.Filaments.from_polyline(ring_polyline(30), 1.0, 0.05, closed=True)
    x = np.random.default_rng(5).uniform(-1, 1, (25, 3))
    u, g = wakes.induce([p, f], x, gradient=True)
    up, gp = wakes.induce(p, x, gradient=True)
    uf, gf = wakes.induce(f, x, gradient=True)
    assert np.allclose(u, up + uf, rtol=1e-14, atol=1e-16)
    assert np.allclose(g, gp + gf, rtol=1e-14, atol=1e-16)


def test_gradient_passes_chosen_from_the_target():
    """The pass count follows the CPU numba compiles for, and is the one
    the loaded drivers were built with: one pass where AVX-512 gives 32
    vector registers, three on AVX2's 16 (feature strings as LLVM writes
    them; the choice must not depend on the CPU name, e.g. an Intel core
    that prefers 256-bit vectors).
    """
    from wakes.induction import _jit, direct

    avx2 = "+avx,+avx2,+fma,-avx512f,-avx512vl"
    avx512 = "+avx,+avx2,+fma,+avx512f,+avx512vl"
    assert _jit.gradient_passes(_jit.machine_target("haswell", avx2)) == 3
    assert _jit.gradient_passes(_jit.machine_target("znver3", avx2)) == 3
    for cpu in ("skylake-avx512", "icelake-server", "znver4"):
        assert _jit.gradient_passes(_jit.machine_target(cpu, avx512)) == 1
    assert direct.TARGET == _jit.machine_target()
    assert direct.GRADIENT_PASSES == _jit.gradient_passes(direct.TARGET)


_AVX2_CHILD = """
import json, sys, numpy as np, wakes
from wakes.induction import direct
p = wakes.Particles(*[np.asarray(v) for v in json.loads(sys.stdin.read())],
                    kernel="winckelmans-leonard")
u, g = wakes.induce(p, p.positions, gradient=True, method="direct")
print(json.dumps([direct.GRADIENT_PASSES, u.tolist(), g.tolist()]))
"""


def test_three_pass_gradient_on_an_avx2_target(tmp_path):
    """With every AVX-512 feature off (as on an AVX2 machine; any x86 CPU
    that runs this suite has AVX2's features, or fewer) a fresh process
    chooses three passes, and its gradient equals this process's to
    round-off (1e-13 relative: the summation order differs). Compiles one
    driver in the child, with its own numba cache.
    """
    import json
    import os
    import subprocess
    import sys

    import llvmlite.binding as ll

    feats = ll.get_host_cpu_features()
    if not feats.get("avx2", False):
        pytest.skip("needs an x86 CPU with AVX2 (the oldest target the drivers are tuned for)")
    for k in feats:
        if k.startswith("avx512"):
            feats[k] = False
    root = os.path.dirname(os.path.dirname(os.path.abspath(wakes.__file__)))
    env = dict(os.environ, NUMBA_CPU_FEATURES=feats.flatten(), NUMBA_CPU_NAME="haswell",
               NUMBA_CACHE_DIR=str(tmp_path),
               PYTHONPATH=os.pathsep.join([root, os.environ.get("PYTHONPATH", "")]))
    p = random_particles(600, "winckelmans-leonard", seed=11)
    data = json.dumps([p.positions.tolist(), p.strengths.tolist(), p.radii.tolist()])
    out = subprocess.run([sys.executable, "-c", _AVX2_CHILD], input=data, env=env,
                         capture_output=True, text=True, check=True, timeout=600)
    passes, u_child, g_child = json.loads(out.stdout)
    u, g = wakes.induce(p, p.positions, gradient=True, method="direct")
    assert passes == 3
    assert rel(np.array(u_child), u) < 1e-13
    assert rel(np.array(g_child), g) < 1e-13
