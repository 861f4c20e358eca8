"""Initial particle fields: vortex rings, thin or with a resolved core.

A ring of radius R lies in the plane through ``center`` normal to ``axis``;
its vorticity points along e_theta, right-handed about ``axis``, so a ring
of positive circulation moves along +axis (the convention of
:func:`wakes.exact.ring_velocity`).
"""

from __future__ import annotations

import math
import operator

import numpy as np

from .._validate import as_float_array, choice, positive_scalar
from ..errors import InputError
from ..induction.elements import Particles
from ..induction.smoothing import PARTICLE_KERNELS

# A resolved core's lattice spans this many lattice widths sigma_L: the
# Gaussian profile beyond holds exp(-3.5^2/2) = 0.2 % of the circulation, the
# Winckelmans-Leonard profile 1/(1 + 3.5^2)^2 = 0.6 %.
CORE_EXTENT = 3.5
# Spacing along a ring, as a fraction of the smoothing radius: at sigma/R = 0.1
# a spacing of sigma/2 puts a single circle of particles within 1e-4 of the
# continuous circle for every kernel (wakes.exact.ring_speed_particles notes).
ALONG_RING_SPACING = 0.5

# Cross-section vorticity profile of a straight line of particles, as a
# function of s/sigma, up to a constant (derived from each kernel's zeta:
# the line integral of zeta_sigma at distance s from the line).
_LINE_PROFILES = {
    "gaussian": lambda x: np.exp(-0.5 * x * x),
    "winckelmans-leonard": lambda x: (1.0 + x * x) ** -3,
}


def _direction(name: str, value) -> np.ndarray:
    v = as_float_array(name, value, (3,))
    n = float(np.linalg.norm(v))
    if n == 0.0:
        raise InputError(f"{name} must be a non-zero vector; got {tuple(v)}")
    return v / n


def _count(name: str, value, minimum: int) -> int:
    try:
        n = operator.index(value)
    except TypeError:
        raise InputError(f"{name} must be an integer >= {minimum}; got {value!r}") from None
    if n < minimum:
        raise InputError(f"{name} must be an integer >= {minimum}; got {n}")
    return n


def core_lattice(core_radius: float, kernel: str, layers: int):
    """Cross-section of a resolved vortex core: points, circulation shares, areas.

    Parameters
    ----------
    core_radius : float
        sigma [m]: the core carries the vorticity of one line of
        ``kernel`` particles of this smoothing radius.
    kernel : {"gaussian", "winckelmans-leonard"}
        Particle kernel.
    layers : int
        Number of concentric shells, >= 2 (the centre point is the first).

    Returns
    -------
    points : numpy.ndarray, shape (P, 2)
        In-plane offsets from the core centre [m].
    shares : numpy.ndarray, shape (P,)
        Fraction of the circulation each point carries (sums to 1).
    areas : numpy.ndarray, shape (P,)
        Cross-section area each point stands for [m^2].
    sigma_p : float
        Smoothing radius of the particles [m].

    Notes
    -----
    Shell k sits at s = k h with 6k points (one at the centre), h = sigma_p,
    and the shells span CORE_EXTENT lattice widths:
    (layers - 1/2) h = 3.5 sigma_L with sigma_L^2 = sigma^2 - sigma_p^2, so
    sigma_p = 3.5 sigma / sqrt((layers - 1/2)^2 + 3.5^2). Shell k's annulus,
    from (k - 1/2) h to (k + 1/2) h, is split into 6k equal cells (the centre
    cell is a disc of radius h/2). Each point carries the kernel's line
    profile of width sigma_L at its radius times its cell's area (the usual
    omega(x_p) vol_p initialization), rescaled to sum to one. Smoothing that
    lattice with particles of radius sigma_p gives back the line profile of
    width sigma: exactly for the Gaussian (variances add), up to the lattice
    truncation; for Winckelmans-Leonard, whose widths do not add in
    quadrature, only approximately (see :func:`vortex_ring`).
    """
    sigma_p = CORE_EXTENT * core_radius / math.hypot(layers - 0.5, CORE_EXTENT)
    sigma_l = math.sqrt(core_radius ** 2 - sigma_p ** 2)
    h = sigma_p
    points, areas = [np.zeros((1, 2))], [np.full(1, math.pi * h * h / 4.0)]
    for k in range(1, layers):
        m = 6 * k
        phi = 2.0 * math.pi * (np.arange(m) + 0.5 * (k % 2)) / m
        points.append(k * h * np.stack([np.cos(phi), np.sin(phi)], axis=1))
        areas.append(np.full(m, math.pi * h * h / 3.0))
    points, areas = np.concatenate(points), np.concatenate(areas)
    shares = _LINE_PROFILES[kernel](np.hypot(points[:, 0], points[:, 1]) / sigma_l) * areas
    return points, shares / shares.sum(), areas, sigma_p


