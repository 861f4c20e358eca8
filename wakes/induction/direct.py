"""Direct (all-pairs) summation drivers, parallel over blocks of targets.

Sources are streamed in blocks of ``SOURCE_BLOCK`` that stay in cache while a
block of ``TARGET_BLOCK`` targets uses them; the inner loop runs over
contiguous slices so LLVM emits vector loads (about 3x faster than indexing
the full arrays), and reductions are allowed to reassociate (fastmath
``reassoc``/``contract`` only: no NaN/Inf assumptions) so they vectorize.

Inputs are structure-of-arrays float64 vectors; nothing is checked here.
Every driver writes velocity (M, 3) and, for the gradient drivers,
grad (M, 3, 3) with grad[i, j, k] = d u_j / d x_k, all multiplied by 1/(4 pi).
"""

import math

import numpy as np
from numba import njit, prange

from .pairs import (SINGULAR_LINE_FRACTION_SQ, particle_f, segment_geometry,
                    segment_phi)
from .smoothing import CORE_SINGULAR

TARGET_BLOCK = 128
SOURCE_BLOCK = 1024
INV_4PI = 1.0 / (4.0 * math.pi)
_FASTMATH = {"reassoc", "contract"}


# ----------------------------------------------------------------------------
# particles
# ----------------------------------------------------------------------------

@njit(inline="always", cache=True, fastmath=_FASTMATH)
def _particle_block(tx, ty, tz, sx, sy, sz, ax, ay, az, s2, kernel, gradient,
                    i0, i1, vel, grad):
    """Accumulate all sources on targets i0..i1 (one target block)."""
    n_src = sx.shape[0]
    for j0 in range(0, n_src, SOURCE_BLOCK):
        j1 = min(j0 + SOURCE_BLOCK, n_src)
        bx = sx[j0:j1]
        by = sy[j0:j1]
        bz = sz[j0:j1]
        bax = ax[j0:j1]
        bay = ay[j0:j1]
        baz = az[j0:j1]
        bs2 = s2[j0:j1]
        m = j1 - j0
        for i in range(i0, i1):
            xi = tx[i]
            yi = ty[i]
            zi = tz[i]
            ux = 0.0
            uy = 0.0
            uz = 0.0
            # gradient accumulators: sum f*alpha (antisymmetric part) and
            # sum 2 f' (alpha x r)_j r_k
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
            gzz = 0.0
            for j in range(m):
                rx = xi - bx[j]
                ry = yi - by[j]
                rz = zi - bz[j]
                r2 = rx * rx + ry * ry + rz * rz
                f, df = particle_f(r2, bs2[j], kernel)
                cx = bay[j] * rz - baz[j] * ry
                cy = baz[j] * rx - bax[j] * rz
                cz = bax[j] * ry - bay[j] * rx
                ux += f * cx
                uy += f * cy
                uz += f * cz
                if gradient:
                    fax += f * bax[j]
                    fay += f * bay[j]
                    faz += f * baz[j]
                    d = 2.0 * df
                    dcx = d * cx
                    dcy = d * cy
                    dcz = d * cz
                    gxx += dcx * rx
                    gxy += dcx * ry
                    gxz += dcx * rz
                    gyx += dcy * rx
                    gyy += dcy * ry
                    gyz += dcy * rz
                    gzx += dcz * rx
                    gzy += dcz * ry
                    gzz += dcz * rz
            vel[i, 0] += ux * INV_4PI
            vel[i, 1] += uy * INV_4PI
            vel[i, 2] += uz * INV_4PI
            if gradient:
                # grad[j, k] += f eps_{j l k} alpha_l + 2 f' (alpha x r)_j r_k
                grad[i, 0, 0] += gxx * INV_4PI
                grad[i, 0, 1] += (gxy - faz) * INV_4PI
                grad[i, 0, 2] += (gxz + fay) * INV_4PI
                grad[i, 1, 0] += (gyx + faz) * INV_4PI
                grad[i, 1, 1] += gyy * INV_4PI
                grad[i, 1, 2] += (gyz - fax) * INV_4PI
                grad[i, 2, 0] += (gzx - fay) * INV_4PI
                grad[i, 2, 1] += (gzy + fax) * INV_4PI
                grad[i, 2, 2] += gzz * INV_4PI


def _make_particle_driver(kernel, gradient):
    """Compile-on-demand parallel driver for one (kernel, gradient) pair.

    ``kernel`` and ``gradient`` are closure constants, so numba folds every
    branch on them; each pair is its own cache entry (the cache key hashes
    the closure's contents), and only the pairs a run uses get compiled.
    """

    @njit(parallel=True, cache=True, fastmath=_FASTMATH)
    def driver(tx, ty, tz, sx, sy, sz, ax, ay, az, s2, vel, grad):
        n_tgt = tx.shape[0]
        n_blocks = (n_tgt + TARGET_BLOCK - 1) // TARGET_BLOCK
        for b in prange(n_blocks):
            i0 = b * TARGET_BLOCK
            i1 = min(i0 + TARGET_BLOCK, n_tgt)
            _particle_block(tx, ty, tz, sx, sy, sz, ax, ay, az, s2, kernel, gradient,
                            i0, i1, vel, grad)

    return driver


_PARTICLE_DRIVERS: dict = {}


