"""Direct (all-pairs) summation drivers, parallel over blocks of targets.

Sources are streamed in blocks of ``SOURCE_BLOCK`` that stay in cache while a
block of ``TARGET_BLOCK`` targets uses them; the inner loop runs over
contiguous slices so LLVM emits vector loads (about 3x faster than indexing
the full arrays), and reductions are allowed to reassociate (fastmath
``reassoc``/``contract`` only: no NaN/Inf assumptions) so they vectorize.
``error_model=ERROR_MODEL`` keeps division from raising, so nothing in a pair
loop branches out of it.

With the gradient, the algebraic kernels' fourteen sums are one loop
where the CPU has 32 vector registers (AVX-512, at either vector width),
and three passes over a sub-block of ``GRADIENT_BLOCK`` sources that stays
in L1 where it has 16 (AVX2; :func:`_gradient_sums`): the pair factors f
and f' (square root and division), then the velocity, sum f alpha and
f' (alpha x r), then the eight gradient sums. On 16 registers one loop
spills and keeps a square root and a division in every iteration's
dependency chain; split, each loop is short and none spills (1.3x faster,
measured on an AVX2 CPU; benchmarks/bench_direct.py). On 32 registers the
one loop does not spill and the passes' stores and reloads are the cost
(three passes ran at 1.27x the one loop on an AVX-512 CPU;
benchmarks/bench_yardstick.py). ``GRADIENT_PASSES`` holds the choice, made
once at import from the CPU numba compiles for (:mod:`._jit`).

The segment loops select rather than branch (a zero-length segment, a
target on a singular line, the Lamb-Oseen core's series), so they vectorize
like the particle loops.

The Gaussian kernel differs from the singular one only within
``sqrt(T_FAR)`` = 9.5 sigma (by less than 3e-19 beyond), so its sources are
visited in sub-blocks of ``SUB_BLOCK``: a sub-block whose bounding box is
that far from the target in units of its largest sigma uses the singular
law, one beyond ``sqrt(T_NEAR)`` sigma skips the near-centre series, and
only the rest pays the full kernel. :func:`particles_direct` sorts Gaussian
sources along a Morton curve first so that sub-blocks are compact.

Inputs are structure-of-arrays float64 vectors; nothing is checked here.
Every driver writes velocity (M, 3) and, for the gradient drivers,
grad (M, 3, 3) with grad[i, j, k] = d u_j / d x_k, all multiplied by 1/(4 pi).
"""

import math

import numpy as np
from numba import njit, prange

from ._jit import ERROR_MODEL, gradient_passes, machine_target
from ._jit import FASTMATH as _FASTMATH
from .gaussian import T_FAR, T_NEAR
from .pairs import (
    SINGULAR_LINE_FRACTION_SQ,
    gaussian_f,
    gaussian_f_far,
    particle_f,
    segment_geometry,
    segment_phi,
)
from .smoothing import CORE_SINGULAR, GAUSSIAN, SINGULAR

TARGET_BLOCK = 128
SOURCE_BLOCK = 1024
GRADIENT_BLOCK = 256     # 7 source and 5 scratch arrays of it fit a 32 KiB L1
SUB_BLOCK = 32
INV_4PI = 1.0 / (4.0 * math.pi)
# The CPU numba compiles for, and the choice made from it (_jit.gradient_passes).
TARGET = machine_target()
GRADIENT_PASSES = gradient_passes(TARGET)
# Internal law code next to the kernel codes of .smoothing: the Gaussian
# kernel where every pair has t >= T_NEAR.
_GAUSSIAN_FAR = -1


# ----------------------------------------------------------------------------
# particles
# ----------------------------------------------------------------------------

@njit(inline="always", cache=True, fastmath=_FASTMATH, error_model=ERROR_MODEL)
def _add_target_sums(ux, uy, uz, fax, fay, faz, gxx, gxy, gxz, gyx, gyy, gyz, gzx, gzy,
                     i, vel, grad):
    """Scale one target's sums by 1/(4 pi) and add them to vel[i], grad[i]."""
    vel[i, 0] += ux * INV_4PI
    vel[i, 1] += uy * INV_4PI
    vel[i, 2] += uz * INV_4PI
    # grad[j, k] += f eps_{j l k} alpha_l + 2 f' (alpha x r)_j r_k
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


