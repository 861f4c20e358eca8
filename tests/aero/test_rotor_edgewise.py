"""Rotors off hover: cyclic pitch, hub forces and moments, the mirror symmetry of edgewise flight.

Short runs of the coarse two-bladed rotor of ``test_rotor_run.py`` (20 deg steps, two
revolutions, a 1.5-revolution wake), a second or so each.
"""

import tomllib

import numpy as np
import pandas as pd
import pytest
from wakes.aero.rotor_loads import HUB_COLUMNS
from wakes.case import parse_case
from wakes.simulate import TimeLoop

from .test_rotor_run import BASE, SAME

STEPS_PER_REV = 18          # 20 deg steps
RHO, RPM, LIFT_SLOPE = 1.225, 1200.0, 2.0 * np.pi   # the case's (defaults: density, thin airfoil)
EDGEWISE = "[freestream]\nspeed = 8.0\n"            # mu = 0.13


def case_of(extra_rotor: str = "", extra: str = ""):
    return parse_case(tomllib.loads(BASE.replace("[wake]", extra_rotor + "\n[wake]") + extra))


def stepped(extra_rotor: str = "", extra: str = ""):
    """Run step by step; return the loads, the summary and every step's sections table."""
    loop = TimeLoop(case_of(extra_rotor, extra))
    body = loop.bodies[0]
    sections = []
    for k in range(loop.steps):
        loop.step(k, loop.time_of(k))
        sections.append(body.section_table(loop.strips).assign(step=k))
    loads = pd.DataFrame(loop.rows)
    return loads, body.summary(loads), pd.concat(sections, ignore_index=True), body


def first_harmonic(values, psi_rad):
    """(mean, cos and sin amplitudes) of samples equally spaced over one revolution."""
    return (float(np.mean(values)), 2.0 * float(np.mean(values * np.cos(psi_rad))),
            2.0 * float(np.mean(values * np.sin(psi_rad))))


@pytest.fixture(scope="module")
def hover():
    return stepped()


@pytest.fixture(scope="module")
def cyclic_cos():
    return stepped("cyclic_cos = 2.0")


@pytest.fixture(scope="module")
def cyclic_sin():
    return stepped("cyclic_sin = 2.0")


@pytest.fixture(scope="module")
def edgewise():
    return stepped("", EDGEWISE)


def _last_revolution_at_station(sections, strip=4, blade=1):
    sec = sections[(sections["blade"] == blade) & (sections["strip"] == strip)]
    return sec.iloc[-STEPS_PER_REV:]


@pytest.mark.parametrize("which, amplitude", [("cyclic_cos", (2.0, 0.0)), ("cyclic_sin", (0.0, 2.0))])
def test_section_pitch_and_angle_of_attack_follow_the_cyclic_law(which, amplitude, request):
    """The pitch in the per-step sections is theta_0 + twist + theta_1c cos psi + theta_1s sin psi
    (Johnson 1980, Helicopter Theory, ch. 5) to round-off, and the angle of attack carries the same
    first harmonic, reduced: the first-harmonic lift induces a first-harmonic downwash in phase
    with it (the dynamic-inflow model of Pitt & Peters 1981), so the in-phase part lies below the
    pitch's amplitude and well above zero (0.55 and 0.69 measured), the quadrature part is small
    (0.15 and 0.10 measured). A wrong azimuth origin, sense or sign moves the in-phase part to about 0 or below."""
    _, _, sections, _ = request.getfixturevalue(which)
    station = _last_revolution_at_station(sections)
    psi = np.radians(station["azimuth_deg"].to_numpy())
    assert np.allclose(np.diff(np.unwrap(psi)), np.radians(20.0))   # one revolution, 20 deg apart
    mean_pitch, c, s = first_harmonic(station["pitch_deg"].to_numpy(), psi)
    assert (c, s) == pytest.approx(amplitude, abs=1e-9)
    _, a_c, a_s = first_harmonic(station["alpha_deg"].to_numpy(), psi)
    unit = np.array(amplitude) / 2.0
    in_phase = float(np.dot([a_c, a_s], unit)) / 2.0
    quadrature = float(unit[0] * a_s - unit[1] * a_c) / 2.0
    assert 0.3 < in_phase < 1.0
    assert abs(quadrature) < 0.3


