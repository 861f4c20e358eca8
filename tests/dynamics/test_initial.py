"""Vortex-ring builders: geometry, circulation, core profile, orientation, bad input."""

import math

import numpy as np
import pytest
import wakes
from scipy.spatial.transform import Rotation
from wakes.errors import InputError
from wakes.induction.particle_ops import smoothed_fields_at
from wakes.induction.smoothing import PARTICLE_KERNELS
from wakes.vortex.initial import ALONG_RING_SPACING, core_lattice


def test_single_circle_geometry():
    ring = wakes.vortex_ring(2.0, 3.0, 0.1, kernel="winckelmans-leonard")
    n = math.ceil(2 * math.pi * 2.0 / (ALONG_RING_SPACING * 0.1))
    assert ring.count == n and ring.kernel == "winckelmans-leonard"
    assert np.allclose(np.hypot(ring.positions[:, 0], ring.positions[:, 1]), 2.0, rtol=1e-15)
    assert np.allclose(ring.positions[:, 2], 0.0) and np.allclose(ring.radii, 0.1)
    # strengths: tangent, right-handed about +z, |alpha| = Gamma * arc length
    assert np.allclose(np.einsum("ij,ij->i", ring.positions, ring.strengths), 0.0, atol=1e-14)
    assert np.all(np.cross(ring.positions, ring.strengths)[:, 2] > 0)
    assert np.allclose(np.linalg.norm(ring.strengths, axis=1), 3.0 * 2 * math.pi * 2.0 / n,
                       rtol=1e-14)


def test_positive_circulation_blows_along_the_axis():
    """At the centre of a ring the velocity is Gamma/(2R) along +axis (Lamb 1932,
    Hydrodynamics, art. 161; memory for the article)."""
    axis = np.array([1.0, -2.0, 0.5])
    centre = np.array([0.3, 0.1, -2.0])
    ring = wakes.vortex_ring(1.5, 2.0, 0.05, center=centre, axis=axis, kernel="gaussian")
    u = wakes.induce(ring, centre[None, :])[0]
    assert np.allclose(u, 2.0 / (2 * 1.5) * axis / np.linalg.norm(axis), rtol=1e-6)
    assert np.allclose(ring.positions.mean(axis=0), centre, atol=1e-12)


def test_orientation_is_a_rigid_motion_of_the_default_ring():
    """Any axis gives the default ring rotated onto it: the sets of
    (distance from axis, height) and the strength magnitudes coincide."""
    base = wakes.vortex_ring(1.0, 1.0, 0.1, layers=3)
    rot = Rotation.from_rotvec([0.3, -1.1, 0.7]).as_matrix()
    turned = wakes.vortex_ring(1.0, 1.0, 0.1, layers=3, axis=rot[:, 2], center=(1, 2, 3))
    rel = turned.positions - np.array([1, 2, 3])
    h = rel @ rot[:, 2]
    r = np.linalg.norm(rel - np.outer(h, rot[:, 2]), axis=1)
    key = lambda a, b: np.sort(np.round(a * 1e9) + 1e-3 * np.round(b * 1e9))  # noqa: E731
    assert np.array_equal(key(r, h), key(np.hypot(*base.positions[:, :2].T), base.positions[:, 2]))
    assert np.allclose(np.sort(np.linalg.norm(turned.strengths, axis=1)),
                       np.sort(np.linalg.norm(base.strengths, axis=1)), rtol=1e-12)


@pytest.mark.parametrize("kernel", ["gaussian", "winckelmans-leonard"])
@pytest.mark.parametrize("layers", [2, 4, 6])
def test_resolved_core_lattice(kernel, layers):
    """Shell counts, particle radius, and the circulation of each cross-section."""
    points, shares, areas, sigma_p = core_lattice(0.1, kernel, layers)
    assert len(points) == 1 + 3 * layers * (layers - 1)
    assert sigma_p == pytest.approx(3.5 * 0.1 / math.hypot(layers - 0.5, 3.5), rel=1e-15)
    assert sigma_p < 0.1 and shares.sum() == pytest.approx(1.0, rel=1e-14)
    # the cells tile the disc of radius (layers - 1/2) h
    assert areas.sum() == pytest.approx(math.pi * ((layers - 0.5) * sigma_p) ** 2, rel=1e-12)
    ring = wakes.vortex_ring(1.0, 2.5, 0.1, kernel=kernel, layers=layers, n_around=50)
    assert ring.count == 50 * len(points) and np.allclose(ring.radii, sigma_p)
    # circulation through the half plane y = 0, x > 0: alpha_theta / (r dtheta) summed
    section = slice(0, len(points))
    r = ring.positions[section, 0]
    assert (ring.strengths[section, 1] / (r * 2 * math.pi / 50)).sum() == pytest.approx(2.5, rel=1e-12)