@njit(inline="always", cache=True, fastmath=_FASTMATH, error_model=ERROR_MODEL)
def _sum_sources(xi, yi, zi, bx, by, bz, bax, bay, baz, bs2, binv2, binv3, k0, k1, law,
                 gradient, i, vel, grad):
    """Add sources k0..k1 of one source block to target i.

    ``law`` is a kernel code, or ``_GAUSSIAN_FAR``; ``binv2``, ``binv3`` are
    the sources' 1/sigma^2 and 1/sigma^3 (read by the Gaussian laws only).
    The index is unsigned so numba emits no negative-index wraparound:
    LLVM then sees consecutive addresses and emits vector loads (a signed
    ``range(k0, k1)`` index runs about 4x slower; a slice would cost a
    reference-count update per call).
    """
    ux = 0.0
    uy = 0.0
    uz = 0.0
    # gradient: sum f alpha (antisymmetric part) and sum f' (alpha x r)_j r_k;
    # the second is trace-free ((alpha x r).r = 0), so its zz entry is -(xx + yy)
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
    for jj in range(k1 - k0):
        j = np.uint64(k0 + jj)
        rx = xi - bx[j]
        ry = yi - by[j]
        rz = zi - bz[j]
        r2 = rx * rx + ry * ry + rz * rz
        if law == GAUSSIAN:
            f, df = gaussian_f(r2, binv2[j], binv3[j])
        elif law == _GAUSSIAN_FAR:
            f, df = gaussian_f_far(r2, binv2[j], binv3[j])
        else:
            f, df = particle_f(r2, bs2[j], law)
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
            dcx = df * cx
            dcy = df * cy
            dcz = df * cz
            gxx += dcx * rx
            gxy += dcx * ry
            gxz += dcx * rz
            gyx += dcy * rx
            gyy += dcy * ry
            gyz += dcy * rz
            gzx += dcz * rx
            gzy += dcz * ry
    if gradient:
        _add_target_sums(ux, uy, uz, fax, fay, faz, gxx, gxy, gxz, gyx, gyy, gyz, gzx, gzy,
                         i, vel, grad)
    else:
        vel[i, 0] += ux * INV_4PI
        vel[i, 1] += uy * INV_4PI
        vel[i, 2] += uz * INV_4PI


@njit(inline="always", cache=True, fastmath=_FASTMATH, error_model=ERROR_MODEL)
def _gradient_sums(xi, yi, zi, bx, by, bz, bax, bay, baz, bs2, k0, k1, law, i, vel, grad,
                   scratch):
    """Add sources k0..k1 (at most GRADIENT_BLOCK) to target i, velocity and gradient.

    Three passes over the sources, each a short vectorized loop (see the
    module notes): ``scratch`` is a (5, GRADIENT_BLOCK) work array that
    receives f, f' and f' (alpha x r). Same sums as :func:`_sum_sources`
    with ``gradient`` true, for the laws of :func:`particle_f`.
    """
    n = k1 - k0
    bf = scratch[0]
    bdf = scratch[1]
    dcx = scratch[2]
    dcy = scratch[3]
    dcz = scratch[4]
    # pass 1: the pair factors (square root and division)
    for jj in range(n):
        j = np.uint64(k0 + jj)
        q = np.uint64(jj)
        rx = xi - bx[j]
        ry = yi - by[j]
        rz = zi - bz[j]
        f, df = particle_f(rx * rx + ry * ry + rz * rz, bs2[j], law)
        bf[q] = f
        bdf[q] = df
    # pass 2: velocity, sum f alpha, and f' (alpha x r) for pass 3
    ux = 0.0
    uy = 0.0
    uz = 0.0
    fax = 0.0
    fay = 0.0
    faz = 0.0
    for jj in range(n):
        j = np.uint64(k0 + jj)
        q = np.uint64(jj)
        rx = xi - bx[j]
        ry = yi - by[j]
        rz = zi - bz[j]
        f = bf[q]
        df = bdf[q]
        cx = bay[j] * rz - baz[j] * ry
        cy = baz[j] * rx - bax[j] * rz
        cz = bax[j] * ry - bay[j] * rx
        ux += f * cx
        uy += f * cy
        uz += f * cz
        fax += f * bax[j]
        fay += f * bay[j]
        faz += f * baz[j]
        dcx[q] = df * cx
        dcy[q] = df * cy
        dcz[q] = df * cz
    # pass 3: sum f' (alpha x r)_j r_k, trace-free (zz = -(xx + yy))
    gxx = 0.0
    gxy = 0.0
    gxz = 0.0
    gyx = 0.0
    gyy = 0.0
    gyz = 0.0
    gzx = 0.0
    gzy = 0.0
    for jj in range(n):
        j = np.uint64(k0 + jj)
        q = np.uint64(jj)
        rx = xi - bx[j]
        ry = yi - by[j]
        rz = zi - bz[j]
        dx = dcx[q]
        dy = dcy[q]
        dz = dcz[q]
        gxx += dx * rx
        gxy += dx * ry
        gxz += dx * rz
        gyx += dy * rx
        gyy += dy * ry
        gyz += dy * rz
        gzx += dz * rx
        gzy += dz * ry
    _add_target_sums(ux, uy, uz, fax, fay, faz, gxx, gxy, gxz, gyx, gyy, gyz, gzx, gzy,
                     i, vel, grad)


