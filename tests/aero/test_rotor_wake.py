"""The rolled-up blade wake: condensation into trailers, storage, ageing, symmetry, start-up drift."""

import numpy as np
import pytest
import wakes
from wakes.aero.rotor_wake import (
    BladeSymmetry,
    RolledUpWake,
    StartupDrift,
    condense_row,
    tip_peak,
    tip_vortex_table,
)
from wakes.aero.vortex_lattice import lattice_filaments
from wakes.aero.wake import WakeSettings

SETTINGS = WakeSettings(core="vatistas2", core_radius=0.02, viscosity=1.5e-5)
AXIS = np.array([0.0, 0.0, 1.0])


def row(n=10, r0=0.2, r1=1.0, z=0.0, angle=0.0):
    r = np.linspace(r0, r1, n + 1)
    return np.c_[r * np.cos(angle), r * np.sin(angle), np.full(n + 1, z)]


def loading(n=10):
    return np.sin(np.linspace(0.3, 2.8, n)) + 0.2          # peak inboard of the tip, root jump


def test_trailers_carry_all_trailed_circulation_and_the_tip_vortex_the_peak():
    g = loading()
    points, strengths, spread = condense_row(row(), g, 3, tip_last=True)
    assert strengths[-1] == pytest.approx(g.max())                     # tip vortex: peak strip
    assert strengths.sum() == pytest.approx(0.0, abs=1e-12)            # every line is closed upstream
    r = points[:, 0]
    assert np.all(np.diff(r) > 0) and r[-1] > 0.2 + 0.8 * (np.argmax(g) / 10)
    assert spread[-1] == 0.0 and np.allclose(spread[:-1], spread[0]) and spread[0] > 0


def test_condensed_row_has_the_same_far_field_as_the_sheet():
    """Two rows of a sheet and the same rows condensed induce alike far away (the dipole moment
    of each trailer group is kept by putting it at the group's centroid)."""
    g = loading()
    a, b = row(), row(z=-0.3)
    sheet = lattice_filaments(np.stack([a, b]), g[None], core="singular", core_radius=1.0)
    pa, ga, _ = condense_row(a, g, 2, True)
    pb, _, _ = condense_row(b, g, 2, True)
    ring = np.concatenate([[0.0], -np.cumsum(ga)[:-1]])                # ring circulations between trailers
    lattice = lattice_filaments(np.stack([pa, pb]), ring[1:][None], core="singular", core_radius=1.0)
    far = np.array([[0.5, 30.0, 5.0], [-40.0, 2.0, 1.0]])
    v_sheet, v_cond = wakes.induce(sheet, far), wakes.induce(lattice, far)
    assert np.allclose(v_cond, v_sheet, rtol=0.03, atol=1e-3 * np.abs(v_sheet).max())


def test_reversed_node_order_gives_the_same_trailers():
    """The mirror blade (nodes tip to root, rings of opposite sense) has the same trailers, tip last."""
    g = loading()
    p1, s1, _ = condense_row(row(), g, 2, True)
    p2, s2, _ = condense_row(row()[::-1], -g[::-1], 2, False)
    assert np.allclose(p2, p1) and np.allclose(s2, s1)


def test_inboard_trailers_zero_follows_only_the_tip_vortex():
    points, strengths, _ = condense_row(row(), loading(), 0, True)
    assert points.shape == (1, 3) and strengths[0] == pytest.approx(loading().max())


def wake_after(steps, rollup=3, trailers=2, max_age=np.inf, dt=0.01, axial=True, fade_age=0.0,
               free_age=np.inf, period=np.inf):
    settings = WakeSettings(core="vatistas2", core_radius=0.02, max_age=max_age)
    w = RolledUpWake(row(), 0.0, settings, rollup_steps=rollup, inboard_trailers=trailers,
                     tip_last=True, hub=np.zeros(3), axis=AXIS, axial_flow=axial, fade_age=fade_age,
                     free_age=free_age, period=period)
    for k in range(steps):
        w.settle(w.state() + dt * w.rates(np.tile([0.0, 0.0, -1.0], (w.node_count, 1))))
        w.shed(row(angle=0.1 * (k + 1)), loading(), (k + 1) * dt)
        w.age_out((k + 1) * dt)
    return w


