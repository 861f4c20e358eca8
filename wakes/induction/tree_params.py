"""Treecode settings chosen from the requested tolerance.

* Opening parameter theta and expansion order p: a table calibrated against
  direct summation (see ``benchmarks/bench_tree.py`` and the tests) with a
  safety margin; the relative L2 error of the velocity stays below the
  tolerance and that of the gradient below ten times it.
* Where a regularized kernel may be replaced by the singular one: the
  smallest rho = |r|/sigma (or h/r_c for a filament core) beyond which the
  two pair laws differ by less than the tolerance (``REGULARIZATION_SHARE``
  of it), in the velocity and, ten times looser, in the gradient.
* When a pair of cells is worth an expansion rather than a direct sum (a
  cost model), and when "auto" picks the tree (measured break-even).
* Which requests go to the tree at all, and a memory estimate checked
  before anything large is allocated.
"""

from __future__ import annotations

import math
from functools import cache

import numpy as np
from scipy.optimize import brentq
from scipy.special import erfc

from .._system import available_bytes
from ..errors import InputError
from .smoothing import (
    CORE_LAMB_OSEEN,
    CORE_RANKINE,
    CORE_SCULLY,
    CORE_SINGULAR,
    GAUSSIAN,
    LAMB_OSEEN_ALPHA,
    ROSENHEAD_MOORE,
    SINGULAR,
    WINCKELMANS_LEONARD,
)
from .tree_expansion import expansion_tables, n_terms

# Largest change of a far pair's velocity, relative to the tolerance, allowed
# when a regularized kernel or a core factor is replaced by the singular
# law. The change decays fast beyond the reach (1/rho^4 or faster, except
# Rosenhead--Moore's 1/rho^2), so only the closest far pairs come near it:
# measured on 20,000-point cubes (Gaussian and Winckelmans--Leonard,
# sigma = 1 and 2 mean spacings, tolerances 1e-3 to 1e-6), allowing the
# whole tolerance per pair raised the total error by at most 0.04 x
# tolerance over allowing a tenth of it, and cut the work within the reach.
REGULARIZATION_SHARE = 1.0
# Growth of an algebraic kernel's excess over 1/|r| per expansion order, as
# the power of (q + 1) in :func:`excess_orders`. Measured on 30,000-point
# cubes at tolerance 1e-4 with a converged (p = 12) harmonic part: powers 0,
# 1, 2 and 4 gave velocity errors of 1.8e-5, 5.1e-6, 1.8e-6, 1.6e-6
# (Winckelmans--Leonard, sigma = 2 mean spacings) and 1.4e-5, 2.4e-6,
# 1.3e-6, 1.3e-6 (Rosenhead--Moore, sigma = 1): at 1 the excess adds about
# tolerance / 20.
EXCESS_GROWTH = 1.0

# (tolerance, theta, order p, auto crossover): a request uses the first row
# whose tolerance is at or below it. Calibrated against direct summation on
# the hardest case met (random strengths in a cube, Winckelmans--Leonard
# kernel with a uniform radius of twice the mean spacing: the smooth, weak
# near field leaves the far field the largest share of the velocity); the
# error max(velocity error, gradient error / 10) stays below a third of the
# row's tolerance there, and from the pairs that meet that, the one with
# the least work (M2L count ~ theta^-3 times reduced-table length) is taken.
# The crossover is the number of source-target pairs above which the tree
# beat direct summation (velocity and gradient, one thread, N = 3,000 to
# 48,000 random points; benchmarks/bench_tree.py).
_SETTINGS = (
    (1e-2, 0.60, 6, 4e6),     # calibration case: 2.3e-3
    (1e-3, 0.50, 7, 8e6),     # 2.3e-4
    (1e-4, 0.50, 9, 2e7),     # 2.9e-5 (20,000 points, after the excess split)
    (1e-5, 0.45, 11, 4e7),    # 2.8e-6
    (1e-6, 0.40, 12, 2e8),    # 2.3e-7
    (1e-7, 0.40, 14, 7e8),    # 3.3e-8
    (1e-8, 0.35, 15, 2.2e9),  # 1.4e-9
    (1e-9, 0.30, 15, 2.7e9),  # 1.2e-10
    (1e-10, 0.30, 17, 4e9),   # 9.6e-12
)
LEAF_SIZE = 128  # octree leaves of 16-128 points: balances near-field pairs against expansions


def _row(tolerance: float) -> tuple:
    for row in _SETTINGS:
        if tolerance >= row[0]:
            return row
    return _SETTINGS[-1]