def _make_gaussian_block(gradient):
    """Gaussian sources of one source block on targets i0..i1, by sub-block.

    A separate compiled function (one per ``gradient``), not inlined: it
    holds three copies of the pair loop, and numba's inlining of that many
    would multiply every driver's compile time.
    """

    @njit(cache=True, fastmath=_FASTMATH, error_model=ERROR_MODEL)
    def gaussian_block(tx, ty, tz, i0, i1, bx, by, bz, bax, bay, baz, bs2, inv, box,
                       vel, grad):
        m = bx.shape[0]
        inv2 = inv[0]
        inv3 = inv[1]
        for j in range(m):
            inv2[j] = 1.0 / bs2[j]
            inv3[j] = inv2[j] * math.sqrt(inv2[j])
        # per sub-block: bounding box, and T_FAR, T_NEAR times its largest sigma^2
        n_sub = (m + SUB_BLOCK - 1) // SUB_BLOCK
        xlo = box[0]
        xhi = box[1]
        ylo = box[2]
        yhi = box[3]
        zlo = box[4]
        zhi = box[5]
        far2 = box[6]
        near2 = box[7]
        cls = box[8]
        for b in range(n_sub):
            k0 = b * SUB_BLOCK
            k1 = min(k0 + SUB_BLOCK, m)
            x0 = x1 = bx[k0]
            y0 = y1 = by[k0]
            z0 = z1 = bz[k0]
            s2m = bs2[k0]
            for k in range(k0 + 1, k1):
                x0 = min(x0, bx[k])
                x1 = max(x1, bx[k])
                y0 = min(y0, by[k])
                y1 = max(y1, by[k])
                z0 = min(z0, bz[k])
                z1 = max(z1, bz[k])
                s2m = max(s2m, bs2[k])
            xlo[b] = x0
            xhi[b] = x1
            ylo[b] = y0
            yhi[b] = y1
            zlo[b] = z0
            zhi[b] = z1
            far2[b] = T_FAR * s2m
            near2[b] = T_NEAR * s2m
        for i in range(i0, i1):
            xi = tx[i]
            yi = ty[i]
            zi = tz[i]
            # class of each sub-block (0 singular law, 1 far form, 2 full
            # Gaussian), in one vectorized loop
            for bb in range(n_sub):
                b = np.uint64(bb)
                dx = max(xlo[b] - xi, 0.0, xi - xhi[b])
                dy = max(ylo[b] - yi, 0.0, yi - yhi[b])
                dz = max(zlo[b] - zi, 0.0, zi - zhi[b])
                d2 = dx * dx + dy * dy + dz * dz
                cls[b] = (1.0 if d2 < far2[b] else 0.0) + (1.0 if d2 < near2[b] else 0.0)
            # runs of consecutive sub-blocks of one class are summed in one call
            b0 = 0
            cls0 = cls[0]
            for b in range(1, n_sub + 1):
                c = cls[b] if b < n_sub else -1.0
                if c == cls0:
                    continue
                k0 = b0 * SUB_BLOCK
                k1 = min(b * SUB_BLOCK, m)
                # constant laws in each call, so each loop is specialised
                if cls0 == 0.0:
                    _sum_sources(xi, yi, zi, bx, by, bz, bax, bay, baz, bs2, bs2, bs2,
                                 k0, k1, SINGULAR, gradient, i, vel, grad)
                elif cls0 == 1.0:
                    _sum_sources(xi, yi, zi, bx, by, bz, bax, bay, baz, bs2, inv2, inv3,
                                 k0, k1, _GAUSSIAN_FAR, gradient, i, vel, grad)
                else:
                    _sum_sources(xi, yi, zi, bx, by, bz, bax, bay, baz, bs2, inv2, inv3,
                                 k0, k1, GAUSSIAN, gradient, i, vel, grad)
                b0 = b
                cls0 = c

    return gaussian_block