def test_hover_has_no_in_plane_force_or_hub_moment(hover):
    """An axisymmetric rotor: H, Y and the hub moments vanish against the thrust (measured: 2e-7 T
    and 4e-6 T R, the free wake's round-off)."""
    loads, s, _, _ = hover
    assert set(HUB_COLUMNS) <= set(loads.columns) and set(HUB_COLUMNS) <= set(s)
    thrust, radius = s["thrust_N"], 0.5
    assert abs(s["H_force_N"]) < 1e-4 * thrust and abs(s["Y_force_N"]) < 1e-4 * thrust
    assert abs(s["roll_moment_Nm"]) < 1e-4 * thrust * radius
    assert abs(s["pitch_moment_Nm"]) < 1e-4 * thrust * radius
    assert s["CH"] == pytest.approx(s["H_force_N"] / (RHO * np.pi * 0.25 * (RPM * np.pi / 30 * 0.5) ** 2))


def _blade_element_moment(theta_deg: float) -> float:
    """Hub moment [N m] of a first-harmonic pitch theta on the rigid rotor, blade element theory
    without any induced response: (B/2) int 1/2 rho (Omega r)^2 c a theta r dr (derived: the lift
    harmonic times its arm, averaged over the azimuth)."""
    r = np.linspace(0.1, 0.5, 4001)
    chord = 0.06 + (0.04 - 0.06) * (r - 0.1) / 0.4
    omega = RPM * np.pi / 30.0
    f = 0.5 * RHO * (omega * r) ** 2 * chord * LIFT_SLOPE * np.radians(theta_deg) * r
    return 2 / 2 * float(np.sum(0.5 * (f[1:] + f[:-1]) * np.diff(r)))


def test_longitudinal_cyclic_pitches_the_hub_nose_down(cyclic_cos):
    """theta_1c > 0 raises the pitch, hence the lift, of the blade at psi = 0 (downstream, aft) and
    lowers it at psi = 180 deg: the aft edge of the disc is pushed up, a negative (nose-down) pitch
    moment about y_h. Its size lies below the blade-element moment without induced response (the
    induced first harmonic opposes the pitch, as above; 0.61 of it measured) and the roll moment,
    from the lift's lag behind the pitch, is smaller (0.10 of it measured)."""
    _, s, _, _ = cyclic_cos
    ratio = s["pitch_moment_Nm"] / -_blade_element_moment(2.0)
    assert 0.3 < ratio < 1.0
    assert abs(s["roll_moment_Nm"]) < 0.3 * abs(s["pitch_moment_Nm"])


def test_lateral_cyclic_rolls_the_hub_towards_the_retreating_side(cyclic_sin):
    """theta_1s > 0 raises the lift at psi = 90 deg, which for a counter-clockwise rotor lies along
    +y_h: a positive roll moment about x_h (0.60 of the blade-element moment measured, as for
    theta_1c: hover is axisymmetric)."""
    _, s, _, _ = cyclic_sin
    ratio = s["roll_moment_Nm"] / _blade_element_moment(2.0)
    assert 0.3 < ratio < 1.0
    assert abs(s["pitch_moment_Nm"]) < 0.3 * abs(s["roll_moment_Nm"])