def expansion_settings(tolerance: float) -> tuple[float, int]:
    """Opening parameter theta and order p for a relative tolerance."""
    return _row(tolerance)[1:3]


def auto_crossover_pairs(tolerance: float) -> float:
    """Source-target pairs above which "auto" picks the tree."""
    return _row(tolerance)[3]


# Relative cost of one pair of the exact law (velocity and gradient), per
# kernel code and per core code, and of one M2L per reduced-table entry, in
# units of a Winckelmans--Leonard particle pair: measured on the development
# machine (the Gaussian's erf and exp do not vectorise).
_PAIR_COST = {SINGULAR: 1.0, ROSENHEAD_MOORE: 1.0, WINCKELMANS_LEONARD: 1.0, GAUSSIAN: 15.0}
_SEGMENT_PAIR_COST = 2.5
_M2L_COST_PER_ENTRY = 0.16
_M2L_COST_FIXED = 360.0


def min_far_pairs(p: int, code: int, segments: bool) -> int:
    """Fewest point pairs for which a cell pair is worth an expansion.

    The cost of one M2L of order ``p`` (fixed part plus the harmonic table
    length; a regularized kernel's excess adds a low-order one to some
    pairs, left out) over the cost of one pair of the exact law for the
    kernel or core ``code``.
    """
    tab = expansion_tables(p)["harmonic"]
    m2l = _M2L_COST_FIXED + _M2L_COST_PER_ENTRY * tab["coef"].shape[0]
    pair = _SEGMENT_PAIR_COST if segments else _PAIR_COST[code]
    return int(m2l / pair)


def _algebraic_terms(kernel: int, rho):
    """1 - q(rho) and q'(rho) of an algebraic kernel, for a float or an array of rho.

    Winckelmans-Leonard: 1 - q = ((r^2+1)^(5/2) - rho^3 (rho^2 + 5/2)) / (r^2+1)^(5/2),
    exact to round-off only while 1 - q >> 1e-16; beyond (rho >= 50) the
    asymptote 15/(8 rho^4) is used.
    """
    rho = np.asarray(rho, dtype=np.float64)
    s = rho * rho + 1.0
    with np.errstate(over="ignore", invalid="ignore"):   # the branch np.where drops may overflow
        if kernel == ROSENHEAD_MOORE:
            one_minus_q = 1.0 - rho**3 * s**-1.5
            dq = 3.0 * rho * rho * s**-2.5
        else:  # WINCKELMANS_LEONARD
            one_minus_q = np.where(rho < 50.0, 1.0 - rho**3 * (rho * rho + 2.5) * s**-2.5,
                                   15.0 / (8.0 * np.maximum(rho, 1.0) ** 4))
            dq = 7.5 * rho * rho * s**-3.5
    return one_minus_q, dq


def _kernel_excess(kernel: int, rho: float) -> tuple[float, float]:
    """Relative change of the velocity and of the gradient pair law when a
    particle kernel is replaced by the singular law, at rho = |r|/sigma.

    With f = q(rho)/|r|^3 the pair velocity changes by (1 - q) and the
    gradient by at most (1 - q) + rho q'(rho)/3 relative to the singular
    pair (the gradient holds f and 2 f' r^2 = (rho q' - 3 q)/|r|^3).
    """
    if kernel in (ROSENHEAD_MOORE, WINCKELMANS_LEONARD):
        one_minus_q, dq = (float(v) for v in _algebraic_terms(kernel, rho))
    else:  # GAUSSIAN
        one_minus_q = erfc(rho / math.sqrt(2.0)) + math.sqrt(2.0 / math.pi) * rho * \
            math.exp(-0.5 * rho * rho)
        dq = math.sqrt(2.0 / math.pi) * rho * rho * math.exp(-0.5 * rho * rho)
    return one_minus_q, one_minus_q + rho * dq / 3.0


def _algebraic_excess(kernel: int, rho: np.ndarray) -> np.ndarray:
    """max(velocity excess, gradient excess / 10) of :func:`_kernel_excess`
    for the algebraic kernels, vectorised over rho."""
    one_minus_q, dq = _algebraic_terms(kernel, rho)
    return np.maximum(one_minus_q, (one_minus_q + rho * dq / 3.0) / 10.0)


