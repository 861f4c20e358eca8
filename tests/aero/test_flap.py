"""Rigid blade flapping at the model layer: the flap equation, its time step, the hinge moment, the fit.

The reference for the free flap frequency is derived here from a uniform blade cut into mass
elements, independently of the closed form in ``wakes.aero.flap``; the form
nu^2 = 1 + e S/I + K/(I Omega^2) is that of Johnson 1980 (Helicopter Theory, ch. 9) and
Leishman 2006 (Principles of Helicopter Aerodynamics, 2nd ed., ch. 4), from memory.
"""

import numpy as np
import pytest
from wakes.aero.flap import FlapHinge, FlapState, flap_harmonics, flap_step
from wakes.errors import NumericalError

OMEGA, RADIUS, INERTIA = 40.0, 1.2, 0.5


def _elements_frequency_ratio_squared(offset, spring):
    """nu^2 of a uniform blade from its mass elements: the centrifugal stiffness
    Omega^2 sum s (e + s) dm and the inertia sum s^2 dm about the hinge (s from the hinge),
    mass scaled so that the inertia is INERTIA."""
    n = 200_000
    length = RADIUS - offset
    s = (np.arange(n) + 0.5) * length / n
    dm = np.full(n, length / n)
    dm *= INERTIA / np.sum(s * s * dm)
    stiffness = OMEGA ** 2 * np.sum(s * (offset + s) * dm) + spring
    return stiffness / (OMEGA ** 2 * np.sum(s * s * dm))


def _free_frequency(hinge, dt, periods=12, amplitude_deg=0.2):
    """Frequency [rad/s] of the free flap motion (no air), from its upward crossings of the mean.

    Released at the rest angle plus a small amplitude (0.2 deg: the sin beta cos beta
    stiffening changes the frequency by under 1e-5), crossings by linear interpolation."""
    nu = np.sqrt(hinge.frequency_ratio_squared(OMEGA))
    steps = int(periods * 2.0 * np.pi / (nu * OMEGA * dt)) + 2
    state = FlapState(0.0, np.array([np.radians(amplitude_deg)]), np.zeros(1))
    beta = [state.beta[0]]
    for _ in range(steps):
        state = flap_step(hinge, state, np.zeros(1), OMEGA, dt)
        beta.append(state.beta[0])
    beta = np.array(beta)
    k = np.nonzero((beta[:-1] < 0.0) & (beta[1:] >= 0.0))[0]
    crossings = (k + beta[k] / (beta[k] - beta[k + 1])) * dt
    return 2.0 * np.pi * (len(crossings) - 1) / (crossings[-1] - crossings[0])


@pytest.mark.parametrize("offset, spring", [(0.0, 0.0), (0.06, 0.0), (0.1, 0.0), (0.06, 300.0)])
def test_free_flap_frequency_is_the_rotating_natural_frequency(offset, spring):
    """No air: the blade flaps at nu_beta Omega, nu_beta^2 = 1 + (3/2) e/(R - e) + K/(I Omega^2)
    for a uniform blade (derived; form of Johnson 1980, from memory), within 0.5 % at 5 deg of
    flap motion a step (the trapezoidal rule's period error is (nu Omega dt)^2/12 = 0.06 %)."""
    hinge = FlapHinge(offset=offset, spring=spring, inertia=INERTIA, radius=RADIUS)
    nu2 = _elements_frequency_ratio_squared(offset, spring)
    assert hinge.frequency_ratio_squared(OMEGA) == pytest.approx(nu2, rel=1e-8)
    assert nu2 == pytest.approx(1.0 + 1.5 * offset / (RADIUS - offset) + spring / (INERTIA * OMEGA ** 2),
                                rel=1e-8)
    dt = np.radians(5.0) / (np.sqrt(nu2) * OMEGA)
    assert _free_frequency(hinge, dt) / OMEGA == pytest.approx(np.sqrt(nu2), rel=5e-3)


def test_flap_step_is_second_order():
    """The frequency is that of the trapezoidal rule, (2/dt) atan(w dt/2) for w = nu Omega (low by
    about (w dt)^2/12; derived), and halving the step divides its error by about 4."""
    hinge = FlapHinge(offset=0.06, spring=100.0, inertia=INERTIA, radius=RADIUS)
    nu = np.sqrt(hinge.frequency_ratio_squared(OMEGA))
    errors = []
    for turn_deg in (20.0, 10.0):
        dt = np.radians(turn_deg) / (nu * OMEGA)
        errors.append(abs(_free_frequency(hinge, dt, periods=20) / (nu * OMEGA) - 1.0))
        wdt = np.radians(turn_deg)
        assert errors[-1] == pytest.approx(1.0 - 2.0 / wdt * np.arctan(0.5 * wdt), rel=0.02)
    assert 3.5 < errors[0] / errors[1] < 4.5


