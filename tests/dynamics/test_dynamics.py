"""Right-hand side pieces: stretching, PSE, core spreading, divergence relaxation."""

import numpy as np
import pytest
import wakes
from wakes.induction.particle_ops import smoothed_fields_at
from wakes.induction.pse import pse_exchange
from wakes.induction.smoothing import PARTICLE_KERNELS
from wakes.vortex.dynamics import (
    KERNEL_SECOND_MOMENTS,
    STRETCHING_SCHEMES,
    VISCOUS_SCHEMES,
    curl_from_gradient,
    relax_divergence,
    stretching_rate,
)

from .conftest import RNG_SEED, random_cloud


def test_registries_are_frozen_records_keyed_by_name():
    for registry in (STRETCHING_SCHEMES, VISCOUS_SCHEMES):
        for name, record in registry.items():
            assert record.name == name
            with pytest.raises(AttributeError):
                record.name = "other"
    assert set(STRETCHING_SCHEMES) == {"classic", "transposed", "none"}
    assert set(VISCOUS_SCHEMES) == {"core-spreading", "pse"}


def test_stretching_formulas():
    """classic: (alpha . grad) u, i.e. sum_k alpha_k du_j/dx_k; transposed:
    sum_j alpha_j du_j/dx_k (Winckelmans & Leonard 1993), written as loops."""
    rng = np.random.default_rng(RNG_SEED)
    grad = rng.standard_normal((5, 3, 3))
    alpha = rng.standard_normal((5, 3))
    classic = np.array([[sum(alpha[n, k] * grad[n, j, k] for k in range(3)) for j in range(3)]
                        for n in range(5)])
    transposed = np.array([[sum(alpha[n, j] * grad[n, j, k] for j in range(3)) for k in range(3)]
                           for n in range(5)])
    assert np.allclose(stretching_rate("classic", alpha, grad), classic, rtol=1e-14)
    assert np.allclose(stretching_rate("transposed", alpha, grad), transposed, rtol=1e-14)
    assert not stretching_rate("none", alpha, None).any()


def test_curl_from_gradient_of_a_rotation():
    """u = Omega x x has curl 2 Omega."""
    omega = np.array([0.3, -1.2, 2.0])
    grad = np.zeros((1, 3, 3))
    for k in range(3):
        e = np.zeros(3)
        e[k] = 1.0
        grad[0, :, k] = np.cross(omega, e)
    assert np.allclose(curl_from_gradient(grad)[0], 2 * omega, rtol=1e-15)


@pytest.mark.parametrize("kernel", ["gaussian", "winckelmans-leonard", "rosenhead-moore"])
def test_transposed_stretching_sums_to_zero(kernel):
    """sum_p (grad u(x_p))^T alpha_p = 0: the pair terms cancel (derived; the
    reason the transposed scheme conserves total vorticity). The classic sum
    does not vanish, which shows the check can fail."""
    p = random_cloud(60, kernel=kernel)
    _, grad = wakes.induce(p, p.positions, gradient=True)
    scale = np.abs(stretching_rate("transposed", p.strengths, grad)).sum()
    total_t = stretching_rate("transposed", p.strengths, grad).sum(axis=0)
    total_c = stretching_rate("classic", p.strengths, grad).sum(axis=0)
    assert np.abs(total_t).max() < 1e-13 * scale
    assert np.abs(total_c).max() > 1e-3 * scale


def _lattice(h, extent):
    g = h * np.arange(-extent, extent + 1)
    return np.stack(np.meshgrid(g, g, g, indexing="ij"), axis=-1).reshape(-1, 3)


@pytest.mark.parametrize("kernel, extent, rel", [("gaussian", 9, 1e-6),
                                                 ("winckelmans-leonard", 13, 0.03)])