def excess_orders(kernel: int, tolerance: float, sigma: float, p: int, gap: np.ndarray,
                  ratio: np.ndarray) -> np.ndarray:
    """Expansion order of a uniform-radius algebraic kernel's excess over
    the singular potential, per far pair of cells.

    A pair whose closest points are ``gap`` apart and whose opening ratio
    is ``ratio`` = (b_t + b_s)/D gets the lowest order q in [2, p] at which
    the excess e (relative to the singular pair law, at rho = gap/sigma),
    times the truncation factor ratio^(q+1) (q+1)^4 of its Taylor series
    (the excess ~ sigma^4/r^5 has derivatives that grow like q^4 relative
    to 1/r's), is within the tolerance; -1 where e itself is (the
    singular law is then as good as the kernel's).
    """
    e = _algebraic_excess(kernel, np.maximum(gap, 0.0) / sigma)
    limit = REGULARIZATION_SHARE * tolerance
    orders = np.full(gap.shape[0], -1, np.int64)
    idx = np.flatnonzero(e > limit)
    e, ratio = e[idx], ratio[idx]
    for q in range(2, p + 1):
        ok = e * ratio ** (q + 1) * (q + 1.0) ** EXCESS_GROWTH <= limit
        orders[idx[ok]] = q
        idx, e, ratio = idx[~ok], e[~ok], ratio[~ok]
    orders[idx] = p
    return orders


def harmonic_orders(p: int, theta: float, ratio: np.ndarray) -> np.ndarray:
    """Order of the harmonic expansion per far pair: the least q >= 2 with
    ratio^(q+1) <= theta^(p+1+HARMONIC_EXTRA) (the truncation bound of the
    worst accepted pair at order p, with a margin), at most p."""
    q = np.ceil((p + 1 + HARMONIC_EXTRA) * math.log(theta) / np.log(np.maximum(ratio, 1e-300))) - 1.0
    return np.clip(q, MIN_ORDER, p).astype(np.int64)


MIN_ORDER = 2
# Orders of safety added to p when a pair's order is lowered: with 0 the
# harmonic work fell by 47 % and the error rose 2.3x (10^5-point cube,
# tolerance 1e-4); with 2 the work fell by 23 % (M2L entries counted) and
# the error rose by 4 %.
HARMONIC_EXTRA = 2.0


def _core_excess(core: int, x: float) -> tuple[float, float]:
    """Relative change of the segment law's velocity and gradient when the
    core factor F(h) is dropped, at x = h/r_c: (1 - F) and (1 - F) + x F'(x)."""
    if core == CORE_LAMB_OSEEN:
        e = math.exp(-LAMB_OSEEN_ALPHA * x * x)
        return e, e + 2.0 * LAMB_OSEEN_ALPHA * x * x * e
    if core == CORE_SCULLY:
        one_minus_f = 1.0 / (1.0 + x * x)
        return one_minus_f, one_minus_f + 2.0 * x * x / (1.0 + x * x) ** 2
    # Vatistas n = 2
    s = math.sqrt(1.0 + x**4)
    one_minus_f = 1.0 - x * x / s
    return one_minus_f, one_minus_f + 2.0 * x * x / s**3


def _solve_reach(excess, velocity_limit: float, gradient_limit: float) -> float:
    """Smallest x >= 2 beyond which ``excess(x)`` is within both limits
    (the excesses decrease monotonically there)."""
    def worst(r):
        ev, eg = excess(r)
        return max(ev / velocity_limit, eg / gradient_limit) - 1.0

    lo, hi = 2.0, 2.0
    while worst(hi) > 0.0:
        lo, hi = hi, 2.0 * hi
    if hi == 2.0:
        return 2.0
    return brentq(worst, lo, hi, xtol=1e-6, rtol=1e-10)


@cache
def particle_reach(kernel: int, tolerance: float) -> float:
    """rho_far: beyond |r| = rho_far * sigma the singular law may stand in
    for the kernel (0 for the singular kernel itself)."""
    if kernel == SINGULAR:
        return 0.0
    share = REGULARIZATION_SHARE * tolerance
    return _solve_reach(lambda r: _kernel_excess(kernel, r), share, 10.0 * share)


@cache
def core_reach(core: int, tolerance: float) -> float:
    """h_far / r_c: beyond this distance from a segment's line the core
    factor may be dropped (0 for the singular core, 1 for Rankine, where the
    factor is exactly one outside the core)."""
    if core == CORE_SINGULAR:
        return 0.0
    if core == CORE_RANKINE:
        return 1.0
    share = REGULARIZATION_SHARE * tolerance
    return _solve_reach(lambda x: _core_excess(core, x), share, 10.0 * share)


# A source set smaller than this fits in a couple of leaves: the tree would be
# a direct sum with overhead, so "tree" sums it directly (exactly) instead.
MIN_TREE_SOURCES = 2 * LEAF_SIZE
# Below this tolerance the expansions would need orders whose round-off
# competes with the request; "tree" sums directly (exactly) instead.
MIN_TREE_TOLERANCE = 1e-10