def test_mirrored_spin_mirrors_the_lateral_loads_in_edgewise_flight():
    """A clockwise rotor is the counter-clockwise one mirrored in the plane of the freestream and
    the axis, cyclic pitch included (psi runs in the sense of rotation): H, the pitch moment and
    the thrust stay, Y and the roll moment change sign (measured: equal to 2e-7 T and 2.5e-6 T R;
    the lateral loads themselves are 5e-3 T and 3e-3 T R)."""
    extra = "cyclic_cos = 1.0\ncyclic_sin = -2.0\n"
    _, ccw, _, ccw_body = stepped(extra, EDGEWISE)
    _, cw, _, cw_body = stepped(extra + 'spin = "cw"\n', EDGEWISE)
    # the disc maps agree at equal psi: the mirror keeps the azimuth measured in the sense of rotation
    maps = [b.tables()["disc_map.csv"].sort_values(["blade", "azimuth_deg", "r_m"]) for b in (ccw_body, cw_body)]
    np.testing.assert_allclose(maps[1]["azimuth_deg"], maps[0]["azimuth_deg"], atol=1e-9)
    # a section next to a passing tip vortex feels round-off more than the totals (measured: 3.3e-4
    # of the peak normal force, 4.6e-4 of the peak inflow); a mirror error would show at the size
    # of the map's own variation, about its peak
    local = 2e-3
    force = maps[0]["normal_force_N_per_m"].abs().max()
    np.testing.assert_allclose(maps[1]["normal_force_N_per_m"], maps[0]["normal_force_N_per_m"], atol=local * force)
    inflow = maps[0]["inflow_ratio"].abs().max()
    np.testing.assert_allclose(maps[1]["inflow_ratio"], maps[0]["inflow_ratio"], atol=local * inflow)
    thrust, arm = ccw["thrust_N"], ccw["thrust_N"] * 0.5
    assert cw["thrust_N"] == pytest.approx(thrust, rel=SAME)
    assert abs(cw["H_force_N"] - ccw["H_force_N"]) < SAME * thrust
    assert abs(cw["Y_force_N"] + ccw["Y_force_N"]) < SAME * thrust
    assert abs(cw["pitch_moment_Nm"] - ccw["pitch_moment_Nm"]) < SAME * arm
    assert abs(cw["roll_moment_Nm"] + ccw["roll_moment_Nm"]) < SAME * arm
    # the lateral loads are there to be mirrored: far above the tolerance
    assert abs(ccw["Y_force_N"]) > 20 * SAME * thrust and abs(ccw["roll_moment_Nm"]) > 20 * SAME * arm


def test_disc_map_in_edgewise_flight_loads_the_advancing_side_and_lets_the_air_in_at_the_rear(edgewise):
    """Edgewise flight at mu = 0.13 without cyclic pitch, read from disc_map.csv's samples:
    the advancing blade (psi = 90 deg) meets more dynamic pressure, so an untrimmed rigid rotor
    carries more normal force there than on the retreating side (first harmonic
    sin psi > 0; measured 0.34 of the mean); and the inflow grows from the front of the disc
    to the rear, the longitudinal gradient of the linear inflow models lambda = lambda_0 (1 +
    k_x r/R cos psi) (Glauert 1926; Coleman, Feingold & Stempin 1945: k_x = tan(chi/2) > 0 with
    chi the wake skew angle), so k_x > 0 (measured here 0.30, where Coleman et al.'s tan(chi/2) gives 0.84; the
    lateral gradient, 0.45, is the larger: this rotor is not trimmed and carries a roll moment, and
    the comparison with those models waits for trim)."""
    _, s, _, body = edgewise
    table = body.tables()["disc_map.csv"]
    psi = np.radians(table["azimuth_deg"].to_numpy())
    x = table["r_over_R"].to_numpy()
    force = table["normal_force_N_per_m"].to_numpy()
    mean, _, advancing = first_harmonic(force, psi)
    assert advancing > 0.2 * mean
    lam = table["inflow_ratio"].to_numpy()
    fit = np.linalg.lstsq(np.c_[np.ones_like(lam), x * np.cos(psi), x * np.sin(psi)], lam, rcond=None)[0]
    assert fit[0] > 0 and fit[1] / fit[0] > 0.1
    assert s["advance_ratio_mu"] == pytest.approx(8.0 / (RPM * np.pi / 30.0 * 0.5), rel=1e-12)
    assert s["shaft_angle_deg"] == 0.0                      # the flow along the disc plane


def test_shaft_angle_is_the_freestream_angle_to_the_disc():
    """The case's flow from 10 deg below the x axis (angle of attack 10 deg): the air crosses the
    disc along +axis, the sense of a disc tilted back by 10 deg; in hover there is no angle."""
    run = stepped("", "[freestream]\nspeed = 8.0\nangle_of_attack = 10.0\n[time]\nsteps = 2\n")
    assert run[1]["shaft_angle_deg"] == pytest.approx(10.0, rel=1e-12)
    assert np.isnan(stepped("", "[time]\nsteps = 2\n")[1]["shaft_angle_deg"])


