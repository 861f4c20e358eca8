"""Yardstick kernels: minimal, hand-tuned, tiled numba loops for the library's pair laws.

Written for the benchmarks only (``bench_yardstick.py`` times them beside
the library's drivers in ``wakes/induction/direct.py``), so that every speed
figure is a ratio that means the same on any machine. Each is the shortest
loop that computes the same sums to round-off, with nothing the library
needs beyond the arithmetic: no kernel switch, no validation, no gathering.

Tiling: numba ``prange`` over tiles of ``TARGET_TILE`` targets; sources in
tiles of ``SOURCE_TILE`` (structure of arrays, 7 or 8 arrays of 4 KiB: in L1
with the target tile); the inner loop runs over one source tile with an
unsigned index and scalar accumulators, which LLVM turns into packed
reductions. Same fastmath flags as the library (reassoc, contract: no NaN or
infinity assumptions), same error model. One pass per pair: velocity and
gradient sums in one loop (14 accumulators for the particles, 12 for the
segments).

Pair laws (the library's, written again here):

* particles, Winckelmans & Leonard (1993, J. Comput. Phys. 109) kernel:
  u = f (alpha x r) / (4 pi), f = (r^2 + 5/2 s^2) / (r^2 + s^2)^(5/2),
  grad u_jk = [f eps_jlk alpha_l + 2 f' (alpha x r)_j r_k] / (4 pi),
  f' = df/d(r^2);
* straight segments (Katz & Plotkin 2001, *Low-Speed Aerodynamics*) with the
  Lamb-Oseen core factor 1 - exp(-a h^2 / rc^2), a = 1.25643 (Devenport et
  al. 1996, J. Fluid Mech. 312), h the distance from the segment's line.
  The core factor over h^2 is evaluated branch-free: the 15-term Taylor
  series and the closed form are both computed and one selected, with the
  library's vectorizable e^-x (``wakes.induction.gaussian.exp_neg``, a
  primitive, not the pair law).
"""

from __future__ import annotations

import math

import numpy as np
from numba import njit, prange
from wakes.induction.gaussian import exp_neg
from wakes.induction.smoothing import LAMB_OSEEN_ALPHA

FASTMATH = {"reassoc", "contract"}
TARGET_TILE = 64
SOURCE_TILE = 512
INV_4PI = 1.0 / (4.0 * math.pi)
# (1 - e^-x)/x = sum_n (-x)^n/(n+1)!, and its derivative, for x < 0.25
_N_SERIES = 15
_P = tuple((-1.0) ** n / math.factorial(n + 1) for n in range(_N_SERIES))
_DP = tuple((n + 1) * (-1.0) ** (n + 1) / math.factorial(n + 2) for n in range(_N_SERIES - 1))