def check_tolerance(tolerance) -> float:
    """Return ``tolerance`` as a float in (0, 1) or raise InputError."""
    try:
        tol = float(tolerance)
    except (TypeError, ValueError):
        raise InputError(f"tolerance must be a number between 0 and 1 (exclusive); "
                         f"got {tolerance!r}") from None
    if not (0.0 < tol < 1.0):
        raise InputError(f"tolerance must be between 0 and 1 (exclusive); got {tolerance!r}")
    return tol


def use_tree(method: str, source_counts: list[int], n_targets: int, tolerance: float) -> bool:
    """Whether a request is summed by the tree.

    "direct" never; "tree" unless the source set is too small to gain
    (fewer than ``MIN_TREE_SOURCES`` elements in all) or the tolerance is
    below ``MIN_TREE_TOLERANCE``; "auto" like "tree" and only above
    :func:`auto_crossover_pairs` source-target pairs.
    """
    n_src = sum(source_counts)
    if method == "direct" or n_targets == 0 or n_src < MIN_TREE_SOURCES \
            or tolerance < MIN_TREE_TOLERANCE:
        return False
    return method == "tree" or n_src * n_targets >= auto_crossover_pairs(tolerance)


def check_memory(n_targets: int, source_counts: list[int], gradient: bool, tree: bool,
                 tolerance: float) -> None:
    """Raise InputError if a request would not fit in the available memory.

    Called before anything large is allocated; the estimate covers the
    result arrays and, for the tree, its cells and lists.
    """
    if tree:
        need = estimated_bytes(n_targets, source_counts,
                               expansion_settings(tolerance)[1], gradient)
    else:
        need = 8 * n_targets * (3 + (9 if gradient else 0))
    have = available_memory()
    if need > have:
        what = "tree summation" if tree else "the result"
        raise InputError(
            f"targets: {n_targets} targets and {sum(source_counts)} source elements "
            f"(gradient={gradient}) need about {need / 2**30:.2f} GiB for {what}; only "
            f"{have / 2**30:.2f} GiB of memory is available. Evaluate the targets in "
            f"chunks or free memory.")


def available_memory() -> int:
    """Bytes of memory available to this process (:func:`wakes._system.available_bytes`;
    unknown counts as unlimited)."""
    have = available_bytes()
    return have if have is not None else 2 ** 62


def estimated_bytes(n_targets: int, source_counts: list[int], order: int,
                    gradient: bool) -> int:
    """Upper estimate of the treecode's peak memory [bytes].

    Per target: sorted copies, keys, accumulators and the result; per source
    element: sorted copies and keys; cells: about N/20 per tree (leaves of
    ~23 points on average at worst for spread-out sets), target cells
    holding local coefficients (two parts) and lists of about 150 far cells
    (40 bytes an entry), source cells their full and reduced moments.
    Measured for 10^6 points at 1e-4 (order 9): max RSS 1.56 GiB, of which
    about 0.3 GiB is the interpreter and numba (estimate 1.41 GiB).
    """
    coeff = 8 * 3 * n_terms(order)
    per_target = 8 * (3 + 2 + 2 * (3 + (9 if gradient else 0)))
    total = n_targets * per_target + (n_targets // 20 + 8) * (2 * coeff + 150 * 40)
    for n in source_counts:
        total += n * 8 * (9 + 2) + (n // 20 + 8) * 1.4 * coeff
    return int(total)


def kernel_far_potential(kernel: int, sigma: np.ndarray) -> tuple[bool, float, float]:
    """Whether a particle set's kernel itself can be expanded in the far field.

    The algebraic kernels with one common smoothing radius sigma have the
    potentials (r^2 + s^2)^(-1/2) (Rosenhead--Moore) and (r^2 + s^2)^(-1/2) +
    s^2/2 (r^2 + s^2)^(-3/2) (Winckelmans--Leonard), expanded exactly; any
    other case expands the singular potential (0, 0).

    Returns
    -------
    exact : bool
        True if the far field uses the kernel itself.
    delta2, wl_coef : float
        Parameters of :func:`wakes.induction.tree_expansion.m2l`.
    """
    if kernel == SINGULAR:
        return True, 0.0, 0.0
    if kernel in (ROSENHEAD_MOORE, WINCKELMANS_LEONARD) and sigma.size \
            and sigma.max() == sigma.min():
        s2 = float(sigma[0]) ** 2
        return True, s2, (0.5 * s2 if kernel == WINCKELMANS_LEONARD else 0.0)
    return False, 0.0, 0.0
