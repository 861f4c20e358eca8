"""Numerical uncertainty from systematic refinement: Richardson extrapolation and the GCI.

A quantity computed at three (or more) systematically refined levels of a
discretization (cell size, strip width, time step) gives its observed order
of convergence, its Richardson-extrapolated value and an uncertainty band,
the Grid Convergence Index (GCI) of Roache (1994, ASME J. Fluids Eng. 116,
405-413; 1998, *Verification and Validation in Computational Science and
Engineering*, Hermosa), computed step by step as in Celik, Ghia, Roache,
Freitas, Coleman & Raad (2008, "Procedure for estimation and reporting of
uncertainty due to discretization in CFD applications", ASME J. Fluids Eng.
130, 078001):

- ``ε32 = φ3 - φ2``, ``ε21 = φ2 - φ1`` (level 1 the finest), ratios
  ``r21 = h2/h1``, ``r32 = h3/h2``;
- observed order ``p = |ln|ε32/ε21| + q(p)| / ln r21`` with
  ``q(p) = ln((r21^p - s)/(r32^p - s))``, ``s = sign(ε32/ε21)``, solved by
  fixed-point iteration (``q = 0`` for a constant ratio);
- extrapolated value ``φ_ext = (r21^p φ1 - φ2)/(r21^p - 1)``; approximate
  relative error ``e_a = |(φ1 - φ2)/φ1|``; extrapolated relative error
  ``e_ext = |(φ_ext - φ1)/φ_ext|``;
- ``GCI_fine = Fs e_a / (r21^p - 1)`` with the safety factor Fs = 1.25 for
  three or more levels and Fs = 3 for two (Roache 1998), where the order
  cannot be observed and the expected order is used instead.

Convergence is classified before any of this, from the convergence ratio of
Stern, Wilson, Coleman & Paterson (2001, ASME J. Fluids Eng. 123, 793-802),
``R = ε21/ε32``: ``0 < R < 1`` monotonic convergence, ``R < 0``
oscillatory, ``R > 1`` monotonic divergence. With a non-constant ratio the
boundary ``R = 1`` becomes ``R = ln r21 / ln r32`` (ours, derived: it is
where Celik's equation for ``p`` with ``s = +1`` has its root at ``p = 0``;
it reduces to Stern's boundary for a constant ratio). Only monotonic
convergence gets a band; oscillatory and divergent series, differences
lost in round-off (or in a stated noise level), and observed orders far
from an expected one are returned as such, with the reason and no band.

Everything is plain Python and numpy: no kernels, no case types.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from ._validate import as_float_array
from .errors import InputError

__all__ = [
    "DIVERGENT", "MONOTONIC", "OSCILLATORY", "ROUND_OFF", "SAFETY_FACTOR_THREE_LEVELS",
    "SAFETY_FACTOR_TWO_LEVELS", "UNCLASSIFIED", "UNRESOLVED", "RefinementEstimate",
    "observed_order", "refinement_estimate", "spacing_from_counts",
]

# Convergence classes (the values of RefinementEstimate.convergence).
MONOTONIC = "monotonic"
OSCILLATORY = "oscillatory"
DIVERGENT = "divergent"
UNRESOLVED = "unresolved"        # a difference between levels is lost in round-off or noise
UNCLASSIFIED = "unclassified"    # two levels: no order can be observed

# Safety factors as Roache (1994, 1998) publishes them.
SAFETY_FACTOR_THREE_LEVELS = 1.25
SAFETY_FACTOR_TWO_LEVELS = 3.0

# A difference between levels smaller than this fraction of the largest |value|
# is taken as round-off: 1e-12 sits four decades above float64 epsilon, room for
# the round-off a solve of a few thousand unknowns accumulates.
ROUND_OFF = 1e-12

# Fixed-point iteration for the order: stop when p changes by less than this
# (absolute), give up after so many sweeps and solve by bracketing instead.
_ORDER_TOL = 1e-13
_ORDER_SWEEPS = 200


@dataclass(frozen=True)
class RefinementEstimate:
    """What a refinement study says about one quantity.

    Attributes
    ----------
    value : float
        The finest level's value φ1 [units of the quantity].
    convergence : str
        ``"monotonic"``, ``"oscillatory"``, ``"divergent"``, ``"unresolved"``
        (a difference between levels at round-off or the stated noise) or
        ``"unclassified"`` (two levels).
    trusted : bool
        True when a band is given.
    reason : str
        Why there is no band (empty when ``trusted``).
    levels : int
        Number of levels used.
    ratio : float
        Refinement ratio of the two finest levels, r21 = h2/h1 (> 1).
    convergence_ratio : float or None
        Stern et al.'s R = ε21/ε32 of the three finest levels (None for two
        levels or when ε32 = 0).
    order : float or None
        Observed order p of the three finest levels, or the expected order
        used for two levels; None when it cannot be observed.
    extrapolated : float or None
        Richardson-extrapolated value φ_ext21 [units of the quantity].
    uncertainty : float or None
        The band's half-width, GCI_fine |φ1| = Fs |φ2 - φ1| / (r21^p - 1)
        [units of the quantity].
    gci : float or None
        GCI_fine, the band relative to |φ1| (a fraction, not percent); None
        also when φ1 = 0.
    relative_error : float or None
        Approximate relative error e_a21 = |(φ1 - φ2)/φ1| (None when φ1 = 0).
    extrapolated_error : float or None
        Extrapolated relative error e_ext21 = |(φ_ext - φ1)/φ_ext|.
    safety_factor : float
        Fs used (1.25 for three or more levels, 3 for two).
    triple_orders : tuple of float or None
        Observed order of every consecutive triple of levels, finest first
        (None where that triple does not converge monotonically): shows
        whether the coarser levels are in the asymptotic range too.
    """

    value: float
    convergence: str
    trusted: bool
    reason: str
    levels: int
    ratio: float
    convergence_ratio: float | None
    order: float | None
    extrapolated: float | None
    uncertainty: float | None
    gci: float | None
    relative_error: float | None
    extrapolated_error: float | None
    safety_factor: float
    triple_orders: tuple

    @property
    def band(self) -> tuple[float, float] | None:
        """(low, high) = value ∓ uncertainty, or None when there is no band."""
        if self.uncertainty is None:
            return None
        return (self.value - self.uncertainty, self.value + self.uncertainty)


def spacing_from_counts(counts, dimensions: int = 1, size: float = 1.0) -> np.ndarray:
    """Representative spacing h = (size / N)^(1/dimensions) of each level.

    Celik et al. (2008), eq. (1): the cell size of a level of N cells filling
    a region of measure ``size`` in ``dimensions`` dimensions.

    Parameters
    ----------
    counts : array_like, shape (n,)
        Number of cells (strips, panels, particles, steps) of each level, > 0.
    dimensions : int
        1, 2 or 3.
    size : float
        Length, area or volume of the region [m, m², m³]; only ratios of the
        result matter to :func:`refinement_estimate`.

    Returns
    -------
    ndarray, shape (n,)
        Spacing of each level [m].

    Examples
    --------
    >>> spacing_from_counts([18000, 8000, 4500], dimensions=2).round(6)
    array([0.007454, 0.01118 , 0.014907])
    """
    n = as_float_array("counts", counts, (None,))
    if (n <= 0).any():
        raise InputError(f"counts must be positive; got {n.tolist()}")
    if dimensions not in (1, 2, 3):
        raise InputError(f"dimensions must be 1, 2 or 3; got {dimensions!r}")
    if not (math.isfinite(size) and size > 0):
        raise InputError(f"size must be a positive number; got {size!r}")
    return (size / n) ** (1.0 / dimensions)


def observed_order(e21: float, e32: float, r21: float, r32: float) -> float:
    """Observed order p of monotonically converging differences (Celik et al. 2008, eqs. 3a-3c).

    Parameters
    ----------
    e21, e32 : float
        Differences φ2 - φ1 and φ3 - φ2 (level 1 the finest), of one sign,
        with ``e32/e21 > ln r32 / ln r21`` (monotonic convergence).
    r21, r32 : float
        Refinement ratios h2/h1 and h3/h2, > 1.

    Returns
    -------
    float
        p > 0, the root of ``p ln r21 = ln(e32/e21) + ln((r21^p - 1)/(r32^p - 1))``.
        It is found by Celik's fixed-point iteration; where that does not
        settle (a coarse ratio well above the square of the fine one makes
        it expand), by bracketing the same root, which is unique because the
        right-hand side minus the left is monotonic in p.

    Raises
    ------
    InputError
        Differences that do not converge monotonically (no positive root).

    Examples
    --------
    The differences of f(h) = 1 + h² at h = 1, 1.5, 2.25:

    >>> round(observed_order(1.25, 2.8125, 1.5, 1.5), 12)
    2.0
    """
    ln21, ln32 = math.log(r21), math.log(r32)
    t = e32 / e21
    if not (t > 0 and t * ln21 > ln32):
        raise InputError(f"the differences e21 = {e21!r}, e32 = {e32!r} do not converge monotonically "
                         f"at ratios {r21!r}, {r32!r}: no positive order")
    ln_t = math.log(t)
    if r21 == r32:
        return ln_t / ln21

    def q(p):   # ln((r21^p - 1)/(r32^p - 1)) for p > 0, without overflow at large p
        return p * (ln21 - ln32) + math.log(-math.expm1(-p * ln21)) - math.log(-math.expm1(-p * ln32))

    p = abs(ln_t) / ln21 or 1.0
    for _ in range(_ORDER_SWEEPS):
        p_next = abs(ln_t + q(p)) / ln21
        if abs(p_next - p) <= _ORDER_TOL * max(1.0, p):
            if ln_t + q(p_next) > 0:   # else a spurious root of the absolute value
                return p_next
            break
        p = p_next

    # The root of ln t + q(p) - p ln r21, which falls from ln t + ln(ln r21 / ln r32) > 0
    # at p -> 0 to -inf, crossing zero once.
    def residual(p):
        return ln_t + q(p) - p * ln21

    hi = 1.0
    while residual(hi) > 0:
        hi *= 2.0
    return brentq(residual, 1e-300, hi, xtol=1e-15, rtol=4 * np.finfo(float).eps)


def refinement_estimate(values, spacings, *, expected_order: float | None = None,
                        order_tolerance: float = 0.5, noise: float = 0.0) -> RefinementEstimate:
    """Richardson extrapolation and GCI of one quantity computed at several refinement levels.

    Parameters
    ----------
    values : array_like, shape (n,), n >= 2
        The quantity at each level [any units].
    spacings : array_like, shape (n,)
        The representative spacing h of each level (cell size, strip width,
        time step; any units, only ratios matter), positive and all
        different. Levels may come in any order; the smallest h is the
        finest. With three or more levels, the three finest give the
        estimate (Celik et al. 2008) and every consecutive triple its
        observed order.
    expected_order : float, optional
        The scheme's theoretical order. Required for two levels (the GCI
        then uses it with Fs = 3). With three or more, an observed order
        outside ``expected_order * (1 ± order_tolerance)`` gets no band.
    order_tolerance : float
        Accepted relative departure of the observed order from the
        expected one; 0.5 by default (our choice: Roache 1998 asks only
        that the observed order be "reasonably close" to the theoretical).
    noise : float
        Absolute noise level of the values (iteration or sampling error)
        [units of the quantity]: a difference between levels not larger
        than ``max(noise, ROUND_OFF * max|values|)`` is not resolved.

    Returns
    -------
    RefinementEstimate

    Raises
    ------
    InputError
        Fewer than two levels, shapes that differ, a non-positive or repeated
        spacing, two levels without ``expected_order``, or a negative noise.

    Examples
    --------
    Celik et al. (2008), Table 1, first column (inputs, order and
    extrapolated value from memory): the reattachment length on 18000, 8000
    and 4500 cells in 2-D.

    >>> h = spacing_from_counts([18000, 8000, 4500], dimensions=2)
    >>> est = refinement_estimate([6.063, 5.972, 5.863], h)
    >>> est.convergence, round(est.order, 2), round(est.extrapolated, 4)
    ('monotonic', 1.53, 6.1685)
    >>> print(f"{est.value} ± {est.uncertainty:.3f} (GCI {est.gci:.2%})")
    6.063 ± 0.132 (GCI 2.17%)
    """
    phi = as_float_array("values", values, (None,))
    h = as_float_array("spacings", spacings, (None,))
    if phi.size < 2:
        raise InputError(f"values must hold at least two levels; got {phi.size}")
    if h.size != phi.size:
        raise InputError(f"spacings must have one entry per value ({phi.size}); got {h.size}")
    if (h <= 0).any():
        raise InputError(f"spacings must be positive; got {h.tolist()}")
    if np.unique(h).size != h.size:
        raise InputError(f"spacings must all differ (one level each); got {h.tolist()}")
    if not (math.isfinite(noise) and noise >= 0):
        raise InputError(f"noise must be zero or a positive number; got {noise!r}")
    if expected_order is not None and not (math.isfinite(expected_order) and expected_order > 0):
        raise InputError(f"expected_order must be a positive number; got {expected_order!r}")
    if not (math.isfinite(order_tolerance) and order_tolerance > 0):
        raise InputError(f"order_tolerance must be a positive number; got {order_tolerance!r}")

    order_by_h = np.argsort(h)
    phi, h = phi[order_by_h], h[order_by_h]
    floor = max(noise, ROUND_OFF * float(np.max(np.abs(phi))))
    if phi.size == 2:
        if expected_order is None:
            raise InputError("two levels need expected_order: the order cannot be observed from two")
        return _banded(phi, h, expected_order, SAFETY_FACTOR_TWO_LEVELS, UNCLASSIFIED, None, (), floor)

    triples = tuple(_classify(phi[k:k + 3], h[k:k + 3], floor)[2] for k in range(phi.size - 2))
    convergence, r_stern, p, reason = _classify(phi[:3], h[:3], floor)
    if convergence != MONOTONIC:
        return _without_band(phi, h, convergence, reason, r_stern, None, triples)
    if expected_order is not None and abs(p - expected_order) > order_tolerance * expected_order:
        reason = (f"the observed order {p:.3g} is far from the expected {expected_order:.3g} "
                  f"(accepted: within {order_tolerance:.0%}): the levels are not in the asymptotic range")
        return _without_band(phi, h, MONOTONIC, reason, r_stern, p, triples)
    return _banded(phi, h, p, SAFETY_FACTOR_THREE_LEVELS, MONOTONIC, r_stern, triples, floor)


def _classify(phi: np.ndarray, h: np.ndarray, floor: float):
    """(convergence, Stern's R, observed order or None, reason) of three levels, finest first."""
    e21, e32 = float(phi[1] - phi[0]), float(phi[2] - phi[1])
    r21, r32 = float(h[1] / h[0]), float(h[2] / h[1])
    r_stern = e21 / e32 if e32 != 0 else None
    if abs(e21) <= floor or abs(e32) <= floor:
        which = "two finest" if abs(e21) <= floor else "two coarsest"
        return (UNRESOLVED, r_stern, None,
                f"the {which} of levels {phi.tolist()} differ by no more than the round-off or noise "
                f"level {floor:.3g}: no order can be observed")
    if r_stern < 0:
        return (OSCILLATORY, r_stern, None,
                f"the differences between levels change sign (R = {r_stern:.3g}): oscillatory")
    if (e32 / e21) * math.log(r21) <= math.log(r32):   # R >= ln r21 / ln r32
        return (DIVERGENT, r_stern, None,
                f"the differences between levels do not shrink with refinement (R = {r_stern:.3g}): divergent")
    return MONOTONIC, r_stern, observed_order(e21, e32, r21, r32), ""


def _without_band(phi, h, convergence, reason, r_stern, p, triples) -> RefinementEstimate:
    return RefinementEstimate(
        value=float(phi[0]), convergence=convergence, trusted=False, reason=reason, levels=int(phi.size),
        ratio=float(h[1] / h[0]), convergence_ratio=r_stern, order=p, extrapolated=None, uncertainty=None,
        gci=None, relative_error=_relative(phi[0] - phi[1], phi[0]), extrapolated_error=None,
        safety_factor=SAFETY_FACTOR_THREE_LEVELS, triple_orders=triples)


def _banded(phi, h, p, fs, convergence, r_stern, triples, floor) -> RefinementEstimate:
    r21 = float(h[1] / h[0])
    if abs(phi[1] - phi[0]) <= floor:
        return RefinementEstimate(
            value=float(phi[0]), convergence=UNRESOLVED, trusted=False,
            reason=f"the two levels differ by no more than the round-off or noise level {floor:.3g}",
            levels=int(phi.size), ratio=r21, convergence_ratio=None, order=None, extrapolated=None,
            uncertainty=None, gci=None, relative_error=_relative(phi[0] - phi[1], phi[0]),
            extrapolated_error=None, safety_factor=fs, triple_orders=triples)
    rp1 = math.expm1(p * math.log(r21))       # r21^p - 1
    extrapolated = float(phi[0] + (phi[0] - phi[1]) / rp1)
    uncertainty = float(fs * abs(phi[1] - phi[0]) / rp1)
    return RefinementEstimate(
        value=float(phi[0]), convergence=convergence, trusted=True, reason="", levels=int(phi.size),
        ratio=r21, convergence_ratio=r_stern, order=float(p), extrapolated=extrapolated,
        uncertainty=uncertainty, gci=_relative(uncertainty, phi[0]),
        relative_error=_relative(phi[0] - phi[1], phi[0]),
        extrapolated_error=_relative(extrapolated - phi[0], extrapolated), safety_factor=fs,
        triple_orders=triples)


def _relative(difference: float, reference: float) -> float | None:
    """|difference / reference|, None when the reference is zero."""
    return None if reference == 0 else float(abs(difference / reference))