def vortex_ring(radius: float, circulation: float, core_radius: float, *,
                kernel: str = "gaussian", center=(0.0, 0.0, 0.0), axis=(0.0, 0.0, 1.0),
                n_around: int | None = None, layers: int = 1) -> Particles:
    """A vortex ring of regularized particles.

    Parameters
    ----------
    radius : float
        Ring radius R [m], positive.
    circulation : float
        Circulation Gamma [m^2/s]; positive moves the ring along +axis.
    core_radius : float
        sigma [m], positive and below ``radius``. With ``layers=1`` it is the
        smoothing radius of every particle. With more layers it is the
        smoothing radius of the single circle whose vorticity the resolved
        core carries (see Notes).
    kernel : {"gaussian", "winckelmans-leonard", "rosenhead-moore", "singular"}
        Particle kernel; a resolved core (``layers`` > 1) needs "gaussian" or
        "winckelmans-leonard".
    center : array_like, shape (3,)
        Ring centre [m].
    axis : array_like, shape (3,)
        Ring axis, normal to its plane (normalized here).
    n_around : int, optional
        Number of particles (or of core cross-sections) around the ring.
        Default: a spacing of half the particles' smoothing radius along the
        centre line, the overlap that keeps a ring at R/sigma >= 10 within
        1 % of its continuous limit.
    layers : int, default 1
        1: a single circle of particles on the centre line. n >= 2: a
        resolved core of n concentric shells of particles in each
        cross-section.

    Returns
    -------
    wakes.Particles
        ``n_around`` particles (single circle) or ``n_around * (1 + 3 n
        (n - 1))`` particles (resolved core), strengths along e_theta.

    Notes
    -----
    A single circle of particles moves at U = Gamma/(4 pi R) [ln(8R/sigma)
    + C] with the kernel's centre-line constant C; a resolved core moves with
    the vorticity field the circle represents, with the kernel's filled-core
    constant (:func:`wakes.exact.ring_speed_particles`).

    A resolved core carries, at distance s from the centre line, the
    vorticity of a straight line of particles of smoothing radius sigma:

    - Gaussian: omega(s) = Gamma/(2 pi sigma^2) exp(-s^2/(2 sigma^2)), the
      Gaussian core of Saffman (1970) with a = sqrt(2) sigma (measured on
      the built field at R/sigma = 20: within 3 % for s < 2 sigma, 5 % low at
      3 sigma, where the lattice ends);
    - Winckelmans-Leonard: approximately omega(s) = 2 Gamma/(pi sigma^2)
      (1 + s^2/sigma^2)^-3; the lattice below matches it only in the mean,
      and the built field departs from it by up to 25 % pointwise, most in
      the tail the lattice cuts off.

    It is built from finer particles of smoothing radius
    sigma_p = 3.5 sigma / sqrt((n - 1/2)^2 + 3.5^2) (0.71 sigma for n = 4,
    0.54 sigma for n = 6, 0.42 sigma for n = 8) on the lattice of
    :func:`core_lattice`; its speed approaches the filled-core value as
    sigma_p / sigma falls (at R/sigma = 10, measured: -0.4 % Gaussian and
    -0.7 % Winckelmans-Leonard at n = 4, within 0.4 % for n >= 6).

    Examples
    --------
    >>> import wakes
    >>> ring = wakes.vortex_ring(1.0, 1.0, 0.1)
    >>> ring.count
    126
    """
    r0 = positive_scalar("radius", radius)
    gamma = _finite("circulation", circulation)
    sigma = positive_scalar("core_radius", core_radius)
    if sigma >= r0:
        raise InputError(f"core_radius must be smaller than radius; got core_radius = "
                         f"{core_radius!r} with radius = {radius!r}")
    kernel = choice("kernel", kernel, PARTICLE_KERNELS)
    c = as_float_array("center", center, (3,))
    e3 = _direction("axis", axis)
    layers = _count("layers", layers, 1)
    if layers > 1:
        if kernel not in _LINE_PROFILES:
            raise InputError(f"kernel must be 'gaussian' or 'winckelmans-leonard' for a resolved "
                             f"core (layers > 1); got kernel = {kernel!r} with layers = {layers}")
        offsets, shares, _, sigma_p = core_lattice(sigma, kernel, layers)
    else:
        offsets, shares, sigma_p = np.zeros((1, 2)), np.ones(1), sigma
    if n_around is None:
        n = math.ceil(2.0 * math.pi * r0 / (ALONG_RING_SPACING * sigma_p))
    else:
        n = _count("n_around", n_around, 3)
    if np.any(offsets[:, 0] <= -r0):
        raise InputError(f"core_radius = {core_radius!r} is too large for radius = "
                         f"{radius!r}: the resolved core reaches the axis")
    e1, e2 = _plane_basis(e3)
    theta = 2.0 * math.pi * np.arange(n) / n
    cos_t, sin_t = np.cos(theta)[:, None], np.sin(theta)[:, None]
    r = r0 + offsets[:, 0][None, :]                       # (n, P)
    z = np.broadcast_to(offsets[:, 1][None, :], r.shape)
    radial = cos_t[..., None] * e1 + sin_t[..., None] * e2  # (n, 1, 3)
    tangent = -sin_t[..., None] * e1 + cos_t[..., None] * e2
    positions = c + r[..., None] * radial + z[..., None] * e3
    strengths = (gamma * shares[None, :] * r * (2.0 * math.pi / n))[..., None] * tangent
    return Particles(positions.reshape(-1, 3), strengths.reshape(-1, 3), sigma_p, kernel)


