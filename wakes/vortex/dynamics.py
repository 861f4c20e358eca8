"""Right-hand side of the vorticity equation for a field of vortex particles.

Particles move with the local velocity and their strengths obey the
vorticity equation of a homogeneous, incompressible fluid,

    D omega / Dt = (omega . grad) u + nu Laplacian(omega).

The other terms of the general vorticity equation vanish for such a fluid:
omega (div u) because div u = 0, the baroclinic term grad(rho) x grad(p) /
rho^2 because the density is uniform, and curl f because body forces such as
gravity are conservative. ``wakes`` does not model baroclinic or body-force
sources of vorticity.

Each named scheme is a small frozen record in a registry (a dict from name
to record); the names feed argument checking, the case schema and the
command line.

Stretching schemes (Winckelmans & Leonard 1993, J. Comput. Phys. 109):

==========  ==========================================  ===========================
name        d alpha_p / dt                              conserves
==========  ==========================================  ===========================
classic     (alpha_p . grad) u(x_p)                     neither sum alpha nor impulse
transposed  (grad u(x_p))^T alpha_p                     sum alpha_p (to round-off)
none        0 (pure advection)                          sum alpha_p
==========  ==========================================  ===========================

Both stretching forms agree with the continuous equation for a
divergence-free vorticity field; they differ in what they conserve
discretely. The transposed form conserves total vorticity exactly because
the pair contributions to sum_p (grad u)^T alpha_p cancel in pairs.

Viscous schemes (used only when the viscosity is positive):

==============  =============================================================
name            what it does
==============  =============================================================
core-spreading  sigma^2 grows at 2 nu per unit time, alpha unchanged
                (Leonard 1980); exact for an isolated Gaussian blob, and for
                any field whose lattice is fine next to sigma; as sigma grows
                the field is resolved ever more coarsely, a bias that grows
                with time (Greengard 1985). Gaussian kernel only.
pse             particle strength exchange (Degond & Mas-Gallic 1989) with the
                particle kernel; needs particle volumes and particles filling
                the region vorticity diffuses into. Gaussian and
                Winckelmans-Leonard kernels.
==============  =============================================================

Divergence relaxation (Pedrizzetti 1992, J. Fluid Mech. 245) turns each
strength toward the direction of the curl of the induced velocity, which is
divergence-free, keeping its magnitude:
alpha <- (1 - f) alpha + f |alpha| (curl u)/|curl u|, with f = min(rate dt, 1).

All velocities and velocity gradients come from :func:`wakes.induce`.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..induction import api as induction_api
from ..induction.elements import Particles
from ..induction.pse import pse_exchange
from ..induction.smoothing import PARTICLE_KERNELS


@dataclass(frozen=True)
class StretchingScheme:
    """A discretization of the stretching term (omega . grad) u.

    Attributes
    ----------
    name : str
        Registry name.
    needs_gradient : bool
        Whether the right-hand side needs the velocity gradient.
    description : str
        The rate of change of a strength, in words.
    """

    name: str
    needs_gradient: bool
    description: str


@dataclass(frozen=True)
class ViscousScheme:
    """A discretization of the viscous term nu Laplacian(omega).

    Attributes
    ----------
    name : str
        Registry name.
    kernels : tuple of str
        Particle kernels the scheme is defined for.
    needs_volumes : bool
        Whether particle volumes are needed.
    description : str
        What the scheme does, in words.
    """

    name: str
    kernels: tuple
    needs_volumes: bool
    description: str


STRETCHING_SCHEMES: dict[str, StretchingScheme] = {
    s.name: s for s in (
        StretchingScheme("transposed", True, "(grad u)^T alpha: conserves total vorticity"),
        StretchingScheme("classic", True, "(alpha . grad) u"),
        StretchingScheme("none", False, "no stretching: pure advection"),
    )
}

VISCOUS_SCHEMES: dict[str, ViscousScheme] = {
    s.name: s for s in (
        ViscousScheme("core-spreading", ("gaussian",), False,
                      "sigma^2 grows by 2 nu per unit time (Leonard 1980)"),
        ViscousScheme("pse", ("gaussian", "winckelmans-leonard"), True,
                      "particle strength exchange (Degond & Mas-Gallic 1989)"),
    )
}

# Second moment per coordinate of each kernel's normalized zeta,
# int x^2 zeta(|x|) d^3x (derived from the kernels' zeta; infinite for
# Rosenhead-Moore, which therefore has no PSE).
KERNEL_SECOND_MOMENTS = {"gaussian": 1.0, "winckelmans-leonard": 0.5}

def induction_methods() -> tuple:
    """Summation methods the induction engine accepts."""
    return tuple(induction_api.METHODS)


def curl_from_gradient(grad: np.ndarray) -> np.ndarray:
    """Curl of the velocity from its gradient.

    Parameters
    ----------
    grad : numpy.ndarray, shape (N, 3, 3)
        ``grad[i, j, k] = du_j/dx_k`` [1/s].

    Returns
    -------
    numpy.ndarray, shape (N, 3)
        curl u [1/s].
    """
    return np.stack([grad[:, 2, 1] - grad[:, 1, 2],
                     grad[:, 0, 2] - grad[:, 2, 0],
                     grad[:, 1, 0] - grad[:, 0, 1]], axis=1)


def stretching_rate(scheme: str, strengths: np.ndarray, grad: np.ndarray | None) -> np.ndarray:
    """Rate of change of strengths by vortex stretching and tilting.

    Parameters
    ----------
    scheme : {"transposed", "classic", "none"}
        Stretching scheme (see the module notes).
    strengths : numpy.ndarray, shape (N, 3)
        alpha [m^3/s].
    grad : numpy.ndarray, shape (N, 3, 3) or None
        Velocity gradient at the particles, ``grad[i, j, k] = du_j/dx_k``
        [1/s]; unused (may be None) for "none".

    Returns
    -------
    numpy.ndarray, shape (N, 3)
        d alpha / dt [m^3/s^2].
    """
    if scheme == "classic":
        return np.einsum("njk,nk->nj", grad, strengths)
    if scheme == "transposed":
        return np.einsum("njk,nj->nk", grad, strengths)
    return np.zeros_like(strengths)


def relax_divergence(strengths: np.ndarray, grad: np.ndarray, fraction: float) -> np.ndarray:
    """Pedrizzetti's (1992) relaxation of strengths toward curl u.

    Parameters
    ----------
    strengths : numpy.ndarray, shape (N, 3)
        alpha [m^3/s].
    grad : numpy.ndarray, shape (N, 3, 3)
        Velocity gradient at the particles [1/s].
    fraction : float
        Relaxation fraction f in [0, 1].

    Returns
    -------
    numpy.ndarray, shape (N, 3)
        (1 - f) alpha + f |alpha| curl u / |curl u|; a particle where
        curl u = 0 keeps its strength.
    """
    w = curl_from_gradient(grad)
    wn = np.linalg.norm(w, axis=1)
    an = np.linalg.norm(strengths, axis=1)
    ok = wn > 0.0
    target = strengths.copy()
    target[ok] = w[ok] * (an[ok] / wn[ok])[:, None]
    return (1.0 - fraction) * strengths + fraction * target


class ParticleDynamics:
    """The right-hand side d/dt (positions, strengths, sigma^2) of a particle field.

    The state is one flat float64 vector ``y`` of length 7N: positions
    (N, 3) [m], strengths (N, 3) [m^3/s] and squared smoothing radii (N,)
    [m^2], in that order. Carrying sigma^2 makes core spreading, whose rate
    2 nu is constant, exact under every Runge--Kutta scheme.

    Parameters
    ----------
    count : int
        Number of particles N.
    kernel : str
        Particle kernel name.
    stretching : str
        Stretching scheme name.
    viscosity : float
        Kinematic viscosity nu [m^2/s], zero or positive.
    viscous_scheme : str
        Viscous scheme name (used only when ``viscosity`` > 0).
    method : str
        Induction summation method, passed to :func:`wakes.induce`.
    tolerance : float
        Induction tolerance, passed to :func:`wakes.induce` when it accepts
        one and ``method`` is not "direct".
    volumes : numpy.ndarray, shape (N,), or None
        Particle volumes [m^3] (PSE only).

    Notes
    -----
    Callers validate the arguments; :class:`wakes.ParticleFlow` does.
    """

    def __init__(self, count: int, kernel: str, stretching: str, viscosity: float,
                 viscous_scheme: str, method: str, tolerance: float,
                 volumes: np.ndarray | None):
        self.count = count
        self.kernel = kernel
        self.stretching = STRETCHING_SCHEMES[stretching]
        self.viscosity = viscosity
        self.viscous = VISCOUS_SCHEMES[viscous_scheme] if viscosity > 0.0 else None
        self.volumes = volumes
        self._induce_options = {"method": method}
        if method != "direct":
            self._induce_options["tolerance"] = tolerance

    # ------------------------------------------------------------ state layout

    def unpack(self, y: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
        """Views (positions (N, 3), strengths (N, 3), sigma^2 (N,)) into ``y``."""
        n = self.count
        return y[:3 * n].reshape(n, 3), y[3 * n:6 * n].reshape(n, 3), y[6 * n:]

    @staticmethod
    def pack(positions: np.ndarray, strengths: np.ndarray, radii_sq: np.ndarray) -> np.ndarray:
        """The flat state vector of length 7N."""
        return np.concatenate([np.ravel(positions), np.ravel(strengths), np.ravel(radii_sq)])

    def particles(self, y: np.ndarray) -> Particles:
        """The state ``y`` as validated :class:`wakes.Particles`."""
        pos, alpha, s2 = self.unpack(y)
        return Particles(pos, alpha, np.sqrt(s2), self.kernel)

    # ------------------------------------------------------------ evaluation

    def induced(self, y: np.ndarray, gradient: bool):
        """Velocity (and gradient) the field induces at its own particles.

        Returns
        -------
        velocity : numpy.ndarray, shape (N, 3)
            [m/s].
        grad : numpy.ndarray, shape (N, 3, 3) or None
            ``grad[i, j, k] = du_j/dx_k`` [1/s] when ``gradient``.
        """
        p = self.particles(y)
        if gradient:
            return induction_api.induce(p, p.positions, gradient=True, **self._induce_options)
        return induction_api.induce(p, p.positions, **self._induce_options), None

    def derivative(self, y: np.ndarray, velocity: np.ndarray,
                   grad: np.ndarray | None) -> np.ndarray:
        """dy/dt given the induced velocity and gradient at the state ``y``."""
        pos, alpha, s2 = self.unpack(y)
        d_alpha = stretching_rate(self.stretching.name, alpha, grad)
        d_s2 = np.zeros_like(s2)
        if self.viscous is not None:
            if self.viscous.name == "core-spreading":
                d_s2 += 2.0 * self.viscosity
            else:
                out = np.empty_like(alpha)
                cols = [np.ascontiguousarray(pos[:, k]) for k in range(3)]
                cols += [np.ascontiguousarray(alpha[:, k]) for k in range(3)]
                pse_exchange(*cols, np.ascontiguousarray(s2), self.volumes,
                             PARTICLE_KERNELS[self.kernel].code,
                             2.0 / KERNEL_SECOND_MOMENTS[self.kernel], self.viscosity, out)
                d_alpha += out
        return self.pack(velocity, d_alpha, d_s2)

    def __call__(self, t: float, y: np.ndarray) -> np.ndarray:
        """dy/dt at the state ``y`` (the flow is autonomous: ``t`` is unused)."""
        velocity, grad = self.induced(y, self.stretching.needs_gradient)
        return self.derivative(y, velocity, grad)