def particles_direct(tx, ty, tz, sx, sy, sz, ax, ay, az, s2, kernel, gradient, vel, grad):
    """Add the particles' velocity (and gradient) at the targets, in place.

    Parameters
    ----------
    tx, ty, tz : (M,) float64
        Target coordinates.
    sx, sy, sz, ax, ay, az, s2 : (N,) float64
        Source positions, strengths and squared smoothing radii.
    kernel : int
        Smoothing kernel code.
    gradient : bool
        Also accumulate the gradient into ``grad``.
    vel : (M, 3) float64
        Velocity accumulator.
    grad : (M, 3, 3) float64
        Gradient accumulator (may be shape (0, 3, 3) when not wanted).
    """
    key = (int(kernel), bool(gradient))
    if key not in _PARTICLE_DRIVERS:
        _PARTICLE_DRIVERS[key] = _make_particle_driver(*key)
    _PARTICLE_DRIVERS[key](tx, ty, tz, sx, sy, sz, ax, ay, az, s2, vel, grad)


# ----------------------------------------------------------------------------
# filament segments
# ----------------------------------------------------------------------------

@njit(inline="always", cache=True, fastmath=_FASTMATH)
def _segment_block(tx, ty, tz, pax, pay, paz, pbx, pby, pbz, gam, rc2, core, gradient,
                   i0, i1, vel, grad):
    n_src = pax.shape[0]
    for j0 in range(0, n_src, SOURCE_BLOCK):
        j1 = min(j0 + SOURCE_BLOCK, n_src)
        bax = pax[j0:j1]
        bay = pay[j0:j1]
        baz = paz[j0:j1]
        bbx = pbx[j0:j1]
        bby = pby[j0:j1]
        bbz = pbz[j0:j1]
        bg = gam[j0:j1]
        brc2 = rc2[j0:j1]
        m = j1 - j0
        for i in range(i0, i1):
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
            for j in range(m):
                r1x = xi - bax[j]
                r1y = yi - bay[j]
                r1z = zi - baz[j]
                r2x = xi - bbx[j]
                r2y = yi - bby[j]
                r2z = zi - bbz[j]
                (r0x, r0y, r0z, cx, cy, cz, c2, l2, i1n, i2n, d1, d2,
                 w) = segment_geometry(r1x, r1y, r1z, r2x, r2y, r2z)
                if l2 == 0.0:
                    continue
                inv_l2 = 1.0 / l2
                h2 = c2 * inv_l2
                if core == CORE_SINGULAR and c2 <= SINGULAR_LINE_FRACTION_SQ * l2 * l2:
                    continue
                phi, dphi = segment_phi(h2, brc2[j], core)
                s = bg[j] * phi * inv_l2 * w
                ux += s * cx
                uy += s * cy
                uz += s * cz
                if gradient:
                    gk = bg[j] * phi * inv_l2
                    # (a) eps_{jmk} r0_m K W
                    a = gk * w
                    # (b) c_j W dK/dx_k, dK/dx_k = phi' 2 (c x r0)_k / l2^2
                    bsc = bg[j] * w * dphi * 2.0 * inv_l2 * inv_l2
                    kx = (cy * r0z - cz * r0y) * bsc
                    ky = (cz * r0x - cx * r0z) * bsc
                    kz = (cx * r0y - cy * r0x) * bsc
                    # (c) c_j K dW/dx_k
                    e1 = d1 * i1n * i1n
                    e2 = d2 * i2n * i2n
                    wx = ((r0x - e1 * r1x) * i1n - (r0x - e2 * r2x) * i2n) * gk
                    wy = ((r0y - e1 * r1y) * i1n - (r0y - e2 * r2y) * i2n) * gk
                    wz = ((r0z - e1 * r1z) * i1n - (r0z - e2 * r2z) * i2n) * gk
                    g00 += cx * (kx + wx)
                    g01 += cx * (ky + wy) - a * r0z
                    g02 += cx * (kz + wz) + a * r0y
                    g10 += cy * (kx + wx) + a * r0z
                    g11 += cy * (ky + wy)
                    g12 += cy * (kz + wz) - a * r0x
                    g20 += cz * (kx + wx) - a * r0y
                    g21 += cz * (ky + wy) + a * r0x
                    g22 += cz * (kz + wz)
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


def _make_segment_driver(core, gradient):
    """Compile-on-demand parallel driver for one (core, gradient) pair."""

    @njit(parallel=True, cache=True, fastmath=_FASTMATH)
    def driver(tx, ty, tz, pax, pay, paz, pbx, pby, pbz, gam, rc2, vel, grad):
        n_tgt = tx.shape[0]
        n_blocks = (n_tgt + TARGET_BLOCK - 1) // TARGET_BLOCK
        for b in prange(n_blocks):
            i0 = b * TARGET_BLOCK
            i1 = min(i0 + TARGET_BLOCK, n_tgt)
            _segment_block(tx, ty, tz, pax, pay, paz, pbx, pby, pbz, gam, rc2, core, gradient,
                           i0, i1, vel, grad)

    return driver


_SEGMENT_DRIVERS: dict = {}


def segments_direct(tx, ty, tz, pax, pay, paz, pbx, pby, pbz, gam, rc2, core, gradient,
                    vel, grad):
    """Add the segments' velocity (and gradient) at the targets, in place.

    Parameters
    ----------
    tx, ty, tz : (M,) float64
        Target coordinates.
    pax, pay, paz, pbx, pby, pbz : (K,) float64
        Segment start (A) and end (B) points.
    gam, rc2 : (K,) float64
        Circulation and squared core radius.
    core : int
        Core model code.
    gradient : bool
        Also accumulate the gradient.
    vel, grad : (M, 3), (M, 3, 3) float64
        Accumulators (grad may be (0, 3, 3) when not wanted).
    """
    key = (int(core), bool(gradient))
    if key not in _SEGMENT_DRIVERS:
        _SEGMENT_DRIVERS[key] = _make_segment_driver(*key)
    _SEGMENT_DRIVERS[key](tx, ty, tz, pax, pay, paz, pbx, pby, pbz, gam, rc2, vel, grad)