@pytest.mark.parametrize("layers", [4, 6])
def test_gaussian_core_profile(layers):
    """The smoothed vorticity across a resolved Gaussian core is
    Gamma/(2 pi sigma^2) exp(-s^2/(2 sigma^2)) (Saffman's 1970 Gaussian core with
    a = sqrt(2) sigma): within 4 % out to 2 sigma, at R/sigma = 20 (lattice
    quadrature and curvature; measured 3 %)."""
    R, gamma, sigma = 1.0, 1.0, 0.05
    ring = wakes.vortex_ring(R, gamma, sigma, kernel="gaussian", layers=layers)
    n_around = ring.count // (1 + 3 * layers * (layers - 1))
    half = math.pi / n_around
    s = np.array([0.0, 0.5, 1.0, 1.5, 2.0]) * sigma
    targets = np.stack([np.full_like(s, R * math.cos(half)), np.full_like(s, R * math.sin(half)), s], 1)
    w, _, _ = smoothed_fields_at(targets, ring.positions, ring.strengths, ring.radii,
                                 PARTICLE_KERNELS["gaussian"].code)
    expected = gamma / (2 * math.pi * sigma ** 2) * np.exp(-0.5 * (s / sigma) ** 2)
    assert np.linalg.norm(w, axis=1) == pytest.approx(expected, rel=0.04)


def test_lamb_oseen_ring_core():
    """a^2 = 4 nu t and a = sqrt(2) sigma: sigma = sqrt(2 nu t)."""
    ring = wakes.lamb_oseen_ring(1.0, 1.0, 2e-3, 1.25, layers=3)
    _, _, _, sigma_p = core_lattice(math.sqrt(2 * 2e-3 * 1.25), "gaussian", 3)
    assert ring.kernel == "gaussian" and np.allclose(ring.radii, sigma_p)
    with pytest.raises(InputError, match="layers must be an integer >= 2"):
        wakes.lamb_oseen_ring(1.0, 1.0, 2e-3, 1.25, layers=1)
    with pytest.raises(InputError, match="viscosity"):
        wakes.lamb_oseen_ring(1.0, 1.0, 0.0, 1.25)


@pytest.mark.parametrize("kwargs, words", [
    (dict(radius=-1.0), ["radius", "positive"]),
    (dict(core_radius=1.0), ["core_radius must be smaller than radius"]),
    (dict(circulation=float("nan")), ["circulation", "finite"]),
    (dict(layers=0), ["layers", ">= 1", "0"]),
    (dict(layers=2.5), ["layers", "integer"]),
    (dict(n_around=2), ["n_around", ">= 3"]),
    (dict(axis=(0, 0, 0)), ["axis", "non-zero"]),
    (dict(center=(0, 0)), ["center", "shape (3,)"]),
    (dict(kernel="top-hat"), ["kernel", "'gaussian'"]),
    (dict(kernel="rosenhead-moore", layers=3), ["kernel", "'gaussian' or 'winckelmans-leonard'",
                                                "layers = 3"]),
    (dict(core_radius=0.6, layers=8), ["too large", "axis"]),
])
def test_bad_ring_input(kwargs, words):
    args = dict(radius=1.0, circulation=1.0, core_radius=0.1)
    args.update(kwargs)
    with pytest.raises(InputError) as info:
        wakes.vortex_ring(args.pop("radius"), args.pop("circulation"), args.pop("core_radius"), **args)
    for w in words:
        assert w in str(info.value), (w, str(info.value))