def test_pse_normalisation_on_a_quadratic_field(kernel, extent, rel):
    """PSE applied to a smooth field gives nu Laplacian(omega) (Degond & Mas-Gallic
    1989, Math. Comp. 53; the check of the normalisation the method calls for).

    On a quadratic field a second-moment-normalised kernel is exact up to
    lattice quadrature and truncation: at spacing sigma/1.5 out to 6 sigma the
    Gaussian is exact to ~1e-7 (e^(-18) tail); the Winckelmans-Leonard
    kernel's slow tail leaves ~2 % of its second moment beyond 8.7 sigma
    (about 1/(2 * 8.7^2) / (1/2), derived)."""
    sigma, h = 1.0, 1.0 / 1.5
    x = _lattice(h, extent)
    vol = np.full(len(x), h ** 3)
    # omega = (x y, 1 + x^2 + 2 y^2 - z^2, 3 z^2): Laplacian = (0, 4, 6)
    w = np.stack([x[:, 0] * x[:, 1], 1 + x[:, 0] ** 2 + 2 * x[:, 1] ** 2 - x[:, 2] ** 2,
                  3 * x[:, 2] ** 2], axis=1)
    alpha = w * vol[:, None]
    nu = 0.01
    out = np.empty_like(alpha)
    cols = [np.ascontiguousarray(a) for a in (*x.T, *alpha.T)]
    pse_exchange(*cols, np.full(len(x), sigma ** 2), vol, PARTICLE_KERNELS[kernel].code,
                 2.0 / KERNEL_SECOND_MOMENTS[kernel], nu, out)
    centre = len(x) // 2
    assert np.allclose(x[centre], 0.0)
    got = out[centre] / (nu * vol[centre])
    assert got == pytest.approx([0.0, 4.0, 6.0], rel=rel, abs=rel)


def test_pse_conserves_total_vorticity():
    """The exchange is antisymmetric in pairs, so sum_p d alpha_p/dt = 0 (derived),
    also with unequal radii and volumes."""
    p = random_cloud(80, kernel="gaussian")
    rng = np.random.default_rng(RNG_SEED + 1)
    s2 = (0.2 + 0.1 * rng.random(80)) ** 2
    vol = 1e-3 * (1 + rng.random(80))
    out = np.empty((80, 3))
    cols = [np.ascontiguousarray(a) for a in (*p.positions.T, *p.strengths.T)]
    pse_exchange(*cols, s2, vol, PARTICLE_KERNELS["gaussian"].code, 2.0, 0.1, out)
    assert np.abs(out.sum(axis=0)).max() < 1e-14 * np.abs(out).sum()
    assert np.abs(out).max() > 0


def test_relaxation_turns_strengths_toward_curl_and_keeps_magnitudes():
    """A ring whose strengths are tilted at random (magnitudes kept) has
    divergence; full relaxation (f = 1) aligns every strength with curl u,
    keeps |alpha| and lowers the divergence."""
    ring = wakes.vortex_ring(1.0, 1.0, 0.2, kernel="winckelmans-leonard", n_around=64)
    rng = np.random.default_rng(RNG_SEED)
    a = ring.strengths
    tilted = a + 0.3 * np.linalg.norm(a, axis=1)[:, None] * rng.standard_normal((64, 3))
    tilted *= (np.linalg.norm(a, axis=1) / np.linalg.norm(tilted, axis=1))[:, None]
    p = ring.replace(strengths=tilted)
    _, grad = wakes.induce(p, p.positions, gradient=True)
    relaxed = relax_divergence(p.strengths, grad, 1.0)
    curl = curl_from_gradient(grad)
    assert np.allclose(np.linalg.norm(relaxed, axis=1), np.linalg.norm(tilted, axis=1), rtol=1e-12)
    cos = np.einsum("ij,ij->i", relaxed, curl) / (np.linalg.norm(relaxed, axis=1)
                                                   * np.linalg.norm(curl, axis=1))
    assert cos.min() > 1 - 1e-12
    half = relax_divergence(p.strengths, grad, 0.5)
    assert np.allclose(half, 0.5 * (tilted + relaxed), rtol=1e-13)

    def divergence(q):
        w, d, _ = smoothed_fields_at(q.positions, q.positions, q.strengths, q.radii,
                                     PARTICLE_KERNELS[q.kernel].code)
        return np.sqrt(np.mean(d ** 2)) / np.sqrt(np.mean((w ** 2).sum(axis=1)))

    assert divergence(p.replace(strengths=relaxed)) < 0.5 * divergence(p)
