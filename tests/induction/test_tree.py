"""Treecode: against direct summation, its parts against closed forms, its inputs.

Accuracy is the relative L2 error over all targets against direct summation
of the same sources (the measure of Lindsay & Krasny 2001, J. Comput. Phys.
172): the velocity within the tolerance, the gradient within ten times it.
Targets are the sources themselves (particles) or the filament nodes plus
points around them, the use a wake simulation makes of the tree.
"""

import numpy as np
import pytest
import wakes
from hypothesis import given
from hypothesis import strategies as st
from wakes.errors import InputError
from wakes.induction import tree_build, tree_expansion, tree_params, tree_traverse
from wakes.induction.smoothing import CORE_MODELS, PARTICLE_KERNELS

from .reference import CORE_NAMES, KERNEL_NAMES

RNG_SEED = 20261202
N_PARTICLES = 3000   # a real tree: ~50 leaves of up to 64, far and near pairs
N_SEGMENTS = 1500


def rel(a, b):
    return np.linalg.norm(a - b) / np.linalg.norm(b)


# ------------------------------------------------------------------ scenarios

def uniform_cube(n, kernel, seed=RNG_SEED):
    """Random points and strengths in a unit cube; radii vary in [h, 2h]
    (h the mean spacing), so the algebraic kernels take the singular far
    field beyond a kernel-dependent reach."""
    rng = np.random.default_rng(seed)
    h = n ** (-1 / 3)
    return wakes.Particles(rng.uniform(0, 1, (n, 3)), rng.normal(size=(n, 3)) / n,
                           rng.uniform(h, 2 * h, n), kernel=kernel)


def rolled_sheet(n, kernel, seed=RNG_SEED):
    """A thin sheet rolled into a spiral of six turns, r ~ theta^(-2/3) as
    in Kaden's similarity roll-up, with axial vorticity; uniform radius."""
    rng = np.random.default_rng(seed)
    span = rng.uniform(-1, 1, n)
    th = rng.uniform(0, 6 * np.pi, n)
    r = 0.3 * (1 + th) ** (-2 / 3)
    x = np.column_stack([span, r * np.cos(th), r * np.sin(th)])
    x += rng.normal(scale=0.002, size=x.shape)
    a = np.zeros((n, 3))
    a[:, 0] = (1 + th) ** (-1 / 3) / n
    return wakes.Particles(x, a, 0.01, kernel=kernel)


def particle_ring(n, kernel, seed=RNG_SEED):
    """A vortex ring (R = 1) with a core of radius 0.1 filled with particles."""
    rng = np.random.default_rng(seed)
    t = rng.uniform(0, 2 * np.pi, n)
    rr = 0.1 * np.sqrt(rng.uniform(0, 1, n))
    ph = rng.uniform(0, 2 * np.pi, n)
    big = 1 + rr * np.cos(ph)
    x = np.column_stack([big * np.cos(t), big * np.sin(t), rr * np.sin(ph)])
    a = np.column_stack([-np.sin(t), np.cos(t), 0 * t]) * (2 * np.pi / n)
    return wakes.Particles(x, a, 0.03, kernel=kernel)


def helix_lines(n_per, blades=3, turns=4.0, pitch=0.3):
    """Tip-vortex centre lines of a three-bladed rotor wake (R = 1)."""
    t = np.linspace(0, turns * 2 * np.pi, n_per)
    return [np.column_stack([np.cos(t + 2 * np.pi * b / blades),
                             np.sin(t + 2 * np.pi * b / blades),
                             -pitch * t / (2 * np.pi)]) for b in range(blades)]


