"""Smoothed vorticity sums: kernel normalisation, lattice density, divergence, curl u."""

import math

import numpy as np
import pytest
import wakes
from scipy.integrate import quad
from wakes.induction.particle_ops import smoothed_fields_at, zeta
from wakes.induction.smoothing import PARTICLE_KERNELS

from .conftest import random_cloud

KERNELS = ["gaussian", "winckelmans-leonard", "rosenhead-moore"]


@pytest.mark.parametrize("kernel", KERNELS)
def test_zeta_is_normalized_and_matches_q(kernel):
    """4 pi int zeta rho^2 = 1, and 4 pi int_0^rho zeta s^2 ds equals the kernel's
    q(rho) as published by Winckelmans & Leonard (1993, J. Comput. Phys. 109)."""
    code = PARTICLE_KERNELS[kernel].code
    z = lambda r: zeta(r * r, code)[0]  # noqa: E731
    total, _ = quad(lambda r: 4 * math.pi * r * r * z(r), 0, np.inf)
    assert math.isclose(total, 1.0, rel_tol=1e-9)
    q = {
        "gaussian": lambda r: math.erf(r / math.sqrt(2)) - math.sqrt(2 / math.pi) * r * math.exp(-r * r / 2),
        "winckelmans-leonard": lambda r: r ** 3 * (r * r + 2.5) / (r * r + 1) ** 2.5,
        "rosenhead-moore": lambda r: r ** 3 / (r * r + 1) ** 1.5,
    }[kernel]
    for rho in (0.3, 1.0, 2.5):
        part, _ = quad(lambda r: 4 * math.pi * r * r * z(r), 0, rho)
        assert math.isclose(part, q(rho), rel_tol=1e-10)
    # d zeta / d(rho^2) against a central difference
    t, h = 1.7, 1e-6
    fd = (zeta(t + h, code)[0] - zeta(t - h, code)[0]) / (2 * h)
    assert math.isclose(zeta(t, code)[1], fd, rel_tol=1e-7)


@pytest.mark.parametrize("kernel", ["gaussian", "winckelmans-leonard"])
def test_density_of_a_lattice(kernel):
    """sum_q zeta_sigma(x - x_q) over a cubic lattice of spacing h = sigma/2 is 1/h^3
    in its interior (Poisson summation: the error is the kernel's Fourier
    transform at 2 pi/h, below 1e-3 for both kernels at this overlap; derived)."""
    h, sigma, m = 0.5, 1.0, 12
    g = h * np.arange(-m, m + 1)
    pts = np.stack(np.meshgrid(g, g, g, indexing="ij"), axis=-1).reshape(-1, 3)
    p = wakes.Particles(pts, np.zeros_like(pts), sigma, kernel)
    _, _, density = smoothed_fields_at(np.zeros((1, 3)), p.positions, p.strengths, p.radii,
                                       PARTICLE_KERNELS[kernel].code)
    # the lattice is truncated at 6 sigma: the algebraic kernel's tail beyond
    # holds about 15/(8 pi) * 4 pi / (4 * 6^4) ~ 1e-3 of its weight
    assert density[0] * h ** 3 == pytest.approx(1.0, rel=2e-3)


@pytest.mark.parametrize("kernel", KERNELS)
def test_divergence_is_the_derivative_of_the_field(kernel):
    """div omega from the kernel's analytic gradient equals central differences of omega."""
    p = random_cloud(40, kernel=kernel)
    code = PARTICLE_KERNELS[kernel].code
    x0 = np.array([[0.4, 0.55, 0.5], [0.9, 0.1, 0.3]])
    _, div, _ = smoothed_fields_at(x0, p.positions, p.strengths, p.radii, code)
    h = 1e-5
    fd = np.zeros(len(x0))
    for k in range(3):
        e = np.zeros(3)
        e[k] = h
        wp, _, _ = smoothed_fields_at(x0 + e, p.positions, p.strengths, p.radii, code)
        wm, _, _ = smoothed_fields_at(x0 - e, p.positions, p.strengths, p.radii, code)
        fd += (wp[:, k] - wm[:, k]) / (2 * h)
    assert np.allclose(div, fd, rtol=1e-6, atol=1e-6 * np.abs(fd).max())


@pytest.mark.parametrize("kernel", ["gaussian", "winckelmans-leonard"])
def test_curl_of_induced_velocity_is_the_smoothed_vorticity(kernel):
    """For a divergence-free particle field curl u = omega (u is the curl of the
    vector potential whose Laplacian is -omega): the engine's Biot-Savart
    gradient and this module's zeta, written independently, agree. A closed
    circle of particles is divergence-free, by symmetry, in the planes through
    the axis and a particle or the midpoint between two, and nearly so
    elsewhere once the spacing is well below sigma (here sigma/8)."""
    ring = wakes.vortex_ring(1.0, 1.0, 0.2, kernel=kernel, n_around=256)
    half = math.pi / 256
    targets = np.array([[1.0, 0.0, 0.0], [1.1, 0.0, 0.05],
                        [0.95 * math.cos(half), 0.95 * math.sin(half), -0.1], [0.0, 0.0, 0.3]])
    _, grad = wakes.induce(ring, targets, gradient=True)
    curl = np.stack([grad[:, 2, 1] - grad[:, 1, 2], grad[:, 0, 2] - grad[:, 2, 0],
                     grad[:, 1, 0] - grad[:, 0, 1]], axis=1)
    omega, div, _ = smoothed_fields_at(targets, ring.positions, ring.strengths, ring.radii,
                                       PARTICLE_KERNELS[kernel].code)
    scale = np.abs(omega).max()
    assert np.abs(div).max() < 1e-10 * scale
    assert np.allclose(curl, omega, rtol=0, atol=1e-9 * scale)
