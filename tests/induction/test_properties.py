"""Hypothesis properties of the induction engine.

Linearity in strength, rotation and translation equivariance, zero
divergence of particle velocity fields, and independence of source order.
"""

import numpy as np
import wakes
from hypothesis import given
from hypothesis import strategies as st
from scipy.spatial.transform import Rotation

from .reference import CORE_NAMES, KERNEL_NAMES

seeds = st.integers(0, 2**32 - 1)


def particles(seed, kernel, n=30):
    rng = np.random.default_rng(seed)
    return wakes.Particles(rng.uniform(-1, 1, (n, 3)), rng.normal(size=(n, 3)),
                           rng.uniform(0.05, 0.3, n), kernel=kernel)


def filaments(seed, core, n=15):
    rng = np.random.default_rng(seed)
    return wakes.Filaments.from_polyline(rng.uniform(-1, 1, (n, 3)), rng.normal(size=n - 1),
                                         rng.uniform(0.05, 0.3, n - 1), core=core)


def targets(seed, n=12):
    return np.random.default_rng(seed + 1).uniform(-1.5, 1.5, (n, 3))


def close(a, b, rtol=1e-12):
    return np.linalg.norm(a - b) <= rtol * max(np.linalg.norm(b), 1e-300)


# Coefficients are zero or at least 1e-3 in size: subnormal products lose
# relative precision in any floating-point sum, which is not what is tested.
COEFFICIENTS = st.one_of(st.just(0.0), st.floats(1e-3, 5), st.floats(-5, -1e-3))


@given(seeds, st.sampled_from(KERNEL_NAMES), COEFFICIENTS, COEFFICIENTS)
def test_velocity_is_linear_in_strength(seed, kernel, c1, c2):
    p = particles(seed, kernel)
    q = p.replace(strengths=np.random.default_rng(seed + 7).normal(size=(p.count, 3)))
    x = targets(seed)
    combo = p.replace(strengths=c1 * p.strengths + c2 * q.strengths)
    lhs = wakes.induce(combo, x)
    rhs = c1 * wakes.induce(p, x) + c2 * wakes.induce(q, x)
    assert np.allclose(lhs, rhs, rtol=1e-12, atol=1e-12 * np.abs(rhs).max())


@given(seeds, st.sampled_from(KERNEL_NAMES + CORE_NAMES))
def test_rotation_and_translation_equivariance(seed, name):
    """u(Rx + b; R sources + b) = R u(x; sources), grad -> R grad R^T.

    Vortex strength is an axial vector, but under a proper rotation it
    transforms like a vector.
    """
    rot = Rotation.random(random_state=seed).as_matrix()
    shift = np.random.default_rng(seed + 3).uniform(-2, 2, 3)
    x = targets(seed)
    if name in KERNEL_NAMES:
        src = particles(seed, name)
        moved = src.replace(positions=src.positions @ rot.T + shift,
                            strengths=src.strengths @ rot.T)
    else:
        src = filaments(seed, name)
        moved = src.replace(nodes=src.nodes @ rot.T + shift)
    u, g = wakes.induce(src, x, gradient=True)
    u2, g2 = wakes.induce(moved, x @ rot.T + shift, gradient=True)
    assert close(u2, u @ rot.T, 1e-10)
    assert close(g2, rot @ g @ rot.T, 1e-10)


@given(seeds, st.sampled_from(KERNEL_NAMES + CORE_NAMES))
def test_particle_and_filament_fields_are_divergence_free(seed, name):
    """Trace of the gradient vanishes: the velocity is the curl of a vector potential."""
    src = particles(seed, name) if name in KERNEL_NAMES else filaments(seed, name)
    _, g = wakes.induce(src, targets(seed), gradient=True)
    trace = np.trace(g, axis1=1, axis2=2)
    assert np.all(np.abs(trace) <= 1e-11 * np.abs(g).max(axis=(1, 2)) + 1e-300)


@given(seeds, st.sampled_from(KERNEL_NAMES + CORE_NAMES))
def test_source_order_does_not_matter(seed, name):
    perm = np.random.default_rng(seed + 5).permutation
    x = targets(seed)
    if name in KERNEL_NAMES:
        src = particles(seed, name)
        i = perm(src.count)
        other = wakes.Particles(src.positions[i], src.strengths[i], src.radii[i], kernel=name)
    else:
        src = filaments(seed, name)
        i = perm(src.segment_count)
        other = wakes.Filaments(src.nodes, src.segments[i], src.circulation[i],
                                src.core_radius[i], core=name)
    u, g = wakes.induce(src, x, gradient=True)
    u2, g2 = wakes.induce(other, x, gradient=True)
    assert close(u2, u, 1e-13) and close(g2, g, 1e-13)
