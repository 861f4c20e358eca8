"""Richardson extrapolation and the Grid Convergence Index (wakes.uncertainty).

Sources: Roache (1994), ASME J. Fluids Eng. 116, 405-413 and Roache (1998),
Verification and Validation in Computational Science and Engineering (safety
factors 1.25 and 3); Celik et al. (2008), ASME J. Fluids Eng. 130, 078001 (the
procedure and its worked example); Stern et al. (2001), ASME J. Fluids Eng.
123, 793-802 (the convergence ratio R).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st
from wakes.errors import InputError
from wakes.uncertainty import (
    DIVERGENT,
    MONOTONIC,
    OSCILLATORY,
    SAFETY_FACTOR_THREE_LEVELS,
    SAFETY_FACTOR_TWO_LEVELS,
    UNCLASSIFIED,
    UNRESOLVED,
    observed_order,
    refinement_estimate,
    spacing_from_counts,
)


def power_law(h, f0, c, p):
    """f(h) = f0 + C h^p: exact limit f0, exact order p."""
    return f0 + c * np.asarray(h, dtype=float) ** p


def test_celik_2008_table_1_first_column():
    """Celik et al. (2008), Table 1, column "φ = dimensionless reattachment length".

    Inputs from memory: N = 18000, 8000, 4500 cells in 2-D (r21 = 1.5,
    r32 = 1.333), φ = 6.063, 5.972, 5.863 (the same φ appear in public
    course notes that restate the example). Published results from memory:
    p = 1.53, φ_ext21 = 6.1685, e_a21 = 1.5 %, e_ext21 = 1.7 %. The GCI_fine21
    entry we do not recall reliably; it is checked below against Celik's
    eq. (6) evaluated by hand instead (derived, not published).
    """
    h = spacing_from_counts([18000, 8000, 4500], dimensions=2)
    est = refinement_estimate([6.063, 5.972, 5.863], h)
    assert est.convergence == MONOTONIC and est.trusted
    assert est.ratio == pytest.approx(1.5, rel=1e-12)
    assert round(est.order, 2) == 1.53
    assert round(est.extrapolated, 4) == 6.1685
    assert round(100 * est.relative_error, 1) == 1.5
    assert round(100 * est.extrapolated_error, 1) == 1.7
    # eq. (6): GCI = 1.25 e_a / (r21^p - 1), with e_a = 0.091/6.063
    assert est.gci == pytest.approx(1.25 * (0.091 / 6.063) / (1.5 ** est.order - 1), rel=1e-9)
    assert est.uncertainty == pytest.approx(est.gci * 6.063, rel=1e-12)
    assert est.band == pytest.approx((6.063 - est.uncertainty, 6.063 + est.uncertainty))


@pytest.mark.parametrize("ratios", [(1.5, 1.5), (2.0, 2.0), (1.3, 1.7), (2.0, 1.3), (1.3, 3.0)],
                         ids=["r1.5", "r2", "r1.3-1.7", "r2-1.3", "r1.3-3"])
@pytest.mark.parametrize("order", [0.5, 1.0, 2.0, 3.0])
def test_an_exact_power_law_gives_its_limit_and_order(ratios, order):
    """Constant and non-constant ratios; (1.3, 3.0) has r32 > r21², where Celik's
    fixed-point iteration does not settle and the order comes from bracketing."""
    h = np.array([0.1, 0.1 * ratios[0], 0.1 * ratios[0] * ratios[1]])
    est = refinement_estimate(power_law(h, 2.5, -0.8, order), h)
    assert est.convergence == MONOTONIC and est.trusted
    # round-off: the differences are >= 0.8 * 0.1^3 * 0.3 ~ 2e-4 against values ~2.5,
    # so each difference carries a relative error ~1e-12; 1e-9 leaves room
    assert est.order == pytest.approx(order, rel=1e-9)
    assert est.extrapolated == pytest.approx(2.5, rel=1e-12, abs=1e-11)
    assert est.band[0] < 2.5 < est.band[1]
    assert est.safety_factor == SAFETY_FACTOR_THREE_LEVELS


@given(f0=st.floats(-10, 10), c=st.floats(0.1, 10) | st.floats(-10, -0.1), p=st.floats(0.5, 4),
       h1=st.floats(0.01, 1), r21=st.floats(1.3, 3), r32=st.floats(1.3, 3))
def test_property_power_law_series_recovered(f0, c, p, h1, r21, r32):
    h = np.array([h1, h1 * r21, h1 * r21 * r32])
    phi = power_law(h, f0, c, p)
    est = refinement_estimate(phi[::-1], h[::-1])      # any order of levels
    assert est.convergence == MONOTONIC
    # Tolerance from the conditioning: each difference carries round-off of a few
    # eps * max|phi|, which moves ln|e32/e21| (hence p ln r21) by that over min|e|.
    e = np.abs(np.diff(phi))
    noise = 16 * np.finfo(float).eps * np.max(np.abs(phi)) / np.min(e)
    assert abs(est.order - p) <= noise / math.log(r21) * 10 + 1e-12
    assert abs(est.extrapolated - f0) <= 10 * noise * abs(phi[0] - phi[1]) * (1 + 1 / (r21 ** p - 1)) + 1e-12


def test_two_levels_use_the_expected_order_and_safety_factor_three():
    h = np.array([0.1, 0.2])
    phi = power_law(h, 1.0, 1.0, 2.0)
    est = refinement_estimate(phi, h, expected_order=2.0)
    assert est.convergence == UNCLASSIFIED and est.trusted
    assert est.safety_factor == SAFETY_FACTOR_TWO_LEVELS == 3.0
    assert est.order == 2.0 and est.extrapolated == pytest.approx(1.0, rel=1e-14)
    assert est.uncertainty == pytest.approx(3.0 * (phi[1] - phi[0]) / 3.0, rel=1e-14)
    with pytest.raises(InputError, match="expected_order"):
        refinement_estimate(phi, h)


def test_oscillatory_series_has_no_band():
    est = refinement_estimate([1.00, 1.02, 0.97], [1.0, 1.5, 2.25])
    assert est.convergence == OSCILLATORY and not est.trusted
    assert est.convergence_ratio == pytest.approx(0.02 / -0.05)
    assert est.band is None and est.extrapolated is None and est.gci is None
    assert "sign" in est.reason


@pytest.mark.parametrize("values, spacings", [
    ([1.0, 1.1, 1.15], [1.0, 1.5, 2.25]),        # differences grow with refinement (R = 2)
    (power_law([1, 2, 4], 1.0, 1.0, -1.0), [1, 2, 4]),   # a power law with negative order
    ([1.0, 1.1, 1.2], [1.0, 1.5, 2.25]),         # equal differences: R = 1, order 0
], ids=["R=2", "negative-order", "R=1"])
def test_divergent_series_has_no_band(values, spacings):
    est = refinement_estimate(values, spacings)
    assert est.convergence == DIVERGENT and not est.trusted
    assert est.band is None and est.order is None
    assert "divergent" in est.reason


def test_non_constant_ratio_boundary_of_divergence():
    """With r21 = 2, r32 = 1.3 a series converging at order 0.2 has R > 1 (Stern's
    boundary for a constant ratio) yet converges: the boundary is ln r21 / ln r32."""
    h = np.array([1.0, 2.0, 2.6])
    phi = power_law(h, 0.0, 1.0, 0.2)
    assert (phi[1] - phi[0]) / (phi[2] - phi[1]) > 1
    est = refinement_estimate(phi, h)
    assert est.convergence == MONOTONIC and est.order == pytest.approx(0.2, rel=1e-9)


def test_differences_at_round_off_or_noise_are_unresolved():
    est = refinement_estimate([2.0, 2.0, 2.0 + 1e-15], [1, 2, 4])
    assert est.convergence == UNRESOLVED and est.band is None and "round-off" in est.reason
    phi = power_law([1, 2, 4], 2.0, 1e-3, 2.0)
    assert refinement_estimate(phi, [1, 2, 4]).trusted
    noisy = refinement_estimate(phi, [1, 2, 4], noise=5e-3)
    assert noisy.convergence == UNRESOLVED and noisy.band is None


def test_order_far_from_the_expected_one_has_no_band():
    h = np.array([1.0, 2.0, 4.0])
    phi = power_law(h, 1.0, 0.1, 0.7)
    assert refinement_estimate(phi, h, expected_order=1.0).trusted         # 0.7 within 50 %
    est = refinement_estimate(phi, h, expected_order=2.0)
    assert est.convergence == MONOTONIC and not est.trusted and est.band is None
    assert est.order == pytest.approx(0.7) and "far from the expected" in est.reason


def test_more_levels_use_the_finest_three_and_report_each_triple():
    """Coarsest level out of the asymptotic range: the finest triple still gives the band."""
    h = np.array([0.05, 0.1, 0.2, 0.4])
    phi = power_law(h, 1.0, 1.0, 2.0)
    phi[3] = phi[2] - 0.01                     # the coarsest level overshoots
    est = refinement_estimate(phi, h)
    assert est.levels == 4 and est.convergence == MONOTONIC
    assert est.order == pytest.approx(2.0, rel=1e-9) and est.extrapolated == pytest.approx(1.0, rel=1e-12)
    assert est.triple_orders[0] == pytest.approx(2.0, rel=1e-9) and est.triple_orders[1] is None


def test_observed_order_refuses_non_monotonic_differences():
    with pytest.raises(InputError, match="monotonically"):
        observed_order(1.0, -1.0, 1.5, 1.5)


@pytest.mark.parametrize("kwargs, match", [
    (dict(values=[1.0], spacings=[1.0]), "at least two"),
    (dict(values=[1.0, 2.0, 3.0], spacings=[1.0, 2.0]), "one entry per value"),
    (dict(values=[1.0, 2.0, 3.0], spacings=[1.0, 0.0, 2.0]), "positive"),
    (dict(values=[1.0, 2.0, 3.0], spacings=[1.0, 2.0, 2.0]), "differ"),
    (dict(values=[1.0, np.nan, 3.0], spacings=[1.0, 2.0, 4.0]), "finite"),
    (dict(values=[1.0, 2.0, 3.0], spacings=[1.0, 2.0, 4.0], noise=-1.0), "noise"),
    (dict(values=[1.0, 2.0, 3.0], spacings=[1.0, 2.0, 4.0], expected_order=0.0), "expected_order"),
])
def test_bad_input_names_the_argument(kwargs, match):
    with pytest.raises(InputError, match=match):
        refinement_estimate(**kwargs)
