"""Particle strength exchange (PSE): the viscous term of a particle field.

Degond & Mas-Gallic (1989, Math. Comp. 53) approximate nu Laplacian(omega)
on particles by an exchange of strength between neighbours:

    d alpha_p / dt = nu sum_q (vol_p alpha_q - vol_q alpha_p) eta_pq,
    eta_pq = (2 / m2) zeta(rho_pq) / sigma_pq^5,

with the particle kernel zeta of :mod:`.particle_ops`, m2 its second moment
per coordinate (int x^2 zeta d^3x: 1 for the Gaussian, 1/2 for
Winckelmans-Leonard) and, for particles of different radii, the symmetric
sigma_pq^2 = (sigma_p^2 + sigma_q^2) / 2 so that the exchange stays
antisymmetric and conserves sum_p alpha_p exactly. For the Gaussian this is
(2 nu / sigma^2) sum_q (vol_p alpha_q - vol_q alpha_p) zeta_sigma, the
published form.

Inputs are structure-of-arrays float64 vectors; nothing is checked here.
"""

import math

from numba import njit, prange

from ._jit import FASTMATH as _FASTMATH
from .particle_ops import zeta

_BLOCK = 1024


def _make_pse(kernel):
    """Parallel PSE driver for one kernel (a closure constant, own cache entry)."""

    @njit(parallel=True, cache=True, fastmath=_FASTMATH)
    def driver(x, y, z, ax, ay, az, s2, vol, coeff, out):
        n = x.shape[0]
        for p in prange(n):
            xp = x[p]
            yp = y[p]
            zp = z[p]
            axp = ax[p]
            ayp = ay[p]
            azp = az[p]
            s2p = s2[p]
            vp = vol[p]
            ex = 0.0
            ey = 0.0
            ez = 0.0
            for q0 in range(0, n, _BLOCK):
                q1 = min(q0 + _BLOCK, n)
                bx = x[q0:q1]
                by = y[q0:q1]
                bz = z[q0:q1]
                bax = ax[q0:q1]
                bay = ay[q0:q1]
                baz = az[q0:q1]
                bs2 = s2[q0:q1]
                bv = vol[q0:q1]
                for q in range(q1 - q0):
                    # the self term vanishes: vol_p alpha_p - vol_p alpha_p = 0
                    rx = xp - bx[q]
                    ry = yp - by[q]
                    rz = zp - bz[q]
                    inv_s2 = 2.0 / (s2p + bs2[q])
                    zz, _ = zeta((rx * rx + ry * ry + rz * rz) * inv_s2, kernel)
                    eta = zz * inv_s2 * inv_s2 * math.sqrt(inv_s2)
                    ex += (vp * bax[q] - bv[q] * axp) * eta
                    ey += (vp * bay[q] - bv[q] * ayp) * eta
                    ez += (vp * baz[q] - bv[q] * azp) * eta
            out[p, 0] = coeff * ex
            out[p, 1] = coeff * ey
            out[p, 2] = coeff * ez

    return driver


_DRIVERS: dict = {}


def pse_exchange(x, y, z, ax, ay, az, s2, vol, kernel, scale, nu, out):
    """Rate of change of strengths by PSE, written into ``out``.

    Parameters
    ----------
    x, y, z, ax, ay, az, s2, vol : (N,) float64
        Positions [m], strengths [m^3/s], squared radii [m^2], volumes [m^3].
    kernel : int
        Kernel code (gaussian or winckelmans-leonard).
    scale : float
        2 / m2 of the kernel.
    nu : float
        Kinematic viscosity [m^2/s].
    out : (N, 3) float64
        Output d alpha / dt [m^3/s^2].
    """
    key = int(kernel)
    if key not in _DRIVERS:
        _DRIVERS[key] = _make_pse(key)
    _DRIVERS[key](x, y, z, ax, ay, az, s2, vol, nu * scale, out)
