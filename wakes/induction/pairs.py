"""The two pair laws, each written once and inlined by every driver.

* :func:`particle_f` -- regularized Biot--Savart of one vortex particle,
  u = f(r^2) (alpha x r) / (4 pi), with f = q(rho)/|r|^3 and r = x - x_q
  (Winckelmans & Leonard 1993, J. Comput. Phys. 109). The Gaussian kernel's
  factor comes from :func:`gaussian_f`, which drivers call directly with the
  per-source 1/sigma^2 and 1/sigma^3 they precompute.
* :func:`segment_phi`, :func:`segment_geometry` -- one straight vortex segment with a core factor,
  u = Gamma/(4 pi) (r1 x r2) phi(h^2)/|r0|^2 r0.(r1/|r1| - r2/|r2|)
  (Katz & Plotkin 2001, *Low-Speed Aerodynamics*), where phi(h^2) is the core
  factor divided by h^2, h the distance from the segment's line.

Both return the velocity without the 1/(4 pi) factor (drivers apply it once)
and, when asked, the velocity gradient grad[j][k] = d u_j / d x_k. The kernel
or core code is a compile-time constant after inlining, so every branch on it
folds away. Nothing here checks its inputs: callers validate once.
"""

import math

from numba import njit

from .gaussian import exp_neg, gaussian_g, gaussian_g_far
from .smoothing import (
    CORE_LAMB_OSEEN,
    CORE_RANKINE,
    CORE_SCULLY,
    CORE_SINGULAR,
    LAMB_OSEEN_ALPHA,
    ROSENHEAD_MOORE,
    SINGULAR,
    WINCKELMANS_LEONARD,
)

# A target closer than this fraction of a segment's length to a singular
# segment's line gets nothing from it (the line itself carries no velocity).
SINGULAR_LINE_FRACTION_SQ = 1e-24

# (1 - e^-x)/x = sum_n (-x)^n/(n+1)!; 15 terms reach round-off for x < 0.25.
_N_LO_TERMS = 15
_LO_SERIES = tuple((-1.0) ** n / math.factorial(n + 1) for n in range(_N_LO_TERMS))
# its derivative's coefficients, (n + 1) _LO_SERIES[n + 1]
_LO_DSERIES = tuple((n + 1) * _LO_SERIES[n + 1] for n in range(_N_LO_TERMS - 1))


@njit(inline="always", cache=True)
def particle_f(r2, s2, kernel):
    """Smoothing factor f = q(rho)/|r|^3 and its derivative df/d(r^2).

    Parameters
    ----------
    r2 : float
        Squared distance |r|^2 [m^2].
    s2 : float
        Squared smoothing radius sigma^2 [m^2].
    kernel : int
        Kernel code from :mod:`wakes.induction.smoothing`.

    Returns
    -------
    f : float
        [1/m^3]; zero for the singular kernel at r = 0 (self-interaction).
    df : float
        d f / d(r^2) [1/m^5].
    """
    # One square root and one division per pair, x^-1 recovered as
    # x^-1.5 * x^0.5: the shortest dependency chain measured here (10-15 %
    # faster than 1/sqrt and its powers).
    if kernel == SINGULAR:
        if r2 > 0.0:
            r = math.sqrt(r2)
            y3 = 1.0 / (r2 * r)
            return y3, -1.5 * y3 * (y3 * r)
        return 0.0, 0.0
    elif kernel == ROSENHEAD_MOORE:
        x = r2 + s2
        sq = math.sqrt(x)
        y3 = 1.0 / (x * sq)
        return y3, -1.5 * y3 * (y3 * sq)
    elif kernel == WINCKELMANS_LEONARD:
        x = r2 + s2
        x15 = x * math.sqrt(x)
        y5 = 1.0 / (x * x15)
        f = (r2 + 2.5 * s2) * y5
        return f, y5 - 2.5 * f * (y5 * x15)
    else:  # GAUSSIAN
        inv_s2 = 1.0 / s2
        return gaussian_f(r2, inv_s2, inv_s2 * math.sqrt(inv_s2))


@njit(inline="always", cache=True)
def gaussian_f(r2, inv_s2, inv_s3):
    """Gaussian-kernel f = g(t)/sigma^3 and df/d(r^2), t = r^2/sigma^2.

    Parameters
    ----------
    r2 : float
        Squared distance [m^2].
    inv_s2, inv_s3 : float
        1/sigma^2 [1/m^2] and 1/sigma^3 [1/m^3] of the source.
    """
    g, dg = gaussian_g(r2 * inv_s2)
    return g * inv_s3, dg * inv_s3 * inv_s2


