"""Independent float64 numpy references for the induction tests.

Written from the kernels' vorticity distributions zeta(rho) (Winckelmans &
Leonard 1993, J. Comput. Phys. 109) rather than from the library's
factorised pair law, so the two can disagree if either is wrong.
"""

import numpy as np
from scipy.special import erf

KERNEL_NAMES = ("singular", "rosenhead-moore", "winckelmans-leonard", "gaussian")
CORE_NAMES = ("singular", "rankine", "lamb-oseen", "scully", "vatistas2")


def q_and_dq(rho, kernel):
    """Smoothing function q(rho) and q'(rho) = 4 pi rho^2 zeta(rho)."""
    if kernel == "singular":
        return np.ones_like(rho), np.zeros_like(rho)
    if kernel == "rosenhead-moore":
        zeta = 3.0 / (4 * np.pi) * (rho**2 + 1) ** -2.5
        q = rho**3 * (rho**2 + 1) ** -1.5
    elif kernel == "winckelmans-leonard":
        zeta = 15.0 / (8 * np.pi) * (rho**2 + 1) ** -3.5
        q = rho**3 * (rho**2 + 2.5) * (rho**2 + 1) ** -2.5
    else:
        zeta = (2 * np.pi) ** -1.5 * np.exp(-rho**2 / 2)
        q = erf(rho / np.sqrt(2)) - np.sqrt(2 / np.pi) * rho * np.exp(-rho**2 / 2)
    return q, 4 * np.pi * rho**2 * zeta


def particle_field(x_src, alpha, sigma, targets, kernel):
    """Velocity (M,3) and gradient (M,3,3) by a plain double loop over targets.

    u = -1/(4 pi) sum K(|r|) r x alpha with K = q(|r|/sigma)/|r|^3; pairs at
    zero distance contribute only through the limit K(0) (regularized
    kernels) or not at all (singular).
    """
    sigma = np.broadcast_to(np.asarray(sigma, float), (len(x_src),))
    vel = np.zeros((len(targets), 3))
    grad = np.zeros((len(targets), 3, 3))
    k0 = {"rosenhead-moore": 1.0, "winckelmans-leonard": 2.5,
          "gaussian": np.sqrt(2 / np.pi) / 3}
    eps = np.zeros((3, 3, 3))
    eps[0, 1, 2] = eps[1, 2, 0] = eps[2, 0, 1] = 1
    eps[0, 2, 1] = eps[2, 1, 0] = eps[1, 0, 2] = -1
    for i, x in enumerate(targets):
        r = x - x_src
        d = np.linalg.norm(r, axis=1)
        zero = d == 0
        dz = np.where(zero, 1.0, d)
        rho = dz / sigma
        q, dq = q_and_dq(rho, kernel)
        big_k = q / dz**3
        dk = dq / (sigma * dz**3) - 3 * q / dz**4          # dK/d|r|
        if kernel == "singular":
            big_k[zero] = 0.0
        else:
            big_k[zero] = k0[kernel] / sigma[zero] ** 3
        dk[zero] = 0.0
        rxa = np.cross(r, alpha)
        vel[i] = -(big_k[:, None] * rxa).sum(0) / (4 * np.pi)
        # d/dx_k (r x alpha)_j = eps_{j k n} alpha_n
        term1 = np.einsum("q,jkn,qn->jk", big_k, eps, alpha)
        term2 = np.einsum("q,qj,qk->jk", dk / dz, rxa, r)
        grad[i] = -(term1 + term2) / (4 * np.pi)
    return vel, grad