def lamb_oseen_ring(radius: float, circulation: float, viscosity: float, age: float, *,
                    center=(0.0, 0.0, 0.0), axis=(0.0, 0.0, 1.0), n_around: int | None = None,
                    layers: int = 5) -> Particles:
    """A thin viscous vortex ring whose core is a Lamb--Oseen vortex.

    The core's vorticity is omega(s) = Gamma/(pi a^2) exp(-s^2/a^2) with
    a^2 = 4 nu t at age t: the ring Saffman (1970) analysed, whose speed is
    U = Gamma/(4 pi R) [ln(8R/a) - 0.5579658] while a grows as
    a^2 = a_0^2 + 4 nu t. Built by :func:`vortex_ring` with the Gaussian
    kernel, a resolved core and sigma = a/sqrt(2).

    Parameters
    ----------
    radius : float
        Ring radius R [m].
    circulation : float
        Circulation Gamma [m^2/s].
    viscosity : float
        Kinematic viscosity nu [m^2/s], positive.
    age : float
        Age t of the core [s], positive; a = sqrt(4 nu t) must be below R/sqrt(2).
    center, axis, n_around, layers
        As for :func:`vortex_ring` (``layers`` >= 2).

    Returns
    -------
    wakes.Particles
        Gaussian particles.

    Examples
    --------
    >>> import wakes
    >>> ring = wakes.lamb_oseen_ring(1.0, 1.0, 1e-3, 5.0, layers=3)
    >>> ring.kernel
    'gaussian'
    """
    nu = positive_scalar("viscosity", viscosity)
    t0 = positive_scalar("age", age)
    if _count("layers", layers, 1) < 2:
        raise InputError(f"layers must be an integer >= 2 for a resolved Lamb-Oseen core; "
                         f"got {layers}")
    return vortex_ring(radius, circulation, math.sqrt(2.0 * nu * t0), kernel="gaussian",
                       center=center, axis=axis, n_around=n_around, layers=layers)


def _finite(name: str, value) -> float:
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise InputError(f"{name} must be a real number; got {value!r}") from None
    if not math.isfinite(x):
        raise InputError(f"{name} must be finite; got {value!r}")
    return x


def _plane_basis(e3: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Two unit vectors completing ``e3`` to a right-handed orthonormal frame."""
    helper = np.array([1.0, 0.0, 0.0]) if abs(e3[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
    e1 = helper - (helper @ e3) * e3
    e1 /= np.linalg.norm(e1)
    return e1, np.cross(e3, e1)
