"""Integral quantities of a vortex-particle field, for monitoring a run.

For an unbounded, inviscid, incompressible flow the total vorticity, the
linear impulse and the angular impulse are invariants and the kinetic
energy is conserved; their drift in a particle computation measures the
numerical error (Winckelmans & Leonard 1993, J. Comput. Phys. 109). Each
quantity is per unit fluid density where that applies, in SI units:

=======================  =====================================  ==========
column                   particle formula                       unit
=======================  =====================================  ==========
vorticity_x, _y, _z      sum alpha_p                            m^3/s
impulse_x, _y, _z        1/2 sum x_p x alpha_p                  m^4/s
angular_impulse_x, ...   1/3 sum x_p x (x_p x alpha_p)          m^5/s
kinetic_energy           sum u_p . (x_p x alpha_p)              m^5/s^2
enstrophy                sum alpha_p . omega(x_p)               m^3/s^2
helicity                 sum u_p . alpha_p                      m^4/s^2
max_speed                max |u_p|                              m/s
divergence               rms(sigma_p div omega(x_p)) /          --
                         rms |omega(x_p)|
=======================  =====================================  ==========

Here u_p is the induced velocity at particle p and omega(x) the smoothed
vorticity sum_q alpha_q zeta_sigma_q(x - x_q) the particles carry. The
energy uses the identity E = int u . (x x omega) dV of an unbounded fluid at
rest at infinity (Saffman 1992, *Vortex Dynamics*, ch. 3; memory for the
chapter); the energy, enstrophy and helicity sums are particle quadratures
of the field integrals, accurate when the particles overlap.
"""

from __future__ import annotations

import numpy as np

from .elements import Particles
from .induction.particle_ops import smoothed_fields_at
from .induction.smoothing import PARTICLE_KERNELS

DIAGNOSTIC_COLUMNS = (
    "vorticity_x", "vorticity_y", "vorticity_z",
    "impulse_x", "impulse_y", "impulse_z",
    "angular_impulse_x", "angular_impulse_y", "angular_impulse_z",
    "kinetic_energy", "enstrophy", "helicity", "max_speed", "divergence",
)


def field_diagnostics(particles: Particles, velocity: np.ndarray) -> dict:
    """Integral quantities of a particle field (see the module table).

    Parameters
    ----------
    particles : wakes.Particles
        The field, with a regularized kernel.
    velocity : numpy.ndarray, shape (N, 3)
        Velocity the field induces at its particles [m/s].

    Returns
    -------
    dict
        One float per name of :data:`DIAGNOSTIC_COLUMNS`.
    """
    x, alpha = particles.positions, particles.strengths
    out = {}
    total = alpha.sum(axis=0)
    x_cross_a = np.cross(x, alpha)
    impulse = 0.5 * x_cross_a.sum(axis=0)
    angular = np.cross(x, x_cross_a).sum(axis=0) / 3.0
    for name, vec in (("vorticity", total), ("impulse", impulse), ("angular_impulse", angular)):
        for k, axis in enumerate("xyz"):
            out[f"{name}_{axis}"] = float(vec[k])
    out["kinetic_energy"] = float(np.einsum("ij,ij->", velocity, x_cross_a))
    omega, div, _ = smoothed_fields_at(x, x, alpha, particles.radii,
                                       PARTICLE_KERNELS[particles.kernel].code)
    out["enstrophy"] = float(np.einsum("ij,ij->", alpha, omega))
    out["helicity"] = float(np.einsum("ij,ij->", velocity, alpha))
    out["max_speed"] = float(np.sqrt((velocity ** 2).sum(axis=1).max())) if len(x) else 0.0
    w_rms = np.sqrt(np.mean((omega ** 2).sum(axis=1))) if len(x) else 0.0
    d_rms = np.sqrt(np.mean((particles.radii * div) ** 2)) if len(x) else 0.0
    out["divergence"] = float(d_rms / w_rms) if w_rms > 0.0 else 0.0
    return out


def ring_centroid(particles: Particles, center=(0.0, 0.0, 0.0),
                  axis=(0.0, 0.0, 1.0)) -> tuple[float, float]:
    """Circulation-weighted axial position and radius of a vortex ring.

    Each particle is weighted by the circulation it carries about the ring
    axis, w_p = (alpha_p . e_theta) / r_p, where r_p is its distance from the
    axis and e_theta the azimuthal unit vector (right-handed about
    ``axis``). In axisymmetric inviscid flow w_p is constant along a
    particle's path, so the centroid moves at the ring's speed.

    Parameters
    ----------
    particles : wakes.Particles
        Particles of one ring (or of several coaxial rings, giving their
        common centroid).
    center : array_like, shape (3,)
        A point on the axis [m].
    axis : array_like, shape (3,)
        Axis direction (normalized here).

    Returns
    -------
    axial : float
        Weighted mean of (x_p - center) . axis [m].
    radius : float
        Weighted mean of r_p [m].
    """
    e = np.asarray(axis, dtype=float)
    e = e / np.linalg.norm(e)
    rel = particles.positions - np.asarray(center, dtype=float)
    z = rel @ e
    radial = rel - np.outer(z, e)
    r = np.linalg.norm(radial, axis=1)
    e_theta = np.cross(e, radial / r[:, None])
    w = np.einsum("ij,ij->i", particles.strengths, e_theta) / r
    return float((w * z).sum() / w.sum()), float((w * r).sum() / w.sum())
