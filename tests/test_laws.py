"""Laws written once: the Lamb-Oseen constant and the users that share it."""

import math

import numpy as np
import wakes
from wakes import exact
from wakes.aero.wake import WakeSettings
from wakes.induction.smoothing import LAMB_OSEEN_ALPHA


def test_lamb_oseen_alpha_is_the_root_of_its_defining_equation():
    """alpha solves 1 + 2 alpha = e^alpha (Devenport et al. 1996 quote 1.25643).

    Regression: the engine once carried the rounded 1.25643 while wakes.exact
    solved the root (1.2564312...), so the filament core and the closed form
    disagreed in the seventh digit. The tolerance is a few ulp of e^alpha.
    """
    assert abs(1.0 + 2.0 * LAMB_OSEEN_ALPHA - math.exp(LAMB_OSEEN_ALPHA)) <= 4 * math.ulp(3.5)
    assert round(LAMB_OSEEN_ALPHA, 5) == 1.25643
    assert exact.LAMB_OSEEN_ALPHA is LAMB_OSEEN_ALPHA


def test_filament_core_and_closed_form_peak_agree():
    """A long straight Lamb-Oseen filament of core radius rc peaks at h = rc with the
    closed form's peak speed (wakes.exact.lamb_oseen_peak at 4 nu t = rc^2 / alpha).

    The segment is 2e6 rc long, so its finite length changes the speed by
    (rc/L)^2 ~ 1e-13; the tolerance 1e-10 leaves room for round-off.
    """
    rc, gamma, length = 0.1, 2.0, 1e5
    line = wakes.Filaments(np.array([[-length, 0.0, 0.0], [length, 0.0, 0.0]]), np.array([[0, 1]]),
                           np.array([gamma]), np.array([rc]), core="lamb-oseen")
    u = wakes.induce(line, np.array([[0.0, rc, 0.0]]))
    nu, t = 1.0, rc * rc / (4.0 * LAMB_OSEEN_ALPHA)
    r_peak, u_peak = exact.lamb_oseen_peak(gamma, nu, t)
    assert math.isclose(r_peak, rc, rel_tol=1e-14)
    assert math.isclose(abs(u[0, 2]), u_peak, rel_tol=1e-10)


def test_core_growth_law_uses_the_same_constant():
    """Squire's growth r_c^2 = r_0^2 + 4 alpha delta nu age (WakeSettings.core_at_age)."""
    s = WakeSettings(core_radius=0.02, core_growth=3.0, viscosity=1.5e-5)
    age = np.array([0.0, 0.5, 2.0])
    expected = np.sqrt(0.02 ** 2 + 4.0 * LAMB_OSEEN_ALPHA * 3.0 * 1.5e-5 * age)
    np.testing.assert_array_equal(s.core_at_age(age), expected)


def test_one_viscosity_default():
    """The case's [fluid] default and WakeSettings' default are one value."""
    case = wakes.parse_case({"bodies": {"w": {"type": "wing", "span": 4.0, "chord": 0.5}},
                             "freestream": {"speed": 10.0}})
    assert case.fluid.kinematic_viscosity == WakeSettings().viscosity