@njit(inline="always", cache=True)
def gaussian_f_far(r2, inv_s2, inv_s3):
    """As :func:`gaussian_f`, valid only where r^2 >= T_NEAR sigma^2."""
    g, dg = gaussian_g_far(r2 * inv_s2)
    return g * inv_s3, dg * inv_s3 * inv_s2


@njit(inline="always", cache=True)
def segment_phi(h2, rc2, core):
    """Core factor over h^2, phi(h^2) = F(h^2)/h^2, and d phi / d(h^2).

    Parameters
    ----------
    h2 : float
        Squared distance from the segment's line [m^2] (> 0 for singular).
    rc2 : float
        Squared core radius [m^2].
    core : int
        Core code from :mod:`wakes.induction.smoothing`.
    """
    if core == CORE_SINGULAR:
        p = 1.0 / h2
        return p, -p * p
    elif core == CORE_RANKINE:
        # both sides computed and one selected, so pair loops vectorize
        inside = h2 < rc2
        p = 1.0 / (rc2 if inside else h2)
        return p, (0.0 if inside else -p * p)
    elif core == CORE_LAMB_OSEEN:
        a = LAMB_OSEEN_ALPHA / rc2
        x = a * h2
        # Taylor series of (1 - e^-x)/x and its derivative for x < 0.25 (the
        # closed forms cancel catastrophically near the core centre), the
        # closed forms above; both computed and one selected, with the
        # vectorizable e^-x, so pair loops vectorize.
        # (no branch in the Horner loops, so LLVM unrolls them and the pair
        # loop around stays innermost: a branch here kept the gradient's
        # loop scalar, 7x slower)
        p = 0.0
        for n in range(_N_LO_TERMS - 1, -1, -1):
            p = p * x + _LO_SERIES[n]
        dp = 0.0
        for n in range(_N_LO_TERMS - 2, -1, -1):
            dp = dp * x + _LO_DSERIES[n]
        xc = max(x, 0.25)
        e = exp_neg(min(xc, 700.0))     # e^-700 = 1e-304: 0 beside 1, as e^-x
        inv = 1.0 / xc
        pc = (1.0 - e) * inv
        dpc = (e * (1.0 + xc) - 1.0) * (inv * inv)
        small = x < 0.25
        return a * (p if small else pc), a * a * (dp if small else dpc)
    elif core == CORE_SCULLY:
        p = 1.0 / (rc2 + h2)
        return p, -p * p
    else:  # CORE_VATISTAS2
        p = 1.0 / math.sqrt(rc2 * rc2 + h2 * h2)
        return p, -h2 * p * p * p


@njit(inline="always", cache=True)
def segment_geometry(r1x, r1y, r1z, r2x, r2y, r2z):
    """Shared geometry of the segment law.

    Returns r0 = r1 - r2 (= B - A), c = r1 x r2, |c|^2, |r0|^2, the scalar
    W = r0.(r1/|r1| - r2/|r2|), and the pieces of dW/dx.
    """
    r0x = r1x - r2x
    r0y = r1y - r2y
    r0z = r1z - r2z
    cx = r1y * r2z - r1z * r2y
    cy = r1z * r2x - r1x * r2z
    cz = r1x * r2y - r1y * r2x
    c2 = cx * cx + cy * cy + cz * cz
    l2 = r0x * r0x + r0y * r0y + r0z * r0z
    # A target on a node: |r| clamped so 0 * (1/|r|) stays 0 (c = 0 there).
    n1 = max(r1x * r1x + r1y * r1y + r1z * r1z, 1e-300)
    n2 = max(r2x * r2x + r2y * r2y + r2z * r2z, 1e-300)
    i1 = 1.0 / math.sqrt(n1)
    i2 = 1.0 / math.sqrt(n2)
    d1 = r0x * r1x + r0y * r1y + r0z * r1z
    d2 = r0x * r2x + r0y * r2y + r0z * r2z
    w = d1 * i1 - d2 * i2
    return r0x, r0y, r0z, cx, cy, cz, c2, l2, i1, i2, d1, d2, w
