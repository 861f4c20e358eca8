"""Sums over a particle field that are not Biot--Savart: the smoothed vorticity.

The vorticity a set of regularized particles carries is
``omega(x) = sum_q alpha_q zeta_sigma_q(x - x_q)`` with
``zeta_sigma(r) = zeta(|r|/sigma)/sigma^3`` and the kernel's normalized
``zeta`` (4 pi int_0^inf zeta(s) s^2 ds = 1; Winckelmans & Leonard 1993,
J. Comput. Phys. 109):

=====================  ===========================================
kernel                 zeta(rho)
=====================  ===========================================
gaussian               exp(-rho^2/2) / (2 pi)^(3/2)
winckelmans-leonard    15/(8 pi) (rho^2 + 1)^(-7/2)
rosenhead-moore        3/(4 pi) (rho^2 + 1)^(-5/2)
=====================  ===========================================

Each is the derivative of the kernel's q(rho) in :mod:`.smoothing`,
q'(rho) = 4 pi rho^2 zeta(rho). The singular kernel has no smoothed field and
is not handled here.

Inputs are structure-of-arrays float64 vectors; nothing is checked here.
"""

import math

import numpy as np
from numba import njit, prange

from ._jit import FASTMATH as _FASTMATH
from .smoothing import GAUSSIAN, ROSENHEAD_MOORE, WINCKELMANS_LEONARD

_GAUSS_NORM = 1.0 / (2.0 * math.pi) ** 1.5
_WL_NORM = 15.0 / (8.0 * math.pi)
_RM_NORM = 3.0 / (4.0 * math.pi)


@njit(inline="always", cache=True)
def zeta(t, kernel):
    """Normalized kernel zeta and d zeta / dt at t = rho^2.

    Parameters
    ----------
    t : float
        Squared normalized distance rho^2 = |r|^2 / sigma^2.
    kernel : int
        Kernel code (gaussian, winckelmans-leonard or rosenhead-moore).
    """
    if kernel == GAUSSIAN:
        z = _GAUSS_NORM * math.exp(-0.5 * t)
        return z, -0.5 * z
    elif kernel == WINCKELMANS_LEONARD:
        y = 1.0 / (t + 1.0)
        z = _WL_NORM * y * y * y * math.sqrt(y)
        return z, -3.5 * z * y
    elif kernel == ROSENHEAD_MOORE:
        y = 1.0 / (t + 1.0)
        z = _RM_NORM * y * y * math.sqrt(y)
        return z, -2.5 * z * y
    return 0.0, 0.0


_BLOCK = 1024


def _make_smoothed_fields(kernel):
    """Parallel driver of the smoothed fields for one kernel (a closure constant).

    Sources are streamed in contiguous blocks so the inner loop vectorizes;
    each kernel is its own cache entry.
    """

    @njit(parallel=True, cache=True, fastmath=_FASTMATH)
    def driver(tx, ty, tz, sx, sy, sz, ax, ay, az, s2, omega, div, density):
        n_tgt = tx.shape[0]
        n_src = sx.shape[0]
        for i in prange(n_tgt):
            xi = tx[i]
            yi = ty[i]
            zi = tz[i]
            wx = 0.0
            wy = 0.0
            wz = 0.0
            dv = 0.0
            dn = 0.0
            for j0 in range(0, n_src, _BLOCK):
                j1 = min(j0 + _BLOCK, n_src)
                bx = sx[j0:j1]
                by = sy[j0:j1]
                bz = sz[j0:j1]
                bax = ax[j0:j1]
                bay = ay[j0:j1]
                baz = az[j0:j1]
                bs2 = s2[j0:j1]
                for j in range(j1 - j0):
                    rx = xi - bx[j]
                    ry = yi - by[j]
                    rz = zi - bz[j]
                    inv_s2 = 1.0 / bs2[j]
                    z, dz = zeta((rx * rx + ry * ry + rz * rz) * inv_s2, kernel)
                    inv_s3 = inv_s2 * math.sqrt(inv_s2)
                    z *= inv_s3
                    wx += bax[j] * z
                    wy += bay[j] * z
                    wz += baz[j] * z
                    dn += z
                    # grad zeta_sigma = 2 r / sigma^5 d zeta/dt
                    dv += (2.0 * dz * inv_s3 * inv_s2) * (bax[j] * rx + bay[j] * ry + baz[j] * rz)
            omega[i, 0] = wx
            omega[i, 1] = wy
            omega[i, 2] = wz
            div[i] = dv
            density[i] = dn

    return driver


_DRIVERS: dict = {}


def smoothed_fields(tx, ty, tz, sx, sy, sz, ax, ay, az, s2, kernel, omega, div, density):
    """Smoothed vorticity, its divergence and the kernel density at targets.

    Parameters
    ----------
    tx, ty, tz : (M,) float64
        Target coordinates [m].
    sx, sy, sz, ax, ay, az, s2 : (N,) float64
        Source positions [m], strengths [m^3/s] and squared radii [m^2].
    kernel : int
        Kernel code.
    omega : (M, 3) float64
        Output: omega(x_i) = sum_q alpha_q zeta_sigma_q(x_i - x_q) [1/s].
    div : (M,) float64
        Output: div omega(x_i) [1/(m s)].
    density : (M,) float64
        Output: sum_q zeta_sigma_q(x_i - x_q) [1/m^3]; on a uniform lattice of
        spacing h with h <~ sigma it approaches 1/h^3.
    """
    key = int(kernel)
    if key not in _DRIVERS:
        _DRIVERS[key] = _make_smoothed_fields(key)
    _DRIVERS[key](tx, ty, tz, sx, sy, sz, ax, ay, az, s2, omega, div, density)


def smoothed_fields_at(targets: np.ndarray, positions: np.ndarray, strengths: np.ndarray,
                       radii: np.ndarray, kernel: int):
    """Convenience wrapper of :func:`smoothed_fields` on (N, 3) arrays.

    Returns
    -------
    omega : (M, 3), div : (M,), density : (M,) float64
    """
    m = targets.shape[0]
    omega = np.zeros((m, 3))
    div = np.zeros(m)
    density = np.zeros(m)
    t = [np.ascontiguousarray(targets[:, k]) for k in range(3)]
    p = [np.ascontiguousarray(positions[:, k]) for k in range(3)]
    a = [np.ascontiguousarray(strengths[:, k]) for k in range(3)]
    smoothed_fields(*t, *p, *a, np.ascontiguousarray(radii * radii), int(kernel),
                    omega, div, density)
    return omega, div, density