def test_sheet_rolls_up_after_the_rollup_rings():
    w = wake_after(8)
    assert w.near_gamma.shape[0] == 3 and w.near.shape[0] == 4
    assert w.far.shape == (6, 3, 3) and w.far_gamma.shape == (5, 3)
    assert w.node_count == w.rows.shape[0] == 4 * 11 + 6 * 3
    near, far = w.sources(0.08)
    assert far.segment_count == 5 * 3
    # open junction: no spanwise segment on the sheet's last row
    last = set(range(3 * 11, 4 * 11))
    assert not any(a in last and b in last for a, b in near.segments)


def test_old_far_wake_is_removed():
    w = wake_after(12, max_age=0.065)
    assert np.all(0.12 - w.far_time <= 0.065 + 1e-12)


def test_old_far_wake_fades_linearly_before_it_is_removed():
    """Segments younger than max_age - fade_age keep their circulation; older ones carry
    (max_age - age)/fade_age of it; the node arrays are the abrupt cut's."""
    cut, faded = wake_after(12, max_age=0.065), wake_after(12, max_age=0.065, fade_age=0.03)
    assert np.array_equal(cut.far, faded.far)
    c_cut, c_fade = cut.sources(0.12)[1].circulation, faded.sources(0.12)[1].circulation
    age = 0.12 - 0.5 * (cut.far_time[:-1] + cut.far_time[1:])
    factor = np.repeat(np.clip((0.065 - age) / 0.03, 0.0, 1.0), 3)[cut.far_gamma.ravel() != 0.0]
    assert np.allclose(c_fade, c_cut * factor)
    assert factor.min() < 0.5 and factor.max() == 1.0


def test_uniform_axial_motion_translates_every_node():
    w = wake_after(6)
    before = w.rows.copy()
    w.settle(w.state() + 0.01 * w.rates(np.tile([0.0, 0.0, -2.0], (w.node_count, 1))))
    assert np.allclose(w.rows - before, [0.0, 0.0, -0.02])


@pytest.mark.parametrize("axial", [True, False])
def test_far_wake_older_than_free_age_moves_with_the_last_free_revolutions_tip_vortex(axial):
    """Rows older than free_age (0.045 s) all get the mean tip-vortex velocity of the rows of
    the revolution (0.03 s) before it; in axial flow only its axial part. Younger rows and the
    near sheet keep their own velocity."""
    w = wake_after(12, free_age=0.045, period=0.03, axial=axial)
    k = w.near.size // 3
    rng = np.random.default_rng(3)
    u = rng.normal(size=(w.node_count, 3))
    rates = w.rates(u)
    age = w.near_time[0] - w.far_time
    rigid, last = age > 0.045 + 1e-12, (age <= 0.045 + 1e-12) & (age > 0.015)
    assert rigid.sum() >= 2 and last.sum() >= 2
    mean = u[k:].reshape(w.far.shape)[last, -1].mean(axis=0)
    expected = mean * AXIS if axial else mean
    assert np.allclose(rates[k:].reshape(w.far.shape)[rigid], expected)
    assert np.array_equal(rates[:k], u[:k])
    assert np.allclose(rates[k:].reshape(w.far.shape)[~rigid, -1], u[k:].reshape(w.far.shape)[~rigid, -1])