def _damped(c_dt, turns=3000):
    """Largest |beta| late in a run with an air moment -c I beta' (a damper through the
    extrapolated air moment) at c dt = ``c_dt``, 10 deg of Omega t a step, released at 1 rad."""
    hinge = FlapHinge(offset=0.0, spring=0.0, inertia=1.0, radius=1.0)
    dt = np.radians(10.0) / OMEGA
    c = c_dt / dt
    state = FlapState(0.0, np.array([0.01]), np.zeros(1))
    history = []
    for _ in range(turns):
        try:
            state = flap_step(hinge, state, -c * state.rate, OMEGA, dt)
        except NumericalError:
            return np.inf
        history.append(abs(state.beta[0]))
    return max(history[-100:])


def test_extrapolated_air_damping_is_stable_below_one_damping_per_step():
    """The air moment taken at the step's start and extrapolated: a damper c is stable while
    c dt < 1 (the limit the case check keeps half of), and beyond it the motion grows."""
    assert _damped(0.9) < 1e-6
    assert _damped(1.1) == np.inf


def test_damped_flap_decays_at_the_damper_rate():
    """Lock number 8 (damper c = gamma Omega/8 = Omega, Johnson 1980 from memory) at 10 deg steps:
    the computed motion follows the exact damped oscillation within 1 % of its amplitude."""
    hinge = FlapHinge(offset=0.0, spring=0.0, inertia=1.0, radius=1.0)
    dt = np.radians(10.0) / OMEGA
    c, beta0 = OMEGA, 0.01
    w = OMEGA * np.sqrt(1.0 - 0.25)
    state = FlapState(0.0, np.array([beta0]), np.zeros(1))
    worst = 0.0
    for k in range(1, 108):
        state = flap_step(hinge, state, -c * state.rate, OMEGA, dt)
        t = k * dt
        exact = beta0 * np.exp(-0.5 * c * t) * (np.cos(w * t) + 0.5 * c / w * np.sin(w * t))
        worst = max(worst, abs(state.beta[0] - exact))
    assert worst < 0.01 * beta0


def test_steady_moment_cones_the_blade_to_its_balance():
    """A constant air moment M: the blade settles where Omega^2 sin b (e S + I cos b) + K (b - b_p) = M
    (the damper ends the swing)."""
    hinge = FlapHinge(offset=0.05, spring=20.0, inertia=INERTIA, radius=RADIUS, rest_angle=np.radians(2.0))
    dt = np.radians(10.0) / OMEGA
    moment = 60.0
    state = FlapState(0.0, np.array([hinge.rest_angle]), np.zeros(1))
    for _ in range(800):   # 22 revolutions at a damping ratio of 0.23: the swing decays to 1e-15
        state = flap_step(hinge, state, moment - 0.5 * OMEGA * INERTIA * state.rate, OMEGA, dt)
    assert float(hinge.structural_moment(state.beta, OMEGA)[0]) == pytest.approx(moment, rel=1e-9)
    assert np.degrees(state.beta[0]) > 2.0


def test_a_diverging_flap_stops_with_a_message():
    hinge = FlapHinge(offset=0.0, spring=0.0, inertia=1e-3, radius=1.0)
    state = FlapState(0.0, np.zeros(2), np.zeros(2))
    with pytest.raises(NumericalError, match=r"blade 2 flaps to .* deg at t = .* beyond \+-60 deg"):
        flap_step(hinge, state, np.array([0.0, 1e6]), OMEGA, 0.01)


def test_harmonics_fit_unequal_samples():
    """The least-squares fit takes unequally spaced azimuths too (two blades at other angles)."""
    psi = np.array([0.1, 0.9, 2.0, 2.5, 3.9, 5.0, 5.9])
    beta = 2.0 + 0.3 * np.cos(psi) - 0.7 * np.sin(psi)
    np.testing.assert_allclose(flap_harmonics(beta, psi), (2.0, 0.3, -0.7), atol=1e-12)


def test_harmonics_are_nan_when_the_azimuths_do_not_fix_them():
    """Two blades at one step (opposite azimuths) leave the first harmonic undetermined."""
    assert all(np.isnan(flap_harmonics([1.0, 2.0], [0.3, 0.3 + np.pi])))