def helical_wake(n, kernel, seed=RNG_SEED):
    """Particles along three helical tip vortices, scattered in their cores."""
    rng = np.random.default_rng(seed)
    lines = helix_lines(n // 3)
    x = np.concatenate([c + rng.normal(scale=0.02, size=c.shape) for c in lines])
    a = np.concatenate([np.gradient(c, axis=0) for c in lines])
    return wakes.Particles(x, a, 0.03, kernel=kernel)


def helical_filaments(n, core):
    """Three helical tip-vortex filaments of n/3 segments each."""
    per = n // 3
    nodes = np.concatenate(helix_lines(per + 1))
    seg = np.concatenate([np.column_stack([np.arange(per), np.arange(per) + 1]) + b * (per + 1)
                          for b in range(3)])
    return wakes.Filaments(nodes, seg, 1.0, 0.02, core=core)


def ring_filament(n, core):
    t = np.linspace(0, 2 * np.pi, n, endpoint=False)
    return wakes.Filaments.from_polyline(np.column_stack([np.cos(t), np.sin(t), 0 * t]), 1.0,
                                         0.01, closed=True, core=core)


PARTICLE_CASES = {"cube": uniform_cube, "sheet": rolled_sheet, "ring": particle_ring,
                  "helix": helical_wake}
FILAMENT_CASES = {"ring": ring_filament, "helix": helical_filaments}


def filament_targets(f, seed=RNG_SEED):
    """The nodes and as many points scattered within 0.1 of them."""
    rng = np.random.default_rng(seed)
    return np.vstack([f.nodes, f.nodes + rng.normal(scale=0.05, size=f.nodes.shape)])


# ------------------------------------------------------ tree against direct

@pytest.mark.parametrize("kernel", KERNEL_NAMES)
@pytest.mark.parametrize("case", sorted(PARTICLE_CASES))
def test_tree_meets_tolerance_for_particles(case, kernel):
    src = PARTICLE_CASES[case](N_PARTICLES, kernel)
    x = src.positions
    u0, g0 = wakes.induce(src, x, gradient=True)
    for tol in (1e-3, 1e-6):
        u, g = wakes.induce(src, x, gradient=True, method="tree", tolerance=tol)
        assert rel(u, u0) <= tol, (tol, rel(u, u0))
        assert rel(g, g0) <= 10 * tol, (tol, rel(g, g0))


@pytest.mark.parametrize("core", CORE_NAMES)
@pytest.mark.parametrize("case", sorted(FILAMENT_CASES))
def test_tree_meets_tolerance_for_filaments(case, core):
    src = FILAMENT_CASES[case](N_SEGMENTS, core)
    x = filament_targets(src)
    u0, g0 = wakes.induce(src, x, gradient=True)
    for tol in (1e-3, 1e-6):
        u, g = wakes.induce(src, x, gradient=True, method="tree", tolerance=tol)
        assert rel(u, u0) <= tol, (tol, rel(u, u0))
        assert rel(g, g0) <= 10 * tol, (tol, rel(g, g0))


def test_velocity_only_equals_velocity_of_gradient_run():
    src = rolled_sheet(N_PARTICLES, "winckelmans-leonard")
    u = wakes.induce(src, src.positions, method="tree", tolerance=1e-6)
    u2, _ = wakes.induce(src, src.positions, gradient=True, method="tree", tolerance=1e-6)
    assert rel(u, u2) < 1e-14


def test_targets_apart_from_sources():
    """Targets on a plane beside the particle ring (a separate target tree)."""
    src = particle_ring(N_PARTICLES, "gaussian")
    g1, g2 = np.meshgrid(np.linspace(-1.5, 1.5, 40), np.linspace(-1.5, 1.5, 40))
    x = np.column_stack([g1.ravel(), 0.3 + 0 * g1.ravel(), g2.ravel()])
    u0, d0 = wakes.induce(src, x, gradient=True)
    u, d = wakes.induce(src, x, gradient=True, method="tree", tolerance=1e-6)
    assert rel(u, u0) <= 1e-6 and rel(d, d0) <= 1e-5


def test_mixed_sources_equal_sum_of_separate_evaluations():
    p = helical_wake(N_PARTICLES, "gaussian")
    f = helical_filaments(N_SEGMENTS, "lamb-oseen")
    x = np.vstack([p.positions, f.nodes])
    kw = dict(gradient=True, method="tree", tolerance=1e-6)
    u, g = wakes.induce([p, f], x, **kw)
    up, gp = wakes.induce(p, x, **kw)
    uf, gf = wakes.induce(f, x, **kw)
    # the two source trees contribute independently: equal up to summation order
    assert rel(u, up + uf) < 1e-12 and rel(g, gp + gf) < 1e-12
    u0, g0 = wakes.induce([p, f], x, gradient=True)
    assert rel(u, u0) <= 1e-6 and rel(g, g0) <= 1e-5


def test_collinear_cored_segments_on_their_own_line():
    """Targets on and beside a straight line of many short cored segments.

    Far along the line a segment's core factor still matters near its
    axis; the tube test must send those pairs to the exact law.
    """
    z = np.linspace(-5, 5, 2001)
    line = wakes.Filaments.from_polyline(np.column_stack([0 * z, 0 * z, z]), 1.0, 0.05,
                                         core="lamb-oseen")
    bent = wakes.Filaments.from_polyline(np.column_stack([0.3 * np.sin(z), 0 * z, z]), 1.0,
                                         0.05, core="lamb-oseen")
    for f in (line, bent):
        x = np.vstack([f.nodes, f.nodes + [0.02, 0.0, 0.0], f.nodes + [0.2, 0.1, 0.0]])
        u0, g0 = wakes.induce(f, x, gradient=True)
        u, g = wakes.induce(f, x, gradient=True, method="tree", tolerance=1e-6)
        assert rel(u, u0) <= 1e-6 and rel(g, g0) <= 1e-5


@pytest.mark.slow
@pytest.mark.parametrize("kernel", ["gaussian", "winckelmans-leonard", "singular"])
def test_tree_at_tolerance_1e9(kernel):
    src = helical_wake(3000 if kernel == "gaussian" else 6000, kernel)
    u0, g0 = wakes.induce(src, src.positions, gradient=True)
    u, g = wakes.induce(src, src.positions, gradient=True, method="tree", tolerance=1e-9)
    assert rel(u, u0) <= 1e-9 and rel(g, g0) <= 1e-8


SWEEP = [(k, t) for k in ("winckelmans-leonard", "rosenhead-moore")
         for t in (1e-2, 1e-3, 1e-4, 1e-5, 1e-6, 1e-7, 1e-8)] + \
    [("gaussian", t) for t in (1e-2, 1e-5, 1e-8)]


@pytest.mark.slow
@pytest.mark.parametrize("kernel,tol", SWEEP)
def test_tree_every_tolerance_on_a_larger_cube(kernel, tol):
    """8,000 particles, uniform radius equal to the mean spacing: a smooth,
    weak near field makes the far field's share of the velocity large."""
    n = 8000
    rng = np.random.default_rng(RNG_SEED)
    src = wakes.Particles(rng.uniform(0, 1, (n, 3)), rng.normal(size=(n, 3)) / n,
                          n ** (-1 / 3), kernel=kernel)
    u0, g0 = _cached_direct(src)
    u, g = wakes.induce(src, src.positions, gradient=True, method="tree", tolerance=tol)
    assert rel(u, u0) <= tol and rel(g, g0) <= 10 * tol


_DIRECT_CACHE: dict = {}


def _cached_direct(src):
    key = (src.kernel, src.count)
    if key not in _DIRECT_CACHE:
        _DIRECT_CACHE[key] = wakes.induce(src, src.positions, gradient=True)
    return _DIRECT_CACHE[key]


# ------------------------------------------------------------- hypothesis

@given(seed=st.integers(0, 2**32 - 1), n=st.integers(1, 1500),
       kernel=st.sampled_from(KERNEL_NAMES), layout=st.sampled_from(
           ["cube", "coincident", "plane", "line", "sigma-spread"]))
def test_random_point_sets(seed, n, kernel, layout):
    """Random sets, targets = sources: finite and within tolerance.

    Layouts: uniform; half the points repeated (coincident points); all in
    one plane; all on one line; radii spread over three decades. Sets below
    MIN_TREE_SOURCES take the direct path; the rest build trees of up to
    ~25 leaves with far and near pairs.
    """
    rng = np.random.default_rng(seed)
    x = rng.uniform(-1, 1, (n, 3))
    sigma = np.full(n, 0.1)
    if layout == "coincident":
        x[n // 2:] = x[: n - n // 2]
    elif layout == "plane":
        x[:, 2] = 0.0
    elif layout == "line":
        x[:, 1:] = 0.0
    elif layout == "sigma-spread":
        sigma = 10 ** rng.uniform(-3, 0, n)
    src = wakes.Particles(x, rng.normal(size=(n, 3)), sigma, kernel=kernel)
    u, g = wakes.induce(src, x, gradient=True, method="tree", tolerance=1e-6)
    assert np.all(np.isfinite(u)) and np.all(np.isfinite(g))
    u0, g0 = wakes.induce(src, x, gradient=True)
    assert np.linalg.norm(u - u0) <= 1e-6 * np.linalg.norm(u0)
    assert np.linalg.norm(g - g0) <= 1e-5 * np.linalg.norm(g0)


@given(seed=st.integers(0, 2**32 - 1), core=st.sampled_from(CORE_NAMES),
       n=st.integers(1, 1200))
def test_random_filaments(seed, core, n):
    """A random walk of n segments with random circulation and core radii
    over a decade, evaluated at its nodes: finite and within tolerance."""
    rng = np.random.default_rng(seed)
    nodes = np.cumsum(rng.normal(scale=0.05, size=(n + 1, 3)), axis=0)
    f = wakes.Filaments.from_polyline(nodes, rng.normal(size=n),
                                      10 ** rng.uniform(-3, -2, n), core=core)
    u, g = wakes.induce(f, nodes, gradient=True, method="tree", tolerance=1e-6)
    assert np.all(np.isfinite(u)) and np.all(np.isfinite(g))
    u0, g0 = wakes.induce(f, nodes, gradient=True)
    assert np.linalg.norm(u - u0) <= 1e-6 * np.linalg.norm(u0)
    assert np.linalg.norm(g - g0) <= 1e-5 * np.linalg.norm(g0)


def test_one_point_leaves_at_one_spot_are_near():
    """Regression: a one-point leaf met itself with zero radius and zero
    distance, passed the opening test as far and gave NaN (found on a
    particle ring). The test is strict now: such a pair is near."""
    rng = np.random.default_rng(RNG_SEED)
    x = rng.uniform(-1, 1, (60, 3))
    order, (start, count, first, n_child, _) = tree_build.build_tree(
        *(np.ascontiguousarray(x[:, k]) for k in range(3)), 1)
    xs = x[order]
    center, radius = tree_build.point_cell_geometry(start, count, *(xs[:, k].copy()
                                                                    for k in range(3)))
    far_t, far_s, near_t, near_s = tree_traverse.dual_traverse(
        center, radius, count, first, n_child, center, radius, count, first, n_child,
        0.5, 0, tree_traverse.MAC_ONLY, np.zeros(len(start)), np.zeros((1, 3)), np.ones(1))
    assert len(far_t) > 0
    assert np.all(np.linalg.norm(center[far_t] - center[far_s], axis=1) > 0)
    leaves = np.flatnonzero(n_child == 0)
    assert set(leaves) <= {t for t, s in zip(near_t, near_s) if t == s}


# ------------------------------------------------------------ method choice

def test_auto_equals_the_method_it_picks(monkeypatch):
    src = particle_ring(N_PARTICLES, "winckelmans-leonard")
    x = src.positions
    direct_u = wakes.induce(src, x)
    tree_u = wakes.induce(src, x, method="tree", tolerance=1e-5)
    assert np.array_equal(wakes.induce(src, x, method="auto", tolerance=1e-5), direct_u)
    assert N_PARTICLES ** 2 < tree_params.auto_crossover_pairs(1e-5)
    monkeypatch.setattr(tree_params, "auto_crossover_pairs", lambda tol: N_PARTICLES ** 2)
    assert np.array_equal(wakes.induce(src, x, method="auto", tolerance=1e-5), tree_u)


def test_small_source_set_and_tiny_tolerance_fall_back_to_direct():
    """Documented: fewer than MIN_TREE_SOURCES elements, or a tolerance
    below MIN_TREE_TOLERANCE, are summed directly (exactly)."""
    small = particle_ring(tree_params.MIN_TREE_SOURCES - 1, "gaussian")
    x = np.random.default_rng(1).uniform(-1, 1, (50, 3))
    assert np.array_equal(wakes.induce(small, x, method="tree"), wakes.induce(small, x))
    big = particle_ring(N_PARTICLES, "gaussian")
    assert np.array_equal(wakes.induce(big, x, method="tree", tolerance=1e-12),
                          wakes.induce(big, x))


def test_one_tree_serves_when_sources_are_the_targets(monkeypatch):
    calls = []
    original = tree_build.build_tree

    def counting(*args):
        calls.append(args[0].shape[0])
        return original(*args)

    monkeypatch.setattr(tree_build, "build_tree", counting)
    src = particle_ring(N_PARTICLES, "gaussian")
    wakes.induce(src, src.positions, method="tree")
    assert calls == [N_PARTICLES]
    wakes.induce(src, src.positions + 1e-3, method="tree")
    assert calls == [N_PARTICLES] * 3


# ---------------------------------------------------------------- bad input

@pytest.mark.parametrize("tol", [0, 1, -1e-3, 1.5, float("nan"), float("inf"), "tight", None])
def test_tolerance_outside_open_unit_interval_is_rejected(tol):
    src = particle_ring(200, "gaussian")
    with pytest.raises(InputError, match="tolerance"):
        wakes.induce(src, src.positions, method="tree", tolerance=tol)


def test_unknown_method_is_rejected():
    src = particle_ring(200, "gaussian")
    with pytest.raises(InputError, match="method.*'tree'"):
        wakes.induce(src, src.positions, method="fmm")


@pytest.mark.parametrize("method", ["tree", "direct"])
def test_request_too_large_for_memory_fails_before_allocating(monkeypatch, method):
    monkeypatch.setattr(tree_params, "available_memory", lambda: 10_000)
    src = particle_ring(N_PARTICLES, "gaussian")
    with pytest.raises(InputError, match="targets.*GiB"):
        wakes.induce(src, src.positions, gradient=True, method=method)


# ------------------------------------------------------------------- parts

def test_octree_cells_partition_the_points():
    rng = np.random.default_rng(RNG_SEED)
    x = np.vstack([rng.uniform(0, 1, (5000, 3)), np.full((300, 3), 0.5)])  # + a clump
    order, (start, count, first, n_child, depth_ptr) = tree_build.build_tree(
        x[:, 0].copy(), x[:, 1].copy(), x[:, 2].copy(), 64)
    assert np.array_equal(np.sort(order), np.arange(len(x)))
    assert start[0] == 0 and count[0] == len(x)
    for c in np.flatnonzero(n_child):
        kids = np.arange(first[c], first[c] + n_child[c])
        assert 2 <= n_child[c] <= 8
        assert start[kids[0]] == start[c] and count[kids].sum() == count[c]
        assert np.all(start[kids[1:]] == start[kids[:-1]] + count[kids[:-1]])
    leaves = np.flatnonzero(n_child == 0)
    big = leaves[count[leaves] > 64]
    assert len(big) == 1 and count[big[0]] == 300  # only the coincident clump
    assert np.all(np.diff(depth_ptr) > 0) and depth_ptr[-1] == len(start)


def test_taylor_coefficients_match_closed_form_derivatives():
    """a_m = D^m G / m! for G = (|R|^2 + d^2)^(-1/2) (d = 0: 1/|R|) and
    (|R|^2 + d^2)^(-3/2), from the recurrence (Lindsay & Krasny 2001)."""
    tab = tree_expansion.expansion_tables(4)
    idx = {tuple(m): i for i, m in enumerate(tab["midx"])}
    rx, ry, rz = 0.7, -0.4, 1.1
    for d2 in (0.0, 0.3):
        for nu in (0.5, 1.5):
            s = rx * rx + ry * ry + rz * rz + d2
            a = np.zeros((tab["midx"].shape[0] + 1, 1))
            a[0, 0] = s ** -nu
            tree_expansion._taylor_coefficients.py_func(
                np.array([rx]), np.array([ry]), np.array([rz]), np.array([1 / s]), 1, nu,
                tab["deg"], tab["rec1"], tab["rec2"], tab["full"]["rec_list"], a)
            g0 = s ** -nu
            # first and second derivatives of s^-nu, s = |R|^2 + d^2
            assert a[idx[(1, 0, 0)], 0] == pytest.approx(-2 * nu * rx * g0 / s, rel=1e-14)
            assert a[idx[(0, 1, 1)], 0] == pytest.approx(4 * nu * (nu + 1) * ry * rz * g0 / s**2,
                                                         rel=1e-14)
            dzz = (-2 * nu / s + 4 * nu * (nu + 1) * rz * rz / s**2) * g0
            assert a[idx[(0, 0, 2)], 0] == pytest.approx(dzz / 2, rel=1e-14)


def test_segment_moments_equal_line_integrals():
    """Gauss-Legendre moments of a segment equal the exact integrals of
    Gamma (B - A) (y - z)^n ds along it."""
    p = 6
    tab = tree_expansion.expansion_tables(p)
    pa, pb, gam = np.array([0.1, -0.2, 0.3]), np.array([0.5, 0.4, -0.1]), 1.7
    nodes, weights = np.polynomial.legendre.leggauss(p // 2 + 1)
    mom = np.zeros((1, 3, tab["midx"].shape[0]))
    one = np.array([0])
    tree_expansion.p2m_segments(one, one, np.array([1]), np.zeros((1, 3)), *[
        np.array([v]) for v in (*pa, *pb, gam)], 0.5 * nodes, 0.5 * weights, tab["midx"], mom)
    poly = np.polynomial.Polynomial
    for i, m in enumerate(tab["midx"]):
        # exact: integrate the polynomial prod_k (A_k + s (B_k - A_k))^m_k over [0, 1]
        line = poly([1.0])
        for k in range(3):
            line = line * poly([pa[k], pb[k] - pa[k]]) ** int(m[k])
        integral = line.integ()(1.0)
        assert mom[0, :, i] == pytest.approx(gam * (pb - pa) * integral, rel=1e-12, abs=1e-15)


def test_harmonic_reduction_reproduces_full_local_expansion():
    """For 1/|r| the reduced M2L (z-index <= 1, completed by Laplace's
    equation) equals the full Cartesian M2L to round-off."""
    p = 7
    tab = tree_expansion.expansion_tables(p)
    nt = tab["midx"].shape[0]
    rng = np.random.default_rng(RNG_SEED)
    moments = rng.normal(size=(3, 3, nt))
    centers = np.array([[0.0, 0.0, 0.0], [2.0, 0.5, -0.3], [-1.5, 2.2, 1.0]])
    ptr = np.array([0, 2, 2, 2])
    src = np.array([1, 2])
    out = []
    for name in ("full", "harmonic"):
        m2l = tab[name]
        mom = moments if name == "full" else tree_expansion.reduce_moments(
            moments, tab["reduce_ptr"], tab["reduce_n"], tab["reduce_c"])
        local = np.zeros((3, 3, nt))
        tree_expansion.m2l(np.array([0]), ptr, src, centers, centers, mom, mom.shape[2],
                           0.0, 0.0, False,
                           tab["deg"], tab["rec1"], tab["rec2"], m2l["rec_list"], m2l["k_list"],
                           m2l["ptr"], m2l["n_idx"], m2l["m_idx"], m2l["coef"], 1, local)
        if name == "harmonic":
            tree_expansion.complete_harmonic(local, tab["fill_k"], tab["fill_i"], tab["fill_c"])
        out.append(local[0])
    assert np.allclose(out[1], out[0], rtol=1e-12, atol=1e-12 * np.abs(out[0]).max())


@pytest.mark.parametrize("kernel", ["rosenhead-moore", "winckelmans-leonard", "gaussian"])
def test_reach_bounds_the_kernel_excess(kernel):
    """Beyond rho_far the kernel and the singular law differ by at most the
    share of the tolerance, in velocity (1 - q) and gradient (x10)."""
    from .reference import q_and_dq
    code = PARTICLE_KERNELS[kernel].code
    tol = 1e-5
    rho_far = tree_params.particle_reach(code, tol)
    rho = rho_far * np.array([1.0, 1.5, 3.0, 10.0])
    q, dq = q_and_dq(rho, kernel)
    share = tree_params.REGULARIZATION_SHARE * tol
    assert np.all(1 - q <= share * (1 + 1e-6))
    assert np.all(np.abs(3 * (1 - q) - rho * dq) / 3 <= 10 * share * (1 + 1e-6))


def test_core_reach_bounds_the_core_factor():
    tol = 1e-6
    share = tree_params.REGULARIZATION_SHARE * tol
    x = tree_params.core_reach(CORE_MODELS["lamb-oseen"].code, tol)
    assert np.exp(-1.25643 * x * x) <= share * (1 + 1e-6)  # 1 - F for Lamb-Oseen
    x = tree_params.core_reach(CORE_MODELS["scully"].code, tol)
    assert 1 / (1 + x * x) <= share * (1 + 1e-6)
    assert tree_params.core_reach(CORE_MODELS["rankine"].code, tol) == 1.0
    assert tree_params.core_reach(CORE_MODELS["singular"].code, tol) == 0.0