def _harmonic(body, quantity, n):
    h = body.tables()["blade_harmonics.csv"]
    return h[(h["quantity"] == quantity) & (h["harmonic"] == n)].iloc[0]


def test_blade_load_harmonics_follow_the_pitch_and_the_advancing_side(hover, cyclic_cos, cyclic_sin, edgewise):
    """blade_harmonics.csv: the mean is blade 1's mean thrust of loads.csv over the revolution; in
    hover the harmonics are only the start-up drift of the second revolution (measured: up to 1.7 %
    of the mean); a cyclic pitch puts a first harmonic of a third of the mean in phase with it, the
    lift lagging the pitch a little (measured 9 deg behind theta_1c's 0 deg and 7 deg behind
    theta_1s's 90 deg, as the angle of attack above), the flap moment in the same phase; edgewise
    flight puts the thrust's peak on the advancing side (measured at 107 deg)."""
    for loads, _, _, body in (hover, cyclic_cos, cyclic_sin, edgewise):
        mean = loads["blade_1_thrust_N"].iloc[-STEPS_PER_REV:].mean()
        assert _harmonic(body, "thrust_N", 0)["cos"] == pytest.approx(mean, rel=1e-12)
    mean = _harmonic(hover[3], "thrust_N", 0)["cos"]
    for n in range(1, 5):
        assert _harmonic(hover[3], "thrust_N", n)["amplitude"] < 0.03 * mean
    for fixture, phase in ((cyclic_cos, 0.0), (cyclic_sin, 90.0)):
        first = _harmonic(fixture[3], "thrust_N", 1)
        assert first["amplitude"] > 0.2 * mean
        assert 0.0 < first["phase_deg"] - phase < 30.0                       # a lag, less than 30 deg
        assert _harmonic(fixture[3], "flap_moment_Nm", 1)["phase_deg"] == pytest.approx(first["phase_deg"], abs=5.0)
    assert 60.0 < _harmonic(edgewise[3], "thrust_N", 1)["phase_deg"] < 135.0


def test_edgewise_flight_tends_to_hover_as_mu_goes_to_zero(hover):
    """mu = 1e-5: the loads are the hover loads but for one step of the model. Any freestream
    across the axis lets the inboard trailers of the far wake move freely, where axial flow holds
    them to axial motion (aero/rotor_wake.py), and that alone moves the thrust by +0.19 % on this
    coarse case (measured; the power by 6e-6, H by 1e-6 T, the roll moment by 1e-5 T R). A wrong
    frame, a cyclic origin that shifted the pitch or a hub load from the tiny freestream would show
    at the size of the hover loads themselves."""
    s = stepped("", f"[freestream]\nspeed = {1e-5 * RPM * np.pi / 30.0 * 0.5!r}\n")[1]
    h = hover[1]
    assert s["advance_ratio_mu"] == pytest.approx(1e-5, rel=1e-9)
    assert s["thrust_N"] == pytest.approx(h["thrust_N"], rel=5e-3)
    assert s["power_W"] == pytest.approx(h["power_W"], rel=1e-3)
    for key, scale in (("H_force_N", 1.0), ("Y_force_N", 1.0), ("roll_moment_Nm", 0.5), ("pitch_moment_Nm", 0.5)):
        assert abs(s[key]) < 1e-4 * h["thrust_N"] * scale, key


def test_flight_frame_forces(hover, edgewise):
    """Drag, lift and side force along and across the freestream: in edgewise flight with the
    shaft normal to the flow they are H, T and Y themselves; with the flow from 10 deg below the
    disc the lift and drag are T and H turned by 10 deg; in hover there is no flight frame."""
    s = edgewise[1]
    assert s["drag_force_N"] == pytest.approx(s["H_force_N"], rel=1e-12, abs=1e-12 * s["thrust_N"])
    assert s["lift_force_N"] == pytest.approx(s["thrust_N"], rel=1e-12)
    assert s["side_force_N"] == pytest.approx(s["Y_force_N"], rel=1e-12, abs=1e-12 * s["thrust_N"])
    tilted = stepped("", "[freestream]\nspeed = 8.0\nangle_of_attack = 10.0\n[time]\nsteps = 3\n")[0].iloc[-1]
    c, sn = np.cos(np.radians(10.0)), np.sin(np.radians(10.0))
    # the air comes from below at 10 deg: x_f = (c, 0, s) in the rotor frame (x_h, y_h, a)
    assert tilted["drag_force_N"] == pytest.approx(c * tilted["H_force_N"] + sn * tilted["thrust_N"], rel=1e-9)
    assert tilted["lift_force_N"] == pytest.approx(-sn * tilted["H_force_N"] + c * tilted["thrust_N"], rel=1e-9)
    assert all(np.isnan(hover[1][k]) for k in ("drag_force_N", "lift_force_N", "side_force_N"))