def test_inboard_trailers_keep_their_radius_relative_to_the_tip_vortex():
    w = wake_after(6)
    r = np.hypot(w.far[..., 0], w.far[..., 1])
    ratio = r[:, :-1] / r[:, -1:]
    u = np.zeros((w.node_count, 3))
    k = w.near.size // 3
    u[k:] = (-0.5 * w.far.reshape(-1, 3)) * [1.0, 1.0, 0.0]          # everything contracts
    w.settle(w.state() + 0.1 * w.rates(u))
    r_new = np.hypot(w.far[..., 0], w.far[..., 1])
    assert np.allclose(r_new[:, -1], 0.95 * r[:, -1])
    assert np.allclose(r_new[:, :-1] / r_new[:, -1:], ratio)


def test_tip_vortex_path_starts_at_the_trailing_edge():
    w = wake_after(8)
    age, points = w.tip_vortex(0.08)
    assert age[0] == pytest.approx(0.0) and np.all(np.diff(age) > 0)
    assert points.shape == (len(age), 3)
    assert np.hypot(*points[0, :2]) > 0.85                             # outboard of the peak
    table = tip_vortex_table("rotor", [(age, points), (age, points)], hub=np.zeros(3), axis=AXIS,
                             radius=1.0, omega=10.0)
    assert np.allclose(table["r_over_R_std"], 0.0)
    assert table["axial_over_R"].iloc[-1] < table["axial_over_R"].iloc[0]


def test_symmetry_removes_what_breaks_the_blades_symmetry():
    group = BladeSymmetry(np.zeros(3), AXIS, 2)
    w = [RolledUpWake(row(angle=np.pi * k), 0.0, SETTINGS, rollup_steps=2, inboard_trailers=1,
                      tip_last=True, hub=np.zeros(3), axis=AXIS, axial_flow=True, symmetry=group)
         for k in range(2)]
    rng = np.random.default_rng(7)
    for wake in w:
        wake.settle(wake.state() + wake.rates(rng.normal(scale=0.01, size=(wake.node_count, 3))))
    assert np.allclose(w[1].near, w[0].near * [-1.0, -1.0, 1.0])        # turned by half a turn


def test_startup_drift_is_the_momentum_inflow_and_fades():
    drift = StartupDrift(np.zeros(3), AXIS, omega=50.0, blades=2, radius=1.0, duration=1.0)
    te = row(n=4, r0=0.0, r1=1.0)
    gamma = np.full(4, 0.3)
    thrust_over_rho = 2 * 50.0 * 0.3 * 0.5                            # B Omega Gamma R^2/2
    v = np.sqrt(thrust_over_rho / (2 * np.pi))
    assert drift.velocity(0.0, te, gamma) == pytest.approx([0, 0, -v])
    assert drift.velocity(0.5, te, gamma) == pytest.approx([0, 0, -0.5 * v])
    assert not np.any(drift.velocity(1.0, te, gamma))


def windmill(n=10):
    """Loading that changes sign along the blade: a larger positive hump inboard, negative outboard
    (the row's sum is positive, the tip part negative), as on a windmilling propeller."""
    x = np.linspace(0.05, 0.95, n)
    return np.where(x < 0.5, 1.5, 1.0) * np.sin(2.0 * np.pi * x)


def test_loading_that_changes_sign_rolls_up_with_the_tip_parts_sign():
    """Signs per side of the loading peak: the tip vortex carries the outboard (negative) peak,
    not the inboard one the row's sum would pick, from the nodes outboard of it; every trailed
    line is still followed."""
    g = windmill()
    points, strengths, _ = condense_row(row(), g, 2, True)
    peak = int(np.argmin(g))
    assert tip_peak(g) == peak
    assert strengths[-1] == pytest.approx(g[peak]) and strengths[-1] < 0.0
    assert strengths.sum() == pytest.approx(0.0, abs=1e-12)
    assert np.hypot(*points[-1, :2]) > 0.2 + 0.08 * (peak + 1)
    p2, s2, _ = condense_row(row()[::-1], -g[::-1], 2, False)
    assert np.allclose(p2, points) and np.allclose(s2, strengths)
