"""Near field of the treecode: exact pair laws between neighbouring leaves.

For each target leaf, the sources of its near leaves are gathered into
contiguous buffers, one cache-sized block (``direct.SOURCE_BLOCK``) at a
time, and summed by the same blocked pair loops that the direct drivers use (:mod:`.direct`, inlining the pair laws of
:mod:`.pairs`), so the tree's near field and the direct sum are one code (with the
same machine-dependent choices, ``direct.GRADIENT_PASSES``).
Drivers are compiled per (kernel or core, gradient) pair by a closure
factory, like the direct ones: the kernel code is a closure constant and
every branch on it folds away.
"""

import numpy as np
from numba import njit, prange

from ._jit import ERROR_MODEL
from ._jit import FASTMATH as _FASTMATH
from .direct import SOURCE_BLOCK, _particle_block, _segment_block


def _make_particle_near(kernel, gradient):
    @njit(parallel=True, cache=True, fastmath=_FASTMATH, error_model=ERROR_MODEL)
    def driver(t_leaves, t_start, t_count, near_ptr, near_src, s_start, s_count,
               tx, ty, tz, sx, sy, sz, ax, ay, az, s2, vel, grad):
        for li in prange(t_leaves.shape[0]):
            t = t_leaves[li]
            i0 = t_start[t]
            i1 = i0 + t_count[t]
            # one cache-sized block of gathered sources at a time
            gx = np.empty(SOURCE_BLOCK)
            gy = np.empty(SOURCE_BLOCK)
            gz = np.empty(SOURCE_BLOCK)
            gax = np.empty(SOURCE_BLOCK)
            gay = np.empty(SOURCE_BLOCK)
            gaz = np.empty(SOURCE_BLOCK)
            gs2 = np.empty(SOURCE_BLOCK)
            k = 0
            for e in range(near_ptr[t], near_ptr[t + 1]):
                src = near_src[e]
                for j in range(s_start[src], s_start[src] + s_count[src]):
                    gx[k] = sx[j]
                    gy[k] = sy[j]
                    gz[k] = sz[j]
                    gax[k] = ax[j]
                    gay[k] = ay[j]
                    gaz[k] = az[j]
                    gs2[k] = s2[j]
                    k += 1
                    if k == SOURCE_BLOCK:
                        _particle_block(tx, ty, tz, gx, gy, gz, gax, gay, gaz, gs2, kernel,
                                        gradient, i0, i1, vel, grad)
                        k = 0
            if k > 0:
                _particle_block(tx, ty, tz, gx[:k], gy[:k], gz[:k], gax[:k], gay[:k], gaz[:k],
                                gs2[:k], kernel, gradient, i0, i1, vel, grad)

    return driver


def _make_segment_near(core, gradient):
    @njit(parallel=True, cache=True, fastmath=_FASTMATH, error_model=ERROR_MODEL)
    def driver(t_leaves, t_start, t_count, near_ptr, near_src, s_start, s_count,
               tx, ty, tz, pax, pay, paz, pbx, pby, pbz, gam, rc2, vel, grad):
        for li in prange(t_leaves.shape[0]):
            t = t_leaves[li]
            n = 0
            for e in range(near_ptr[t], near_ptr[t + 1]):
                n += s_count[near_src[e]]
            if n == 0:
                continue
            gax = np.empty(n)
            gay = np.empty(n)
            gaz = np.empty(n)
            gbx = np.empty(n)
            gby = np.empty(n)
            gbz = np.empty(n)
            gg = np.empty(n)
            grc2 = np.empty(n)
            k = 0
            for e in range(near_ptr[t], near_ptr[t + 1]):
                src = near_src[e]
                for j in range(s_start[src], s_start[src] + s_count[src]):
                    gax[k] = pax[j]
                    gay[k] = pay[j]
                    gaz[k] = paz[j]
                    gbx[k] = pbx[j]
                    gby[k] = pby[j]
                    gbz[k] = pbz[j]
                    gg[k] = gam[j]
                    grc2[k] = rc2[j]
                    k += 1
            _segment_block(tx, ty, tz, gax, gay, gaz, gbx, gby, gbz, gg, grc2, core,
                           gradient, t_start[t], t_start[t] + t_count[t], vel, grad)

    return driver


_DRIVERS: dict = {}


def particles_near(code, gradient, *args):
    """Add the near-field particle sums into the sorted accumulators.

    ``args`` are the arguments of the compiled driver: target leaves, target
    cell ranges, CSR near lists, source cell ranges, sorted target
    coordinates, sorted source arrays (x, y, z, alpha x, y, z, sigma^2),
    ``vel`` (M, 3) and ``grad`` (M, 3, 3) or (0, 3, 3).
    """
    key = ("particle", int(code), bool(gradient))
    if key not in _DRIVERS:
        _DRIVERS[key] = _make_particle_near(int(code), bool(gradient))
    _DRIVERS[key](*args)


def segments_near(code, gradient, *args):
    """Add the near-field segment sums; ``args`` as :func:`particles_near`
    with the sorted segment arrays (A x, y, z, B x, y, z, Gamma, r_c^2)."""
    key = ("segment", int(code), bool(gradient))
    if key not in _DRIVERS:
        _DRIVERS[key] = _make_segment_near(int(code), bool(gradient))
    _DRIVERS[key](*args)