def test_reverse_flow_region_runs_its_revolutions_with_finite_loads_and_reversed_sections():
    """mu = 0.3 on this rotor (root cut-out 0.2 R): the retreating blade's inner sections lie in the
    reverse-flow circle (diameter mu R, Johnson 1980, Helicopter Theory, ch. 5). Their circulation
    comes from the polar at the reversed angle (aero/lifting_line.py), so the run reaches its end
    (it stopped at its first revolution's retreating side before), every load is finite, and the
    sections that met the flow from the trailing edge report an angle beyond 90 deg with the
    thin-airfoil law in the reversed angle, cl = -a (180 deg - alpha - alpha_0) (alpha_0 = 0 here)."""
    tip = RPM * np.pi / 30.0 * 0.5
    loads, summary, sections, _ = stepped("", f"[freestream]\nspeed = {0.3 * tip!r}\n")
    assert len(loads) == 2 * STEPS_PER_REV + 1           # steps 0 to 36: two revolutions
    numeric = loads.select_dtypes("number").drop(columns=["FM", "kappa"], errors="ignore")
    assert np.isfinite(numeric.to_numpy()).all()
    assert summary["advance_ratio_mu"] == pytest.approx(0.3, rel=1e-9)
    assert summary["thrust_N"] > 0.0
    rev = sections[np.abs(sections["alpha_deg"]) > 90.0]
    assert len(rev) > 0
    ref = np.where(rev["alpha_deg"] > 0.0, 180.0 - rev["alpha_deg"], -180.0 - rev["alpha_deg"])
    np.testing.assert_allclose(rev["cl"], -LIFT_SLOPE * np.radians(ref), rtol=1e-9, atol=1e-12)


def test_stalled_edgewise_rotor_on_a_post_stall_polar_runs_its_revolutions():
    """The coarse rotor at collective 18 deg on the built-in NACA 0012 with Viterna-Corrigan beyond its
    table, mu = 0.2 (Viterna & Corrigan 1982 for the extension; the sections' own sources are in the
    table): the retreating side's strips stall (angles past the table's 16 deg end) and the inner
    ones meet reversed flow. It stopped at step 15 with the artificial viscosity taken at each
    iterate, at step 37 with it so and the reversed strips explicit (measured 2026-12-05); with the
    viscosity held at the starting guess it runs its three revolutions, every load finite."""
    tip = RPM * np.pi / 30.0 * 0.5
    text = (BASE.replace("collective = 10.0", "collective = 18.0").replace("revolutions = 2.0", "revolutions = 3.0")
            .replace("panels = 6", "panels = 8")
            .replace("[wake]", '[bodies.rotor.airfoil]\nsection = "naca0012"\nout_of_range = "viterna"\n[wake]'))
    loop = TimeLoop(parse_case(tomllib.loads(text + f"\n[freestream]\nspeed = {0.2 * tip!r}\n")))
    body, alphas = loop.bodies[0], []
    for k in range(loop.steps):
        loop.step(k, loop.time_of(k))
        alphas.append(body.section_table(loop.strips)["alpha_deg"].to_numpy())
    loads = pd.DataFrame(loop.rows)
    assert len(loads) == 3 * STEPS_PER_REV + 1
    assert np.isfinite(loads.select_dtypes("number").drop(columns=["FM", "kappa"], errors="ignore").to_numpy()).all()
    alphas = np.concatenate(alphas)
    assert alphas.max() > 16.0 and np.abs(alphas).max() > 90.0       # stalled strips and reversed ones
