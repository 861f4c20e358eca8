"""Wake storage: shedding order, convection, particle conversion, core growth, trimming."""

import numpy as np
import pytest
from wakes.aero.wake import WakeSettings, WakeSheet


def _te(n=4):
    return np.stack([np.zeros(n + 1), np.linspace(-1, 1, n + 1), np.zeros(n + 1)], axis=1)


def _march(sheet, steps, dt=0.1, u=(1.0, 0.0, 0.0), seed=0):
    rng = np.random.default_rng(seed)
    for k in range(steps):
        sheet.settle(sheet.state() + dt * sheet.rates(np.tile(u, (sheet.node_count, 1)),
                                                      np.tile(u, (sheet.particle_count, 1)), None))
        sheet.shed(_te(sheet.n_span), rng.normal(size=sheet.n_span), (k + 1) * dt)
        sheet.age_out((k + 1) * dt)


def test_rows_newest_first_and_convected():
    w = WakeSheet(_te(), 0.0, WakeSettings())
    _march(w, 5)
    assert w.rows.shape == (6, 5, 3) and w.gamma.shape == (5, 4)
    np.testing.assert_allclose(w.rows[:, 0, 0], [0.0, 0.1, 0.2, 0.3, 0.4, 0.5])
    np.testing.assert_allclose(w.row_time, [0.5, 0.4, 0.3, 0.2, 0.1, 0.0])


def test_core_growth_follows_squire_law():
    """r_c = sqrt(r0^2 + 4 a delta nu t), a = 1.25643 (Squire 1965, Aeronaut. Q. 16; memory)."""
    s = WakeSettings(core_radius=0.01, core_growth=50.0, viscosity=1e-5)
    np.testing.assert_allclose(s.core_at_age(np.array([0.0, 2.0])),
                               np.sqrt(0.01 ** 2 + 4 * 1.25643 * 50.0 * 1e-5 * np.array([0.0, 2.0])),
                               rtol=1e-5)


def test_eddy_core_growth_from_the_circulation():
    """delta = 1 + a1 |Gamma|/nu (Bhagwat & Leishman 2000; Squire 1965) in Squire's law
    r_c = sqrt(r0^2 + 4 alpha delta nu t), alpha = 1.2564312 (root of 1 + 2 alpha = e^alpha),
    written out here; a1 = 0 keeps the fixed delta = core_growth."""
    nu, a1, r0 = 1.5e-5, 6.5e-5, 0.01
    s = WakeSettings(core_radius=r0, core_eddy_factor=a1, viscosity=nu)
    age = np.array([0.0, 0.05, 0.3])
    gam = np.array([2.5, -2.5, 0.0])
    delta = 1.0 + a1 * np.abs(gam) / nu            # 11.83, 11.83, 1
    np.testing.assert_allclose(s.core_at_age(age, gam),
                               np.sqrt(r0 ** 2 + 4 * 1.2564312 * delta * nu * age), rtol=1e-7)
    assert s.core_at_age(0.3, 2.5) > s.core_at_age(0.3, 0.25) > s.core_at_age(0.3, 0.0)
    fixed = WakeSettings(core_radius=r0, core_growth=4.0, viscosity=nu)
    np.testing.assert_array_equal(fixed.core_at_age(age, gam), fixed.core_at_age(age))


def test_lattice_cores_grow_with_each_segments_age_and_circulation():
    """Each segment of the wake lattice gets Squire's radius at its own age (a streamwise
    segment: the mean of its two rows) and its own circulation; the attached row keeps
    the vanishing core."""
    s = WakeSettings(core_radius=0.02, core_eddy_factor=1e-4, viscosity=1e-5)
    w = WakeSheet(_te(), 0.0, s)
    _march(w, 4)
    f = w.filaments(0.4)
    a, b = f.endpoints()
    # rows sit at x = 0, 0.1, ... and were shed at t = 0.4, 0.3, ...: age = mean x of the ends
    age = 0.5 * (a[:, 0] + b[:, 0])
    attached = (a[:, 0] == 0.0) & (b[:, 0] == 0.0)
    expected = np.where(attached, s.attached_core_radius,
                        np.sqrt(0.02 ** 2 + 4 * 1.2564312 * (1 + 1e-4 * np.abs(f.circulation) / 1e-5)
                                * 1e-5 * age))
    np.testing.assert_allclose(f.core_radius, expected, rtol=1e-7)
    assert attached.any() and np.ptp(f.core_radius[~attached]) > 0


def _impulse(sheet, time):
    """Linear impulse 1/2 sum x x (Gamma dl) of segments plus 1/2 sum x x alpha of particles."""
    f = sheet.filaments(time)
    a, b = f.endpoints()
    imp = 0.5 * np.sum(np.cross(0.5 * (a + b), f.circulation[:, None] * (b - a)), axis=0)
    if sheet.particle_count:
        imp += 0.5 * np.sum(np.cross(sheet.positions, sheet.strengths), axis=0)
    return imp


def test_particle_conversion_keeps_linear_impulse_and_opens_the_lattice():
    """Each net segment becomes a particle alpha = Gamma (B - A) at its midpoint, which keeps
    the impulse of the straight segment exactly (derived)."""
    w = WakeSheet(_te(), 0.0, WakeSettings(model="particles", near_wake_steps=3))
    rng = np.random.default_rng(3)
    for k in range(8):
        w.settle(w.state() + 0.1 * w.rates(np.tile([1.0, 0.0, 0.2], (w.node_count, 1)),
                                           np.tile([1.0, 0.0, 0.2], (w.particle_count, 1)), None))
        w.shed(_te(), rng.normal(size=4), (k + 1) * 0.1)
        before = _impulse(w, (k + 1) * 0.1)
        w.age_out((k + 1) * 0.1)
        np.testing.assert_allclose(_impulse(w, (k + 1) * 0.1), before, atol=1e-12)
    assert w.gamma.shape[0] == 3 and w.particle_count > 0
    assert np.any(w.tail != 0)
    assert np.all(w.radii >= 1.3 * 0.1)  # overlap x the shortest segment (0.1 m streamwise)


def test_max_age_trims_rings_and_particles():
    w = WakeSheet(_te(), 0.0, WakeSettings(model="particles", near_wake_steps=2, max_age=0.45))
    _march(w, 10)
    assert w.gamma.shape[0] == 2
    assert np.all(1.0 - w.birth <= 0.45 + 1e-12)
    f = WakeSheet(_te(), 0.0, WakeSettings(max_age=0.35))
    _march(f, 10)
    assert 1.0 - f.row_time[-1] <= 0.35 + 1e-12
    np.testing.assert_allclose(f.tail, 0.0)


def test_attached_row_is_nearly_singular_and_singular_view_available():
    w = WakeSheet(_te(), 0.0, WakeSettings(core_radius=0.05))
    _march(w, 2)
    f = w.filaments(0.2)
    assert f.core_radius.min() == pytest.approx(0.05e-6)
    assert w.filaments(0.2, singular=True).core == "singular"
