"""Integral diagnostics of particle fields against closed forms and direct sums."""

import math

import numpy as np
import pytest
import wakes
from wakes.induction.particle_ops import zeta
from wakes.induction.smoothing import PARTICLE_KERNELS
from wakes.vortex.diagnostics import DIAGNOSTIC_COLUMNS, field_diagnostics, ring_centroid

from .conftest import random_cloud


def _diag(p):
    return field_diagnostics(p, wakes.induce(p, p.positions))


def test_columns_carry_meaning():
    d = _diag(random_cloud(10))
    assert tuple(d) == DIAGNOSTIC_COLUMNS
    assert {"impulse_x", "angular_impulse_z", "kinetic_energy", "helicity"} <= set(d)


def test_ring_impulse_and_invariants():
    """A ring's impulse is pi R^2 Gamma along its axis (Lamb 1932, Hydrodynamics,
    art. 162; memory for the article), exact for a circle of particles on
    the centre line; its total vorticity, angular impulse and helicity
    vanish, and a closed circle is divergence-free."""
    axis = np.array([0.0, 0.6, 0.8])
    ring = wakes.vortex_ring(1.3, 0.7, 0.1, kernel="winckelmans-leonard", axis=axis,
                             center=(0.2, -0.1, 0.4))
    d = _diag(ring)
    impulse = np.array([d["impulse_x"], d["impulse_y"], d["impulse_z"]])
    assert np.allclose(impulse, math.pi * 1.3 ** 2 * 0.7 * axis, rtol=1e-13, atol=1e-15)
    for name in ("vorticity_x", "vorticity_y", "vorticity_z", "helicity"):
        assert abs(d[name]) < 1e-14
    # angular impulse: the plain sum for this off-centre ring, zero for a centred one
    angular = np.array([d["angular_impulse_x"], d["angular_impulse_y"], d["angular_impulse_z"]])
    assert np.allclose(angular, _angular_direct(ring), rtol=1e-12, atol=1e-14)
    centred = _diag(ring.replace(positions=ring.positions - np.array([0.2, -0.1, 0.4])))
    for name in ("angular_impulse_x", "angular_impulse_y", "angular_impulse_z"):
        assert abs(centred[name]) < 1e-14
    assert d["divergence"] < 1e-12
    assert d["max_speed"] == pytest.approx(
        np.linalg.norm(wakes.induce(ring, ring.positions), axis=1).max(), rel=1e-15)
    assert d["kinetic_energy"] > 0 and d["enstrophy"] > 0


def _angular_direct(p):
    return sum(np.cross(x, np.cross(x, a)) for x, a in zip(p.positions, p.strengths)) / 3.0


def test_hopf_link_helicity():
    """Two singly linked rings carry helicity 2 Gamma_1 Gamma_2 (Moffatt 1969,
    J. Fluid Mech. 35), its sign set by their orientation; each planar ring
    alone has none. Thin cores (sigma/R = 0.02) put the regularized value
    within 1e-3 of the line-vortex one."""
    a = wakes.vortex_ring(1.0, 1.5, 0.02, kernel="gaussian", n_around=400)
    h = []
    for g2 in (0.8, -0.8):
        b = wakes.vortex_ring(1.0, g2, 0.02, kernel="gaussian", n_around=400,
                              center=(1.0, 0.0, 0.0), axis=(0.0, 1.0, 0.0))
        both = wakes.Particles(np.vstack([a.positions, b.positions]),
                               np.vstack([a.strengths, b.strengths]), 0.02, "gaussian")
        h.append(_diag(both)["helicity"])
    assert abs(h[0]) == pytest.approx(2 * 1.5 * 0.8, rel=1e-3)
    assert h[1] == pytest.approx(-h[0], rel=1e-12)


@pytest.mark.parametrize("kernel", ["gaussian", "winckelmans-leonard", "rosenhead-moore"])
def test_enstrophy_and_divergence_against_direct_sums(kernel):
    """The numba sums equal the plain double sums sum_pq alpha_p . alpha_q zeta_sigma(x_p - x_q)
    and sum_pq alpha_q . grad zeta_sigma(x_p - x_q), written here with numpy."""
    p = random_cloud(50, kernel=kernel)
    d = _diag(p)
    code = PARTICLE_KERNELS[kernel].code
    r = p.positions[:, None, :] - p.positions[None, :, :]
    t = (r ** 2).sum(-1) / p.radii[0] ** 2
    z = np.vectorize(lambda v: zeta(v, code)[0])(t) / p.radii[0] ** 3
    dz = np.vectorize(lambda v: zeta(v, code)[1])(t) / p.radii[0] ** 5
    omega = z @ p.strengths
    div = 2.0 * np.einsum("pq,pqk,qk->p", dz, r, p.strengths)
    assert d["enstrophy"] == pytest.approx(np.einsum("pk,pk->", p.strengths, omega), rel=1e-12)
    w_rms = np.sqrt(np.mean((omega ** 2).sum(1)))
    assert d["divergence"] == pytest.approx(np.sqrt(np.mean((p.radii * div) ** 2)) / w_rms, rel=1e-10)


def test_energy_is_translation_invariant_for_a_ring():
    """E = sum u . (x x alpha) shifts by c . sum(alpha x u) under x -> x + c, which
    vanishes for a closed ring by symmetry (for the continuous field
    int omega x u dV = 0; Saffman 1992, Vortex Dynamics, ch. 3; memory)."""
    ring = wakes.vortex_ring(1.0, 1.0, 0.1, kernel="winckelmans-leonard", layers=3, n_around=60)
    e0 = _diag(ring)["kinetic_energy"]
    moved = ring.replace(positions=ring.positions + np.array([3.0, -2.0, 5.0]))
    assert _diag(moved)["kinetic_energy"] == pytest.approx(e0, rel=1e-12)


def test_ring_centroid():
    axis = np.array([1.0, 1.0, 0.0]) / math.sqrt(2)
    ring = wakes.vortex_ring(0.8, 1.0, 0.05, axis=axis, center=(1.0, 2.0, 3.0), layers=3)
    z, r = ring_centroid(ring, center=(1.0, 2.0, 3.0), axis=axis)
    assert abs(z) < 1e-12 and r == pytest.approx(0.8, rel=2e-3)
    shifted = ring.replace(positions=ring.positions + 0.25 * axis)
    assert ring_centroid(shifted, center=(1.0, 2.0, 3.0), axis=axis)[0] == pytest.approx(0.25, rel=1e-12)