_gaussian_velocity_block = _make_gaussian_block(False)
_gaussian_gradient_block = _make_gaussian_block(True)


@njit(inline="always", cache=True, fastmath=_FASTMATH, error_model=ERROR_MODEL)
def _particle_block(tx, ty, tz, sx, sy, sz, ax, ay, az, s2, kernel, gradient,
                    i0, i1, vel, grad):
    """Accumulate all sources on targets i0..i1 (one target block)."""
    n_src = sx.shape[0]
    # the algebraic kernels' gradient runs over L1-sized blocks in three
    # passes where one loop would spill (GRADIENT_PASSES, from the machine)
    # (nested conditions on constants, so numba prunes the branches not taken)
    block = SOURCE_BLOCK
    if kernel == GAUSSIAN:
        inv = np.empty((2, SOURCE_BLOCK))
        box = np.empty((9, SOURCE_BLOCK // SUB_BLOCK))
    elif gradient:
        if GRADIENT_PASSES == 3:
            scratch = np.empty((5, GRADIENT_BLOCK))
            block = GRADIENT_BLOCK
    for j0 in range(0, n_src, block):
        j1 = min(j0 + block, n_src)
        bx = sx[j0:j1]
        by = sy[j0:j1]
        bz = sz[j0:j1]
        bax = ax[j0:j1]
        bay = ay[j0:j1]
        baz = az[j0:j1]
        bs2 = s2[j0:j1]
        if kernel == GAUSSIAN:
            if gradient:
                _gaussian_gradient_block(tx, ty, tz, i0, i1, bx, by, bz, bax, bay, baz, bs2,
                                         inv, box, vel, grad)
            else:
                _gaussian_velocity_block(tx, ty, tz, i0, i1, bx, by, bz, bax, bay, baz, bs2,
                                         inv, box, vel, grad)
        elif gradient and GRADIENT_PASSES == 3:
            for i in range(i0, i1):
                _gradient_sums(tx[i], ty[i], tz[i], bx, by, bz, bax, bay, baz, bs2, 0, j1 - j0,
                               kernel, i, vel, grad, scratch)
        else:
            for i in range(i0, i1):
                _sum_sources(tx[i], ty[i], tz[i], bx, by, bz, bax, bay, baz, bs2, bs2, bs2,
                             0, j1 - j0, kernel, gradient, i, vel, grad)


def _make_particle_driver(kernel, gradient):
    """Compile-on-demand parallel driver for one (kernel, gradient) pair.

    ``kernel`` and ``gradient`` are closure constants, so numba folds every
    branch on them; each pair is its own cache entry (the cache key hashes
    the closure's contents), and only the pairs a run uses get compiled.
    """

    @njit(parallel=True, cache=True, fastmath=_FASTMATH, error_model=ERROR_MODEL)
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


def _spread_bits(v):
    """Spread the low 10 bits of each uint64 so two zero bits follow each."""
    v = (v | (v << np.uint64(16))) & np.uint64(0x030000FF)
    v = (v | (v << np.uint64(8))) & np.uint64(0x0300F00F)
    v = (v | (v << np.uint64(4))) & np.uint64(0x030C30C3)
    return (v | (v << np.uint64(2))) & np.uint64(0x09249249)


def morton_order(x, y, z):
    """Permutation sorting points along a Morton (Z-order) curve.

    Points are binned on a 1024^3 grid over their bounding cube; points in
    a run of the sorted order are close together (Morton 1966, IBM report).

    Parameters
    ----------
    x, y, z : (N,) float64
        Coordinates.

    Returns
    -------
    (N,) int64
        Indices in curve order.
    """
    pts = np.stack((x, y, z))
    lo = pts.min(axis=1, keepdims=True)
    span = float((pts.max(axis=1, keepdims=True) - lo).max())
    scale = 1023.0 / span if span > 0.0 else 0.0
    cells = np.minimum((pts - lo) * scale, 1023.0).astype(np.uint64)
    key = (_spread_bits(cells[0]) | (_spread_bits(cells[1]) << np.uint64(1))
           | (_spread_bits(cells[2]) << np.uint64(2)))
    return np.argsort(key, kind="stable")


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
    if key[0] == GAUSSIAN and sx.shape[0] > 2 * SUB_BLOCK and tx.shape[0] >= TARGET_BLOCK:
        # compact sub-blocks for the far-field test; the sort costs less
        # than one block of targets' sum
        order = morton_order(sx, sy, sz)
        sx, sy, sz, ax, ay, az, s2 = (v[order] for v in (sx, sy, sz, ax, ay, az, s2))
    _PARTICLE_DRIVERS[key](tx, ty, tz, sx, sy, sz, ax, ay, az, s2, vel, grad)


# ----------------------------------------------------------------------------
# filament segments
# ----------------------------------------------------------------------------

@njit(inline="always", cache=True, fastmath=_FASTMATH, error_model=ERROR_MODEL)
def _segment_block(tx, ty, tz, pax, pay, paz, pbx, pby, pbz, gam, rc2, core, gradient,
                   i0, i1, vel, grad):
    n_src = pax.shape[0]
    for j0 in range(0, n_src, SOURCE_BLOCK):
        j1 = min(j0 + SOURCE_BLOCK, n_src)
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
            for jj in range(m):
                # unsigned index: no wraparound check, so LLVM sees
                # consecutive addresses (see _sum_sources)
                j = np.uint64(j0 + jj)
                r1x = xi - pax[j]
                r1y = yi - pay[j]
                r1z = zi - paz[j]
                r2x = xi - pbx[j]
                r2y = yi - pby[j]
                r2z = zi - pbz[j]
                (r0x, r0y, r0z, cx, cy, cz, c2, l2, i1n, i2n, d1, d2,
                 w) = segment_geometry(r1x, r1y, r1z, r2x, r2y, r2z)
                # A zero-length segment, and a target on a singular segment's
                # line, add nothing: selected, not branched, so the loop
                # vectorizes (inv_l2 = 0 zeroes every term; h2 = 1 keeps
                # phi finite).
                live = l2 > 0.0
                if core == CORE_SINGULAR:
                    live = live and c2 > SINGULAR_LINE_FRACTION_SQ * l2 * l2
                inv_l2 = 1.0 / l2 if live else 0.0
                h2 = c2 * inv_l2 if live else 1.0
                phi, dphi = segment_phi(h2, rc2[j], core)
                s = gam[j] * phi * inv_l2 * w
                ux += s * cx
                uy += s * cy
                uz += s * cz
                if gradient:
                    gk = gam[j] * phi * inv_l2
                    # (a) eps_{jmk} r0_m K W
                    a = gk * w
                    # (b) c_j W dK/dx_k, dK/dx_k = phi' 2 (c x r0)_k / l2^2
                    bsc = gam[j] * w * dphi * 2.0 * inv_l2 * inv_l2
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

    @njit(parallel=True, cache=True, fastmath=_FASTMATH, error_model=ERROR_MODEL)
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