@njit(parallel=True, fastmath=FASTMATH, error_model="numpy")
def wl_velocity(tx, ty, tz, sx, sy, sz, ax, ay, az, s2, vel):
    """Winckelmans-Leonard velocity of N particles at M targets, added to vel (M, 3)."""
    m = tx.shape[0]
    n = sx.shape[0]
    for b in prange((m + TARGET_TILE - 1) // TARGET_TILE):
        i1 = min(m, (b + 1) * TARGET_TILE)
        for j0 in range(0, n, SOURCE_TILE):
            nb = min(SOURCE_TILE, n - j0)
            for i in range(b * TARGET_TILE, i1):
                xi = tx[i]
                yi = ty[i]
                zi = tz[i]
                ux = 0.0
                uy = 0.0
                uz = 0.0
                for jj in range(nb):
                    j = np.uint64(j0 + jj)
                    a1 = ax[j]
                    a2 = ay[j]
                    a3 = az[j]
                    s = s2[j]
                    rx = xi - sx[j]
                    ry = yi - sy[j]
                    rz = zi - sz[j]
                    r2 = rx * rx + ry * ry + rz * rz
                    x = r2 + s
                    f = (r2 + 2.5 * s) / (x * x * math.sqrt(x))
                    ux += f * (a2 * rz - a3 * ry)
                    uy += f * (a3 * rx - a1 * rz)
                    uz += f * (a1 * ry - a2 * rx)
                vel[i, 0] += ux * INV_4PI
                vel[i, 1] += uy * INV_4PI
                vel[i, 2] += uz * INV_4PI


@njit(parallel=True, fastmath=FASTMATH, error_model="numpy")
def wl_gradient(tx, ty, tz, sx, sy, sz, ax, ay, az, s2, vel, grad):
    """Winckelmans-Leonard velocity and gradient, added to vel (M, 3) and grad (M, 3, 3)."""
    m = tx.shape[0]
    n = sx.shape[0]
    for b in prange((m + TARGET_TILE - 1) // TARGET_TILE):
        i1 = min(m, (b + 1) * TARGET_TILE)
        for j0 in range(0, n, SOURCE_TILE):
            nb = min(SOURCE_TILE, n - j0)
            for i in range(b * TARGET_TILE, i1):
                xi = tx[i]
                yi = ty[i]
                zi = tz[i]
                ux = 0.0
                uy = 0.0
                uz = 0.0
                fax = 0.0
                fay = 0.0
                faz = 0.0
                gxx = 0.0
                gxy = 0.0
                gxz = 0.0
                gyx = 0.0
                gyy = 0.0
                gyz = 0.0
                gzx = 0.0
                gzy = 0.0
                for jj in range(nb):
                    j = np.uint64(j0 + jj)
                    a1 = ax[j]
                    a2 = ay[j]
                    a3 = az[j]
                    s = s2[j]
                    rx = xi - sx[j]
                    ry = yi - sy[j]
                    rz = zi - sz[j]
                    r2 = rx * rx + ry * ry + rz * rz
                    x = r2 + s
                    x15 = x * math.sqrt(x)
                    y5 = 1.0 / (x * x15)
                    f = (r2 + 2.5 * s) * y5
                    df = y5 - 2.5 * f * (y5 * x15)
                    cx = a2 * rz - a3 * ry
                    cy = a3 * rx - a1 * rz
                    cz = a1 * ry - a2 * rx
                    ux += f * cx
                    uy += f * cy
                    uz += f * cz
                    fax += f * a1
                    fay += f * a2
                    faz += f * a3
                    dx = df * cx
                    dy = df * cy
                    dz = df * cz
                    gxx += dx * rx
                    gxy += dx * ry
                    gxz += dx * rz
                    gyx += dy * rx
                    gyy += dy * ry
                    gyz += dy * rz
                    gzx += dz * rx
                    gzy += dz * ry
                vel[i, 0] += ux * INV_4PI
                vel[i, 1] += uy * INV_4PI
                vel[i, 2] += uz * INV_4PI
                d = 2.0 * INV_4PI
                grad[i, 0, 0] += gxx * d
                grad[i, 0, 1] += gxy * d - faz * INV_4PI
                grad[i, 0, 2] += gxz * d + fay * INV_4PI
                grad[i, 1, 0] += gyx * d + faz * INV_4PI
                grad[i, 1, 1] += gyy * d
                grad[i, 1, 2] += gyz * d - fax * INV_4PI
                grad[i, 2, 0] += gzx * d - fay * INV_4PI
                grad[i, 2, 1] += gzy * d + fax * INV_4PI
                grad[i, 2, 2] -= (gxx + gyy) * d


@njit(inline="always", fastmath=FASTMATH, error_model="numpy")
def _lamb_oseen_phi(h2, rc2):
    """(1 - e^-x)/x * a and its h^2-derivative, x = a h^2/rc^2, branch-free."""
    a = LAMB_OSEEN_ALPHA / rc2
    x = a * h2
    # series for x < 0.25 (Horner), closed form above; both computed
    p = _P[14]
    p = p * x + _P[13]
    p = p * x + _P[12]
    p = p * x + _P[11]
    p = p * x + _P[10]
    p = p * x + _P[9]
    p = p * x + _P[8]
    p = p * x + _P[7]
    p = p * x + _P[6]
    p = p * x + _P[5]
    p = p * x + _P[4]
    p = p * x + _P[3]
    p = p * x + _P[2]
    p = p * x + _P[1]
    p = p * x + _P[0]
    dp = _DP[13]
    dp = dp * x + _DP[12]
    dp = dp * x + _DP[11]
    dp = dp * x + _DP[10]
    dp = dp * x + _DP[9]
    dp = dp * x + _DP[8]
    dp = dp * x + _DP[7]
    dp = dp * x + _DP[6]
    dp = dp * x + _DP[5]
    dp = dp * x + _DP[4]
    dp = dp * x + _DP[3]
    dp = dp * x + _DP[2]
    dp = dp * x + _DP[1]
    dp = dp * x + _DP[0]
    xc = max(x, 0.25)
    e = exp_neg(min(xc, 700.0))
    inv = 1.0 / xc
    pc = (1.0 - e) * inv
    dpc = (e * (1.0 + xc) - 1.0) * inv * inv
    small = x < 0.25
    return a * (p if small else pc), a * a * (dp if small else dpc)


def _make_segment_kernel(gradient):
    @njit(parallel=True, fastmath=FASTMATH, error_model="numpy")
    def kernel(tx, ty, tz, pax, pay, paz, pbx, pby, pbz, gam, rc2, vel, grad):
        m = tx.shape[0]
        n = pax.shape[0]
        for b in prange((m + TARGET_TILE - 1) // TARGET_TILE):
            i1 = min(m, (b + 1) * TARGET_TILE)
            for j0 in range(0, n, SOURCE_TILE):
                nb = min(SOURCE_TILE, n - j0)
                for i in range(b * TARGET_TILE, i1):
                    xi = tx[i]
                    yi = ty[i]
                    zi = tz[i]
                    ux = 0.0
                    uy = 0.0
                    uz = 0.0
                    g00 = 0.0
                    g01 = 0.0
                    g02 = 0.0
                    g10 = 0.0
                    g11 = 0.0
                    g12 = 0.0
                    g20 = 0.0
                    g21 = 0.0
                    g22 = 0.0
                    for jj in range(nb):
                        j = np.uint64(j0 + jj)
                        r1x = xi - pax[j]
                        r1y = yi - pay[j]
                        r1z = zi - paz[j]
                        r2x = xi - pbx[j]
                        r2y = yi - pby[j]
                        r2z = zi - pbz[j]
                        r0x = r1x - r2x
                        r0y = r1y - r2y
                        r0z = r1z - r2z
                        cx = r1y * r2z - r1z * r2y
                        cy = r1z * r2x - r1x * r2z
                        cz = r1x * r2y - r1y * r2x
                        c2 = cx * cx + cy * cy + cz * cz
                        l2 = r0x * r0x + r0y * r0y + r0z * r0z
                        i1n = 1.0 / math.sqrt(max(r1x * r1x + r1y * r1y + r1z * r1z, 1e-300))
                        i2n = 1.0 / math.sqrt(max(r2x * r2x + r2y * r2y + r2z * r2z, 1e-300))
                        d1 = r0x * r1x + r0y * r1y + r0z * r1z
                        d2 = r0x * r2x + r0y * r2y + r0z * r2z
                        w = d1 * i1n - d2 * i2n
                        inv_l2 = 1.0 / l2 if l2 > 0.0 else 0.0   # a zero-length segment adds 0
                        phi, dphi = _lamb_oseen_phi(c2 * inv_l2, rc2[j])
                        gk = gam[j] * phi * inv_l2
                        s = gk * w
                        ux += s * cx
                        uy += s * cy
                        uz += s * cz
                        if gradient:
                            bsc = gam[j] * w * dphi * 2.0 * inv_l2 * inv_l2
                            kx = (cy * r0z - cz * r0y) * bsc
                            ky = (cz * r0x - cx * r0z) * bsc
                            kz = (cx * r0y - cy * r0x) * bsc
                            e1 = d1 * i1n * i1n
                            e2 = d2 * i2n * i2n
                            kx += ((r0x - e1 * r1x) * i1n - (r0x - e2 * r2x) * i2n) * gk
                            ky += ((r0y - e1 * r1y) * i1n - (r0y - e2 * r2y) * i2n) * gk
                            kz += ((r0z - e1 * r1z) * i1n - (r0z - e2 * r2z) * i2n) * gk
                            g00 += cx * kx
                            g01 += cx * ky - s * r0z
                            g02 += cx * kz + s * r0y
                            g10 += cy * kx + s * r0z
                            g11 += cy * ky
                            g12 += cy * kz - s * r0x
                            g20 += cz * kx - s * r0y
                            g21 += cz * ky + s * r0x
                            g22 += cz * kz
                    vel[i, 0] += ux * INV_4PI
                    vel[i, 1] += uy * INV_4PI
                    vel[i, 2] += uz * INV_4PI
                    if gradient:
                        grad[i, 0, 0] += g00 * INV_4PI
                        grad[i, 0, 1] += g01 * INV_4PI
                        grad[i, 0, 2] += g02 * INV_4PI
                        grad[i, 1, 0] += g10 * INV_4PI
                        grad[i, 1, 1] += g11 * INV_4PI
                        grad[i, 1, 2] += g12 * INV_4PI
                        grad[i, 2, 0] += g20 * INV_4PI
                        grad[i, 2, 1] += g21 * INV_4PI
                        grad[i, 2, 2] += g22 * INV_4PI

    return kernel


lamb_oseen_segment_velocity = _make_segment_kernel(False)
lamb_oseen_segment_gradient = _make_segment_kernel(True)
