"""Swept and tapered flat wings (vortex lattice) against the Helmbold–Diederich formula, the
convergence that comes first, and rectangular wings against Glauert's lifting-line series.

The full set (three sweeps, three tapers, aspect ratios 1 to 10) is ``wakes verify --full``;
these are its quick rows. Runs: ``wakes.verify.steady_wing``, a frozen wake of ten spans.
"""

import math

import pytest
from wakes import exact
from wakes.verify import CONVERGED, GLAUERT_TOLERANCE, HELMBOLD_TOLERANCE, PANELS, helmbold_reference, steady_wing


def _slope(aspect_ratio, **planform):
    return steady_wing(aspect_ratio, **planform)["CL"] / math.radians(2.0)


@pytest.mark.parametrize("taper", [1.0, 0.5])
@pytest.mark.parametrize("sweep", [-30.0, 0.0, 30.0, 45.0])
def test_lift_slope_of_swept_and_tapered_wings_follows_helmbold_diederich(sweep, taper):
    """C_Lα = 2πA/(2 + sqrt(A²(1 + tan²Λ) + 4)), Λ the half-chord sweep (Helmbold 1942, Diederich
    1951; USAF DATCOM form; from memory), thin sections at M = 0, aspect ratio 4. The formula's
    stated accuracy against lifting-surface theory: maximum error not much more than 10 % over 80
    planforms (ESDU TM 169, published abstract), hence the 10 % tolerance. Measured: -7.1 % at the
    rectangular wing (the largest of the full set), -1.4 % at 45 deg and taper 0.5, -6.2 % for
    the rectangular wing swept 30 deg forward (negative sweep)."""
    computed = _slope(4.0, taper=taper, sweep=sweep)
    assert computed == pytest.approx(helmbold_reference(4.0, taper, sweep), rel=HELMBOLD_TOLERANCE)


@pytest.mark.parametrize("aspect_ratio", [1.0, 10.0])
def test_lift_slope_at_low_and_high_aspect_ratio(aspect_ratio):
    """Helmbold's formula (Helmbold 1942, memory) for unswept rectangular wings at A = 1, where
    it nears slender-wing theory's πA/2, and A = 10; tolerance as above (ESDU TM 169)."""
    computed = _slope(aspect_ratio)
    assert computed == pytest.approx(exact.helmbold_lift_slope(aspect_ratio), rel=HELMBOLD_TOLERANCE)
    assert computed < math.pi * aspect_ratio / 2.0      # below slender-wing theory (R. T. Jones 1946)


def test_lift_slope_is_converged_before_it_is_compared():
    """Doubling the chordwise and spanwise panels moves C_Lα by less than 0.5 % (ours) on the
    slowest-converging planform of the full set (45 deg, taper 0.25, A = 10; measured 0.22 %)."""
    planform = dict(taper=0.25, sweep=45.0)
    coarse = _slope(10.0, **planform)
    fine = _slope(10.0, panels=(2 * PANELS[0], 2 * PANELS[1]), **planform)
    assert fine == pytest.approx(coarse, rel=CONVERGED)


def test_span_efficiency_of_rectangular_lattice_wings_is_below_one_and_falls_with_aspect_ratio():
    """Untwisted rectangular wings, vortex lattice: e < 1 (Munk 1921, NACA Report 121: the
    elliptic loading has the least induced drag) and e falls as the aspect ratio grows (the trend
    of Glauert 1926, The Elements of Aerofoil and Airscrew Theory, for rectangular wings). A
    trend, not values: Glauert's theory is a lifting line, and his tabulated factors are not
    quoted because we cannot state them from memory with confidence. Measured e (Trefftz plane)
    at A = 2, 6, 10: 0.9986, 0.9836, 0.9594."""
    e = [steady_wing(ar)["span_efficiency_trefftz"] for ar in (2.0, 6.0, 10.0)]
    assert e[0] < 1.0
    assert e[0] > e[1] > e[2], e


@pytest.mark.parametrize("aspect_ratio", [2.0, 6.0, 10.0])
def test_rectangular_lifting_line_follows_glauerts_series(aspect_ratio):
    """The lifting-line model (32 cosine strips) against Glauert's sine-series solution of the same
    lifting-line equation (Glauert 1926; solved by ``exact.glauert_rectangular_wing``, derived):
    span efficiency 1/(1 + delta) and C_L alpha within 0.5 % (ours: only the discretizations
    differ). Measured: at most 0.11 % (C_L alpha at A = 2)."""
    run = steady_wing(aspect_ratio, model="lifting-line")
    slope, delta = exact.glauert_rectangular_wing(aspect_ratio)
    assert run["span_efficiency_trefftz"] == pytest.approx(1.0 / (1.0 + delta), rel=GLAUERT_TOLERANCE)
    assert run["CL"] / math.radians(2.0) == pytest.approx(slope, rel=GLAUERT_TOLERANCE)


def test_glauerts_series_is_converged_at_forty_terms():
    """40 odd terms against 320: C_L alpha and delta agree to 1e-6 from A = 1 to 10."""
    for ar in (1.0, 6.0, 10.0):
        coarse, fine = exact.glauert_rectangular_wing(ar), exact.glauert_rectangular_wing(ar, terms=320)
        assert coarse == pytest.approx(fine, abs=1e-6)
