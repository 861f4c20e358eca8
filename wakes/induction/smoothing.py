"""Registries of particle smoothing kernels and filament core models.

Each named method is a small frozen record: its integer code (what the numba
drivers switch on), its smoothing function in words and its published source.
The names feed argument checking, the case-file schema and the command line,
so the three never disagree.

Particle kernels (Winckelmans & Leonard 1993, J. Comput. Phys. 109), with
rho = |r| / sigma and the velocity ``u = -1/(4 pi) sum q(rho) (r x alpha)/|r|^3``:

=====================  ==========================================  =====
name                   q(rho)                                      order
=====================  ==========================================  =====
singular               1                                           --
rosenhead-moore        rho^3 / (rho^2 + 1)^(3/2)                   0
winckelmans-leonard    rho^3 (rho^2 + 5/2) / (rho^2 + 1)^(5/2)     2
gaussian               erf(rho/sqrt 2) - sqrt(2/pi) rho e^(-rho^2/2) 2
=====================  ==========================================  =====

Filament core models multiply the straight-segment law by a factor of the
distance h from the segment's line (Vatistas, Kozel & Mih 1991, Exp. Fluids
11; Lamb-Oseen constant from Devenport et al. 1996, J. Fluid Mech. 312):

==========  ====================================
name        factor
==========  ====================================
singular    1 (zero on the line itself)
rankine     min(h^2 / rc^2, 1)
lamb-oseen  1 - exp(-alpha h^2 / rc^2), alpha = 1.2564312
scully      h^2 / (rc^2 + h^2)
vatistas2   h^2 / sqrt(rc^4 + h^4)
==========  ====================================
"""

from __future__ import annotations

from dataclasses import dataclass

# Lamb-Oseen peak-velocity radius constant: the swirl of a Lamb-Oseen vortex peaks at
# r^2 = alpha * 4 nu t, where alpha is the positive root of 1 + 2 alpha = e^alpha
# (Devenport et al. 1996, J. Fluid Mech. 312, quote 1.25643). Written to double
# precision (Newton on the root; 1 + 2 alpha == e^alpha in float64): the one value
# used by the core model, the core-growth law and wakes.exact.
LAMB_OSEEN_ALPHA = 1.2564312086261697


@dataclass(frozen=True)
class SmoothingKernel:
    """A particle smoothing kernel.

    Attributes
    ----------
    name : str
        Registry name.
    code : int
        Integer the numba drivers switch on.
    q : str
        The smoothing function q(rho), in words.
    order : int or None
        Order of accuracy of the regularization (None for the singular law).
    """

    name: str
    code: int
    q: str
    order: int | None


@dataclass(frozen=True)
class CoreModel:
    """A filament core model: a factor on the segment law, function of h/rc."""

    name: str
    code: int
    factor: str


SINGULAR, ROSENHEAD_MOORE, WINCKELMANS_LEONARD, GAUSSIAN = 0, 1, 2, 3

PARTICLE_KERNELS: dict[str, SmoothingKernel] = {
    k.name: k for k in (
        SmoothingKernel("singular", SINGULAR, "1", None),
        SmoothingKernel("rosenhead-moore", ROSENHEAD_MOORE, "rho^3/(rho^2+1)^(3/2)", 0),
        SmoothingKernel("winckelmans-leonard", WINCKELMANS_LEONARD,
                        "rho^3 (rho^2+5/2)/(rho^2+1)^(5/2)", 2),
        SmoothingKernel("gaussian", GAUSSIAN, "erf(rho/sqrt2) - sqrt(2/pi) rho exp(-rho^2/2)", 2),
    )
}

CORE_SINGULAR, CORE_RANKINE, CORE_LAMB_OSEEN, CORE_SCULLY, CORE_VATISTAS2 = 0, 1, 2, 3, 4

CORE_MODELS: dict[str, CoreModel] = {
    c.name: c for c in (
        CoreModel("singular", CORE_SINGULAR, "1"),
        CoreModel("rankine", CORE_RANKINE, "min(h^2/rc^2, 1)"),
        CoreModel("lamb-oseen", CORE_LAMB_OSEEN, "1 - exp(-1.25643 h^2/rc^2)"),
        CoreModel("scully", CORE_SCULLY, "h^2/(rc^2 + h^2)"),
        CoreModel("vatistas2", CORE_VATISTAS2, "h^2/sqrt(rc^4 + h^4)"),
    )
}
